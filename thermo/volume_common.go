package thermo

import (
	"fmt"
	"math"
	"strings"
)

// Helpers shared by the coexisting-phase volume families (volume_*.go).
//
// Every volume family returns the molar volume v in m³/mol and its
// temperature derivative dv/dT in m³/(mol·K). For the forms that depend on
// temperature alone (the density equations, Rackett, linear density) dv/dT
// is the derivative along the curve. For the vapour forms that depend on
// pressure (ideal gas, second virial) it is the partial derivative at
// constant pressure, (∂v/∂T)_P; the derivative along a coexistence curve is
// then dv/dT + (∂v/∂P)_T·dP/dT, with (∂v/∂P)_T = −R·T/P² for both forms.

// volumeCheckRange validates a volume correlation's temperature interval:
// 0 < tmin ≤ tmax, both finite, and tmax ≤ tc when tc > 0 (forms written
// in τ = 1 − T/Tc have no meaning above the critical temperature).
func volumeCheckRange(family string, tmin, tmax, tc float64) error {
	if math.IsNaN(tmin) || math.IsNaN(tmax) || math.IsInf(tmin, 0) || math.IsInf(tmax, 0) {
		return fmt.Errorf("%w: %s: temperature range [%v, %v] K must be finite", ErrBadParam, family, tmin, tmax)
	}
	if tmin <= 0 || tmax < tmin {
		return fmt.Errorf("%w: %s: temperature range [%g, %g] K must satisfy 0 < t_min ≤ t_max", ErrBadParam, family, tmin, tmax)
	}
	if tc > 0 && tmax > tc {
		return fmt.Errorf("%w: %s: t_max %g K lies above the critical temperature t_c = %g K; the form is valid for T ≤ t_c only",
			ErrBadParam, family, tmax, tc)
	}
	return nil
}

// positiveScalar returns the scalar parameter name and checks that it is > 0.
func positiveScalar(p Params, family, name, unit string) (float64, error) {
	v, err := p.Scalar(name)
	if err != nil {
		return 0, fmt.Errorf("%s: %w", family, err)
	}
	if v <= 0 {
		return 0, fmt.Errorf("%w: %s: %q = %g %s must be > 0", ErrBadParam, family, name, v, unit)
	}
	return v, nil
}

// seriesTerms reads a coefficient list and an exponent list of equal,
// non-zero length, with non-negative exponents.
func seriesTerms(p Params, family, coef, expo string) (c, e []float64, err error) {
	if c, err = p.List(coef); err != nil {
		return nil, nil, fmt.Errorf("%s: %w", family, err)
	}
	if e, err = p.List(expo); err != nil {
		return nil, nil, fmt.Errorf("%s: %w", family, err)
	}
	if len(c) == 0 {
		return nil, nil, fmt.Errorf("%w: %s: %q is empty; give at least one coefficient", ErrBadParam, family, coef)
	}
	if len(c) != len(e) {
		return nil, nil, fmt.Errorf("%w: %s: %q has %d values but %q has %d; they must pair up",
			ErrBadParam, family, coef, len(c), expo, len(e))
	}
	for i, x := range e {
		if x < 0 {
			return nil, nil, fmt.Errorf("%w: %s: exponent %q[%d] = %g must be ≥ 0", ErrBadParam, family, expo, i, x)
		}
	}
	return c, e, nil
}

// densitySeries is what the reduced density equations (density-power-series,
// density-log-series) share: Tc, ρc, the molar mass, the series Σ cᵢ·τ^tᵢ
// and the temperature range.
type densitySeries struct {
	tc, rhoc, molarMass float64
	series              tauSeries
	r                   Range
}

// newDensitySeries reads t_c, rho_c, molar_mass, the coefficient list coef
// and the exponent list t of the density family name, and checks the range
// [tmin, tmax] against t_c.
func newDensitySeries(p Params, name, coef string, tmin, tmax float64) (densitySeries, error) {
	if err := volumeKnownParams(p, name, "t_c", "rho_c", coef, "t"); err != nil {
		return densitySeries{}, err
	}
	tc, err := positiveScalar(p, name, "t_c", "K")
	if err != nil {
		return densitySeries{}, err
	}
	rhoc, err := positiveScalar(p, name, "rho_c", "kg/m³")
	if err != nil {
		return densitySeries{}, err
	}
	m, err := positiveScalar(p, name, "molar_mass", "kg/mol")
	if err != nil {
		return densitySeries{}, err
	}
	c, t, err := seriesTerms(p, name, coef, "t")
	if err != nil {
		return densitySeries{}, err
	}
	if err := volumeCheckRange(name, tmin, tmax, tc); err != nil {
		return densitySeries{}, err
	}
	return densitySeries{tc: tc, rhoc: rhoc, molarMass: m, series: newTauSeries(c, t), r: Range{Tmin: tmin, Tmax: tmax}}, nil
}

// tauSeries is Σ cᵢ·τ^eᵢ with its derivative. When every exponent is a
// multiple of 1/k for a small k (the published density equations use
// thirds and sixths), it evaluates one root u = τ^(1/k) and integer powers
// of u, which is several times faster than one math.Pow per term and as
// accurate (relative error below 1e-14 for the exponents in use).
type tauSeries struct {
	c, e []float64
	k    int   // common denominator, 0 when none ≤ 12 was found
	n    []int // eᵢ·k when k > 0
}

func newTauSeries(c, e []float64) tauSeries {
	s := tauSeries{c: c, e: e}
	for k := 1; k <= 12; k++ {
		n := make([]int, len(e))
		ok := true
		for i, x := range e {
			m := math.Round(x * float64(k))
			if math.Abs(m-x*float64(k)) > 1e-9 || m > 1024 {
				ok = false
				break
			}
			n[i] = int(m)
		}
		if ok {
			s.k, s.n = k, n
			break
		}
	}
	return s
}

// powInt returns u^n for n ≥ 0 by repeated squaring.
func powInt(u float64, n int) float64 {
	r := 1.0
	for n > 0 {
		if n&1 == 1 {
			r *= u
		}
		u *= u
		n >>= 1
	}
	return r
}

// eval returns s = Σ cᵢ·τ^eᵢ and ds/dτ for τ ≥ 0. At τ = 0 a term with
// 0 < eᵢ < 1 has an infinite derivative; the sum then is ±Inf with the sign
// of the lowest such exponent's coefficient (the term that dominates as
// τ → 0⁺), never NaN.
func (q *tauSeries) eval(tau float64) (s, ds float64) {
	if tau == 0 {
		lowest := math.Inf(1)
		for i, x := range q.e {
			switch {
			case x == 0:
				s += q.c[i]
			case x == 1:
				if !math.IsInf(ds, 0) {
					ds += q.c[i]
				}
			case x < 1 && q.c[i] != 0 && x < lowest:
				lowest = x
				ds = math.Inf(1)
				if q.c[i] < 0 {
					ds = math.Inf(-1)
				}
			}
		}
		return s, ds
	}
	var u float64
	switch q.k {
	case 0:
	case 1:
		u = tau
	case 2:
		u = math.Sqrt(tau)
	case 3:
		u = math.Cbrt(tau)
	case 6:
		u = math.Sqrt(math.Cbrt(tau))
	default:
		u = math.Pow(tau, 1/float64(q.k))
	}
	for i, x := range q.e {
		if x == 0 {
			s += q.c[i]
			continue
		}
		var t float64
		if q.k > 0 {
			t = powInt(u, q.n[i])
		} else {
			t = math.Pow(tau, x)
		}
		s += q.c[i] * t
		ds += q.c[i] * x * t / tau
	}
	return s, ds
}

// volumeCheckT validates an evaluation temperature against r.
func volumeCheckT(t float64, r Range) error {
	return CheckTemperature(t, r)
}

// volumeCheckP validates a coexistence pressure for the pressure-dependent
// vapour forms: finite and > 0; no range applies.
func volumeCheckP(p float64) error {
	if math.IsNaN(p) || math.IsInf(p, 0) {
		return &InputError{Quantity: "pressure", Value: p, Reason: "must be a finite number"}
	}
	if p <= 0 {
		return &InputError{Quantity: "pressure", Value: p, Reason: "must be > 0 Pa"}
	}
	return nil
}

// volumeSamplePositive checks that a density function stays positive and
// finite over [tmin, tmax] on a grid of 65 points, so that a correlation
// accepted at build time cannot return a negative or infinite volume later.
func volumeSamplePositive(family string, tmin, tmax float64, rho func(t float64) float64) error {
	const n = 64
	for i := 0; i <= n; i++ {
		t := tmin + (tmax-tmin)*float64(i)/n
		if r := rho(t); !(r > 0) || math.IsInf(r, 0) {
			return fmt.Errorf("%w: %s: density %g kg/m³ at T = %g K is not positive; the parameters do not describe a phase over [%g, %g] K",
				ErrBadParam, family, r, t, tmin, tmax)
		}
	}
	return nil
}

// badParamf returns an error wrapping ErrBadParam.
func badParamf(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrBadParam}, args...)...)
}

// fmtWrap prefixes err with the family name, keeping it unwrappable.
func fmtWrap(family string, err error) error { return fmt.Errorf("%s: %w", family, err) }

// volumeKnownParams refuses parameters a family does not use (a misspelt
// name would otherwise be ignored silently). molar_mass is always accepted:
// the catalog injects it into every volume correlation.
func volumeKnownParams(p Params, family string, names ...string) error {
	for k := range p {
		if k == "molar_mass" {
			continue
		}
		known := false
		for _, n := range names {
			known = known || k == n
		}
		if !known {
			return badParamf("%s: unknown parameter %q (parameters: %s, molar_mass)", family, k, strings.Join(names, ", "))
		}
	}
	return nil
}
