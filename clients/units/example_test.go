package units_test

import (
	"fmt"

	"github.com/phasebound/phasebound/clients/units"
)

func ExampleParseTemperature() {
	t, _ := units.ParseTemperature("25degC")
	fmt.Printf("%.2f K\n", t)
	_, err := units.ParseTemperature("25 furlongs")
	fmt.Println(err)
	// Output:
	// 298.15 K
	// units: cannot parse "25 furlongs" as a temperature (accepted: a number in K, or with a unit: K, degC, °C, degF, °F, degR)
}

func ExampleParsePressure() {
	p, _ := units.ParsePressure("200MPa")
	fmt.Printf("%.6g Pa\n", p)
	p, _ = units.ParsePressure("1atm")
	fmt.Printf("%.6g Pa\n", p)
	// Output:
	// 2e+08 Pa
	// 101325 Pa
}
