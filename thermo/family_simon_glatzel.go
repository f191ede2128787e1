package thermo

import (
	"fmt"
	"math"
)

// SimonGlatzelFamily is the family "simon-glatzel": the empirical melting
// curve of Simon and Glatzel, which rises as a power of temperature.
//
//	P(T)  = P0 + a·((T/T0)^c − 1)
//	dP/dT = (a·c/T0)·(T/T0)^(c−1)
//	T(P)  = T0·((P − P0)/a + 1)^(1/c)
//
// Symbols and parameters (SI):
//
//	t0  T0, reference temperature, usually the triple point, K (> 0)
//	p0  P0, pressure at T0, Pa (≥ 0; often the triple-point pressure, or 0 when it is negligible)
//	a   Simon–Glatzel pressure constant, Pa (≠ 0)
//	c   Simon–Glatzel exponent, dimensionless (≠ 0)
//
// Range: the catalog's [t_min, t_max], in which P must stay positive (New
// checks). Typical fits hold to a few per cent up to the highest measured
// pressure; the power law has no physical basis beyond it. Outside the range
// the methods return a *RangeError; Extrapolator continues the formula.
//
// References:
//
//	F. Simon, G. Glatzel, "Bemerkungen zur Schmelzdruckkurve", Zeitschrift
//	für anorganische und allgemeine Chemie 178 (1929) 309–316.
type SimonGlatzelFamily struct{}

// Name implements Family.
func (SimonGlatzelFamily) Name() string { return "simon-glatzel" }

var simonGlatzelSpec = paramSpec{
	family:  "simon-glatzel",
	scalars: []string{"t0", "p0", "a", "c"},
}

// New implements Family.
func (f SimonGlatzelFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	if err := simonGlatzelSpec.check(p); err != nil {
		return nil, err
	}
	v, err := scalars(name, p, "t0", "p0", "a", "c")
	if err != nil {
		return nil, err
	}
	t0, p0, a, c := v[0], v[1], v[2], v[3]
	if err := positive(name, "t0", "K", t0); err != nil {
		return nil, err
	}
	if p0 < 0 {
		return nil, fmt.Errorf("%w: %s: p0 = %g Pa must be ≥ 0", ErrBadParam, name, p0)
	}
	if a == 0 {
		return nil, fmt.Errorf("%w: %s: a = 0 Pa gives a flat curve; need a ≠ 0", ErrBadParam, name)
	}
	if c == 0 {
		return nil, fmt.Errorf("%w: %s: c = 0 gives a flat curve; need c ≠ 0", ErrBadParam, name)
	}
	fn := func(t float64) (float64, float64) {
		// (T/T0)^c − 1 as expm1(c·log1p((T − T0)/T0)), free of the
		// cancellation near T0.
		lx := c * math.Log1p((t-t0)/t0)
		return p0 + a*math.Expm1(lx), a * c * math.Exp(lx) / t
	}
	inv := func(q float64) (float64, bool) {
		x := (q-p0)/a + 1
		return t0 * math.Pow(x, 1/c), x > 0
	}
	return asCorrelation(newCurve(name, fn, inv, tmin, tmax, 0, math.Inf(1)))
}

func init() { Register(SimonGlatzelFamily{}) }
