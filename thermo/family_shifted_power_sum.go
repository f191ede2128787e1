package thermo

import (
	"fmt"
	"math"
)

// ShiftedPowerSumFamily is the family "shifted-power-sum": the reduced
// pressure as a power series in (θ − 1), the distance from the reference
// temperature. It is the form of the Span–Wagner melting equation of carbon
// dioxide.
//
//	P/P* = 1 + Σᵢ aᵢ·(θ − 1)^bᵢ,    θ = T/T*
//	dP/dT = (P*/T*)·Σᵢ aᵢ·bᵢ·(θ − 1)^(bᵢ−1)
//
// Symbols and parameters (SI):
//
//	t_ref  T*, reference temperature (a triple point), K (> 0)
//	p_ref  P*, pressure at T*, Pa (> 0)
//	a      [aᵢ], dimensionless coefficients
//	b      [bᵢ], dimensionless exponents (> 0), as many as a
//
// Carbon dioxide (Span & Wagner 1996): T* = 216.592 K, P* = 0.51795 MPa,
// a = [1955.5390, 2055.4593], b = [1, 2].
//
// When any exponent is not an integer, (θ − 1)^b is undefined below T*, so
// the range must start at or above t_ref. An exponent below 1 makes the
// slope infinite at T*. T(P) is solved numerically to about 1e-14 relative.
//
// Range: the catalog's [t_min, t_max], in which P must stay positive (New
// checks). Outside it the methods return a *RangeError; Extrapolator
// continues the formula with no claim of accuracy.
//
// References:
//
//	R. Span, W. Wagner, "A New Equation of State for Carbon Dioxide
//	Covering the Fluid Region from the Triple-Point Temperature to 1100 K at
//	Pressures up to 800 MPa", J. Phys. Chem. Ref. Data 25 (1996) 1509–1596,
//	section 3 (melting-pressure equation).
type ShiftedPowerSumFamily struct{}

// Name implements Family.
func (ShiftedPowerSumFamily) Name() string { return "shifted-power-sum" }

var shiftedPowerSumSpec = paramSpec{
	family:  "shifted-power-sum",
	scalars: []string{"t_ref", "p_ref"},
	lists:   []string{"a", "b"},
}

// New implements Family.
func (f ShiftedPowerSumFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	tr, pr, a, b, err := reducedParams(shiftedPowerSumSpec, p)
	if err != nil {
		return nil, err
	}
	domLo := 0.0
	for i, bi := range b {
		if bi <= 0 {
			return nil, fmt.Errorf("%w: %s: b[%d] = %g must be > 0", ErrBadParam, name, i, bi)
		}
		if bi != math.Trunc(bi) {
			domLo = tr
		}
	}
	if tmin < domLo {
		return nil, fmt.Errorf("%w: %s: t_min = %g K is below t_ref = %g K, where (T/T* − 1)^b with non-integer b is undefined",
			ErrBadParam, name, tmin, tr)
	}
	fn := func(t float64) (float64, float64) {
		x := (t - tr) / tr // exact difference: no rounding of T/T* near T*
		s, d := 1.0, 0.0
		for i, ai := range a {
			s += ai * math.Pow(x, b[i])
			d += ai * b[i] * math.Pow(x, b[i]-1)
		}
		return pr * s, pr * d / tr
	}
	return asCorrelation(newCurve(name, fn, nil, tmin, tmax, domLo, math.Inf(1)))
}

func init() { Register(ShiftedPowerSumFamily{}) }
