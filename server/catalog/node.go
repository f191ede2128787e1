package catalog

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// node is one TOML table being read, with what an error needs to say
// where it is: the file, the concrete key path (for the line) and a
// human location ("substance "water" curve "melting"").
type node struct {
	d     *decoder
	m     map[string]any
	path  string
	where string
	// prefix is prepended to key names in messages: "provenance." for the
	// fields of a provenance table.
	prefix string
	asked  []string // keys the reader looked for, in order: the valid fields
}

// fq returns the field name as messages show it ("provenance.kind").
func (n *node) fq(key string) string { return n.prefix + key }

// decoder holds the state of one Parse.
type decoder struct {
	file  string
	lines lineIndex
}

func (d *decoder) root(m map[string]any) *node { return &node{d: d, m: m} }

// errAt returns an *Error located at the key field of n (or at n itself
// when field is "").
func (n *node) errAt(field string, err error) error {
	p := n.path
	if field != "" {
		p = joinPath(p, field)
	}
	f := ""
	if field != "" {
		f = n.fq(field)
	}
	return &Error{File: n.d.file, Line: n.d.lines.line(p), Where: n.where, Field: f, Err: err}
}

func (n *node) errf(field, format string, args ...any) error {
	return n.errAt(field, fmt.Errorf(format, args...))
}

func (n *node) ask(key string) (any, bool) {
	n.asked = append(n.asked, key)
	v, ok := n.m[key]
	return v, ok
}

// done reports the first key (by line) the reader never asked for.
func (n *node) done() error {
	var unknown []string
	for k := range n.m {
		if !contains(n.asked, k) {
			unknown = append(unknown, k)
		}
	}
	if len(unknown) == 0 {
		return nil
	}
	sort.Slice(unknown, func(i, j int) bool {
		li, lj := n.d.lines.line(joinPath(n.path, unknown[i])), n.d.lines.line(joinPath(n.path, unknown[j]))
		if li != lj {
			return li < lj
		}
		return unknown[i] < unknown[j]
	})
	valid := append([]string(nil), n.asked...)
	sort.Strings(valid)
	return n.errf(unknown[0], "unknown field %q (valid: %s)", n.fq(unknown[0]), strings.Join(valid, ", "))
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// str returns the string field key; "" when absent.
func (n *node) str(key string, required bool) (string, error) {
	v, ok := n.ask(key)
	if !ok {
		if required {
			return "", n.errf("", "%s is missing", n.fq(key))
		}
		return "", nil
	}
	s, ok := v.(string)
	if !ok {
		return "", n.errf(key, "%s must be a string, got %s", n.fq(key), tomlType(v))
	}
	return s, nil
}

// number converts a TOML number to float64.
func number(v any) (float64, bool) {
	switch x := v.(type) {
	case float64:
		return x, true
	case int64:
		return float64(x), true
	}
	return 0, false
}

// num returns the number field key; ok is false when it is absent.
func (n *node) num(key string) (v float64, ok bool, err error) {
	raw, ok := n.ask(key)
	if !ok {
		return 0, false, nil
	}
	v, isNum := number(raw)
	if !isNum {
		return 0, true, n.errf(key, "%s must be a number, got %s", n.fq(key), tomlType(raw))
	}
	return v, true, nil
}

// positive returns the required field key, which must be finite and > 0.
func (n *node) positive(key, unit string) (float64, error) {
	v, ok, err := n.num(key)
	if err != nil {
		return 0, err
	}
	if !ok {
		return 0, n.errf("", "%s is missing (a number > 0 %s)", n.fq(key), unit)
	}
	if math.IsNaN(v) || math.IsInf(v, 0) || v <= 0 {
		return 0, n.errf(key, "%s must be a finite number > 0 %s, got %v", n.fq(key), unit, v)
	}
	return v, nil
}

// finite returns the number field key, which must be finite when present.
func (n *node) finite(key string) (float64, bool, error) {
	v, ok, err := n.num(key)
	if err != nil || !ok {
		return 0, ok, err
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, true, n.errf(key, "%s must be a finite number, got %v", n.fq(key), v)
	}
	return v, true, nil
}

func (n *node) boolean(key string) (bool, error) {
	v, ok := n.ask(key)
	if !ok {
		return false, nil
	}
	b, ok := v.(bool)
	if !ok {
		return false, n.errf(key, "%s must be true or false, got %s", n.fq(key), tomlType(v))
	}
	return b, nil
}

// strs returns the field key as a list of strings.
func (n *node) strs(key string) ([]string, bool, error) {
	v, ok := n.ask(key)
	if !ok {
		return nil, false, nil
	}
	arr, ok := v.([]any)
	if !ok {
		return nil, true, n.errf(key, "%s must be a list of strings, got %s", n.fq(key), tomlType(v))
	}
	out := make([]string, len(arr))
	for i, x := range arr {
		s, ok := x.(string)
		if !ok {
			return nil, true, n.errf(key, "%s[%d] must be a string, got %s", n.fq(key), i, tomlType(x))
		}
		out[i] = s
	}
	return out, true, nil
}

// table returns the sub-table key, or nil when absent.
func (n *node) table(key string) (*node, error) {
	v, ok := n.ask(key)
	if !ok {
		return nil, nil
	}
	m, ok := v.(map[string]any)
	if !ok {
		return nil, n.errf(key, "%s must be a table, got %s", n.fq(key), tomlType(v))
	}
	return &node{d: n.d, m: m, path: joinPath(n.path, key), where: n.where, prefix: n.fq(key) + "."}, nil
}

// tables returns the array of tables key ([[key]] or key = [{...}]); where
// names element i.
func (n *node) tables(key string, where func(i int) string) ([]*node, error) {
	v, ok := n.ask(key)
	if !ok {
		return nil, nil
	}
	var ms []map[string]any
	switch x := v.(type) {
	case []map[string]any:
		ms = x
	case []any:
		for i, e := range x {
			m, ok := e.(map[string]any)
			if !ok {
				return nil, n.errf(key, "%s[%d] must be a table, got %s", n.fq(key), i, tomlType(e))
			}
			ms = append(ms, m)
		}
	default:
		return nil, n.errf(key, "%s must be an array of tables, got %s", n.fq(key), tomlType(v))
	}
	out := make([]*node, len(ms))
	for i, m := range ms {
		out[i] = &node{d: n.d, m: m, path: indexPath(joinPath(n.path, key), i), where: where(i)}
	}
	return out, nil
}

// line returns the line where n starts.
func (n *node) line() int { return n.d.lines.line(n.path) }

func tomlType(v any) string {
	switch v.(type) {
	case string:
		return "a string"
	case int64:
		return "an integer"
	case float64:
		return "a float"
	case bool:
		return "a boolean"
	case map[string]any:
		return "a table"
	case []map[string]any:
		return "an array of tables"
	case []any:
		return "an array"
	case nil:
		return "nothing"
	}
	return fmt.Sprintf("a %T", v)
}
