package thermo

import (
	"fmt"
	"math"
)

// WagnerFamily is the family "wagner": the vapour-pressure equation of
// Wagner's type, a sum of powers of the distance from a reference
// temperature (usually the critical point) scaled by T_ref/T. With T_ref
// at a triple point it also serves sublimation curves (Span–Wagner carbon
// dioxide).
//
//	ln(P/P_ref) = (T_ref/T)·Σᵢ aᵢ·τ^eᵢ,    τ = 1 − T/T_ref
//	dP/dT       = −(P/T)·[ ln(P/P_ref) + Σᵢ aᵢ·eᵢ·τ^(eᵢ−1) ]
//
// Symbols and parameters (SI):
//
//	t_ref  T_ref, reference temperature, usually the critical temperature Tc, K (> 0)
//	p_ref  P_ref, pressure at T_ref, usually the critical pressure Pc, Pa (> 0)
//	a      [aᵢ], dimensionless coefficients
//	e      [eᵢ], dimensionless exponents (> 0), as many as a; any list, e.g.
//	       1, 1.5, 3, 3.5, 4, 7.5 (IAPWS 1992 water) or 1, 1.5, 2.5, 5
//
// The formula is defined for T ≤ T_ref only (τ ≥ 0), so t_max ≤ t_ref; an
// exponent below 1 makes the slope infinite at T_ref, so then t_max < t_ref.
// T(P) is solved numerically to about 1e-14 relative.
//
// Range: the catalog's [t_min, t_max]. Published Wagner-type equations
// reproduce vapour pressures within about 0.01 % to 0.1 % from the triple
// point to the critical point. Outside the range the methods return a
// *RangeError; Extrapolator continues the formula down to 0 K and up to
// T_ref.
//
// References:
//
//	W. Wagner, "New vapour pressure measurements for argon and nitrogen and
//	a new method for establishing rational vapour pressure equations",
//	Cryogenics 13 (1973) 470–482.
//	W. Wagner, A. Pruss, "International Equations for the Saturation
//	Properties of Ordinary Water Substance. Revised According to the
//	International Temperature Scale of 1990", J. Phys. Chem. Ref. Data 22
//	(1993) 783–787 (IAPWS SR1-86(1992)).
//	R. Span, W. Wagner, "A New Equation of State for Carbon Dioxide
//	Covering the Fluid Region from the Triple-Point Temperature to 1100 K at
//	Pressures up to 800 MPa", J. Phys. Chem. Ref. Data 25 (1996) 1509–1596,
//	section 3 (vapour-pressure and sublimation-pressure equations).
type WagnerFamily struct{}

// Name implements Family.
func (WagnerFamily) Name() string { return "wagner" }

var wagnerSpec = paramSpec{
	family:  "wagner",
	scalars: []string{"t_ref", "p_ref"},
	lists:   []string{"a", "e"},
}

// New implements Family.
func (f WagnerFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	tr, pr, a, e, err := reducedParams(wagnerSpec, p)
	if err != nil {
		return nil, err
	}
	for i, ei := range e {
		if ei <= 0 {
			return nil, fmt.Errorf("%w: %s: e[%d] = %g must be > 0", ErrBadParam, name, i, ei)
		}
	}
	if tmax > tr {
		return nil, fmt.Errorf("%w: %s: t_max = %g K is above t_ref = %g K, where τ = 1 − T/T_ref < 0 and the equation is undefined",
			ErrBadParam, name, tmax, tr)
	}
	fn := func(t float64) (float64, float64) {
		tau := (tr - t) / tr // exact difference: no rounding of T/T_ref near T_ref
		s, d := 0.0, 0.0
		for i, ai := range a {
			x := math.Pow(tau, e[i]-1) // τ^(eᵢ−1)
			s += ai * x * tau
			d += ai * e[i] * x
		}
		lnr := tr / t * s
		q := pr * math.Exp(lnr)
		return q, -q / t * (lnr + d)
	}
	return asCorrelation(newCurve(name, fn, nil, tmin, tmax, 0, tr))
}

func init() { Register(WagnerFamily{}) }
