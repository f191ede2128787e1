package thermo_test

import (
	"fmt"

	"github.com/phasebound/phasebound/thermo"
)

// The latent heat of vaporisation of water at the normal boiling point from
// the Clapeyron equation: IAPWS-IF97 slope, IAPWS supplementary-release
// densities.
func ExampleLatentCurve() {
	const m = 0.018015268 // kg/mol
	sat, _ := thermo.GetFamily("iapws-if97")
	curve, err := sat.New(nil, 273.15, 647.096)
	if err != nil {
		fmt.Println(err)
		return
	}
	liqF, _ := thermo.GetVolumeFamily("density-power-series")
	liquid, err := liqF.New(thermo.Params{
		"t_c": {647.096}, "rho_c": {322}, "molar_mass": {m},
		"b": {1.99274064, 1.09965342, -0.510839303, -1.75493479, -45.5170352, -6.74694450e5},
		"t": {1.0 / 3, 2.0 / 3, 5.0 / 3, 16.0 / 3, 43.0 / 3, 110.0 / 3},
	}, 273.15, 647.096)
	if err != nil {
		fmt.Println(err)
		return
	}
	vapF, _ := thermo.GetVolumeFamily("density-log-series")
	vapour, err := vapF.New(thermo.Params{
		"t_c": {647.096}, "rho_c": {322}, "molar_mass": {m},
		"c": {-2.03150240, -2.68302940, -5.38626492, -17.2991605, -44.7586581, -63.9201063},
		"t": {2.0 / 6, 4.0 / 6, 8.0 / 6, 18.0 / 6, 37.0 / 6, 71.0 / 6},
	}, 273.15, 647.096)
	if err != nil {
		fmt.Println(err)
		return
	}
	lc := thermo.LatentCurve{
		Kind:      thermo.Saturation,
		Curve:     curve,
		Volumes:   thermo.PhaseVolumes{Low: liquid, High: vapour},
		MolarMass: m,
	}
	l, err := lc.AtPressure(101325)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("T = %.4f K, dP/dT = %.1f Pa/K\n", l.Temperature, l.Slope)
	fmt.Printf("ΔH = %.0f J/mol = %.1f kJ/kg (%v)\n", l.Molar, l.Specific/1e3, l.Source)

	// Without volumes a vapour curve gets the ideal-gas estimate, marked so.
	est, _ := thermo.LatentCurve{Kind: thermo.Saturation, Curve: curve, MolarMass: m}.At(l.Temperature)
	fmt.Printf("ΔH ≈ %.1f kJ/kg (%v)\n", est.Specific/1e3, est.Source)
	// Output:
	// T = 373.1243 K, dP/dT = 3616.4 Pa/K
	// ΔH = 40654 J/mol = 2256.6 kJ/kg (clapeyron)
	// ΔH ≈ 2293.3 kJ/kg (ideal-gas-estimate)
}
