package catalog

import "github.com/phasebound/phasebound/thermo"

// Catalog is a validated set of substances and the backends that serve
// their correlation families. A Catalog is immutable once loaded.
type Catalog struct {
	// Backends are the third-party backend executables the catalog names,
	// each pinned by SHA-256. The standard backends need no entry.
	Backends []Backend
	// Substances in file order; ids are unique.
	Substances []*Substance
	// Source names where the catalog came from ("embedded default" or a path).
	Source string
	// Version is the hex SHA-256 of the catalog's bytes (of all files merged).
	Version string
	// IncludeDefault is the file's include_default: the catalog is meant to
	// lie on top of the embedded default catalog. Parse and Load have then
	// already merged the default in (so its substances are in Substances);
	// Write emits include_default = true, so that the written file is
	// merged onto the default again when it is parsed. The field alone
	// merges nothing: a catalog built in code serves only its own
	// substances until it is written and parsed.
	IncludeDefault bool

	// raw is the text the catalog was read from (the concatenation, in
	// order, for a merged catalog); nil for a catalog built in code.
	raw []byte
}

// Backend is a third-party backend executable.
type Backend struct {
	Name   string
	Path   string // as written in the file; Load makes a relative path absolute against the file's folder
	SHA256 string // hex, lower case
}

// Provenance says what a correlation's parameters rest on.
type Provenance struct {
	Kind       string // "published", "fit" or "invented"
	Citation   string // full published citation (published)
	DataFile   string // data file name (fit)
	DataSHA256 string // hex SHA-256 of the data file (fit)
	Note       string
}

// Point is a (T, P) state in K and Pa.
type Point struct {
	Temperature float64
	Pressure    float64
}

// TriplePoint is a state where three phases coexist. Phases are named by
// solid form ("ice-Ih"), "solid", "liquid" or "vapor".
type TriplePoint struct {
	Phases []string
	Point
}

// Substance is one catalog entry.
type Substance struct {
	ID        string
	Name      string
	MolarMass float64 // kg/mol
	Critical  *Point  // nil when not given
	Triple    []TriplePoint
	Curves    []*Curve
	Provenance
	Line int    // line in the catalog file where the substance starts
	File string // the catalog file the substance comes from (the name given to Parse)
}

// Curve is one coexistence curve of a substance.
type Curve struct {
	Kind     thermo.CurveKind
	Branches []*Branch
}

// Correlation names a family, its backend and its parameters.
type Correlation struct {
	Family  string
	Backend string // "" means the standard backend that serves Family
	Params  thermo.Params
}

// Reference is a known coexistence state with its enthalpy and volume of
// transition, used by consistency audits.
type Reference struct {
	Temperature float64 // K
	DeltaH      float64 // J/mol, high-T phase minus low-T phase
	DeltaV      float64 // m³/mol, high-T phase minus low-T phase; 0 if unknown
}

// Branch is a segment of a curve served by one correlation.
type Branch struct {
	Name string // "" for a single-branch curve
	Correlation
	Tmin, Tmax  float64 // validity, K
	SolidForm   string  // solid form on the low-T side, when known
	Uncertainty string  // stated uncertainty, free text
	Provenance
	// VolumeLow and VolumeHigh give the molar volumes of the phases stable
	// below and above the curve in temperature; nil when unknown.
	VolumeLow, VolumeHigh *Correlation
	// Reference is nil when the catalog gives none.
	Reference *Reference
	Line      int
}

// Lookup returns the substance with the given id, or nil.
func (c *Catalog) Lookup(id string) *Substance {
	for _, s := range c.Substances {
		if s.ID == id {
			return s
		}
	}
	return nil
}

// Curve returns the substance's curve of the given kind, or nil.
func (s *Substance) Curve(k thermo.CurveKind) *Curve {
	for _, c := range s.Curves {
		if c.Kind == k {
			return c
		}
	}
	return nil
}
