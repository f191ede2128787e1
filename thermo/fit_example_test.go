package thermo_test

import (
	"fmt"

	"github.com/phasebound/phasebound/thermo"
)

// Fitting the Antoine equation to saturation pressures of water sampled
// from IAPWS-IF97 between 10 °C and 90 °C.
func ExampleFit() {
	if97, _ := thermo.GetFamily("iapws-if97")
	sat, err := if97.New(nil, 273.15, 647.096)
	if err != nil {
		fmt.Println(err)
		return
	}
	var data []thermo.FitPoint
	for c := 10; c <= 90; c += 10 {
		t := 273.15 + float64(c)
		p, _ := sat.Pressure(t)
		data = append(data, thermo.FitPoint{Temperature: t, Pressure: p})
	}
	res, err := thermo.Fit("antoine", data, thermo.FitOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, name := range res.Names {
		fmt.Printf("%s = %.4g ± %.2g\n", name, res.Values[i], res.StdErr[name][0])
	}
	fmt.Printf("n = %d, RMS = %.2f %%, max = %.2f %% (row %d), valid %.2f–%.2f K\n",
		res.N, 100*res.RMSRelDev, 100*res.MaxRelDev, res.MaxRelDevRow, res.Tmin, res.Tmax)
	fmt.Println("warnings:", len(res.Warnings))

	// Bad data name the row.
	data[4].Pressure = -1
	_, err = thermo.Fit("antoine", data, thermo.FitOptions{})
	fmt.Println(err)
	// Output:
	// a = 10.2 ± 0.012
	// b = 1734 ± 6.7
	// c = -39.37 ± 0.54
	// n = 9, RMS = 0.05 %, max = 0.07 % (row 9), valid 283.15–363.15 K
	// warnings: 0
	// thermo: fit data row 5: pressure -1 Pa must be > 0 Pa
}
