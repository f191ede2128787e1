package thermo

import (
	"fmt"
	"math"
)

// ClapeyronLinearFamily is the family "clapeyron-linear": the Clapeyron
// equation integrated about a reference point with constant enthalpy and
// volume of transition, suited to melting and solid–solid curves over
// modest pressure spans.
//
//	P(T) = P0 + (ΔH/ΔV)·ln(T/T0)                (default)
//	P(T) = P0 + ΔH/(T0·ΔV)·(T − T0)             (linearized = 1)
//	dP/dT = ΔH/(T·ΔV)    or    ΔH/(T0·ΔV)
//	T(P) = T0·exp((P − P0)·ΔV/ΔH)    or    T0 + (P − P0)·T0·ΔV/ΔH
//
// Symbols and parameters (SI):
//
//	t0          T0, reference temperature on the curve, K (> 0)
//	p0          P0, reference pressure on the curve, Pa (> 0)
//	delta_h     ΔH, molar enthalpy of transition (high-T phase minus low-T phase), J/mol (≠ 0)
//	delta_v     ΔV, molar volume of transition (same order), m³/mol (≠ 0)
//	linearized  optional, 0 (default) for the logarithmic form, 1 for the straight line
//
// A negative ΔV (ice-like: the solid is less dense than the liquid) gives
// a curve falling with temperature; every method handles either sign.
//
// Range: the catalog's [t_min, t_max]; P must stay positive there, which
// New checks. The assumption of constant ΔH and ΔV holds only near the
// reference point: expect errors to grow with |T − T0|. Outside the range
// the methods return a *RangeError; Extrapolator continues the formula.
//
// References:
//
//	B. P. E. Clapeyron, "Mémoire sur la puissance motrice de la chaleur",
//	Journal de l'École Polytechnique 14 (1834) 153–190.
//	P. Atkins, J. de Paula, Atkins' Physical Chemistry, 8th ed., Oxford
//	University Press, 2006, §4.3 (the solid–liquid boundary).
type ClapeyronLinearFamily struct{}

// Name implements Family.
func (ClapeyronLinearFamily) Name() string { return "clapeyron-linear" }

var clapeyronLinearSpec = paramSpec{
	family:   "clapeyron-linear",
	scalars:  []string{"t0", "p0", "delta_h", "delta_v"},
	optional: []string{"linearized"},
}

// New implements Family.
func (f ClapeyronLinearFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	if err := clapeyronLinearSpec.check(p); err != nil {
		return nil, err
	}
	v, err := scalars(name, p, "t0", "p0", "delta_h", "delta_v")
	if err != nil {
		return nil, err
	}
	t0, p0, dh, dv := v[0], v[1], v[2], v[3]
	if err := positive(name, "t0", "K", t0); err != nil {
		return nil, err
	}
	if err := positive(name, "p0", "Pa", p0); err != nil {
		return nil, err
	}
	if dh == 0 {
		return nil, fmt.Errorf("%w: %s: delta_h = 0 J/mol gives a flat curve with no T(P); need ΔH ≠ 0", ErrBadParam, name)
	}
	if dv == 0 {
		return nil, fmt.Errorf("%w: %s: delta_v = 0 m³/mol gives an infinite slope; need ΔV ≠ 0", ErrBadParam, name)
	}
	linear := false
	if _, ok := p["linearized"]; ok {
		l, err := p.Scalar("linearized")
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		switch l {
		case 0:
		case 1:
			linear = true
		default:
			return nil, fmt.Errorf("%w: %s: linearized = %g must be 0 (logarithmic form) or 1 (straight line)", ErrBadParam, name, l)
		}
	}
	k := dh / dv // Pa
	if linear {
		s := k / t0
		fn := func(t float64) (float64, float64) { return p0 + s*(t-t0), s }
		inv := func(q float64) (float64, bool) { return t0 + (q-p0)/s, true }
		return asCorrelation(newCurve(name, fn, inv, tmin, tmax, 0, math.Inf(1)))
	}
	// ln(T/T0) as log1p((T − T0)/T0): near T0 the pressure is P0 plus a
	// large multiple of a small logarithm, and ln of the rounded ratio
	// would put ~1e-10 relative noise on P (ice: ΔH/ΔV ≈ −3.7e9 Pa).
	fn := func(t float64) (float64, float64) { return p0 + k*math.Log1p((t-t0)/t0), k / t }
	inv := func(q float64) (float64, bool) { return t0 * math.Exp((q-p0)/k), true }
	return asCorrelation(newCurve(name, fn, inv, tmin, tmax, 0, math.Inf(1)))
}

func init() { Register(ClapeyronLinearFamily{}) }
