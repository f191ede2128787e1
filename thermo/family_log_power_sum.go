package thermo

import "math"

// LogPowerSumFamily is the family "log-power-sum": the logarithm of the
// reduced pressure as a sum of powers of the reduced temperature. It is the
// form of the IAPWS 2011 melting equation for ice VII.
//
//	ln(P/P*) = Σᵢ aᵢ·(θ^bᵢ − 1),    θ = T/T*
//	dP/dT    = (P/T*)·Σᵢ aᵢ·bᵢ·θ^(bᵢ−1)
//
// Symbols and parameters (SI):
//
//	t_ref  T*, reference temperature (a triple point), K (> 0)
//	p_ref  P*, pressure at T*, Pa (> 0)
//	a      [aᵢ], dimensionless coefficients
//	b      [bᵢ], dimensionless exponents (≠ 0), as many as a
//
// The IAPWS release writes the ice VII equation as Σ aᵢ(1 − θ^bᵢ); in this
// family's form its coefficients change sign: a = [−1.73683, 0.0544606,
// −8.06106e-8], b = [−1, 5, 22] with T* = 355 K, P* = 2216 MPa.
//
// T(P) has a closed form for a single term, θ = (ln(P/P*)/a + 1)^(1/b);
// otherwise it is solved numerically to about 1e-14 relative.
//
// Range: the catalog's [t_min, t_max] (355 K to 715 K for ice VII). Outside
// it the methods return a *RangeError; Extrapolator continues the formula
// with no claim of accuracy.
//
// References:
//
//	IAPWS R14-08(2011), Revised Release on the Pressure along the Melting
//	and Sublimation Curves of Ordinary Water Substance, International
//	Association for the Properties of Water and Steam, Plzeň, 2011.
//	W. Wagner, T. Riethmann, R. Feistel, A. H. Harvey, "New Equations for
//	the Sublimation Pressure and Melting Pressure of H2O Ice Ih", J. Phys.
//	Chem. Ref. Data 40 (2011) 043103.
type LogPowerSumFamily struct{}

// Name implements Family.
func (LogPowerSumFamily) Name() string { return "log-power-sum" }

var logPowerSumSpec = paramSpec{
	family:  "log-power-sum",
	scalars: []string{"t_ref", "p_ref"},
	lists:   []string{"a", "b"},
}

// New implements Family.
func (f LogPowerSumFamily) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	tr, pr, a, b, err := reducedParams(logPowerSumSpec, p)
	if err != nil {
		return nil, err
	}
	if err := nonZero(name, "b", b); err != nil {
		return nil, err
	}
	fn := func(t float64) (float64, float64) {
		s, d := powerSumTerms(0, a, b, t, tr)
		q := pr * math.Exp(s)
		return q, q * d / t
	}
	var inv inverse
	if len(a) == 1 {
		a0, b0 := a[0], b[0]
		inv = func(q float64) (float64, bool) {
			x := math.Log(q/pr)/a0 + 1
			return tr * math.Pow(x, 1/b0), x > 0
		}
	}
	return asCorrelation(newCurve(name, fn, inv, tmin, tmax, 0, math.Inf(1)))
}

func init() { Register(LogPowerSumFamily{}) }
