package thermo

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestClapeyronIceFusion(t *testing.T) {
	t.Parallel()
	// ΔH_fus ≈ 6.01 kJ/mol and ΔV_fus ≈ −1.63 cm³/mol at 273.15 K give a
	// melting slope of about −13.5 MPa/K (common practice).
	got, err := ClapeyronSlope(273.15, 6010, -1.63e-6)
	if err != nil || !scalar.EqualWithinAbsOrRel(got, -13.5e6, 0, 0.005) { // common practice
		t.Errorf("ClapeyronSlope = %g, %v; want ≈ −13.5e6 Pa/K", got, err)
	}
	// And back: ΔH from the slope and ΔV, ΔV from the slope and ΔH.
	h, err := ClapeyronEnthalpy(273.15, got, -1.63e-6)
	if err != nil || !scalar.EqualWithinAbsOrRel(h, 6010, 0, 1e-14) {
		t.Errorf("ClapeyronEnthalpy = %g, %v; want 6010", h, err)
	}
	v, err := ClapeyronVolume(273.15, got, 6010)
	if err != nil || !scalar.EqualWithinAbsOrRel(v, -1.63e-6, 0, 1e-14) {
		t.Errorf("ClapeyronVolume = %g, %v; want −1.63e-6", v, err)
	}
	// With the real ice Ih melting curve's slope (IAPWS R14-08) and
	// ΔV ≈ −1.634 cm³/mol, ΔH_fus comes out near 6.01 kJ/mol (common practice).
	cv := tstWaterMelting(t)
	pt, err := cv.Pressure(273.16, CurveOptions{Branch: "ice-Ih"})
	if err != nil {
		t.Fatal(err)
	}
	h, err = ClapeyronEnthalpy(273.16, pt.Slope, -1.634e-6)
	if err != nil || !scalar.EqualWithinAbsOrRel(h, 6010, 0, 0.02) {
		t.Errorf("ΔH_fus from the IAPWS slope %g Pa/K: %g J/mol, %v; want ≈ 6010", pt.Slope, h, err)
	}
}

func TestClapeyronWaterVaporisation(t *testing.T) {
	t.Parallel()
	sat := tstWaterSaturation(t)
	pt, err := sat.Temperature(101325, CurveOptions{})
	if err != nil {
		t.Fatal(err)
	}
	const hvap = 40.657e3 // J/mol at the normal boiling point, 2256.4 kJ/kg (common practice, from memory)
	// Exact form with both volumes: v_vap = 1.6718 m³/kg, v_liq = 0.0010435 m³/kg at 100 °C (steam tables, from memory).
	const m = 0.018015268 // kg/mol, IAPWS-95 molar mass
	h, err := ClapeyronEnthalpyVolumes(pt.Temperature, pt.Slope, 1.6718*m, 0.0010435*m)
	if err != nil || !scalar.EqualWithinAbsOrRel(h, hvap, 0, 0.002) {
		t.Errorf("exact ΔH_vap = %g J/mol, %v; want %g within 0.2 %%", h, err, hvap)
	}
	// The ideal-gas estimate neglects V_liq and non-ideality: a little high.
	est, err := IdealGasEnthalpy(pt.Temperature, pt.Pressure, pt.Slope)
	if err != nil || !(est > hvap) || !scalar.EqualWithinAbsOrRel(est, hvap, 0, 0.03) {
		t.Errorf("ideal-gas ΔH_vap = %g J/mol, %v; want a little above %g", est, err, hvap)
	}
	t.Logf("water at 1 atm: T = %.4f K, dP/dT = %.2f Pa/K, exact ΔH %.0f J/mol, ideal-gas estimate %.0f J/mol (%.2f %% high)",
		pt.Temperature, pt.Slope, h, est, 100*(est/hvap-1))
	back, err := IdealGasSlope(pt.Temperature, pt.Pressure, est)
	if err != nil || !scalar.EqualWithinAbsOrRel(back, pt.Slope, 0, 1e-14) {
		t.Errorf("IdealGasSlope = %g, %v; want %g", back, err, pt.Slope)
	}
}

// On a curve ln P = a − b/T the ideal-gas estimate is exactly R·b.
func TestIdealGasEnthalpyExact(t *testing.T) {
	t.Parallel()
	c := newTstExp(373.15, 101325, 4900, 250, 600)
	for _, temp := range []float64{250, 300, 450, 600} {
		p, d, _ := c.PressureSlope(temp)
		h, err := IdealGasEnthalpy(temp, p, d)
		if err != nil || !scalar.EqualWithinAbsOrRel(h, R*4900, 0, 1e-13) {
			t.Errorf("T = %g: %g, %v; want %g", temp, h, err, R*4900)
		}
	}
}

func TestClapeyronErrors(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	var ie *InputError
	for _, tc := range []struct {
		name string
		f    func() (float64, error)
		want any // error sentinel or *InputError
	}{
		{"slope, ΔV = 0", func() (float64, error) { return ClapeyronSlope(300, 1000, 0) }, ErrZeroDenominator},
		{"volume, dP/dT = 0", func() (float64, error) { return ClapeyronVolume(300, 0, 1000) }, ErrZeroDenominator},
		{"slope, T = 0", func() (float64, error) { return ClapeyronSlope(0, 1000, 1e-6) }, &ie},
		{"slope, T < 0", func() (float64, error) { return ClapeyronSlope(-1, 1000, 1e-6) }, &ie},
		{"slope, NaN ΔH", func() (float64, error) { return ClapeyronSlope(300, nan, 1e-6) }, &ie},
		{"slope, Inf ΔV", func() (float64, error) { return ClapeyronSlope(300, 1, inf) }, &ie},
		{"enthalpy, NaN slope", func() (float64, error) { return ClapeyronEnthalpy(300, nan, 1e-6) }, &ie},
		{"enthalpy, NaN T", func() (float64, error) { return ClapeyronEnthalpy(nan, 1, 1e-6) }, &ie},
		{"enthalpy, Inf ΔV", func() (float64, error) { return ClapeyronEnthalpy(300, 1, -inf) }, &ie},
		{"volumes, Inf", func() (float64, error) { return ClapeyronEnthalpyVolumes(300, 1, inf, 1e-5) }, &ie},
		{"volumes, negative", func() (float64, error) { return ClapeyronEnthalpyVolumes(300, 1, 1e-3, -1e-5) }, ErrBadParam},
		{"volume, Inf T", func() (float64, error) { return ClapeyronVolume(inf, 1, 1) }, &ie},
		{"volume, NaN ΔH", func() (float64, error) { return ClapeyronVolume(300, 1, nan) }, &ie},
		{"ideal gas, P = 0", func() (float64, error) { return IdealGasEnthalpy(300, 0, 1) }, &ie},
		{"ideal gas, NaN P", func() (float64, error) { return IdealGasEnthalpy(300, nan, 1) }, &ie},
		{"ideal gas, Inf slope", func() (float64, error) { return IdealGasEnthalpy(300, 1e5, inf) }, &ie},
		{"ideal-gas slope, P < 0", func() (float64, error) { return IdealGasSlope(300, -1, 1) }, &ie},
		{"ideal-gas slope, NaN ΔH", func() (float64, error) { return IdealGasSlope(300, 1, nan) }, &ie},
		{"ideal-gas slope, T = 0", func() (float64, error) { return IdealGasSlope(0, 1, 1) }, &ie},
		{"overflow", func() (float64, error) { return ClapeyronSlope(1e-300, 1e300, 1e-300) }, ErrBadParam},
	} {
		_, err := tc.f()
		switch w := tc.want.(type) {
		case error:
			if !errors.Is(err, w) {
				t.Errorf("%s: got %v, want %v", tc.name, err, w)
			}
		default:
			if !errors.As(err, w) {
				t.Errorf("%s: got %v, want an InputError", tc.name, err)
			}
		}
	}
	// Both signs work: a positive ΔV (most substances) gives a rising curve.
	if s, err := ClapeyronSlope(300, 1000, 1e-6); err != nil || s <= 0 {
		t.Errorf("positive ΔV: %g, %v", s, err)
	}
}
