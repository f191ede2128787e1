package thermo

import (
	"fmt"
	"math"
)

// PowerSumFamily is the family "power-sum": a reduced melting-pressure
// equation, a sum of powers of the reduced temperature about a reference
// point on the curve. It is the form of the IAPWS 2011 melting equations for
// ice Ih, III, V and VI.
//
//	P/P* = 1 + Σᵢ aᵢ·(θ^bᵢ − 1),    θ = T/T*
//	dP/dT = (P*/T*)·Σᵢ aᵢ·bᵢ·θ^(bᵢ−1)
//
// Symbols and parameters (SI):
//
//	t_ref  T*, reference temperature (a triple point), K (> 0)
//	p_ref  P*, pressure at T*, Pa (> 0)
//	a      [aᵢ], dimensionless coefficients
//	b      [bᵢ], dimensionless exponents (≠ 0), as many as a
//
// The IAPWS release writes the ice Ih equation as 1 + Σ aᵢ(1 − θ^bᵢ); in
// this family's form its coefficients change sign (a = [−1.19539337e6,
// −8.08183159e4, −3.33826860e3] for ice Ih), while ice III, V and VI keep
// theirs once written as 1 − a(1 − θ^b) = 1 + a(θ^b − 1).
//
// T(P) has a closed form for a single term, θ = ((P/P* − 1)/a + 1)^(1/b);
// otherwise it is solved numerically to about 1e-14 relative. The curve may
// fall with temperature (ice Ih) and need not be monotonic.
//
// Range: the catalog's [t_min, t_max], in which P must stay positive (New
// checks). Outside it the methods return a *RangeError; Extrapolator
// continues the formula with no claim of accuracy.
//
// References:
//
//	IAPWS R14-08(2011), Revised Release on the Pressure along the Melting
//	and Sublimation Curves of Ordinary Water Substance, International
//	Association for the Properties of Water and Steam, Plzeň, 2011.
//	W. Wagner, T. Riethmann, R. Feistel, A. H. Harvey, "New Equations for
//	the Sublimation Pressure and Melting Pressure of H2O Ice Ih", J. Phys.
//	Chem. Ref. Data 40 (2011) 043103.
type PowerSumFamily struct{}

// Name implements Family.
func (PowerSumFamily) Name() string { return "power-sum" }

var powerSumSpec = paramSpec{
	family:  "power-sum",
	scalars: []string{"t_ref", "p_ref"},
	lists:   []string{"a", "b"},
}

// New implements Family.
func (f PowerSumFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	tr, pr, a, b, err := reducedParams(powerSumSpec, p)
	if err != nil {
		return nil, err
	}
	if err := nonZero(name, "b", b); err != nil {
		return nil, err
	}
	fn := func(t float64) (float64, float64) {
		s, d := powerSumTerms(1, a, b, t, tr)
		return pr * s, pr * d / t
	}
	var inv inverse
	if len(a) == 1 {
		a0, b0 := a[0], b[0]
		inv = func(q float64) (float64, bool) {
			x := (q/pr-1)/a0 + 1
			return tr * math.Pow(x, 1/b0), x > 0
		}
	}
	return asCorrelation(newCurve(name, fn, inv, tmin, tmax, 0, math.Inf(1)))
}

// powerSumTerms returns s = s0 + Σᵢ aᵢ·(θ^bᵢ − 1) and d = Σᵢ aᵢ·bᵢ·θ^bᵢ
// at θ = T/T*, for the power-sum and log-power-sum families. It takes ln θ
// as log1p((T − T*)/T*) and θ^b − 1 as expm1(b·ln θ): near the reference
// point P is ~1e7 times as sensitive to θ as to T/T* − 1, and θ = T/T*
// rounded, or x − 1, would lose ~1e-10 of P.
func powerSumTerms(s0 float64, a, b []float64, t, tr float64) (s, d float64) {
	lth := math.Log1p((t - tr) / tr)
	s = s0
	for i, ai := range a {
		lt := b[i] * lth
		s += ai * math.Expm1(lt)
		d += ai * b[i] * math.Exp(lt)
	}
	return s, d
}

// reducedParams reads t_ref, p_ref and the lists a and b of the reduced
// families, checking names, positivity and list lengths.
func reducedParams(spec paramSpec, p Params) (tr, pr float64, a, b []float64, err error) {
	if err = spec.check(p); err != nil {
		return
	}
	v, err := scalars(spec.family, p, "t_ref", "p_ref")
	if err != nil {
		return
	}
	tr, pr = v[0], v[1]
	if err = positive(spec.family, "t_ref", "K", tr); err != nil {
		return
	}
	if err = positive(spec.family, "p_ref", "Pa", pr); err != nil {
		return
	}
	a, b, err = coefficientLists(spec.family, p, spec.lists[0], spec.lists[1])
	return
}

// nonZero refuses a zero entry in an exponent list.
func nonZero(family, name string, v []float64) error {
	for i, x := range v {
		if x == 0 {
			return fmt.Errorf("%w: %s: %s[%d] = 0 makes its term vanish; remove the term or give a non-zero exponent", ErrBadParam, family, name, i)
		}
	}
	return nil
}

func init() { Register(PowerSumFamily{}) }
