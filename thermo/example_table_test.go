package thermo_test

import (
	"fmt"
	"math"

	"github.com/phasebound/phasebound/thermo"
)

func ExampleBuildPressureTable() {
	f, _ := thermo.GetFamily("iapws-if97")
	c, err := f.New(thermo.Params{}, 273.15, 647.096)
	if err != nil {
		panic(err)
	}
	opts, _ := thermo.DefaultTransforms(thermo.Saturation)
	tb, err := thermo.BuildPressureTable(c, opts)
	if err != nil {
		panic(err)
	}
	p, dpdt, err := tb.Eval(373.15)
	if err != nil {
		panic(err)
	}
	fmt.Printf("P(373.15 K) = %.2f Pa, dP/dT = %.2f Pa/K\n", p, dpdt)
	fmt.Println("measured error within 1e-11:", tb.MaxRelError() <= 1e-11)
	_, _, err = tb.Eval(700)
	fmt.Println(err)
	// Output:
	// P(373.15 K) = 101417.98 Pa, dP/dT = 3619.19 Pa/K
	// measured error within 1e-11: true
	// thermo: temperature 700 K outside the validity range [273.15, 647.096] K
}

func ExampleBuildTable() {
	// Any y(x) sampled in batches: here ln P = 23.2 − 4900/T (invented),
	// tabulated as ln P against 1/T, where it is a straight line.
	src := func(x, y []float64) error {
		for i, t := range x {
			y[i] = math.Exp(23.2 - 4900/t)
		}
		return nil
	}
	tb, err := thermo.BuildTable(src, 250, 450, thermo.TableOptions{
		XTransform: thermo.TransformReciprocal, YTransform: thermo.TransformLog,
		Quantity: "temperature", Unit: "K",
	})
	if err != nil {
		panic(err)
	}
	fmt.Println(tb.Segments(), "segment,", tb.Coefficients(), "coefficients")
	// Output:
	// 1 segment, 2 coefficients
}

func ExampleLoadTable() {
	// A client receives the exported fields (proto ChebyshevTable) and
	// evaluates locally. Here: one segment, y = 3 + 2·T_1(s) on x ∈ [1, 2].
	tb, err := thermo.LoadTable(thermo.TableData{
		XTransform: thermo.TransformIdentity, YTransform: thermo.TransformIdentity,
		Breaks: []float64{1, 2}, Offsets: []uint32{0, 2}, Coeffs: []float64{3, 2},
		XMin: 1, XMax: 2, MaxRelError: 0,
	}, "temperature", "K")
	if err != nil {
		panic(err)
	}
	y, dy, _ := tb.Eval(1.75)
	fmt.Println(y, dy)
	_, err = thermo.LoadTable(thermo.TableData{XTransform: 9}, "", "")
	fmt.Println(err)
	// Output:
	// 4 4
	// thermo: bad parameter: table: transforms Transform(9)/Transform(0) (valid: identity, log, reciprocal; critical-root for x only)
}
