package thermo

import (
	"fmt"
	"math"
)

// AntoineFamily is the family "antoine": the Antoine vapour-pressure
// equation in SI form.
//
//	log10(P/Pa) = A − B/(T/K + C)
//	dP/dT       = P·ln(10)·B/(T + C)²
//	T(P)        = B/(A − log10(P/Pa)) − C
//
// Symbols and parameters (SI):
//
//	a  A, dimensionless
//	b  B, K (≠ 0)
//	c  C, K; T + C must stay positive over the range
//
// Handbook constants are usually given for P in mmHg, kPa or bar and t in
// °C, sometimes with the natural logarithm; AntoineToSI converts them.
//
// Range: the catalog's [t_min, t_max], which should be the range the
// constants were fitted over (typically a span of 50 K to 100 K, within
// about 1 % or better there). The equation fails towards the critical
// point and far below the normal boiling point. Outside the range the
// methods return a *RangeError; Extrapolator continues the formula for
// T > −C.
//
// References:
//
//	C. Antoine, "Tensions des vapeurs; nouvelle relation entre les tensions
//	et les températures", Comptes Rendus des Séances de l'Académie des
//	Sciences 107 (1888) 681–684, 778–780, 836–837.
//	B. E. Poling, J. M. Prausnitz, J. P. O'Connell, The Properties of Gases
//	and Liquids, 5th ed., McGraw-Hill, 2001, §7-3.
type AntoineFamily struct{}

// Name implements Family.
func (AntoineFamily) Name() string { return "antoine" }

var antoineSpec = paramSpec{
	family:  "antoine",
	scalars: []string{"a", "b", "c"},
}

// New implements Family.
func (f AntoineFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	if err := antoineSpec.check(p); err != nil {
		return nil, err
	}
	v, err := scalars(name, p, "a", "b", "c")
	if err != nil {
		return nil, err
	}
	a, b, c := v[0], v[1], v[2]
	if b == 0 {
		return nil, fmt.Errorf("%w: %s: b = 0 K gives a constant pressure; need B ≠ 0", ErrBadParam, name)
	}
	domLo := math.Max(0, -c)
	if tmin <= -c {
		return nil, fmt.Errorf("%w: %s: t_min = %g K must be above −c = %g K, where T + C changes sign", ErrBadParam, name, tmin, -c)
	}
	fn := func(t float64) (float64, float64) {
		u := t + c
		q := math.Pow(10, a-b/u)
		return q, q * math.Ln10 * b / (u * u)
	}
	inv := func(q float64) (float64, bool) {
		u := b / (a - math.Log10(q))
		return u - c, u > 0
	}
	return asCorrelation(newCurve(name, fn, inv, tmin, tmax, domLo, math.Inf(1)))
}

func init() { Register(AntoineFamily{}) }
