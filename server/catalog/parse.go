package catalog

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"github.com/phasebound/phasebound/plugins/sdk"
	"github.com/phasebound/phasebound/thermo"
)

// FormatVersion is the catalog format this package reads and writes (the
// top-level key format).
//
// A catalog is a TOML file, every number SI (K, Pa, J/mol, m³/mol, kg/mol):
//
//	format = 1                  # required
//	include_default = false     # true: merge on top of Default() (same id replaces)
//
//	[[backend]]                 # third-party backend executables only
//	name = "lab-fits"           # [a-z0-9-]+, not a standard backend's name
//	path = "bin/lab-fits"       # relative to the catalog file's folder, or absolute
//	sha256 = "<64 hex digits>"  # the executable is refused when it does not match
//
//	[[substance]]
//	id = "water"                # [a-z0-9-]+, unique
//	name = "Water"              # optional
//	molar_mass = 0.018015268    # > 0
//	critical = { temperature = 647.096, pressure = 22.064e6 }   # optional
//	provenance = { kind = "published", citation = "..." }       # optional; branches inherit it
//	  [[substance.triple]]      # any number
//	  phases = ["ice-Ih", "liquid", "vapor"]
//	  temperature = 273.16
//	  pressure = 611.657
//	  [[substance.curve]]       # at least one; kinds unique per substance
//	  kind = "melting"          # saturation | melting | sublimation | transition
//	    [[substance.curve.branch]]  # at least one
//	    name = "ice-Ih"         # required when the curve has several branches
//	    family = "power-sum"    # a registered family (thermo.FamilyNames)
//	    backend = ""            # "" = the family's standard backend; a standard or declared name
//	    t_min = 251.165         # 0 < t_min < t_max
//	    t_max = 273.16
//	    solid_form = "ice-Ih"   # optional
//	    uncertainty = "..."     # optional, free text
//	    params = { t_ref = 273.16, p_ref = 611.657, a = [...], b = [...] }
//	    provenance = { kind = "fit", data_file = "runs.csv", data_sha256 = "<64 hex>" }
//	    volume_low = { family = "linear-density", params = { rho0 = 916.7, t0 = 273.15, drho_dt = 0.0 } }
//	    volume_high = { family = "ideal-gas" }
//	    reference = { temperature = 273.16, delta_h = 6007.0, delta_v = -1.634e-6 }
//
// Provenance kinds: "published" needs citation, "fit" needs data_file and
// data_sha256, "invented" marks demonstration data (never for design); note
// is free text. Parameters are numbers or lists of numbers. Volume
// parameters get the substance's molar_mass when they do not give one.
// Unknown fields are errors, so a misspelt key never passes silently. Each
// branch's correlation and phase volumes are built once at load, so
// parameters a family refuses are reported with their line; a branch
// served by a third-party backend is checked by that backend when the
// server starts it.
const FormatVersion = 1

// Provenance kinds.
const (
	Published = "published" // parameters from a published source (Citation)
	Fit       = "fit"       // parameters fitted to a data file (DataFile, DataSHA256)
	Invented  = "invented"  // invented for demonstration, never for design
)

var (
	idPattern     = regexp.MustCompile(`^[a-z0-9-]+$`)
	branchPattern = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._+-]*$`)
	sha256Pattern = regexp.MustCompile(`^[0-9a-fA-F]{64}$`)
)

// standardBackends are the backends built into phasebound (plugins/sdk);
// they need no [[backend]] entry.
var standardBackends = sdk.StandardNames()

// StandardBackends returns the names of the standard backends, sorted.
func StandardBackends() []string { return slices.Clone(standardBackends) }

// IsStandardBackend reports whether name is a standard backend.
func IsStandardBackend(name string) bool { return slices.Contains(standardBackends, name) }

// checkStandard checks that the standard backend named (or, for "", the
// one the server will pick) serves family.
func (n *node) checkStandard(key, backend, family string) error {
	std, err := sdk.StandardFor(family)
	if err != nil {
		return n.errAt(key, fmt.Errorf("no standard backend serves family %q: name a [[backend]] that does", family))
	}
	if backend != "" && backend != std {
		return n.errAt(key, fmt.Errorf("%s %q does not serve family %q (the standard backend %q does; or leave backend \"\")", n.fq(key), backend, family, std))
	}
	return nil
}

// Parse reads a catalog from data; name is used in error messages and as
// the catalog's Source. Every error is an *Error naming the file, line and
// field. A relative backend path is kept as written (Load resolves it
// against the file's folder). When the file says include_default = true
// the result is Merge(Default(), file).
func Parse(name string, data []byte) (*Catalog, error) {
	return parseOne(name, data, "")
}

// Load reads and parses the catalog file at path. Relative backend paths
// are resolved against the file's folder.
func Load(path string) (*Catalog, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("catalog: %w", err)
	}
	return parseOne(path, data, filepath.Dir(path))
}

// LoadFiles loads several catalog files and merges them in order, each on
// top of the ones before it (same substance id replaces the earlier entry,
// same backend name too). A branch may name a backend declared in any of
// the files. If any file says include_default = true, the embedded default
// catalog lies at the bottom.
func LoadFiles(paths ...string) (*Catalog, error) {
	if len(paths) == 0 {
		return nil, errors.New("catalog: no catalog files given")
	}
	var (
		files   []*parsedFile
		withDef bool
	)
	for _, path := range paths {
		data, err := os.ReadFile(path)
		if err != nil {
			return nil, fmt.Errorf("catalog: %w", err)
		}
		f, err := parseFile(path, data, filepath.Dir(path))
		if err != nil {
			return nil, err
		}
		withDef = withDef || f.cat.IncludeDefault
		files = append(files, f)
	}
	var c *Catalog
	if withDef {
		def, err := Default()
		if err != nil {
			return nil, err
		}
		c = def
	}
	var refs []backendRef
	for _, f := range files {
		if c == nil {
			c = f.cat
		} else {
			c = Merge(c, f.cat)
		}
		refs = append(refs, f.refs...)
	}
	if err := checkRefs(c, refs); err != nil {
		return nil, err
	}
	return c, nil
}

func parseOne(name string, data []byte, dir string) (*Catalog, error) {
	f, err := parseFile(name, data, dir)
	if err != nil {
		return nil, err
	}
	c := f.cat
	if c.IncludeDefault {
		def, err := Default()
		if err != nil {
			return nil, err
		}
		c = Merge(def, c)
	}
	if err := checkRefs(c, f.refs); err != nil {
		return nil, err
	}
	return c, nil
}

// parsedFile is one file's catalog before merging.
type parsedFile struct {
	cat  *Catalog
	refs []backendRef // backends named but declared neither in the file nor standard
}

// backendRef is a use of a backend that must be declared somewhere in the
// merged catalog; err is the error to report when it is not.
type backendRef struct {
	name string
	err  *Error
}

func checkRefs(c *Catalog, refs []backendRef) error {
	for _, r := range refs {
		if !slices.ContainsFunc(c.Backends, func(b Backend) bool { return b.Name == r.name }) {
			return r.err
		}
	}
	return nil
}

// parseFile decodes and validates one file. dir, when not "", is the folder
// relative backend paths are resolved against.
func parseFile(name string, data []byte, dir string) (*parsedFile, error) {
	var raw map[string]any
	if _, err := toml.NewDecoder(bytes.NewReader(data)).Decode(&raw); err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, &Error{File: name, Line: pe.Position.Line, Err: fmt.Errorf("invalid TOML: %s", escapeControl(pe.Message))}
		}
		return nil, &Error{File: name, Err: fmt.Errorf("invalid TOML: %s", escapeControl(err.Error()))}
	}
	d := &decoder{file: name, lines: indexLines(string(data))}
	root := d.root(raw)
	f := &parsedFile{}
	c := &Catalog{Source: name, raw: bytes.Clone(data)}
	sum := sha256.Sum256(data)
	c.Version = hex.EncodeToString(sum[:])
	f.cat = c

	format, ok, err := root.num("format")
	if err != nil {
		return nil, err
	}
	if !ok {
		return nil, root.errf("", "format is missing (this version reads format = %d)", FormatVersion)
	}
	if format != FormatVersion {
		return nil, root.errf("format", "format %v is not supported (this version reads format = %d)", format, FormatVersion)
	}
	if c.IncludeDefault, err = root.boolean("include_default"); err != nil {
		return nil, err
	}

	backends, err := root.tables("backend", func(i int) string { return fmt.Sprintf("backend #%d", i+1) })
	if err != nil {
		return nil, err
	}
	for _, bn := range backends {
		b, err := d.backend(bn, dir, c.Backends)
		if err != nil {
			return nil, err
		}
		c.Backends = append(c.Backends, b)
	}

	subs, err := root.tables("substance", func(i int) string { return fmt.Sprintf("substance #%d", i+1) })
	if err != nil {
		return nil, err
	}
	for _, sn := range subs {
		s, refs, err := d.substance(sn, c)
		if err != nil {
			return nil, err
		}
		if prev := c.Lookup(s.ID); prev != nil {
			return nil, sn.errf("id", "id %q is already used by the substance at line %d", s.ID, prev.Line)
		}
		c.Substances = append(c.Substances, s)
		f.refs = append(f.refs, refs...)
	}
	if err := root.done(); err != nil {
		return nil, err
	}
	return f, nil
}

func (d *decoder) backend(n *node, dir string, seen []Backend) (Backend, error) {
	var b Backend
	var err error
	if b.Name, err = n.str("name", true); err != nil {
		return b, err
	}
	if !idPattern.MatchString(b.Name) {
		return b, n.errf("name", "backend name %q must match [a-z0-9-]+", b.Name)
	}
	n.where = fmt.Sprintf("backend %q", b.Name)
	if IsStandardBackend(b.Name) {
		return b, n.errf("name", "%q is a standard backend and needs no [[backend]] entry (standard: %s)",
			b.Name, strings.Join(standardBackends, ", "))
	}
	for _, o := range seen {
		if o.Name == b.Name {
			return b, n.errf("name", "backend %q is declared twice", b.Name)
		}
	}
	if b.Path, err = n.str("path", true); err != nil {
		return b, err
	}
	if strings.TrimSpace(b.Path) == "" {
		return b, n.errf("path", "path must name the backend executable")
	}
	if dir != "" && !filepath.IsAbs(b.Path) {
		if abs, err := filepath.Abs(filepath.Join(dir, b.Path)); err == nil {
			b.Path = abs
		}
	}
	if b.SHA256, err = n.str("sha256", true); err != nil {
		return b, err
	}
	if !sha256Pattern.MatchString(b.SHA256) {
		return b, n.errf("sha256", "sha256 must be 64 hexadecimal digits, got %q", b.SHA256)
	}
	b.SHA256 = strings.ToLower(b.SHA256)
	return b, n.done()
}

func (d *decoder) substance(n *node, c *Catalog) (*Substance, []backendRef, error) {
	s := &Substance{Line: n.line(), File: d.file}
	var err error
	if s.ID, err = n.str("id", true); err != nil {
		return nil, nil, err
	}
	if !idPattern.MatchString(s.ID) {
		return nil, nil, n.errf("id", "id %q must match [a-z0-9-]+ (lower-case letters, digits, '-')", s.ID)
	}
	n.where = fmt.Sprintf("substance %q", s.ID)
	if s.Name, err = n.str("name", false); err != nil {
		return nil, nil, err
	}
	if strings.ContainsFunc(s.Name, isControl) {
		return nil, nil, n.errf("name", "name %q must be one line of text", s.Name)
	}
	if s.MolarMass, err = n.positive("molar_mass", "kg/mol"); err != nil {
		return nil, nil, err
	}
	cn, err := n.table("critical")
	if err != nil {
		return nil, nil, err
	}
	if cn != nil {
		p, err := cn.point()
		if err != nil {
			return nil, nil, err
		}
		s.Critical = &p
	}
	if s.Provenance, _, err = n.provenance(); err != nil {
		return nil, nil, err
	}
	triples, err := n.tables("triple", func(i int) string { return fmt.Sprintf("substance %q triple point #%d", s.ID, i+1) })
	if err != nil {
		return nil, nil, err
	}
	for _, tn := range triples {
		tp, err := tn.triple()
		if err != nil {
			return nil, nil, err
		}
		s.Triple = append(s.Triple, tp)
	}
	curves, err := n.tables("curve", func(i int) string { return fmt.Sprintf("substance %q curve #%d", s.ID, i+1) })
	if err != nil {
		return nil, nil, err
	}
	if len(curves) == 0 {
		return nil, nil, n.errf("", "substance has no [[substance.curve]]")
	}
	var refs []backendRef
	for _, cvn := range curves {
		cv, r, err := d.curve(cvn, s, c)
		if err != nil {
			return nil, nil, err
		}
		s.Curves = append(s.Curves, cv)
		refs = append(refs, r...)
	}
	return s, refs, n.done()
}

// point reads {temperature, pressure}.
func (n *node) point() (Point, error) {
	var p Point
	var err error
	if p.Temperature, err = n.positive("temperature", "K"); err != nil {
		return p, err
	}
	if p.Pressure, err = n.positive("pressure", "Pa"); err != nil {
		return p, err
	}
	return p, n.done()
}

func (n *node) triple() (TriplePoint, error) {
	var tp TriplePoint
	phases, ok, err := n.strs("phases")
	if err != nil {
		return tp, err
	}
	if !ok {
		return tp, n.errf("", "phases is missing (three phase names, e.g. [\"solid\", \"liquid\", \"vapor\"])")
	}
	if len(phases) != 3 {
		return tp, n.errf("phases", "phases must name three phases, got %d", len(phases))
	}
	for i, ph := range phases {
		if strings.TrimSpace(ph) == "" {
			return tp, n.errf("phases", "phases[%d] is empty", i)
		}
		if strings.ContainsFunc(ph, isControl) {
			return tp, n.errf("phases", "phases[%d] %q must be one line of text", i, ph)
		}
		if slices.Contains(phases[:i], ph) {
			return tp, n.errf("phases", "phase %q is named twice", ph)
		}
	}
	tp.Phases = phases
	if tp.Point, err = n.point(); err != nil {
		return tp, err
	}
	return tp, nil
}

// provenance reads the optional provenance table.
func (n *node) provenance() (Provenance, bool, error) {
	var p Provenance
	pn, err := n.table("provenance")
	if err != nil || pn == nil {
		return p, false, err
	}
	if p.Kind, err = pn.str("kind", true); err != nil {
		return p, true, err
	}
	if p.Citation, err = pn.str("citation", false); err != nil {
		return p, true, err
	}
	if p.DataFile, err = pn.str("data_file", false); err != nil {
		return p, true, err
	}
	if p.DataSHA256, err = pn.str("data_sha256", false); err != nil {
		return p, true, err
	}
	if p.Note, err = pn.str("note", false); err != nil {
		return p, true, err
	}
	switch p.Kind {
	case Published:
		if strings.TrimSpace(p.Citation) == "" {
			return p, true, pn.errf("", "provenance.citation is required when kind = %q (the full published citation)", Published)
		}
	case Fit:
		if strings.TrimSpace(p.DataFile) == "" {
			return p, true, pn.errf("", "provenance.data_file is required when kind = %q", Fit)
		}
		if !sha256Pattern.MatchString(p.DataSHA256) {
			return p, true, pn.errf("data_sha256", "provenance.data_sha256 must be the 64 hexadecimal digits of the data file's SHA-256 when kind = %q, got %q", Fit, p.DataSHA256)
		}
		p.DataSHA256 = strings.ToLower(p.DataSHA256)
	case Invented:
	default:
		return p, true, pn.errf("kind", "provenance.kind %q is not valid (valid: %s, %s, %s)", p.Kind, Published, Fit, Invented)
	}
	return p, true, pn.done()
}

func (d *decoder) curve(n *node, s *Substance, c *Catalog) (*Curve, []backendRef, error) {
	name, err := n.str("kind", true)
	if err != nil {
		return nil, nil, err
	}
	kind, err := thermo.ParseCurveKind(name)
	if err != nil || kind.String() != name {
		return nil, nil, n.errf("kind", "kind %q is not a curve kind (valid: saturation, melting, sublimation, transition)", name)
	}
	n.where = fmt.Sprintf("substance %q curve %q", s.ID, name)
	if s.Curve(kind) != nil {
		return nil, nil, n.errf("kind", "substance %q has two %s curves; give one curve several branches instead", s.ID, name)
	}
	cv := &Curve{Kind: kind}
	where := n.where
	branches, err := n.tables("branch", func(i int) string { return fmt.Sprintf("%s branch #%d", where, i+1) })
	if err != nil {
		return nil, nil, err
	}
	if len(branches) == 0 {
		return nil, nil, n.errf("", "curve has no [[substance.curve.branch]]")
	}
	var refs []backendRef
	for _, bn := range branches {
		b, r, err := d.branch(bn, s, cv, len(branches), c)
		if err != nil {
			return nil, nil, err
		}
		cv.Branches = append(cv.Branches, b)
		refs = append(refs, r...)
	}
	return cv, refs, n.done()
}

func (d *decoder) branch(n *node, s *Substance, cv *Curve, count int, c *Catalog) (*Branch, []backendRef, error) {
	b := &Branch{Line: n.line()}
	var err error
	if b.Name, err = n.str("name", false); err != nil {
		return nil, nil, err
	}
	curveWhere := fmt.Sprintf("substance %q curve %q", s.ID, cv.Kind)
	switch {
	case b.Name != "":
		if !branchPattern.MatchString(b.Name) {
			return nil, nil, n.errf("name", "branch name %q must be letters, digits and '-', '.', '_', '+' (e.g. \"ice-III\")", b.Name)
		}
		n.where = fmt.Sprintf("%s branch %q", curveWhere, b.Name)
		for _, o := range cv.Branches {
			if o.Name == b.Name {
				return nil, nil, n.errf("name", "branch name %q is used twice in this curve (first at line %d)", b.Name, o.Line)
			}
		}
	case count > 1:
		return nil, nil, n.errf("", "branch name is required: the curve has %d branches", count)
	default:
		n.where = curveWhere
	}
	var refs []backendRef
	if b.Family, err = n.str("family", true); err != nil {
		return nil, nil, err
	}
	if b.Backend, err = n.str("backend", false); err != nil {
		return nil, nil, err
	}
	if r, err := n.backendRef("backend", b.Backend, c); err != nil {
		return nil, nil, err
	} else if r != nil {
		refs = append(refs, *r)
	}
	if b.Tmin, err = n.positive("t_min", "K"); err != nil {
		return nil, nil, err
	}
	if b.Tmax, err = n.positive("t_max", "K"); err != nil {
		return nil, nil, err
	}
	if b.Tmin >= b.Tmax {
		return nil, nil, n.errf("t_min", "t_min %v must be < t_max %v", b.Tmin, b.Tmax)
	}
	if b.SolidForm, err = n.str("solid_form", false); err != nil {
		return nil, nil, err
	}
	if strings.ContainsFunc(b.SolidForm, isControl) {
		return nil, nil, n.errf("solid_form", "solid_form %q must be one line of text", b.SolidForm)
	}
	if b.Uncertainty, err = n.str("uncertainty", false); err != nil {
		return nil, nil, err
	}
	if b.Params, err = n.params("params"); err != nil {
		return nil, nil, err
	}
	var given bool
	if b.Provenance, given, err = n.provenance(); err != nil {
		return nil, nil, err
	}
	if !given {
		if s.Provenance.Kind == "" {
			return nil, nil, n.errf("", "provenance is missing (here or on the substance): say whether the parameters are %s, %s or %s", Published, Fit, Invented)
		}
		b.Provenance = s.Provenance
	}
	if strings.TrimSpace(b.Family) == "" {
		return nil, nil, n.errf("family", "family is empty (valid: %s)", strings.Join(thermo.FamilyNames(), ", "))
	}
	if err := d.checkFamily(n, b); err != nil {
		return nil, nil, err
	}
	for _, side := range [...]struct {
		key string
		dst **Correlation
	}{{"volume_low", &b.VolumeLow}, {"volume_high", &b.VolumeHigh}} {
		vc, r, err := d.volume(n, side.key, s, b, c)
		if err != nil {
			return nil, nil, err
		}
		*side.dst = vc
		refs = append(refs, r...)
	}
	rn, err := n.table("reference")
	if err != nil {
		return nil, nil, err
	}
	if rn != nil {
		ref := &Reference{}
		if ref.Temperature, err = rn.positive("temperature", "K"); err != nil {
			return nil, nil, err
		}
		if ref.Temperature < b.Tmin || ref.Temperature > b.Tmax {
			return nil, nil, rn.errf("temperature", "reference.temperature %v K must lie within [t_min, t_max] = [%v, %v] K", ref.Temperature, b.Tmin, b.Tmax)
		}
		var ok bool
		if ref.DeltaH, ok, err = rn.finite("delta_h"); err != nil {
			return nil, nil, err
		} else if !ok {
			return nil, nil, rn.errf("", "reference.delta_h is missing (J/mol)")
		}
		if ref.DeltaV, _, err = rn.finite("delta_v"); err != nil {
			return nil, nil, err
		}
		if err := rn.done(); err != nil {
			return nil, nil, err
		}
		b.Reference = ref
	}
	return b, refs, n.done()
}

// backendRef checks a backend name: "" and standard names are fine, names
// declared in the file too; anything else must be declared in another file
// merged with this one, which the caller checks after merging.
func (n *node) backendRef(key, name string, c *Catalog) (*backendRef, error) {
	if name == "" || IsStandardBackend(name) {
		return nil, nil
	}
	if !idPattern.MatchString(name) {
		return nil, n.errf(key, "%s %q must match [a-z0-9-]+", n.fq(key), name)
	}
	if slices.ContainsFunc(c.Backends, func(b Backend) bool { return b.Name == name }) {
		return nil, nil
	}
	declared := make([]string, 0, len(c.Backends))
	for _, b := range c.Backends {
		declared = append(declared, b.Name)
	}
	msg := fmt.Errorf("%s %q is not declared: declare it in [[backend]], name a standard backend (%s) or leave it \"\" for the family's standard backend",
		n.fq(key), name, strings.Join(append(standardBackends[:len(standardBackends):len(standardBackends)], declared...), ", "))
	e := n.errAt(key, msg).(*Error)
	return &backendRef{name: name, err: e}, nil
}

func (d *decoder) volume(n *node, key string, s *Substance, b *Branch, c *Catalog) (*Correlation, []backendRef, error) {
	vn, err := n.table(key)
	if err != nil || vn == nil {
		return nil, nil, err
	}
	v := &Correlation{}
	if v.Family, err = vn.str("family", true); err != nil {
		return nil, nil, err
	}
	if v.Backend, err = vn.str("backend", false); err != nil {
		return nil, nil, err
	}
	var refs []backendRef
	if r, err := vn.backendRef("backend", v.Backend, c); err != nil {
		return nil, nil, err
	} else if r != nil {
		refs = append(refs, *r)
	}
	if v.Params, err = vn.params("params"); err != nil {
		return nil, nil, err
	}
	if _, ok := v.Params["molar_mass"]; !ok {
		v.Params["molar_mass"] = []float64{s.MolarMass}
	}
	if err := vn.done(); err != nil {
		return nil, nil, err
	}
	if v.Backend != "" && !IsStandardBackend(v.Backend) {
		return v, refs, nil // a third-party backend validates its own families
	}
	fam, err := thermo.GetVolumeFamily(v.Family)
	if err != nil {
		return nil, nil, vn.errAt("family", fmt.Errorf("%s.family %q is not known (valid: %s)", key, v.Family, strings.Join(thermo.VolumeFamilyNames(), ", ")))
	}
	if _, err := newVolume(fam, v.Params, b.Tmin, b.Tmax); err != nil {
		return nil, nil, vn.errAt("params", fmt.Errorf("volume family %q: %w", v.Family, err))
	}
	if err := vn.checkStandard("backend", v.Backend, v.Family); err != nil {
		return nil, nil, err
	}
	return v, refs, nil
}

// params reads a parameter table: each value a number or a list of numbers.
func (n *node) params(key string) (thermo.Params, error) {
	pn, err := n.table(key)
	if err != nil {
		return nil, err
	}
	p := thermo.Params{}
	if pn == nil {
		return p, nil
	}
	names := make([]string, 0, len(pn.m))
	for k := range pn.m {
		names = append(names, k)
	}
	sort.Slice(names, func(i, j int) bool {
		li, lj := pn.d.lines.line(joinPath(pn.path, names[i])), pn.d.lines.line(joinPath(pn.path, names[j]))
		if li != lj {
			return li < lj
		}
		return names[i] < names[j]
	})
	for _, k := range names {
		pn.ask(k)
		var vals []float64
		switch x := pn.m[k].(type) {
		case []any:
			if len(x) == 0 {
				return nil, pn.errf(k, "%s is an empty list", pn.fq(k))
			}
			for i, e := range x {
				f, ok := number(e)
				if !ok {
					return nil, pn.errf(k, "%s[%d] must be a number, got %s", pn.fq(k), i, tomlType(e))
				}
				vals = append(vals, f)
			}
		default:
			f, ok := number(x)
			if !ok {
				return nil, pn.errf(k, "%s must be a number or a list of numbers, got %s", pn.fq(k), tomlType(x))
			}
			vals = []float64{f}
		}
		for i, f := range vals {
			if math.IsNaN(f) || math.IsInf(f, 0) {
				if len(vals) == 1 {
					return nil, pn.errf(k, "%s must be finite, got %v", pn.fq(k), f)
				}
				return nil, pn.errf(k, "%s[%d] must be finite, got %v", pn.fq(k), i, f)
			}
		}
		p[k] = vals
	}
	return p, nil
}

// newCorrelation builds a correlation, turning a panic in a family (a bug,
// but possibly third-party code) into an error so a bad catalog can never
// take the server down.
func newCorrelation(f thermo.Family, p thermo.Params, tmin, tmax float64) (c thermo.Correlation, err error) {
	defer func() {
		if r := recover(); r != nil {
			c, err = nil, fmt.Errorf("the family failed on these parameters: %v", r)
		}
	}()
	return f.New(cloneParams(p), tmin, tmax)
}

func newVolume(f thermo.VolumeFamily, p thermo.Params, tmin, tmax float64) (v thermo.VolumeCorrelation, err error) {
	defer func() {
		if r := recover(); r != nil {
			v, err = nil, fmt.Errorf("the family failed on these parameters: %v", r)
		}
	}()
	return f.New(cloneParams(p), tmin, tmax)
}

// cloneParams copies p so a family cannot change the catalog's values.
func cloneParams(p thermo.Params) thermo.Params {
	q := make(thermo.Params, len(p))
	for k, v := range p {
		q[k] = slices.Clone(v)
	}
	return q
}

// checkFamily builds the branch's correlation once, so bad parameters are
// refused at load. A branch served by a third-party backend may use a
// family this process does not know: that backend validates it when the
// server starts it.
func (d *decoder) checkFamily(n *node, b *Branch) error {
	if b.Backend != "" && !IsStandardBackend(b.Backend) {
		return nil
	}
	fam, err := thermo.GetFamily(b.Family)
	if err != nil {
		return n.errAt("family", fmt.Errorf("family %q is not known (valid: %s)", b.Family, strings.Join(thermo.FamilyNames(), ", ")))
	}
	corr, err := newCorrelation(fam, b.Params, b.Tmin, b.Tmax)
	if err != nil {
		return n.errAt("params", fmt.Errorf("family %q: %w", b.Family, err))
	}
	for _, t := range [...]float64{b.Tmin, b.Tmax} {
		p, err := pressureAt(corr, t)
		if err != nil {
			return n.errAt("params", fmt.Errorf("family %q cannot evaluate P(%v K): %w", b.Family, t, err))
		}
		if math.IsNaN(p) || math.IsInf(p, 0) || p <= 0 {
			return n.errAt("params", fmt.Errorf("family %q gives P(%v K) = %v Pa, not a positive pressure", b.Family, t, p))
		}
	}
	return n.checkStandard("backend", b.Backend, b.Family)
}

func pressureAt(c thermo.Correlation, t float64) (p float64, err error) {
	defer func() {
		if r := recover(); r != nil {
			p, err = 0, fmt.Errorf("the family failed: %v", r)
		}
	}()
	return c.Pressure(t)
}

// escapeControl writes control characters as Go escapes, so a message that
// quotes the input stays on one line.
func escapeControl(s string) string {
	if !strings.ContainsFunc(s, isControl) {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		if isControl(r) {
			q := strconv.QuoteRune(r)
			b.WriteString(q[1 : len(q)-1])
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

func isControl(r rune) bool { return r < 0x20 || r == 0x7f }
