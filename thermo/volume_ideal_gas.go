package thermo

// IdealGas is the ideal-gas molar volume of a vapour,
//
//	v         = R·T/P,
//	(∂v/∂T)_P = R/P,
//
// where T is the temperature (K), P the coexistence pressure (Pa) at T, R
// the molar gas constant (J/(mol·K)) and v the molar volume (m³/mol).
//
// Catalog family "ideal-gas"; it takes no parameters.
//
// Range: the relative error in v is about |B·P/(R·T)|, B the second virial
// coefficient: below 0.1 % for water vapour on the sublimation curve of ice
// Ih (P ≤ 612 Pa), several percent for vapours near their triple point at
// pressures of the order of 1 MPa, and unbounded toward the critical point.
// Prefer the second-virial or a density equation there. Volume refuses
// temperatures outside [t_min, t_max] and non-positive or non-finite
// pressures. The returned dv/dT is the partial derivative at constant
// pressure; along a curve add −(R·T/P²)·dP/dT.
//
// References:
//
//	Smith, J. M., Van Ness, H. C., Abbott, M. M. (2005). Introduction to
//	Chemical Engineering Thermodynamics, 7th ed., McGraw-Hill, ch. 3.
type IdealGas struct {
	r Range
}

var _ VolumeCorrelation = (*IdealGas)(nil)

// IdealGasFamily builds IdealGas correlations; it is registered as
// "ideal-gas".
type IdealGasFamily struct{}

// Name returns "ideal-gas".
func (IdealGasFamily) Name() string { return "ideal-gas" }

// New builds the correlation, valid for tmin ≤ T ≤ tmax. Parameters are
// not used except molar_mass, which the catalog may inject and is
// accepted; any other parameter is an error (it would be silently ignored).
func (IdealGasFamily) New(p Params, tmin, tmax float64) (VolumeCorrelation, error) {
	return NewIdealGas(p, tmin, tmax)
}

// NewIdealGas builds the correlation; see IdealGas.
func NewIdealGas(p Params, tmin, tmax float64) (*IdealGas, error) {
	const name = "ideal-gas"
	for k := range p {
		if k != "molar_mass" {
			return nil, badParamf("%s: takes no parameters (molar_mass aside), got %q", name, k)
		}
	}
	if err := volumeCheckRange(name, tmin, tmax, 0); err != nil {
		return nil, err
	}
	return &IdealGas{r: Range{Tmin: tmin, Tmax: tmax}}, nil
}

// Volume returns v = R·T/P in m³/mol and (∂v/∂T)_P = R/P in m³/(mol·K).
func (g *IdealGas) Volume(t, p float64) (v, dvdt float64, err error) {
	if err := volumeCheckT(t, g.r); err != nil {
		return 0, 0, err
	}
	if err := volumeCheckP(p); err != nil {
		return 0, 0, err
	}
	return R * t / p, R / p, nil
}

// Range returns the temperature validity range; the pressures are 0 (no
// pressure range applies; P must be positive and finite).
func (g *IdealGas) Range() Range { return g.r }

func init() { RegisterVolume(IdealGasFamily{}) }
