package catalog_test

import (
	"fmt"
	"os"
	"strings"

	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

func ExampleParse() {
	const text = `format = 1

[[substance]]
id = "demo-liquid"
molar_mass = 0.1
provenance = { kind = "invented", note = "invented for this example" }
  [[substance.curve]]
  kind = "saturation"
    [[substance.curve.branch]]
    family = "clausius-clapeyron"
    t_min = 250.0
    t_max = 400.0
    params = { t0 = 300.0, p0 = 1.0e4, delta_h = 35000.0 }
`
	c, err := catalog.Parse("example.toml", []byte(text))
	if err != nil {
		fmt.Println(err)
		return
	}
	b := c.Lookup("demo-liquid").Curve(thermo.Saturation).Branches[0]
	fmt.Println(b.Family, b.Tmin, b.Tmax, b.Kind)

	// A broken file is refused with file, line and field.
	_, err = catalog.Parse("example.toml", []byte(strings.Replace(text, "t_min = 250.0", "t_min = 450.0", 1)))
	fmt.Println(err)
	// Output:
	// clausius-clapeyron 250 400 invented
	// example.toml:11: substance "demo-liquid" curve "saturation": t_min 450 must be < t_max 400
}

func ExampleDefault() {
	c, err := catalog.Default()
	if err != nil {
		fmt.Println(err)
		return
	}
	s := c.Lookup("demo-frostwax")
	fmt.Println(s.Name)
	fmt.Println(s.Kind, len(s.Curves), "curves")
	// Output:
	// Frostwax PX-18 (invented demo phase-change material)
	// invented 3 curves
}

func ExampleWrite() {
	c := &catalog.Catalog{Substances: []*catalog.Substance{{
		ID: "lab-sample", MolarMass: 0.1,
		Curves: []*catalog.Curve{{Kind: thermo.Saturation, Branches: []*catalog.Branch{{
			Correlation: catalog.Correlation{Family: "clausius-clapeyron", Params: thermo.Params{"t0": {300}, "p0": {1e4}, "delta_h": {35000}}},
			Tmin:        250, Tmax: 400,
			Provenance: catalog.Provenance{Kind: catalog.Invented, Note: "invented for this example"},
		}}}},
	}}}
	if err := catalog.Write(os.Stdout, c); err != nil {
		fmt.Println(err)
	}
	// Output:
	// # phasebound catalog: substances, their coexistence curves and correlations (SI units).
	// format = 1
	//
	// [[substance]]
	// id = "lab-sample"
	// molar_mass = 0.1
	//
	//   [[substance.curve]]
	//   kind = "saturation"
	//
	//     [[substance.curve.branch]]
	//     family = "clausius-clapeyron"
	//     t_min = 250.0
	//     t_max = 400.0
	//     provenance = { kind = "invented", note = "invented for this example" }
	//     [substance.curve.branch.params]
	//     delta_h = 35000.0
	//     p0 = 10000.0
	//     t0 = 300.0
}
