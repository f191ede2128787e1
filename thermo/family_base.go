package thermo

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
)

// This file holds the machinery every curve family shares: parameter
// checks, the validity range with its pressure extremes, range checks on
// evaluation, the inverse T(P) (closed form when the family supplies one,
// the safeguarded root finder otherwise) and extrapolation for callers that
// opt in. A family only supplies its formula.

// formula evaluates a family's P(T) and dP/dT without any checks. It may
// return NaN or a non-positive pressure outside the formula's domain.
type formula func(t float64) (p, dpdt float64)

// inverse is a family's closed-form T(P) without range checks; ok is false
// when the formula has no solution for p.
type inverse func(p float64) (t float64, ok bool)

// rangeSamples is the number of intervals on which a curve is sampled at
// construction to find the extremes of P over the validity range and the
// temperatures that split it into monotonic pieces. A curve with two turning
// points closer than (Tmax − Tmin)/rangeSamples may be seen as monotonic
// there.
const rangeSamples = 256

// curve implements Correlation and Extrapolator for any formula.
type curve struct {
	family string
	f      formula
	inv    inverse // nil: solve numerically
	rng    Range
	// pieces splits [Tmin, Tmax] into intervals on which P(T) is
	// monotonic: pieces[0] = Tmin, pieces[len-1] = Tmax; press holds P at
	// those temperatures.
	pieces []float64
	press  []float64
	// domLo, domHi bound the temperatures where the formula is defined
	// (used when extrapolating); domHi may be +Inf.
	domLo, domHi float64
}

var (
	_ Correlation  = (*curve)(nil)
	_ Extrapolator = (*curve)(nil)
)

// newCurve checks the temperature interval, samples the formula over it
// and returns the shared implementation. domLo and domHi are the formula's
// own domain in K (domLo ≥ 0, domHi may be +Inf); [tmin, tmax] must lie in it.
func newCurve(family string, f formula, inv inverse, tmin, tmax, domLo, domHi float64) (*curve, error) {
	if err := checkInterval(family, tmin, tmax); err != nil {
		return nil, err
	}
	if tmin < domLo || tmax > domHi {
		return nil, fmt.Errorf("%w: %s: validity range [%g, %g] K leaves the formula's domain [%g, %g] K",
			ErrBadParam, family, tmin, tmax, domLo, domHi)
	}
	c := &curve{family: family, f: f, inv: inv, domLo: domLo, domHi: domHi}
	ts := make([]float64, rangeSamples+1)
	ps := make([]float64, rangeSamples+1)
	ds := make([]float64, rangeSamples+1)
	for i := range ts {
		t := tmin + (tmax-tmin)*float64(i)/rangeSamples
		if i == rangeSamples {
			t = tmax
		}
		p, d := f(t)
		if math.IsNaN(p) || math.IsInf(p, 0) || p <= 0 || math.IsNaN(d) || math.IsInf(d, 0) {
			return nil, fmt.Errorf("%w: %s: the parameters give P = %g Pa, dP/dT = %g Pa/K at T = %g K inside the validity range [%g, %g] K (need a finite P > 0)",
				ErrBadParam, family, p, d, t, tmin, tmax)
		}
		ts[i], ps[i], ds[i] = t, p, d
	}
	c.pieces = []float64{tmin}
	c.press = []float64{ps[0]}
	for i := 0; i < rangeSamples; i++ {
		if (ds[i] > 0 && ds[i+1] < 0) || (ds[i] < 0 && ds[i+1] > 0) {
			t, err := c.turningPoint(ts[i], ts[i+1])
			if err != nil {
				return nil, fmt.Errorf("%s: locating a turning point of P(T) in [%g, %g] K: %w", family, ts[i], ts[i+1], err)
			}
			p, _ := f(t)
			c.pieces = append(c.pieces, t)
			c.press = append(c.press, p)
		}
	}
	c.pieces = append(c.pieces, tmax)
	c.press = append(c.press, ps[rangeSamples])
	pmin, pmax := slices.Min(c.press), slices.Max(c.press)
	for _, p := range ps {
		pmin, pmax = math.Min(pmin, p), math.Max(pmax, p)
	}
	c.rng = Range{Tmin: tmin, Tmax: tmax, Pmin: pmin, Pmax: pmax}
	return c, nil
}

// turningPoint finds where dP/dT changes sign in [a, b], using the root
// finder on the slope with a central-difference second derivative.
func (c *curve) turningPoint(a, b float64) (float64, error) {
	h := (b - a) * 1e-6
	slope := func(t float64) (float64, float64) {
		_, d := c.f(t)
		_, dp := c.f(t + h)
		_, dm := c.f(t - h)
		return d, (dp - dm) / (2 * h)
	}
	return RootFinder{Tol: 1e-12}.Solve(slope, a, b)
}

// checkInterval validates a branch's temperature interval.
func checkInterval(family string, tmin, tmax float64) error {
	switch {
	case math.IsNaN(tmin) || math.IsInf(tmin, 0) || math.IsNaN(tmax) || math.IsInf(tmax, 0):
		return fmt.Errorf("%w: %s: temperature range [%g, %g] K must be finite", ErrBadParam, family, tmin, tmax)
	case tmin <= 0:
		return fmt.Errorf("%w: %s: t_min = %g K must be > 0", ErrBadParam, family, tmin)
	case tmin >= tmax:
		return fmt.Errorf("%w: %s: t_min = %g K must be below t_max = %g K", ErrBadParam, family, tmin, tmax)
	}
	return nil
}

// Pressure implements Correlation.
func (c *curve) Pressure(t float64) (float64, error) {
	if err := CheckTemperature(t, c.rng); err != nil {
		return math.NaN(), err
	}
	p, _ := c.f(t)
	return p, nil
}

// Slope implements Correlation.
func (c *curve) Slope(t float64) (float64, error) {
	if err := CheckTemperature(t, c.rng); err != nil {
		return math.NaN(), err
	}
	_, d := c.f(t)
	return d, nil
}

// PressureSlope implements Correlation.
func (c *curve) PressureSlope(t float64) (p, dpdt float64, err error) {
	if err := CheckTemperature(t, c.rng); err != nil {
		return math.NaN(), math.NaN(), err
	}
	p, dpdt = c.f(t)
	return p, dpdt, nil
}

// Range implements Correlation.
func (c *curve) Range() Range { return c.rng }

// Temperature implements Correlation. For a curve that is not monotonic
// over its range, the root on the lowest-temperature monotonic piece that
// reaches p is returned.
func (c *curve) Temperature(p float64) (float64, error) {
	if err := CheckPressure(p, c.rng); err != nil {
		return math.NaN(), err
	}
	if c.inv != nil && len(c.pieces) == 2 {
		if t, ok := c.inv(p); ok && !math.IsNaN(t) {
			// Rounding may put the image of an end pressure a few
			// ulps outside the range.
			return math.Min(math.Max(t, c.rng.Tmin), c.rng.Tmax), nil
		}
	}
	for i := 0; i+1 < len(c.pieces); i++ {
		pa, pb := c.press[i], c.press[i+1]
		if p >= math.Min(pa, pb) && p <= math.Max(pa, pb) {
			return c.solve(p, c.pieces[i], c.pieces[i+1])
		}
	}
	// Pmin/Pmax include sample extremes a little beyond the refined
	// turning points; a pressure there is within rounding of one.
	return c.nearestTurning(p), nil
}

// nearestTurning returns the piece end whose pressure is closest to p.
func (c *curve) nearestTurning(p float64) float64 {
	best, bestT := math.Inf(1), c.pieces[0]
	for i, q := range c.press {
		if d := math.Abs(q - p); d < best {
			best, bestT = d, c.pieces[i]
		}
	}
	return bestT
}

// solve finds T in [a, b] with P(T) = p, working on ln P so that steep
// vapour-pressure curves behave nearly linearly.
func (c *curve) solve(p, a, b float64) (float64, error) {
	lp := math.Log(p)
	g := func(t float64) (float64, float64) {
		q, d := c.f(t)
		if q <= 0 {
			return math.Inf(-1), math.NaN()
		}
		return math.Log(q) - lp, d / q
	}
	t, err := RootFinder{}.Solve(g, a, b)
	if err != nil {
		return math.NaN(), fmt.Errorf("thermo: %s: temperature at pressure %g Pa: %w", c.family, p, err)
	}
	return t, nil
}

// PressureSlopeBeyond implements Extrapolator.
func (c *curve) PressureSlopeBeyond(t float64) (p, dpdt float64, err error) {
	if err := checkPositive("temperature", "K", t); err != nil {
		return math.NaN(), math.NaN(), err
	}
	if t < c.domLo || t > c.domHi {
		return math.NaN(), math.NaN(), &InputError{Quantity: "temperature", Value: t,
			Reason: fmt.Sprintf("outside the domain [%g, %g] K where the %s formula is defined", c.domLo, c.domHi, c.family)}
	}
	p, dpdt = c.f(t)
	if math.IsNaN(p) || math.IsInf(p, 0) || p <= 0 || math.IsNaN(dpdt) || math.IsInf(dpdt, 0) {
		return math.NaN(), math.NaN(), &InputError{Quantity: "temperature", Value: t,
			Reason: fmt.Sprintf("the %s formula gives no positive finite pressure there (P = %g Pa)", c.family, p)}
	}
	return p, dpdt, nil
}

// TemperatureBeyond implements Extrapolator. Inside the pressure range it
// is Temperature. Outside, the formula is followed first below Tmin, then
// above Tmax, and the first root found is returned.
func (c *curve) TemperatureBeyond(p float64) (float64, error) {
	if err := checkPositive("pressure", "Pa", p); err != nil {
		return math.NaN(), err
	}
	if c.rng.ContainsP(p) {
		return c.Temperature(p)
	}
	if c.inv != nil {
		if t, ok := c.inv(p); ok && !math.IsNaN(t) && t > 0 && t >= c.domLo && t <= c.domHi {
			return t, nil
		}
		if len(c.pieces) == 2 {
			return math.NaN(), fmt.Errorf("%w: %s: no temperature gives pressure %g Pa", ErrNoBracket, c.family, p)
		}
	}
	if t, ok, err := c.scan(p, c.rng.Tmin, c.press[0], -1); ok || err != nil {
		return t, err
	}
	if t, ok, err := c.scan(p, c.rng.Tmax, c.press[len(c.press)-1], +1); ok || err != nil {
		return t, err
	}
	return math.NaN(), fmt.Errorf("%w: %s: no temperature in the formula's domain [%g, %g] K gives pressure %g Pa",
		ErrNoBracket, c.family, c.domLo, c.domHi, p)
}

// scan walks outward from the range end t0 (P = p0 there) in direction dir
// until P crosses p, then solves. Steps start at 1 % of the range width and
// double, never passing the formula's domain edge (they approach it
// geometrically); the walk stops where P stops being a positive finite
// number or after 60 steps.
func (c *curve) scan(p, t0, p0 float64, dir int) (float64, bool, error) {
	step := 0.01 * (c.rng.Tmax - c.rng.Tmin)
	edge := c.domHi - t0 // distance to the domain edge, may be +Inf
	if dir < 0 {
		edge = t0 - c.domLo
	}
	prevT, prevP := t0, p0
	for k := 1; k <= 60; k++ {
		off := math.Min(step*(math.Ldexp(1, k)-1), edge*(1-math.Ldexp(1, -k)))
		t := t0 + float64(dir)*off
		if t <= 0 || t == prevT {
			break
		}
		q, _ := c.f(t)
		if math.IsNaN(q) || math.IsInf(q, 0) || q <= 0 {
			// The formula has no meaningful continuation past here.
			break
		}
		if (prevP-p)*(q-p) <= 0 {
			r, err := c.solve(p, prevT, t)
			if err != nil {
				return math.NaN(), false, err
			}
			return r, true, nil
		}
		prevT, prevP = t, q
	}
	return math.NaN(), false, nil
}

// checkPositive refuses NaN, ±Inf and values ≤ 0.
func checkPositive(quantity, unit string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return &InputError{Quantity: quantity, Value: v, Reason: "must be a finite number"}
	}
	if v <= 0 {
		return &InputError{Quantity: quantity, Value: v, Reason: "must be > 0 " + unit}
	}
	return nil
}

// paramSpec lists a family's parameter names for validation.
type paramSpec struct {
	family   string
	scalars  []string // required scalars
	optional []string // optional scalars
	lists    []string // required lists
}

// check refuses unknown parameter names, listing the valid ones, and
// missing required ones.
func (s paramSpec) check(p Params) error {
	valid := slices.Concat(s.scalars, s.optional, s.lists)
	var unknown []string
	for name := range p {
		if !slices.Contains(valid, name) {
			unknown = append(unknown, name)
		}
	}
	if len(unknown) > 0 {
		sort.Strings(unknown)
		want := "none"
		if len(valid) > 0 {
			want = strings.Join(valid, ", ")
		}
		return fmt.Errorf("%w: %s: unknown parameter %s (valid: %s)", ErrBadParam, s.family, strings.Join(quoteAll(unknown), ", "), want)
	}
	for _, name := range slices.Concat(s.scalars, s.lists) {
		if _, ok := p[name]; !ok {
			return fmt.Errorf("%w: %s needs %q (parameters: %s)", ErrMissingParam, s.family, name, strings.Join(valid, ", "))
		}
	}
	return nil
}

func quoteAll(s []string) []string {
	q := make([]string, len(s))
	for i, v := range s {
		q[i] = fmt.Sprintf("%q", v)
	}
	return q
}

// scalars reads the named scalar parameters in order.
func scalars(family string, p Params, names ...string) ([]float64, error) {
	out := make([]float64, len(names))
	for i, n := range names {
		v, err := p.Scalar(n)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", family, err)
		}
		out[i] = v
	}
	return out, nil
}

// coefficientLists reads two lists of equal, non-zero length.
func coefficientLists(family string, p Params, an, bn string) (a, b []float64, err error) {
	if a, err = p.List(an); err != nil {
		return nil, nil, fmt.Errorf("%s: %w", family, err)
	}
	if b, err = p.List(bn); err != nil {
		return nil, nil, fmt.Errorf("%s: %w", family, err)
	}
	if len(a) == 0 {
		return nil, nil, fmt.Errorf("%w: %s: %q is empty (need at least one term)", ErrBadParam, family, an)
	}
	if len(a) != len(b) {
		return nil, nil, fmt.Errorf("%w: %s: %q has %d values but %q has %d (need one of each per term)",
			ErrBadParam, family, an, len(a), bn, len(b))
	}
	return a, b, nil
}

// positive refuses a parameter ≤ 0.
func positive(family, name, unit string, v float64) error {
	if v <= 0 {
		return fmt.Errorf("%w: %s: %s = %g %s must be > 0", ErrBadParam, family, name, v, unit)
	}
	return nil
}

// asCorrelation returns c as a Correlation, or a nil interface with err.
func asCorrelation(c *curve, err error) (Correlation, error) {
	if err != nil {
		return nil, err
	}
	return c, nil
}
