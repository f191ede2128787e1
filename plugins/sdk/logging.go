package sdk

import (
	"bytes"
	"context"
	"encoding/json"
	"log/slog"
	"sort"
	"strings"

	"github.com/hashicorp/go-hclog"
)

// newHCLogger returns the hclog.Logger go-plugin needs, writing into log.
// go-plugin relays each backend's stderr (hclog JSON lines) through it, so
// backend messages arrive in the host's structured log with their levels.
func newHCLogger(log *slog.Logger) hclog.Logger {
	level := hclog.Info
	if log.Enabled(context.Background(), slog.LevelDebug) {
		level = hclog.Debug
	}
	return hclog.New(&hclog.LoggerOptions{
		Name:       "plugin",
		Level:      level,
		Output:     &slogWriter{log: log},
		JSONFormat: true,
	})
}

// slogWriter turns hclog JSON lines into slog records.
type slogWriter struct{ log *slog.Logger }

func (w *slogWriter) Write(p []byte) (int, error) {
	for _, line := range bytes.Split(p, []byte{'\n'}) {
		if len(bytes.TrimSpace(line)) > 0 {
			w.line(line)
		}
	}
	return len(p), nil
}

func (w *slogWriter) line(line []byte) {
	var m map[string]any
	if err := json.Unmarshal(line, &m); err != nil {
		w.log.Info(string(line))
		return
	}
	level := slog.LevelInfo
	switch lv, _ := m["@level"].(string); strings.ToLower(lv) {
	case "trace", "debug":
		level = slog.LevelDebug
	case "warn":
		level = slog.LevelWarn
	case "error":
		level = slog.LevelError
	}
	msg, _ := m["@message"].(string)
	keys := make([]string, 0, len(m))
	for k := range m {
		if k != "@level" && k != "@message" && k != "@timestamp" {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	attrs := make([]slog.Attr, 0, len(keys))
	for _, k := range keys {
		attrs = append(attrs, slog.Any(strings.TrimPrefix(k, "@"), m[k]))
	}
	w.log.LogAttrs(context.Background(), level, msg, attrs...)
}
