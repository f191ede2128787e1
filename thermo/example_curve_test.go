package thermo_test

import (
	"errors"
	"fmt"

	"github.com/phasebound/phasebound/thermo"
)

// branch builds one branch through its registered family.
func branch(family, name string, p thermo.Params, tmin, tmax float64) thermo.Branch {
	f, err := thermo.GetFamily(family)
	if err != nil {
		panic(err)
	}
	c, err := f.New(p, tmin, tmax)
	if err != nil {
		panic(err)
	}
	return thermo.Branch{Name: name, SolidForm: name, Corr: c}
}

// waterMelting returns the ice Ih and ice III branches of water's melting
// curve (IAPWS R14-08(2011), equations 1 and 2).
func waterMelting() *thermo.Curve {
	cv, err := thermo.NewCurve(thermo.Melting,
		branch("power-sum", "ice-Ih", thermo.Params{"t_ref": {273.16}, "p_ref": {611.657},
			"a": {-0.119539337e7, -0.808183159e5, -0.333826860e4}, "b": {3, 25.75, 103.75}}, 251.165, 273.16),
		branch("power-sum", "ice-III", thermo.Params{"t_ref": {251.165}, "p_ref": {208.566e6},
			"a": {0.299948}, "b": {60}}, 251.165, 256.164))
	if err != nil {
		panic(err)
	}
	return cv
}

func ExampleCurve_Pressure() {
	cv := waterMelting()
	pt, err := cv.Pressure(260, thermo.CurveOptions{Branch: "ice-Ih"})
	if err != nil {
		panic(err)
	}
	fmt.Printf("ice Ih melts at 260 K under %.3f MPa (slope %.2f MPa/K)\n", pt.Pressure/1e6, pt.Slope/1e6)

	// At 254 K both ice Ih and ice III melt: an unqualified P(T) names them.
	_, err = cv.Pressure(254, thermo.CurveOptions{})
	fmt.Println(errors.Is(err, thermo.ErrAmbiguousBranch), err)
	// Output:
	// ice Ih melts at 260 K under 138.268 MPa (slope -8.65 MPa/K)
	// true thermo: temperature 254 K lies on several branches (ice-Ih, ice-III); name one
}

func ExampleCurve_Temperature() {
	cv := waterMelting()
	// T(P) is single-valued on a melting curve: the pressure picks the branch.
	for _, p := range []float64{101325, 150e6, 300e6} {
		pt, err := cv.Temperature(p, thermo.CurveOptions{})
		if err != nil {
			panic(err)
		}
		fmt.Printf("%6.1f MPa: melts at %.3f K on %s\n", p/1e6, pt.Temperature, cv.Branches[pt.Branch].Name)
	}
	_, err := cv.Temperature(400e6, thermo.CurveOptions{})
	var re *thermo.RangeError
	if errors.As(err, &re) {
		fmt.Printf("%.0f MPa is above the curve's %.1f MPa\n", re.Value/1e6, re.Max/1e6)
	}
	// Output:
	// 0.1 MPa: melts at 273.153 K on ice-Ih
	//  150.0 MPa: melts at 258.624 K on ice-Ih
	//  300.0 MPa: melts at 254.964 K on ice-III
	// 400 MPa is above the curve's 350.1 MPa
}

func ExamplePhaseDiagram_Locate() {
	sat, err := thermo.NewCurve(thermo.Saturation, branch("iapws-if97", "", thermo.Params{}, 273.15, 647.096))
	if err != nil {
		panic(err)
	}
	d, err := thermo.NewPhaseDiagram(thermo.PhaseDiagramSpec{
		Saturation: sat,
		Melting:    waterMelting(),
		Triple:     []thermo.TriplePoint{{Phases: []string{"ice-Ih", "liquid", "vapor"}, StatePoint: thermo.StatePoint{Temperature: 273.16, Pressure: 611.657}}},
		Critical:   &thermo.StatePoint{Temperature: 647.096, Pressure: 22.064e6},
	})
	if err != nil {
		panic(err)
	}
	names := d.BoundaryNames()
	for _, s := range []thermo.StatePoint{{263.15, 0.1e6}, {263.15, 200e6}, {400, 101325}, {700, 30e6}} {
		st, err := d.Locate(s.Temperature, s.Pressure)
		if err != nil {
			panic(err)
		}
		fmt.Printf("%6.2f K %7.3f MPa: %-13s %-6s %6.2f K from %s\n", s.Temperature, s.Pressure/1e6, st.Phase, st.Form, st.MarginT, names[st.NearestT])
	}
	// Output:
	// 263.15 K   0.100 MPa: solid         ice-Ih  10.00 K from melting/ice-Ih
	// 263.15 K 200.000 MPa: liquid                10.83 K from melting/ice-Ih
	// 400.00 K   0.101 MPa: vapor                 26.88 K from saturation
	// 700.00 K  30.000 MPa: supercritical         52.90 K from critical-temperature
}

func ExampleClapeyronSlope() {
	// Ice melting near 0 °C: ΔH ≈ 6.01 kJ/mol, ΔV ≈ −1.63 cm³/mol.
	s, err := thermo.ClapeyronSlope(273.15, 6010, -1.63e-6)
	if err != nil {
		panic(err)
	}
	fmt.Printf("dP/dT = %.1f MPa/K\n", s/1e6)
	h, _ := thermo.ClapeyronEnthalpy(273.15, s, -1.63e-6)
	fmt.Printf("ΔH = %.0f J/mol\n", h)
	// Output:
	// dP/dT = -13.5 MPa/K
	// ΔH = 6010 J/mol
}

func ExampleIdealGasEnthalpy() {
	// Water at its normal boiling point: P = 101325 Pa, dP/dT ≈ 3616 Pa/K.
	h, err := thermo.IdealGasEnthalpy(373.124, 101325, 3616.4)
	if err != nil {
		panic(err)
	}
	fmt.Printf("ΔH_vap ≈ %.1f kJ/mol (ideal-gas estimate)\n", h/1e3)
	// Output:
	// ΔH_vap ≈ 41.3 kJ/mol (ideal-gas estimate)
}
