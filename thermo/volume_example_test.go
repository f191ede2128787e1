package thermo_test

import (
	"fmt"

	"github.com/phasebound/phasebound/thermo"
)

// The saturated liquid density of water at the normal boiling point from the
// IAPWS supplementary release's power-series equation.
func ExampleDensityPowerSeries() {
	f, err := thermo.GetVolumeFamily("density-power-series")
	if err != nil {
		fmt.Println(err)
		return
	}
	liquid, err := f.New(thermo.Params{
		"t_c": {647.096}, "rho_c": {322}, "molar_mass": {0.018015268},
		"b": {1.99274064, 1.09965342, -0.510839303, -1.75493479, -45.5170352, -6.74694450e5},
		"t": {1.0 / 3, 2.0 / 3, 5.0 / 3, 16.0 / 3, 43.0 / 3, 110.0 / 3},
	}, 273.16, 647.096)
	if err != nil {
		fmt.Println(err)
		return
	}
	v, dvdt, err := liquid.Volume(373.1243, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("v = %.5e m³/mol, ρ = %.3f kg/m³, dv/dT = %.3e m³/(mol·K)\n", v, 0.018015268/v, dvdt)
	// Output:
	// v = 1.87979e-05 m³/mol, ρ = 958.365 kg/m³, dv/dT = 1.407e-08 m³/(mol·K)
}

// An ideal-gas vapour on the sublimation curve of ice at the triple point.
func ExampleIdealGas() {
	f, _ := thermo.GetVolumeFamily("ideal-gas")
	vapour, err := f.New(nil, 50, 273.16)
	if err != nil {
		fmt.Println(err)
		return
	}
	v, _, err := vapour.Volume(273.16, 611.657)
	fmt.Printf("v = %.4f m³/mol, err = %v\n", v, err)
	_, _, err = vapour.Volume(300, 611.657)
	fmt.Println(err)
	// Output:
	// v = 3.7132 m³/mol, err = <nil>
	// thermo: temperature 300 K outside the validity range [50, 273.16] K
}
