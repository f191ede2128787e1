package thermo_test

import (
	"errors"
	"fmt"

	"github.com/phasebound/phasebound/thermo"
)

// The saturation curve of water by IAPWS-IF97: pressure and slope at a
// temperature, and the temperature at a pressure.
func ExampleGetFamily() {
	f, err := thermo.GetFamily("iapws-if97")
	if err != nil {
		fmt.Println(err)
		return
	}
	sat, err := f.New(nil, 273.15, 647.096)
	if err != nil {
		fmt.Println(err)
		return
	}
	p, dpdt, _ := sat.PressureSlope(373.15)
	fmt.Printf("P(373.15 K) = %.2f Pa, dP/dT = %.1f Pa/K\n", p, dpdt)
	t, _ := sat.Temperature(101325)
	fmt.Printf("T(101325 Pa) = %.4f K\n", t)
	// Output:
	// P(373.15 K) = 101417.98 Pa, dP/dT = 3619.2 Pa/K
	// T(101325 Pa) = 373.1243 K
}

// The ice Ih melting curve of IAPWS R14-08(2011) as a power-sum branch:
// its slope is negative, so the highest pressure is at the lowest
// temperature, and ice melts under pressure.
func ExamplePowerSumFamily() {
	ice, err := thermo.PowerSumFamily{}.New(thermo.Params{
		"t_ref": {273.16}, "p_ref": {611.657},
		"a": {-1.19539337e6, -8.08183159e4, -3.33826860e3},
		"b": {3, 25.75, 103.75},
	}, 251.165, 273.16)
	if err != nil {
		fmt.Println(err)
		return
	}
	p, _ := ice.Pressure(260)
	fmt.Printf("P(260 K) = %.3f MPa\n", p/1e6)
	d, _ := ice.Slope(273.15)
	fmt.Printf("dP/dT(273.15 K) = %.2f MPa/K\n", d/1e6)
	r := ice.Range()
	fmt.Printf("range %g–%g K, %.6g–%.6g Pa\n", r.Tmin, r.Tmax, r.Pmin, r.Pmax)
	t, _ := ice.Temperature(100e6)
	fmt.Printf("T(100 MPa) = %.3f K\n", t)
	// Output:
	// P(260 K) = 138.268 MPa
	// dP/dT(273.15 K) = -13.46 MPa/K
	// range 251.165–273.16 K, 611.657–2.08567e+08 Pa
	// T(100 MPa) = 264.209 K
}

// Outside its validity range a correlation refuses with a typed error that
// carries the value and the range; callers who opt in may extrapolate.
func ExampleRangeError() {
	f, _ := thermo.GetFamily("wagner")
	co2, _ := f.New(thermo.Params{
		"t_ref": {304.1282}, "p_ref": {7.3773e6},
		"a": {-7.0602087, 1.9391218, -1.6463597, -3.2995634},
		"e": {1, 1.5, 2, 4},
	}, 216.592, 304.1282)
	_, err := co2.Pressure(200)
	var re *thermo.RangeError
	if errors.As(err, &re) {
		fmt.Println(err)
	}
	p, _, _ := co2.(thermo.Extrapolator).PressureSlopeBeyond(200)
	fmt.Printf("extrapolated (no claim of accuracy): %.4g Pa\n", p)
	// Output:
	// thermo: temperature 200 K outside the validity range [216.592, 304.1282] K
	// extrapolated (no claim of accuracy): 2.348e+05 Pa
}

// Handbook Antoine constants for water (1–100 °C, P in mmHg, t in °C)
// converted to the SI form of the antoine family.
func ExampleAntoineParams() {
	p, err := thermo.AntoineParams(8.07131, 1730.63, 233.426,
		thermo.AntoineUnits{Pressure: "mmHg", Temperature: "degC", Log: 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("A = %.5f, B = %.2f K, C = %.3f K\n", p["a"][0], p["b"][0], p["c"][0])
	water, _ := thermo.AntoineFamily{}.New(p, 274.15, 373.15)
	t, _ := water.Temperature(101325)
	fmt.Printf("normal boiling point %.2f K\n", t)
	// Output:
	// A = 10.19621, B = 1730.63 K, C = -39.724 K
	// normal boiling point 373.15 K
}

// The root finder on a bracket, with the derivative for Newton steps.
func ExampleRootFinder() {
	x, err := thermo.RootFinder{}.Solve(func(x float64) (float64, float64) {
		return x*x - 2, 2 * x
	}, 0, 2)
	fmt.Printf("%.15f %v\n", x, err)
	// Output:
	// 1.414213562373095 <nil>
}
