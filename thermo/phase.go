package thermo

import (
	"errors"
	"fmt"
	"math"
	"strings"
)

// Phase is the phase of a state (T, P). The values are those of proto enum
// phasebound.v1.Phase, so a conversion is a type cast.
type Phase int32

// Phases.
const (
	PhaseSolid         Phase = 1
	PhaseLiquid        Phase = 2
	PhaseVapor         Phase = 3
	PhaseSupercritical Phase = 4
)

// String returns "solid", "liquid", "vapor" or "supercritical".
func (p Phase) String() string {
	switch p {
	case PhaseSolid:
		return "solid"
	case PhaseLiquid:
		return "liquid"
	case PhaseVapor:
		return "vapor"
	case PhaseSupercritical:
		return "supercritical"
	}
	return fmt.Sprintf("Phase(%d)", int32(p))
}

// ErrOutsideCoverage reports a state that the substance's curves do not
// cover well enough to tell its phase without guessing (for example a
// pressure above the highest melting branch, where the state could be
// solid or fluid).
var ErrOutsideCoverage = errors.New("thermo: state outside the coverage of the substance's curves")

// StatePoint is a state (T, P) in K and Pa.
type StatePoint struct {
	Temperature float64 // K
	Pressure    float64 // Pa
}

// TriplePoint is a state where three phases coexist; phases are named by
// solid form ("ice-Ih"), "solid", "liquid" or "vapor".
type TriplePoint struct {
	Phases []string
	StatePoint
}

// PhaseDiagramSpec lists what a substance's phase diagram is made of. Any
// curve may be nil; Transitions (solid–solid curves) only contribute to
// margins.
type PhaseDiagramSpec struct {
	Saturation, Melting, Sublimation *Curve
	Transitions                      []*Curve
	// Triple points; the one whose phases include "liquid" and "vapor"
	// (or "vapour", "gas") is the solid–liquid–vapour triple point. When
	// none is listed, the saturation curve's low end stands in for it.
	Triple []TriplePoint
	// Critical point; nil when unknown.
	Critical *StatePoint
}

// PhaseDiagram tells the phase of a state from a substance's curves. It is
// immutable and safe for concurrent use (the curves it was built from must
// not be modified afterwards); Locate allocates nothing on success.
//
// # Convention
//
// With (Tt, Pt) the solid–liquid–vapour triple point and (Tc, Pc) the
// critical point:
//
//   - P < Pt: solid below the sublimation temperature at P, vapor above it
//     (and vapor whenever T ≥ Tt, since the sublimation curve lies below Tt).
//   - P ≥ Pt: solid below the melting temperature at P, fluid above it. The
//     fluid is liquid when T < Tt (liquid under pressure melting, as
//     water at 263.15 K and 200 MPa); supercritical when T > Tc and P > Pc;
//     vapor when T > Tc otherwise (a gas above its critical temperature);
//     and for Tt ≤ T < Tc liquid at or above the saturation pressure, vapor
//     below it.
//
// "Supercritical" thus follows the trade's usage, a fluid above both its
// critical temperature and its critical pressure; a compressed liquid (P >
// Pc, T < Tc) is reported liquid and a gas below Pc above Tc vapor. A state
// exactly on the melting or sublimation curve is reported as the fluid
// (the high-temperature side); exactly on the saturation curve, liquid.
//
// The solid form is the SolidForm of the melting branch whose pressure
// interval holds P (of the sublimation branch below Pt). That is an
// approximation: solid–solid transitions are not used to classify (the
// catalog may lack them), so a cold state deep inside the solid region
// gets the form that melts at its pressure — for water at 200 K and 100
// MPa ice-Ih, where ice II may be the stable form.
//
// States that need a curve the substance lacks, or lie outside its
// validity range (a pressure above the last melting branch, a temperature
// above the saturation curve with no critical point given), give an error
// wrapping ErrOutsideCoverage rather than a guess.
//
// # Margins
//
// MarginT is the distance in K, at fixed P, from T to the nearest point
// where the isobar crosses a boundary; MarginP the distance in Pa, at fixed
// T, along the isotherm. Boundaries are every branch of every curve over
// its validity range, plus, when the critical point is known, the critical
// isotherm above Pc and the critical isobar above Tc (they bound the
// supercritical region of the convention above). A branch that is not
// monotonic contributes only the crossing its inverse returns. Where no
// boundary crosses the line the margin is +Inf and the index −1.
type PhaseDiagram struct {
	sat, melt, sub *Curve
	trans          []*Curve
	tt, pt         float64
	hasCrit        bool
	tc, pc         float64
	bounds         []phBoundary
	names          []string
}

// phBoundary is one boundary line for margins: a branch of a curve, or a
// critical line (curve nil; crit 'T' or 'P').
type phBoundary struct {
	curve  *Curve
	branch int
	crit   byte
}

// PhaseState is the phase of a state with its margins.
type PhaseState struct {
	Phase Phase
	// Form is the solid form for a solid when the branches name one.
	Form string
	// MarginT is the distance in K at fixed pressure to the nearest
	// boundary, NearestT its index in BoundaryNames (−1: none).
	MarginT  float64
	NearestT int
	// MarginP is the distance in Pa at fixed temperature to the nearest
	// boundary, NearestP its index in BoundaryNames (−1: none).
	MarginP  float64
	NearestP int
	// Nearest is whichever of NearestT and NearestP is nearer relative to
	// the state (MarginT/T against MarginP/P).
	Nearest int
}

// NewPhaseDiagram checks spec and returns a phase diagram. It needs a
// solid–liquid–vapour triple point (listed, or the saturation curve's low
// end) and at least one curve.
func NewPhaseDiagram(spec PhaseDiagramSpec) (*PhaseDiagram, error) {
	d := &PhaseDiagram{sat: spec.Saturation, melt: spec.Melting, sub: spec.Sublimation}
	for _, c := range []struct {
		c    *Curve
		kind CurveKind
	}{{spec.Saturation, Saturation}, {spec.Melting, Melting}, {spec.Sublimation, Sublimation}} {
		if c.c == nil {
			continue
		}
		if err := c.c.check(); err != nil {
			return nil, err
		}
		if c.c.Kind != c.kind {
			return nil, fmt.Errorf("%w: a %v curve given as the %v curve", ErrBadParam, c.c.Kind, c.kind)
		}
	}
	for _, c := range spec.Transitions {
		if c == nil {
			return nil, fmt.Errorf("%w: nil transition curve", ErrBadParam)
		}
		if err := c.check(); err != nil {
			return nil, err
		}
		d.trans = append(d.trans, c)
	}
	if d.sat == nil && d.melt == nil && d.sub == nil {
		return nil, fmt.Errorf("%w: a phase diagram needs at least one of the saturation, melting and sublimation curves", ErrBadParam)
	}
	found := false
	for _, tp := range spec.Triple {
		if phHas(tp.Phases, "liquid") && (phHas(tp.Phases, "vapor") || phHas(tp.Phases, "vapour") || phHas(tp.Phases, "gas")) {
			d.tt, d.pt, found = tp.Temperature, tp.Pressure, true
			break
		}
	}
	if !found {
		if d.sat == nil {
			return nil, fmt.Errorf("%w: no solid–liquid–vapour triple point given and no saturation curve to take it from", ErrBadParam)
		}
		r := d.sat.Range()
		pt, err := d.sat.Pressure(r.Tmin, CurveOptions{})
		if err != nil {
			return nil, fmt.Errorf("thermo: triple point from the saturation curve's low end: %w", err)
		}
		d.tt, d.pt = r.Tmin, pt.Pressure
	}
	if !(d.tt > 0 && d.pt > 0) || math.IsInf(d.tt, 0) || math.IsInf(d.pt, 0) {
		return nil, fmt.Errorf("%w: triple point (%g K, %g Pa) must be finite and positive", ErrBadParam, d.tt, d.pt)
	}
	if spec.Critical != nil {
		d.hasCrit, d.tc, d.pc = true, spec.Critical.Temperature, spec.Critical.Pressure
		if !(d.tc > d.tt && d.pc > d.pt) || math.IsInf(d.tc, 0) || math.IsInf(d.pc, 0) {
			return nil, fmt.Errorf("%w: critical point (%g K, %g Pa) must lie above the triple point (%g K, %g Pa)",
				ErrBadParam, d.tc, d.pc, d.tt, d.pt)
		}
	}
	for _, c := range append([]*Curve{d.sat, d.melt, d.sub}, d.trans...) {
		if c == nil {
			continue
		}
		for i, b := range c.Branches {
			name := c.Kind.String()
			if b.Name != "" {
				name += "/" + b.Name
			}
			d.bounds = append(d.bounds, phBoundary{curve: c, branch: i})
			d.names = append(d.names, name)
		}
	}
	if d.hasCrit {
		d.bounds = append(d.bounds, phBoundary{crit: 'T'}, phBoundary{crit: 'P'})
		d.names = append(d.names, "critical-temperature", "critical-pressure")
	}
	return d, nil
}

func phHas(list []string, s string) bool {
	for _, v := range list {
		if strings.EqualFold(strings.TrimSpace(v), s) {
			return true
		}
	}
	return false
}

// BoundaryNames returns the names of the boundaries that PhaseState indices
// refer to: "melting/ice-Ih", "saturation", "critical-temperature", ...
func (d *PhaseDiagram) BoundaryNames() []string { return append([]string(nil), d.names...) }

// TriplePoint returns the solid–liquid–vapour triple point used.
func (d *PhaseDiagram) TriplePoint() StatePoint { return StatePoint{Temperature: d.tt, Pressure: d.pt} }

// Critical returns the critical point and whether it is known.
func (d *PhaseDiagram) Critical() (StatePoint, bool) {
	return StatePoint{Temperature: d.tc, Pressure: d.pc}, d.hasCrit
}

// Locate returns the phase of the state (t, p) and its margins; see
// PhaseDiagram for the convention. NaN, ±Inf and non-positive values give
// an *InputError; states the curves do not cover give an error wrapping
// ErrOutsideCoverage.
func (d *PhaseDiagram) Locate(t, p float64) (PhaseState, error) {
	if math.IsNaN(t) || math.IsInf(t, 0) || t <= 0 {
		return PhaseState{}, CheckTemperature(t, Range{})
	}
	if math.IsNaN(p) || math.IsInf(p, 0) || p <= 0 {
		return PhaseState{}, CheckPressure(p, Range{})
	}
	st, err := d.classify(t, p)
	if err != nil {
		return PhaseState{}, err
	}
	d.margins(t, p, &st)
	return st, nil
}

func (d *PhaseDiagram) classify(t, p float64) (PhaseState, error) {
	if p < d.pt {
		if t >= d.tt {
			return PhaseState{Phase: PhaseVapor}, nil
		}
		if d.sub == nil {
			return PhaseState{}, d.outside(t, p, "below the triple-point pressure %g Pa and temperature %g K the sublimation curve decides, and the substance has none", d.pt, d.tt)
		}
		pt, err := d.sub.Temperature(p, CurveOptions{})
		if err != nil {
			return PhaseState{}, d.coverage(t, p, "sublimation", err)
		}
		if t < pt.Temperature {
			return PhaseState{Phase: PhaseSolid, Form: d.sub.Branches[pt.Branch].SolidForm}, nil
		}
		return PhaseState{Phase: PhaseVapor}, nil
	}
	if d.melt == nil {
		return PhaseState{}, d.outside(t, p, "at or above the triple-point pressure %g Pa the melting curve decides between solid and fluid, and the substance has none", d.pt)
	}
	pt, err := d.melt.Temperature(p, CurveOptions{})
	if err != nil {
		return PhaseState{}, d.coverage(t, p, "melting", err)
	}
	if t < pt.Temperature {
		return PhaseState{Phase: PhaseSolid, Form: d.melt.Branches[pt.Branch].SolidForm}, nil
	}
	switch {
	case t < d.tt:
		return PhaseState{Phase: PhaseLiquid}, nil
	case d.hasCrit && t > d.tc && p > d.pc:
		return PhaseState{Phase: PhaseSupercritical}, nil
	case d.hasCrit && t > d.tc:
		return PhaseState{Phase: PhaseVapor}, nil
	}
	if d.sat == nil {
		return PhaseState{}, d.outside(t, p, "between the triple and critical temperatures the saturation curve decides between liquid and vapor, and the substance has none")
	}
	sp, err := d.sat.Pressure(t, CurveOptions{})
	if err != nil {
		return PhaseState{}, d.coverage(t, p, "saturation", err)
	}
	if p >= sp.Pressure {
		return PhaseState{Phase: PhaseLiquid}, nil
	}
	return PhaseState{Phase: PhaseVapor}, nil
}

func (d *PhaseDiagram) outside(t, p float64, format string, a ...any) error {
	return fmt.Errorf("%w: (%g K, %g Pa): %s; the phase would be a guess", ErrOutsideCoverage, t, p, fmt.Sprintf(format, a...))
}

// coverage turns a curve's range error into an ErrOutsideCoverage error
// that still carries the *RangeError; other errors pass through.
func (d *PhaseDiagram) coverage(t, p float64, curve string, err error) error {
	var re *RangeError
	if errors.As(err, &re) {
		return &phCoverageError{
			msg: fmt.Sprintf("%v: (%g K, %g Pa) needs the %s curve at %s %g %s, outside its range [%g, %g] %s; the phase would be a guess",
				ErrOutsideCoverage, t, p, curve, re.Quantity, re.Value, re.Unit, re.Min, re.Max, re.Unit),
			cause: err,
		}
	}
	return err
}

// phCoverageError is an ErrOutsideCoverage error that also carries the
// curve's *RangeError (errors.As finds it) without repeating its text.
type phCoverageError struct {
	msg   string
	cause error
}

func (e *phCoverageError) Error() string   { return e.msg }
func (e *phCoverageError) Unwrap() []error { return []error{ErrOutsideCoverage, e.cause} }

// margins fills the distances to the nearest boundaries along the isobar
// and the isotherm through (t, p).
func (d *PhaseDiagram) margins(t, p float64, st *PhaseState) {
	st.MarginT, st.NearestT = math.Inf(1), -1
	st.MarginP, st.NearestP = math.Inf(1), -1
	for i, b := range d.bounds {
		var tb, pb float64
		var okT, okP bool
		switch b.crit {
		case 'T':
			tb, okT = d.tc, p > d.pc
		case 'P':
			pb, okP = d.pc, t > d.tc
		default:
			c := b.curve.Branches[b.branch].Corr
			r := c.Range()
			if r.ContainsP(p) {
				if v, err := c.Temperature(p); err == nil {
					tb, okT = v, true
				}
			}
			if r.ContainsT(t) {
				if v, err := c.Pressure(t); err == nil {
					pb, okP = v, true
				}
			}
		}
		if okT {
			if m := math.Abs(t - tb); m < st.MarginT {
				st.MarginT, st.NearestT = m, i
			}
		}
		if okP {
			if m := math.Abs(p - pb); m < st.MarginP {
				st.MarginP, st.NearestP = m, i
			}
		}
	}
	st.Nearest = st.NearestT
	if st.NearestP >= 0 && (st.NearestT < 0 || st.MarginP/p < st.MarginT/t) {
		st.Nearest = st.NearestP
	}
}
