package thermo

import "math"

// Rackett is the Rackett equation for the molar volume of a saturated
// liquid, in the form with the Rackett compressibility factor Z_RA,
//
//	v     = (R·Tc/Pc)·Z_RA^(1 + (1 − T/Tc)^(2/7)),
//	dv/dT = −(2/7)·v·ln(Z_RA)·(1 − T/Tc)^(−5/7)/Tc,
//
// where T is the temperature (K), Tc the critical temperature (K), Pc the
// critical pressure (Pa), R the molar gas constant (J/(mol·K)), Z_RA the
// dimensionless Rackett parameter (close to the critical compressibility
// factor Zc, 0.2 to 0.3 for most fluids) and v the molar volume (m³/mol).
//
// Catalog family "rackett", parameters t_c (K), p_c (Pa), z_ra.
//
// Range: saturated liquid from the triple point to about T/Tc = 0.99; with
// a fitted Z_RA the usual deviation is 1 % to 2 % for non-polar and weakly
// polar fluids, more for strongly associating ones (water, alcohols), for
// which a substance-specific density equation should be preferred. New
// refuses t_max > t_c and Z_RA outside (0, 1); Volume refuses temperatures
// outside [t_min, t_max]. At T = Tc exactly v = R·Tc·Z_RA/Pc and dv/dT is
// +Inf.
//
// References:
//
//	Rackett, H. G. (1970). Equation of state for saturated liquids.
//	J. Chem. Eng. Data 15(4), 514–517.
//	Spencer, C. F., Danner, R. P. (1972). Improved equation for prediction
//	of saturated liquid density. J. Chem. Eng. Data 17(2), 236–241.
type Rackett struct {
	tc, scale, lnZ float64
	r              Range
}

var _ VolumeCorrelation = (*Rackett)(nil)

// RackettFamily builds Rackett correlations; it is registered as "rackett".
type RackettFamily struct{}

// Name returns "rackett".
func (RackettFamily) Name() string { return "rackett" }

// New builds the correlation from t_c, p_c and z_ra, valid for
// tmin ≤ T ≤ tmax ≤ t_c.
func (RackettFamily) New(p Params, tmin, tmax float64) (VolumeCorrelation, error) {
	return NewRackett(p, tmin, tmax)
}

// NewRackett builds the correlation from its parameters; see Rackett.
func NewRackett(p Params, tmin, tmax float64) (*Rackett, error) {
	const name = "rackett"
	if err := volumeKnownParams(p, name, "t_c", "p_c", "z_ra"); err != nil {
		return nil, err
	}
	tc, err := positiveScalar(p, name, "t_c", "K")
	if err != nil {
		return nil, err
	}
	pc, err := positiveScalar(p, name, "p_c", "Pa")
	if err != nil {
		return nil, err
	}
	z, err := positiveScalar(p, name, "z_ra", "")
	if err != nil {
		return nil, err
	}
	if z >= 1 {
		return nil, badParamf("%s: \"z_ra\" = %g must lie in (0, 1) (typically 0.2 to 0.3)", name, z)
	}
	if err := volumeCheckRange(name, tmin, tmax, tc); err != nil {
		return nil, err
	}
	return &Rackett{tc: tc, scale: R * tc / pc * z, lnZ: math.Log(z), r: Range{Tmin: tmin, Tmax: tmax}}, nil
}

// Volume returns v in m³/mol and dv/dT in m³/(mol·K) at T; p is not used.
func (k *Rackett) Volume(t, p float64) (v, dvdt float64, err error) {
	if err := volumeCheckT(t, k.r); err != nil {
		return 0, 0, err
	}
	tau := math.Max(0, 1-t/k.tc)
	w := math.Pow(tau, 2.0/7)
	v = k.scale * math.Exp(k.lnZ*w)
	if tau == 0 {
		return v, math.Inf(1), nil
	}
	return v, -2.0 / 7 * v * k.lnZ * w / tau / k.tc, nil
}

// Range returns the temperature validity range; the pressures are 0 (the
// form does not depend on pressure).
func (k *Rackett) Range() Range { return k.r }

func init() { RegisterVolume(RackettFamily{}) }
