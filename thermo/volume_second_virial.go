package thermo

import "math"

// SecondVirial is the molar volume of a vapour from the volume-explicit
// virial equation truncated after the second coefficient,
//
//	v         = R·T/P + B(T),   B(T) = b0 + b1/T + b2/T²,
//	(∂v/∂T)_P = R/P − b1/T² − 2·b2/T³,
//
// where T is the temperature (K), P the coexistence pressure (Pa) at T, R
// the molar gas constant (J/(mol·K)), B the second virial coefficient
// (m³/mol), b0 (m³/mol), b1 (m³·K/mol) and b2 (m³·K²/mol) its coefficients
// and v the molar volume (m³/mol).
//
// Catalog family "second-virial", parameters b0, b1, b2.
//
// Range: the truncation is good to about (B·P/(R·T))² relative, i.e. to a
// fraction of a percent while the compressibility factor Z = 1 + B·P/(R·T)
// stays above about 0.9; B(T) itself is only as good as the fit it comes
// from, over that fit's temperatures. Volume refuses temperatures outside
// [t_min, t_max], non-positive or non-finite pressures, and pressures at
// which Z < 0.5 (far beyond the form's validity; it would soon give v ≤ 0).
// The returned dv/dT is the partial derivative at constant pressure; along a
// curve add −(R·T/P²)·dP/dT.
//
// References:
//
//	Mason, E. A., Spurling, T. H. (1969). The Virial Equation of State.
//	Pergamon Press, Oxford.
//	Smith, J. M., Van Ness, H. C., Abbott, M. M. (2005). Introduction to
//	Chemical Engineering Thermodynamics, 7th ed., McGraw-Hill, ch. 3.
type SecondVirial struct {
	b0, b1, b2 float64
	r          Range
}

var _ VolumeCorrelation = (*SecondVirial)(nil)

// SecondVirialFamily builds SecondVirial correlations; it is registered as
// "second-virial".
type SecondVirialFamily struct{}

// Name returns "second-virial".
func (SecondVirialFamily) Name() string { return "second-virial" }

// New builds the correlation from b0, b1 and b2 (a missing b1 or b2 is an
// error; give 0 explicitly), valid for tmin ≤ T ≤ tmax.
func (SecondVirialFamily) New(p Params, tmin, tmax float64) (VolumeCorrelation, error) {
	return NewSecondVirial(p, tmin, tmax)
}

// NewSecondVirial builds the correlation from its parameters; see
// SecondVirial.
func NewSecondVirial(p Params, tmin, tmax float64) (*SecondVirial, error) {
	const name = "second-virial"
	if err := volumeKnownParams(p, name, "b0", "b1", "b2"); err != nil {
		return nil, err
	}
	var b [3]float64
	for i, k := range []string{"b0", "b1", "b2"} {
		v, err := p.Scalar(k)
		if err != nil {
			return nil, fmtWrap(name, err)
		}
		b[i] = v
	}
	if err := volumeCheckRange(name, tmin, tmax, 0); err != nil {
		return nil, err
	}
	return &SecondVirial{b0: b[0], b1: b[1], b2: b[2], r: Range{Tmin: tmin, Tmax: tmax}}, nil
}

// B returns the second virial coefficient B(T) in m³/mol and dB/dT in
// m³/(mol·K).
func (s *SecondVirial) B(t float64) (b, dbdt float64) {
	it := 1 / t
	return s.b0 + it*(s.b1+it*s.b2), -it * it * (s.b1 + 2*s.b2*it)
}

// Volume returns v = R·T/P + B(T) in m³/mol and (∂v/∂T)_P in m³/(mol·K).
func (s *SecondVirial) Volume(t, p float64) (v, dvdt float64, err error) {
	if err := volumeCheckT(t, s.r); err != nil {
		return 0, 0, err
	}
	if err := volumeCheckP(p); err != nil {
		return 0, 0, err
	}
	b, db := s.B(t)
	ideal := R * t / p
	if b < 0 && -b > 0.5*ideal {
		// Z = 1 + B·P/(R·T) < 0.5: the truncated series is meaningless.
		return 0, 0, &RangeError{Quantity: "pressure", Value: p, Min: 0, Max: 0.5 * R * t / math.Abs(b), Unit: "Pa"}
	}
	return ideal + b, R/p + db, nil
}

// Range returns the temperature validity range; the pressures are 0 (the
// pressure limit depends on T, see SecondVirial).
func (s *SecondVirial) Range() Range { return s.r }

func init() { RegisterVolume(SecondVirialFamily{}) }
