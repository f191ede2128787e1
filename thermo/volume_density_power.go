package thermo

import "math"

// DensityPowerSeries is the saturated-liquid density equation in reduced
// power-series form,
//
//	ρ/ρc = 1 + Σᵢ bᵢ·τ^tᵢ,   τ = 1 − T/Tc,
//	v    = M/ρ,
//	dv/dT = (M/ρ²)·(ρc/Tc)·Σᵢ bᵢ·tᵢ·τ^(tᵢ−1),
//
// where T is the temperature (K), Tc the critical temperature (K), ρc the
// critical density (kg/m³), bᵢ dimensionless coefficients, tᵢ exponents
// (typically fractions with denominator 3 for the liquid), M the molar mass
// (kg/mol) and v the molar volume (m³/mol).
//
// Catalog family "density-power-series", parameters t_c (K), rho_c (kg/m³),
// b (list), t (list, same length), molar_mass (kg/mol; injected by the
// catalog from the substance when absent).
//
// Range: the form is defined for T ≤ Tc; its accuracy is that of the
// published coefficients over the published range (for water, IAPWS SR1-86:
// 273.16 K to 647.096 K, within the uncertainty of the underlying equation
// of state). New refuses t_max > t_c and parameters that give ρ ≤ 0
// anywhere in [t_min, t_max]; Volume refuses temperatures outside
// [t_min, t_max]. At T = Tc exactly v = M/ρc and dv/dT is ±Inf (the
// coexistence curve has a vertical tangent in ρ at the critical point).
//
// References:
//
//	Wagner, W., Pruss, A. (1993). International equations for the saturation
//	properties of ordinary water substance. Revised according to the
//	International Temperature Scale of 1990. J. Phys. Chem. Ref. Data 22(3),
//	783–787.
//	IAPWS SR1-86(1992). Revised Supplementary Release on Saturation
//	Properties of Ordinary Water Substance. International Association for
//	the Properties of Water and Steam.
type DensityPowerSeries struct{ densitySeries }

var _ VolumeCorrelation = (*DensityPowerSeries)(nil)

// DensityPowerSeriesFamily builds DensityPowerSeries correlations; it is
// registered as "density-power-series".
type DensityPowerSeriesFamily struct{}

// Name returns "density-power-series".
func (DensityPowerSeriesFamily) Name() string { return "density-power-series" }

// New builds the correlation from t_c, rho_c, b, t and molar_mass, valid
// for tmin ≤ T ≤ tmax ≤ t_c.
func (f DensityPowerSeriesFamily) New(p Params, tmin, tmax float64) (VolumeCorrelation, error) {
	return NewDensityPowerSeries(p, tmin, tmax)
}

// NewDensityPowerSeries builds the correlation from its parameters; see
// DensityPowerSeries.
func NewDensityPowerSeries(p Params, tmin, tmax float64) (*DensityPowerSeries, error) {
	const name = "density-power-series"
	ds, err := newDensitySeries(p, name, "b", tmin, tmax)
	if err != nil {
		return nil, err
	}
	d := &DensityPowerSeries{ds}
	if err := volumeSamplePositive(name, tmin, tmax, d.density); err != nil {
		return nil, err
	}
	return d, nil
}

func (d *DensityPowerSeries) density(t float64) float64 {
	s, _ := d.series.eval(math.Max(0, 1-t/d.tc))
	return d.rhoc * (1 + s)
}

// Density returns the density ρ in kg/m³ at T.
func (d *DensityPowerSeries) Density(t float64) (float64, error) {
	if err := volumeCheckT(t, d.r); err != nil {
		return 0, err
	}
	return d.density(t), nil
}

// Volume returns v = M/ρ in m³/mol and dv/dT in m³/(mol·K) at T; p is not
// used.
func (d *DensityPowerSeries) Volume(t, p float64) (v, dvdt float64, err error) {
	if err := volumeCheckT(t, d.r); err != nil {
		return 0, 0, err
	}
	tau := math.Max(0, 1-t/d.tc)
	s, ds := d.series.eval(tau)
	rho := d.rhoc * (1 + s)
	drho := -d.rhoc * ds / d.tc
	v = d.molarMass / rho
	return v, -v * drho / rho, nil
}

// Range returns the temperature validity range; the pressures are 0 (the
// form does not depend on pressure).
func (d *DensityPowerSeries) Range() Range { return d.r }

func init() { RegisterVolume(DensityPowerSeriesFamily{}) }
