package thermo

import (
	"fmt"
	"math"
)

// ClausiusClapeyronFamily is the family "clausius-clapeyron": the
// Clapeyron equation for a vapour treated as an ideal gas with the
// condensed-phase volume neglected and a constant enthalpy of vaporisation
// or sublimation, integrated about a reference point.
//
//	ln(P/P0) = −(ΔH/R)·(1/T − 1/T0)
//	dP/dT    = P·ΔH/(R·T²)
//	T(P)     = 1 / (1/T0 − R·ln(P/P0)/ΔH)
//
// Symbols and parameters (SI):
//
//	t0       T0, reference temperature on the curve, K (> 0)
//	p0       P0, reference pressure on the curve, Pa (> 0)
//	delta_h  ΔH, molar enthalpy of vaporisation or sublimation, J/mol (> 0)
//	R        molar gas constant, 8.314462618 J/(mol·K)
//
// Range: the catalog's [t_min, t_max]. The form is a low-pressure
// approximation: typically within a few per cent over a span of some tens of
// kelvin around T0 and increasingly wrong towards the critical point, where
// ΔH falls to zero. Outside the range the methods return a *RangeError;
// Extrapolator continues the formula.
//
// References:
//
//	R. Clausius, "Ueber die bewegende Kraft der Wärme", Annalen der Physik
//	155 (1850) 368–397 and 500–524.
//	P. Atkins, J. de Paula, Atkins' Physical Chemistry, 8th ed., Oxford
//	University Press, 2006, §4.3 (the liquid–vapour boundary).
type ClausiusClapeyronFamily struct{}

// Name implements Family.
func (ClausiusClapeyronFamily) Name() string { return "clausius-clapeyron" }

var clausiusClapeyronSpec = paramSpec{
	family:  "clausius-clapeyron",
	scalars: []string{"t0", "p0", "delta_h"},
}

// New implements Family.
func (f ClausiusClapeyronFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	if err := clausiusClapeyronSpec.check(p); err != nil {
		return nil, err
	}
	v, err := scalars(name, p, "t0", "p0", "delta_h")
	if err != nil {
		return nil, err
	}
	t0, p0, dh := v[0], v[1], v[2]
	if err := positive(name, "t0", "K", t0); err != nil {
		return nil, err
	}
	if err := positive(name, "p0", "Pa", p0); err != nil {
		return nil, err
	}
	if dh <= 0 {
		return nil, fmt.Errorf("%w: %s: delta_h = %g J/mol must be > 0 (enthalpy of vaporisation or sublimation)", ErrBadParam, name, dh)
	}
	b := dh / R // K
	fn := func(t float64) (float64, float64) {
		q := p0 * math.Exp(-b*(1/t-1/t0))
		return q, q * b / (t * t)
	}
	inv := func(q float64) (float64, bool) {
		r := 1/t0 - math.Log(q/p0)/b
		return 1 / r, r > 0
	}
	return asCorrelation(newCurve(name, fn, inv, tmin, tmax, 0, math.Inf(1)))
}

func init() { Register(ClausiusClapeyronFamily{}) }
