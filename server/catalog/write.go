package catalog

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/phasebound/phasebound/thermo"
)

// Write writes c in the catalog format, readable by Parse (and so by the
// --catalog flag). Parse(Write(c)) gives back c's backends and substances;
// parameter lists of one value come back as that one value, and relative
// backend paths stay relative (to the folder the written file is loaded
// from), and IncludeDefault is kept (include_default = true, written only
// when set). Write does not validate: a catalog built in code should be checked
// by parsing what was written, as the fit command does.
func Write(w io.Writer, c *Catalog) error {
	bw := bufio.NewWriter(w)
	p := &printer{w: bw}
	p.line("# phasebound catalog: substances, their coexistence curves and correlations (SI units).")
	if c.Source != "" {
		p.line("# Written from: " + oneLine(c.Source))
	}
	p.kv("", "format", strconv.Itoa(FormatVersion))
	if c.IncludeDefault {
		p.kv("", "include_default", "true")
	}
	for _, b := range c.Backends {
		p.blank()
		p.line("[[backend]]")
		p.kv("", "name", quote(b.Name))
		p.kv("", "path", quote(b.Path))
		p.kv("", "sha256", quote(b.SHA256))
	}
	for _, s := range c.Substances {
		p.substance(s)
	}
	if p.err != nil {
		return fmt.Errorf("catalog: write: %w", p.err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("catalog: write: %w", err)
	}
	return nil
}

type printer struct {
	w   *bufio.Writer
	err error
}

func (p *printer) line(s string) {
	if p.err == nil {
		_, p.err = p.w.WriteString(s + "\n")
	}
}

func (p *printer) blank() { p.line("") }

func (p *printer) kv(indent, key, value string) { p.line(indent + key + " = " + value) }

func (p *printer) substance(s *Substance) {
	p.blank()
	p.line("[[substance]]")
	p.kv("", "id", quote(s.ID))
	if s.Name != "" {
		p.kv("", "name", quote(s.Name))
	}
	p.kv("", "molar_mass", num(s.MolarMass))
	if s.Critical != nil {
		p.kv("", "critical", inline([]string{"temperature", num(s.Critical.Temperature), "pressure", num(s.Critical.Pressure)}))
	}
	if s.Provenance.Kind != "" {
		p.kv("", "provenance", provenance(s.Provenance))
	}
	for _, t := range s.Triple {
		p.blank()
		p.line("  [[substance.triple]]")
		phases := make([]string, len(t.Phases))
		for i, ph := range t.Phases {
			phases[i] = quote(ph)
		}
		p.kv("  ", "phases", "["+strings.Join(phases, ", ")+"]")
		p.kv("  ", "temperature", num(t.Temperature))
		p.kv("  ", "pressure", num(t.Pressure))
	}
	for _, cv := range s.Curves {
		p.blank()
		p.line("  [[substance.curve]]")
		p.kv("  ", "kind", quote(cv.Kind.String()))
		for _, b := range cv.Branches {
			p.branch(b)
		}
	}
}

func (p *printer) branch(b *Branch) {
	const in = "    "
	p.blank()
	p.line(in + "[[substance.curve.branch]]")
	if b.Name != "" {
		p.kv(in, "name", quote(b.Name))
	}
	p.kv(in, "family", quote(b.Family))
	if b.Backend != "" {
		p.kv(in, "backend", quote(b.Backend))
	}
	p.kv(in, "t_min", num(b.Tmin))
	p.kv(in, "t_max", num(b.Tmax))
	if b.SolidForm != "" {
		p.kv(in, "solid_form", quote(b.SolidForm))
	}
	if b.Uncertainty != "" {
		p.kv(in, "uncertainty", quote(b.Uncertainty))
	}
	if b.Provenance.Kind != "" {
		p.kv(in, "provenance", provenance(b.Provenance))
	}
	if r := b.Reference; r != nil {
		p.kv(in, "reference", inline([]string{"temperature", num(r.Temperature), "delta_h", num(r.DeltaH), "delta_v", num(r.DeltaV)}))
	}
	// Sub-tables last: after a [table] header no key of the branch itself may follow.
	p.params(in, "substance.curve.branch.params", b.Params)
	for _, v := range [...]struct {
		key string
		c   *Correlation
	}{{"volume_low", b.VolumeLow}, {"volume_high", b.VolumeHigh}} {
		if v.c == nil {
			continue
		}
		p.line(in + "[substance.curve.branch." + v.key + "]")
		p.kv(in, "family", quote(v.c.Family))
		if v.c.Backend != "" {
			p.kv(in, "backend", quote(v.c.Backend))
		}
		p.params(in, "substance.curve.branch."+v.key+".params", v.c.Params)
	}
}

func (p *printer) params(in, header string, ps thermo.Params) {
	if len(ps) == 0 {
		return
	}
	p.line(in + "[" + header + "]")
	names := make([]string, 0, len(ps))
	for k := range ps {
		names = append(names, k)
	}
	sort.Strings(names)
	for _, k := range names {
		v := ps[k]
		if len(v) == 1 {
			p.kv(in, key(k), num(v[0]))
			continue
		}
		vals := make([]string, len(v))
		for i, x := range v {
			vals[i] = num(x)
		}
		p.kv(in, key(k), "["+strings.Join(vals, ", ")+"]")
	}
}

func provenance(pr Provenance) string {
	kv := []string{"kind", quote(pr.Kind)}
	if pr.Citation != "" {
		kv = append(kv, "citation", quote(pr.Citation))
	}
	if pr.DataFile != "" {
		kv = append(kv, "data_file", quote(pr.DataFile))
	}
	if pr.DataSHA256 != "" {
		kv = append(kv, "data_sha256", quote(pr.DataSHA256))
	}
	if pr.Note != "" {
		kv = append(kv, "note", quote(pr.Note))
	}
	return inline(kv)
}

// inline formats key, value pairs as a TOML inline table.
func inline(kv []string) string {
	parts := make([]string, 0, len(kv)/2)
	for i := 0; i+1 < len(kv); i += 2 {
		parts = append(parts, kv[i]+" = "+kv[i+1])
	}
	return "{ " + strings.Join(parts, ", ") + " }"
}

// num formats a float as a TOML float that reads back to the same value.
func num(v float64) string {
	switch {
	case math.IsNaN(v):
		return "nan"
	case math.IsInf(v, 1):
		return "inf"
	case math.IsInf(v, -1):
		return "-inf"
	}
	// Plain decimals read best in the range catalogs use; the shortest
	// representation in either notation reads back to the same float.
	var s string
	if a := math.Abs(v); a == 0 || (a >= 1e-4 && a < 1e16) {
		s = strconv.FormatFloat(v, 'f', -1, 64)
	} else {
		s = strconv.FormatFloat(v, 'e', -1, 64)
	}
	if !strings.ContainsAny(s, ".eEn") {
		s += ".0"
	}
	return s
}

// key returns k as a TOML key: bare when it can be, quoted otherwise.
func key(k string) string {
	if k == "" {
		return `""`
	}
	for _, r := range k {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '_' || r == '-') {
			return quote(k)
		}
	}
	return k
}

// quote returns s as a TOML basic string.
func quote(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		i += size
		switch {
		case r == '"':
			b.WriteString(`\"`)
		case r == '\\':
			b.WriteString(`\\`)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\t':
			b.WriteString(`\t`)
		case r == '\r':
			b.WriteString(`\r`)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, `\u%04X`, r)
		default:
			b.WriteRune(r) // invalid UTF-8 becomes U+FFFD
		}
	}
	b.WriteByte('"')
	return b.String()
}

func oneLine(s string) string {
	return strings.Map(func(r rune) rune {
		if r < 0x20 || r == 0x7f {
			return ' '
		}
		return r
	}, s)
}
