package thermo

import "math"

// InverseLogPowerSumFamily is the family "inverse-log-power-sum": the
// logarithm of the reduced pressure as a sum of powers of the reduced
// temperature divided by it. It is the form of the IAPWS 2011 sublimation
// equation of ice Ih.
//
//	ln(P/P*) = θ⁻¹·Σᵢ aᵢ·θ^bᵢ,    θ = T/T*
//	dP/dT    = (P/T*)·Σᵢ aᵢ·(bᵢ − 1)·θ^(bᵢ−2)
//
// Symbols and parameters (SI):
//
//	t_ref  T*, reference temperature (a triple point), K (> 0)
//	p_ref  P*, pressure at T*, Pa (> 0)
//	a      [aᵢ], dimensionless coefficients
//	b      [bᵢ], dimensionless exponents, as many as a
//
// Ice Ih (IAPWS R14-08): T* = 273.16 K, P* = 611.657 Pa,
// a = [−21.2144006, 27.3203819, −6.10598130],
// b = [0.00333333333, 1.20666667, 1.70333333]; valid 50 K to 273.16 K.
//
// T(P) is solved numerically to about 1e-14 relative.
//
// Range: the catalog's [t_min, t_max]. Outside it the methods return a
// *RangeError; Extrapolator continues the formula with no claim of accuracy.
//
// References:
//
//	IAPWS R14-08(2011), Revised Release on the Pressure along the Melting
//	and Sublimation Curves of Ordinary Water Substance, International
//	Association for the Properties of Water and Steam, Plzeň, 2011.
//	W. Wagner, T. Riethmann, R. Feistel, A. H. Harvey, "New Equations for
//	the Sublimation Pressure and Melting Pressure of H2O Ice Ih", J. Phys.
//	Chem. Ref. Data 40 (2011) 043103.
type InverseLogPowerSumFamily struct{}

// Name implements Family.
func (InverseLogPowerSumFamily) Name() string { return "inverse-log-power-sum" }

var inverseLogPowerSumSpec = paramSpec{
	family:  "inverse-log-power-sum",
	scalars: []string{"t_ref", "p_ref"},
	lists:   []string{"a", "b"},
}

// New implements Family.
func (f InverseLogPowerSumFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	tr, pr, a, b, err := reducedParams(inverseLogPowerSumSpec, p)
	if err != nil {
		return nil, err
	}
	fn := func(t float64) (float64, float64) {
		th := t / tr
		s, d := 0.0, 0.0
		for i, ai := range a {
			x := math.Pow(th, b[i]-1) // θ^(bᵢ−1)
			s += ai * x
			d += ai * (b[i] - 1) * x
		}
		q := pr * math.Exp(s)
		return q, q * d / t
	}
	return asCorrelation(newCurve(name, fn, nil, tmin, tmax, 0, math.Inf(1)))
}

func init() { Register(InverseLogPowerSumFamily{}) }
