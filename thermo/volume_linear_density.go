package thermo

// LinearDensity is a density linear in temperature, for solids and for a
// condensed phase near a reference state,
//
//	ρ     = ρ0 + (dρ/dT)·(T − T0),
//	v     = M/ρ,
//	dv/dT = −v·(dρ/dT)/ρ,
//
// where T is the temperature (K), T0 the reference temperature (K), ρ0 the
// density at T0 (kg/m³), dρ/dT the constant slope (kg/(m³·K); 0 for a
// constant density), M the molar mass (kg/mol) and v the molar volume
// (m³/mol). Pressure is ignored: the phase is treated as incompressible.
//
// Catalog family "linear-density", parameters rho0 (kg/m³), t0 (K),
// drho_dt (kg/(m³·K)), molar_mass (kg/mol; injected by the catalog from the
// substance when absent).
//
// Range: as good as the two numbers over the interval they were chosen
// for. For ice Ih, ρ = 916.7 kg/m³ at 273.15 K and 0.1 MPa (common
// practice), thermal expansion changes ρ by about 0.15 kg/m³ per kelvin and
// compression by about 0.1 kg/m³ per MPa, so a constant density gives the
// volume of ice to about 1 % within some 20 K and 50 MPa of the triple
// point. New refuses parameters that give ρ ≤ 0 anywhere in
// [t_min, t_max]; Volume refuses temperatures outside [t_min, t_max].
//
// References:
//
//	Feistel, R., Wagner, W. (2006). A new equation of state for H2O ice Ih.
//	J. Phys. Chem. Ref. Data 35(2), 1021–1047 (ice Ih density near the
//	normal melting point).
type LinearDensity struct {
	rho0, t0, slope, molarMass float64
	r                          Range
}

var _ VolumeCorrelation = (*LinearDensity)(nil)

// LinearDensityFamily builds LinearDensity correlations; it is registered
// as "linear-density".
type LinearDensityFamily struct{}

// Name returns "linear-density".
func (LinearDensityFamily) Name() string { return "linear-density" }

// New builds the correlation from rho0, t0, drho_dt and molar_mass, valid
// for tmin ≤ T ≤ tmax.
func (LinearDensityFamily) New(p Params, tmin, tmax float64) (VolumeCorrelation, error) {
	return NewLinearDensity(p, tmin, tmax)
}

// NewLinearDensity builds the correlation from its parameters; see
// LinearDensity.
func NewLinearDensity(p Params, tmin, tmax float64) (*LinearDensity, error) {
	const name = "linear-density"
	if err := volumeKnownParams(p, name, "rho0", "t0", "drho_dt"); err != nil {
		return nil, err
	}
	rho0, err := positiveScalar(p, name, "rho0", "kg/m³")
	if err != nil {
		return nil, err
	}
	t0, err := positiveScalar(p, name, "t0", "K")
	if err != nil {
		return nil, err
	}
	slope, err := p.Scalar("drho_dt")
	if err != nil {
		return nil, fmtWrap(name, err)
	}
	m, err := positiveScalar(p, name, "molar_mass", "kg/mol")
	if err != nil {
		return nil, err
	}
	if err := volumeCheckRange(name, tmin, tmax, 0); err != nil {
		return nil, err
	}
	d := &LinearDensity{rho0: rho0, t0: t0, slope: slope, molarMass: m, r: Range{Tmin: tmin, Tmax: tmax}}
	for _, t := range []float64{tmin, tmax} {
		if rho := d.density(t); !(rho > 0) {
			return nil, badParamf("%s: density %g kg/m³ at T = %g K is not positive (rho0 = %g, t0 = %g, drho_dt = %g)",
				name, rho, t, rho0, t0, slope)
		}
	}
	return d, nil
}

func (d *LinearDensity) density(t float64) float64 { return d.rho0 + d.slope*(t-d.t0) }

// Volume returns v = M/ρ in m³/mol and dv/dT in m³/(mol·K) at T; p is not
// used.
func (d *LinearDensity) Volume(t, p float64) (v, dvdt float64, err error) {
	if err := volumeCheckT(t, d.r); err != nil {
		return 0, 0, err
	}
	rho := d.density(t)
	v = d.molarMass / rho
	return v, -v * d.slope / rho, nil
}

// Range returns the temperature validity range; the pressures are 0 (the
// form does not depend on pressure).
func (d *LinearDensity) Range() Range { return d.r }

func init() { RegisterVolume(LinearDensityFamily{}) }
