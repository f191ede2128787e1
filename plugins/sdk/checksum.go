package sdk

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"strings"
)

// FileSHA256 returns the lower-case hex SHA-256 of the file at path, the
// form a catalog pins a backend executable with.
func FileSHA256(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("sdk: hashing backend executable: %w", err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("sdk: hashing backend executable %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// parseSHA256 normalizes a pinned hash to lower-case hex and checks its form.
func parseSHA256(backend, s string) (string, []byte, error) {
	s = strings.ToLower(strings.TrimSpace(s))
	b, err := hex.DecodeString(s)
	if err != nil || len(b) != sha256.Size {
		return "", nil, fmt.Errorf("sdk: backend %q: sha256 %q must be 64 hexadecimal digits", backend, s)
	}
	return s, b, nil
}
