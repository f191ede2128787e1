package catalog

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"slices"
)

// Merge returns a catalog with overlay on top of base: a substance of
// overlay replaces the whole substance of base with the same id (keeping
// base's position), new substances follow base's in overlay's order, and
// a backend of overlay replaces base's backend of the same name.
// IncludeDefault is set when either input has it. The
// Version is the SHA-256 of the concatenated texts of both, in order (a
// catalog built in code contributes its Write output). Neither input is
// changed; the result shares their (immutable) substances.
func Merge(base, overlay *Catalog) *Catalog {
	out := &Catalog{
		Backends:       slices.Clone(base.Backends),
		Substances:     slices.Clone(base.Substances),
		Source:         base.Source + " + " + overlay.Source,
		IncludeDefault: base.IncludeDefault || overlay.IncludeDefault,
	}
	for _, b := range overlay.Backends {
		if i := slices.IndexFunc(out.Backends, func(x Backend) bool { return x.Name == b.Name }); i >= 0 {
			out.Backends[i] = b
		} else {
			out.Backends = append(out.Backends, b)
		}
	}
	for _, s := range overlay.Substances {
		if i := slices.IndexFunc(out.Substances, func(x *Substance) bool { return x.ID == s.ID }); i >= 0 {
			out.Substances[i] = s
		} else {
			out.Substances = append(out.Substances, s)
		}
	}
	raw := append(slices.Clip(text(base)), text(overlay)...)
	out.raw = raw
	sum := sha256.Sum256(raw)
	out.Version = hex.EncodeToString(sum[:])
	return out
}

// text returns the bytes c was read from, or its Write output.
func text(c *Catalog) []byte {
	if c.raw != nil {
		return c.raw
	}
	var buf bytes.Buffer
	if err := Write(&buf, c); err != nil {
		return nil
	}
	return buf.Bytes()
}
