package thermo

import "math"

// ExtendedAntoineFamily is the family "extended-antoine": a five-constant
// vapour-pressure equation that extends the Clausius–Clapeyron form with a
// logarithmic and a power term, so that one set of constants can span from
// the triple point to near the critical point.
//
//	ln(P/Pa) = A + B/T + C·ln(T/K) + D·T^E
//	dP/dT    = P·(−B/T² + C/T + D·E·T^(E−1))
//
// Symbols and parameters (SI, T in K):
//
//	a  A, dimensionless
//	b  B, K
//	c  C, dimensionless
//	d  D, K^−E
//	e  E, dimensionless (commonly 1, 2 or 6; Riedel's form has E = 6)
//
// T(P) has no closed form and is solved numerically to about 1e-14
// relative on each monotonic piece; for a curve that is not monotonic over
// its range the lowest-temperature root is returned.
//
// Range: the catalog's [t_min, t_max], which should be the range the
// constants were fitted over. Outside it the methods return a *RangeError;
// Extrapolator continues the formula with no claim of accuracy.
//
// References:
//
//	L. Riedel, "Eine neue universelle Dampfdruckformel", Chemie Ingenieur
//	Technik 26 (1954) 83–89 (the form with E = 6).
//	B. E. Poling, J. M. Prausnitz, J. P. O'Connell, The Properties of Gases
//	and Liquids, 5th ed., McGraw-Hill, 2001, §7-3 (extensions of the
//	Antoine equation).
type ExtendedAntoineFamily struct{}

// Name implements Family.
func (ExtendedAntoineFamily) Name() string { return "extended-antoine" }

var extendedAntoineSpec = paramSpec{
	family:  "extended-antoine",
	scalars: []string{"a", "b", "c", "d", "e"},
}

// New implements Family.
func (f ExtendedAntoineFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	if err := extendedAntoineSpec.check(p); err != nil {
		return nil, err
	}
	v, err := scalars(name, p, "a", "b", "c", "d", "e")
	if err != nil {
		return nil, err
	}
	a, b, c, d, e := v[0], v[1], v[2], v[3], v[4]
	fn := func(t float64) (float64, float64) {
		te := math.Pow(t, e)
		q := math.Exp(a + b/t + c*math.Log(t) + d*te)
		return q, q * (-b/(t*t) + c/t + d*e*te/t)
	}
	return asCorrelation(newCurve(name, fn, nil, tmin, tmax, 0, math.Inf(1)))
}

func init() { Register(ExtendedAntoineFamily{}) }
