package thermo

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
)

// BranchMeetTolerance is the relative difference within which branches
// that all cover the same temperature (or pressure) are taken to meet
// there, so that the value is not ambiguous: a triple point shared by two
// branches. Published branch sets (IAPWS R14-08) meet at their triple
// points to better than this; branches that differ by more give an
// ambiguous-branch error instead.
const BranchMeetTolerance = 1e-5

// ErrAmbiguousBranch is matched (errors.Is) by *AmbiguousBranchError and
// *AmbiguousPressureError: the value given matches several branches that
// give different answers.
var ErrAmbiguousBranch = errors.New("thermo: ambiguous branch")

// Is lets errors.Is(err, ErrAmbiguousBranch) match an *AmbiguousBranchError.
func (e *AmbiguousBranchError) Is(target error) bool { return target == ErrAmbiguousBranch }

// AmbiguousPressureError reports that T(P) matches several branches of a
// curve that give different temperatures (a non-monotonic composite, such
// as a solid–solid transition curve that turns back).
type AmbiguousPressureError struct {
	Pressure float64
	Branches []string
}

// Error implements error.
func (e *AmbiguousPressureError) Error() string {
	return fmt.Sprintf("thermo: pressure %g Pa lies on several branches (%s); name one",
		e.Pressure, strings.Join(e.Branches, ", "))
}

// Is lets errors.Is(err, ErrAmbiguousBranch) match an *AmbiguousPressureError.
func (e *AmbiguousPressureError) Is(target error) bool { return target == ErrAmbiguousBranch }

// Branch is one segment of a curve, served by one correlation: for example
// the ice-III segment of water's melting curve.
type Branch struct {
	// Name identifies the branch within its curve ("ice-III"); it may be
	// empty only on a single-branch curve.
	Name string
	// SolidForm is the solid form on the branch's low-temperature side
	// when known ("ice-III"), else empty.
	SolidForm string
	// Corr evaluates the branch.
	Corr Correlation
}

// Curve is a coexistence curve made of one or more branches, in the order
// the catalog lists them; that order breaks ties (see Pressure).
//
// Branches that meet at a triple point rarely meet exactly: water's ice-V
// branch ends at 632.3993 MPa and the ice-VI branch starts at 632.4 MPa. A
// value in such a seam, narrower than BranchMeetTolerance relative to the
// value, is served by the nearest branch just beyond its range (through its
// Extrapolator) and is not flagged as extrapolated.
//
// Branches may overlap in temperature: P(T) is then several-valued (water's
// melting curve at 254 K crosses both the ice-Ih and the ice-III branch)
// and an automatic P(T) there is an error naming the branches. T(P) picks
// its branch by pressure, which on a melting curve is single-valued.
// Nothing assumes that a branch increases: negative slopes (ice Ih) and
// composites that turn back are handled alike.
type Curve struct {
	Kind     CurveKind
	Branches []Branch
}

// NewCurve checks the branches and returns a curve: at least one branch,
// every correlation non-nil, and names non-empty and unique when there are
// several branches.
func NewCurve(kind CurveKind, branches ...Branch) (*Curve, error) {
	if _, ok := kindNames[kind]; !ok {
		return nil, fmt.Errorf("%w: curve kind %v (valid: saturation, melting, sublimation, transition)", ErrBadParam, kind)
	}
	if len(branches) == 0 {
		return nil, fmt.Errorf("%w: %v curve has no branches", ErrBadParam, kind)
	}
	seen := map[string]bool{}
	for i, b := range branches {
		if b.Corr == nil {
			return nil, fmt.Errorf("%w: %v curve branch %d (%q) has no correlation", ErrBadParam, kind, i, b.Name)
		}
		if len(branches) > 1 && b.Name == "" {
			return nil, fmt.Errorf("%w: %v curve branch %d needs a name (the curve has %d branches)", ErrBadParam, kind, i, len(branches))
		}
		if seen[b.Name] {
			return nil, fmt.Errorf("%w: %v curve has two branches named %q", ErrBadParam, kind, b.Name)
		}
		seen[b.Name] = true
	}
	return &Curve{Kind: kind, Branches: append([]Branch(nil), branches...)}, nil
}

// CurveOptions selects how a curve is evaluated. The zero value picks the
// branch automatically and refuses to extrapolate.
type CurveOptions struct {
	// Branch names the branch to use; "" picks it from the value given.
	Branch string
	// AllowExtrapolation evaluates outside every validity range through
	// the branch's Extrapolator (the branch named, or else the nearest
	// one); such results have Extrapolated set.
	AllowExtrapolation bool
}

// CurvePoint is a point on a curve and how it was obtained.
type CurvePoint struct {
	Temperature float64 // K
	Pressure    float64 // Pa
	Slope       float64 // dP/dT, Pa/K
	// Branch is the index in Curve.Branches of the branch used.
	Branch int
	// Extrapolated is set when the point lies outside the branch's
	// validity range (only with AllowExtrapolation).
	Extrapolated bool
}

// BranchNames returns the branch names in curve order.
func (c *Curve) BranchNames() []string {
	names := make([]string, len(c.Branches))
	for i, b := range c.Branches {
		names[i] = b.Name
	}
	return names
}

// BranchIndex returns the index of the branch called name, or an error
// wrapping ErrUnknownBranch that lists the valid names.
func (c *Curve) BranchIndex(name string) (int, error) {
	for i := range c.Branches {
		if c.Branches[i].Name == name {
			return i, nil
		}
	}
	return -1, fmt.Errorf("%w %q on the %v curve (valid: %s)", ErrUnknownBranch, name, c.Kind, c.quotedNames(nil))
}

// Range returns the smallest rectangle holding every branch's range.
func (c *Curve) Range() Range {
	r := Range{Tmin: math.Inf(1), Tmax: math.Inf(-1), Pmin: math.Inf(1), Pmax: math.Inf(-1)}
	for _, b := range c.Branches {
		if b.Corr == nil {
			continue
		}
		br := b.Corr.Range()
		r.Tmin, r.Tmax = math.Min(r.Tmin, br.Tmin), math.Max(r.Tmax, br.Tmax)
		r.Pmin, r.Pmax = math.Min(r.Pmin, br.Pmin), math.Max(r.Pmax, br.Pmax)
	}
	return r
}

func (c *Curve) quotedNames(idx []int) string {
	var parts []string
	add := func(i int) {
		n := c.Branches[i].Name
		if n == "" {
			n = "(unnamed)"
		}
		parts = append(parts, n)
	}
	if idx == nil {
		for i := range c.Branches {
			add(i)
		}
	} else {
		for _, i := range idx {
			add(i)
		}
	}
	return strings.Join(parts, ", ")
}

func (c *Curve) check() error {
	if len(c.Branches) == 0 {
		return fmt.Errorf("%w: %v curve has no branches", ErrBadParam, c.Kind)
	}
	for i := range c.Branches {
		if c.Branches[i].Corr == nil {
			return fmt.Errorf("%w: %v curve branch %d (%q) has no correlation", ErrBadParam, c.Kind, i, c.Branches[i].Name)
		}
	}
	return nil
}

// Pressure returns the point of the curve at temperature t: P(T), dP/dT
// and the branch used.
//
// With o.Branch empty, the branch is the one whose temperature range holds
// t. When several do, and their pressures at t agree within
// BranchMeetTolerance (t is a triple point they share), the first of them
// in curve order is used; when they differ, the error is an
// *AmbiguousBranchError naming them. When none does, the error is a
// *RangeError giving the covered temperature interval nearest t, unless
// o.AllowExtrapolation is set: then the branch whose range is nearest t
// (the first on a tie) extrapolates. NaN, ±Inf and t ≤ 0 give an
// *InputError. It allocates nothing on success.
func (c *Curve) Pressure(t float64, o CurveOptions) (CurvePoint, error) {
	if math.IsNaN(t) || math.IsInf(t, 0) || t <= 0 {
		return CurvePoint{}, CheckTemperature(t, Range{})
	}
	return c.locate(t, true, o)
}

// Temperature returns the point of the curve at pressure p: T(P), the
// slope dP/dT there and the branch used. Branch choice mirrors Pressure,
// by pressure range: when several branches hold p and their temperatures
// agree within BranchMeetTolerance the first in curve order is used,
// otherwise the error is an *AmbiguousPressureError. It allocates nothing
// on success.
func (c *Curve) Temperature(p float64, o CurveOptions) (CurvePoint, error) {
	if math.IsNaN(p) || math.IsInf(p, 0) || p <= 0 {
		return CurvePoint{}, CheckPressure(p, Range{})
	}
	return c.locate(p, false, o)
}

// locate is Pressure (byT: v is a temperature) and Temperature (v is a
// pressure) after the input check: it picks the branch as they describe
// and evaluates it.
func (c *Curve) locate(v float64, byT bool, o CurveOptions) (CurvePoint, error) {
	if err := c.check(); err != nil {
		return CurvePoint{}, err
	}
	if o.Branch != "" {
		i, err := c.BranchIndex(o.Branch)
		if err != nil {
			return CurvePoint{}, err
		}
		return c.evalOn(i, v, byT, o.AllowExtrapolation)
	}
	first, count := -1, 0
	for i := range c.Branches {
		if c.crvContains(i, v, byT) {
			if first < 0 {
				first = i
			}
			count++
		}
	}
	if count == 0 {
		i, dist := c.nearest(v, byT)
		if dist <= BranchMeetTolerance*v && c.insideHull(v, byT) {
			if pt, err := c.evalOn(i, v, byT, true); err == nil {
				pt.Extrapolated = false // inside a seam between branches, not beyond the curve
				return pt, nil
			}
		}
		if !o.AllowExtrapolation {
			return CurvePoint{}, c.coverageError(v, byT)
		}
		return c.evalOn(i, v, byT, true)
	}
	pt, err := c.evalOn(first, v, byT, false)
	if err != nil || count == 1 {
		return pt, err
	}
	for i := first + 1; i < len(c.Branches); i++ {
		if !c.crvContains(i, v, byT) {
			continue
		}
		if byT {
			p, err := c.Branches[i].Corr.Pressure(v)
			if err != nil {
				return CurvePoint{}, err
			}
			if !crvMeet(p, pt.Pressure) {
				return CurvePoint{}, &AmbiguousBranchError{Temperature: v, Branches: c.matching(v, true)}
			}
			continue
		}
		t, err := c.Branches[i].Corr.Temperature(v)
		if err != nil {
			return CurvePoint{}, err
		}
		if !crvMeet(t, pt.Temperature) {
			return CurvePoint{}, &AmbiguousPressureError{Pressure: v, Branches: c.matching(v, false)}
		}
	}
	return pt, nil
}

// crvContains reports whether branch i's range holds v, a temperature
// (byT) or a pressure.
func (c *Curve) crvContains(i int, v float64, byT bool) bool {
	r := c.Branches[i].Corr.Range()
	if byT {
		return r.ContainsT(v)
	}
	return r.ContainsP(v)
}

// evalOn is pressureOn (byT) or temperatureOn.
func (c *Curve) evalOn(i int, v float64, byT, extrapolate bool) (CurvePoint, error) {
	if byT {
		return c.pressureOn(i, v, extrapolate)
	}
	return c.temperatureOn(i, v, extrapolate)
}

func crvMeet(a, b float64) bool {
	return math.Abs(a-b) <= BranchMeetTolerance*math.Max(math.Abs(a), math.Abs(b))
}

// pressureOn evaluates branch i at t; with extrapolate set, a t outside the
// branch's range goes through its Extrapolator and is flagged.
func (c *Curve) pressureOn(i int, t float64, extrapolate bool) (CurvePoint, error) {
	b := &c.Branches[i]
	r := b.Corr.Range()
	if r.ContainsT(t) {
		p, d, err := b.Corr.PressureSlope(t)
		if err != nil {
			return CurvePoint{}, err
		}
		return CurvePoint{Temperature: t, Pressure: p, Slope: d, Branch: i}, nil
	}
	x, ok := b.Corr.(Extrapolator)
	if !extrapolate || !ok {
		rangeErr := CheckTemperature(t, r)
		if !extrapolate {
			return CurvePoint{}, rangeErr
		}
		return CurvePoint{}, fmt.Errorf("%w; branch %s cannot extrapolate: %w", rangeErr, c.quotedNames([]int{i}), ErrNotImplemented)
	}
	p, d, err := x.PressureSlopeBeyond(t)
	if err != nil {
		return CurvePoint{}, err
	}
	return CurvePoint{Temperature: t, Pressure: p, Slope: d, Branch: i, Extrapolated: true}, nil
}

// temperatureOn evaluates T(P) on branch i and the slope there.
func (c *Curve) temperatureOn(i int, p float64, extrapolate bool) (CurvePoint, error) {
	b := &c.Branches[i]
	r := b.Corr.Range()
	if r.ContainsP(p) {
		t, err := b.Corr.Temperature(p)
		if err != nil {
			return CurvePoint{}, err
		}
		// The root may land an ulp outside the range; the slope is taken
		// at the nearest point inside.
		_, d, err := b.Corr.PressureSlope(math.Min(math.Max(t, r.Tmin), r.Tmax))
		if err != nil {
			return CurvePoint{}, err
		}
		return CurvePoint{Temperature: t, Pressure: p, Slope: d, Branch: i}, nil
	}
	x, ok := b.Corr.(Extrapolator)
	if !extrapolate || !ok {
		rangeErr := CheckPressure(p, r)
		if !extrapolate {
			return CurvePoint{}, rangeErr
		}
		return CurvePoint{}, fmt.Errorf("%w; branch %s cannot extrapolate: %w", rangeErr, c.quotedNames([]int{i}), ErrNotImplemented)
	}
	t, err := x.TemperatureBeyond(p)
	if err != nil {
		return CurvePoint{}, err
	}
	_, d, err := x.PressureSlopeBeyond(t)
	if err != nil {
		return CurvePoint{}, err
	}
	return CurvePoint{Temperature: t, Pressure: p, Slope: d, Branch: i, Extrapolated: true}, nil
}

// crvInterval returns branch i's interval in temperature (byT) or pressure.
func (c *Curve) crvInterval(i int, byT bool) (lo, hi float64) {
	r := c.Branches[i].Corr.Range()
	if byT {
		return r.Tmin, r.Tmax
	}
	return r.Pmin, r.Pmax
}

// nearest returns the branch whose interval is nearest v (the first on a
// tie) and the distance from v to that interval.
func (c *Curve) nearest(v float64, byT bool) (int, float64) {
	best, dist := 0, math.Inf(1)
	for i := range c.Branches {
		lo, hi := c.crvInterval(i, byT)
		d := math.Max(lo-v, v-hi)
		if d < dist {
			best, dist = i, d
		}
	}
	return best, dist
}

// insideHull reports whether v lies between the lowest and the highest
// end of the branch intervals: a gap there is a seam between branches,
// not the end of the curve.
func (c *Curve) insideHull(v float64, byT bool) bool {
	below, above := false, false
	for i := range c.Branches {
		lo, hi := c.crvInterval(i, byT)
		below = below || lo <= v
		above = above || hi >= v
	}
	return below && above
}

// matching lists the names of the branches whose interval holds v.
func (c *Curve) matching(v float64, byT bool) []string {
	var names []string
	for i := range c.Branches {
		lo, hi := c.crvInterval(i, byT)
		if v >= lo && v <= hi {
			names = append(names, c.Branches[i].Name)
		}
	}
	return names
}

// coverageError returns a *RangeError for v outside every branch: its
// interval is the union of overlapping branch intervals nearest v.
func (c *Curve) coverageError(v float64, byT bool) error {
	type iv struct{ lo, hi float64 }
	var ivs []iv
	for i := range c.Branches {
		lo, hi := c.crvInterval(i, byT)
		ivs = append(ivs, iv{lo, hi})
	}
	sort.Slice(ivs, func(i, j int) bool { return ivs[i].lo < ivs[j].lo })
	merged := ivs[:1]
	for _, x := range ivs[1:] {
		last := &merged[len(merged)-1]
		if x.lo <= last.hi+BranchMeetTolerance*math.Abs(x.lo) {
			last.hi = math.Max(last.hi, x.hi)
		} else {
			merged = append(merged, x)
		}
	}
	best, dist := merged[0], math.Inf(1)
	for _, m := range merged {
		if d := math.Max(m.lo-v, v-m.hi); d < dist {
			best, dist = m, d
		}
	}
	if byT {
		return &RangeError{Quantity: "temperature", Value: v, Min: best.lo, Max: best.hi, Unit: "K"}
	}
	return &RangeError{Quantity: "pressure", Value: v, Min: best.lo, Max: best.hi, Unit: "Pa"}
}
