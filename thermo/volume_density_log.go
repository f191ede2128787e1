package thermo

import "math"

// DensityLogSeries is the coexisting-phase density equation in reduced
// logarithmic form,
//
//	ln(ρ/ρc) = Σᵢ cᵢ·τ^tᵢ,   τ = 1 − T/Tc,
//	v        = M/ρ,
//	dv/dT    = (v/Tc)·Σᵢ cᵢ·tᵢ·τ^(tᵢ−1),
//
// where T is the temperature (K), Tc the critical temperature (K), ρc the
// critical density (kg/m³), cᵢ dimensionless coefficients, tᵢ exponents, M
// the molar mass (kg/mol) and v the molar volume (m³/mol). The IAPWS
// supplementary release uses it for saturated water vapour (exponents
// 2/6, 4/6, 8/6, 18/6, 37/6, 71/6) and Span and Wagner (1996) for both
// saturated phases of carbon dioxide.
//
// Catalog family "density-log-series", parameters t_c (K), rho_c (kg/m³),
// c (list), t (list, same length), molar_mass (kg/mol; injected by the
// catalog from the substance when absent).
//
// Range: defined for T ≤ Tc; accurate over the range the coefficients were
// published for (water vapour, IAPWS SR1-86: 273.16 K to 647.096 K; carbon
// dioxide, Span and Wagner (1996): triple point 216.592 K to 304.1282 K).
// New refuses t_max > t_c; Volume refuses temperatures outside
// [t_min, t_max]. At T = Tc exactly v = M/ρc and dv/dT is ±Inf.
//
// References:
//
//	Wagner, W., Pruss, A. (1993). International equations for the saturation
//	properties of ordinary water substance. Revised according to the
//	International Temperature Scale of 1990. J. Phys. Chem. Ref. Data 22(3),
//	783–787.
//	Span, R., Wagner, W. (1996). A new equation of state for carbon dioxide
//	covering the fluid region from the triple-point temperature to 1100 K at
//	pressures up to 800 MPa. J. Phys. Chem. Ref. Data 25(6), 1509–1596.
type DensityLogSeries struct{ densitySeries }

var _ VolumeCorrelation = (*DensityLogSeries)(nil)

// DensityLogSeriesFamily builds DensityLogSeries correlations; it is
// registered as "density-log-series".
type DensityLogSeriesFamily struct{}

// Name returns "density-log-series".
func (DensityLogSeriesFamily) Name() string { return "density-log-series" }

// New builds the correlation from t_c, rho_c, c, t and molar_mass, valid
// for tmin ≤ T ≤ tmax ≤ t_c.
func (DensityLogSeriesFamily) New(p Params, tmin, tmax float64) (VolumeCorrelation, error) {
	return NewDensityLogSeries(p, tmin, tmax)
}

// NewDensityLogSeries builds the correlation from its parameters; see
// DensityLogSeries.
func NewDensityLogSeries(p Params, tmin, tmax float64) (*DensityLogSeries, error) {
	const name = "density-log-series"
	ds, err := newDensitySeries(p, name, "c", tmin, tmax)
	if err != nil {
		return nil, err
	}
	d := &DensityLogSeries{ds}
	if err := volumeSamplePositive(name, tmin, tmax, d.density); err != nil {
		return nil, err
	}
	return d, nil
}

func (d *DensityLogSeries) density(t float64) float64 {
	s, _ := d.series.eval(math.Max(0, 1-t/d.tc))
	return d.rhoc * math.Exp(s)
}

// Density returns the density ρ in kg/m³ at T.
func (d *DensityLogSeries) Density(t float64) (float64, error) {
	if err := volumeCheckT(t, d.r); err != nil {
		return 0, err
	}
	return d.density(t), nil
}

// Volume returns v = M/ρ in m³/mol and dv/dT in m³/(mol·K) at T; p is not
// used.
func (d *DensityLogSeries) Volume(t, p float64) (v, dvdt float64, err error) {
	if err := volumeCheckT(t, d.r); err != nil {
		return 0, 0, err
	}
	tau := math.Max(0, 1-t/d.tc)
	s, ds := d.series.eval(tau)
	v = d.molarMass / (d.rhoc * math.Exp(s))
	// d ln ρ/dT = −(ds/dτ)/Tc, and dv/dT = −v·d ln ρ/dT.
	return v, v * ds / d.tc, nil
}

// Range returns the temperature validity range; the pressures are 0 (the
// form does not depend on pressure).
func (d *DensityLogSeries) Range() Range { return d.r }

func init() { RegisterVolume(DensityLogSeriesFamily{}) }
