package thermo

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// famIceSubl is the IAPWS R14-08(2011) sublimation equation of ice Ih
// (from memory), valid from 50 K to 273.16 K.
var famIceSubl = Params{"t_ref": {273.16}, "p_ref": {611.657},
	"a": {-0.212144006e2, 0.273203819e2, -0.610598130e1},
	"b": {0.333333333e-2, 0.120666667e1, 0.170333333e1}}

// TestSublimationIceIh checks the sublimation branch at its check value and
// where it meets the saturation curve.
func TestSublimationIceIh(t *testing.T) {
	t.Parallel()
	c := famNew(t, "inverse-log-power-sum", famIceSubl, 50, 273.16)
	for _, tc := range []struct {
		T, p, tol float64
	}{
		{230, 8.94735, 5e-6},    // IAPWS R14-08(2011), sublimation-pressure check value (from memory)
		{273.16, 611.657, 1e-8}, // IAPWS R14-08(2011): triple point, the reference point
	} {
		p, err := c.Pressure(tc.T)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(p, tc.p, 0, tc.tol) {
			t.Errorf("ice Ih sublimation P(%g K) = %.7g Pa, want %.7g", tc.T, p, tc.p)
		}
		T, err := c.Temperature(tc.p)
		if err != nil || !scalar.EqualWithinAbsOrRel(T, tc.T, 1e-4, 0) {
			t.Errorf("ice Ih sublimation T(%g Pa) = %.6f K, %v; want %g K", tc.p, T, err, tc.T)
		}
	}
	// The saturation curve starts at the same triple point:
	// IAPWS-IF97 gives 611.657 Pa at 273.16 K to its seven digits.
	w := famNew(t, "iapws-if97", nil, 273.15, 647.096)
	ps, _ := w.Pressure(273.16)
	pb, _ := c.Pressure(273.16)
	if !scalar.EqualWithinAbsOrRel(ps, pb, 0, 1e-6) { // IAPWS-IF97 and IAPWS R14-08(2011): triple point 611.657 Pa
		t.Errorf("saturation %g Pa and sublimation %g Pa differ at the triple point", ps, pb)
	}
	// Sublimation is steeper than vaporisation at the triple point
	// (ΔH_sub > ΔH_vap at nearly the same ΔV): common practice.
	ds, _ := w.Slope(273.16)
	db, _ := c.Slope(273.16)
	if !(db > ds) {
		t.Errorf("slopes at the triple point: sublimation %g, saturation %g; want sublimation steeper", db, ds)
	}
	// The lowest-pressure end: solver works on ln P across 43 decades.
	p50, _ := c.Pressure(50)
	T50, err := c.Temperature(p50 * 1.0000001)
	if err != nil || !scalar.EqualWithinAbsOrRel(T50, 50, 0, 1e-6) {
		t.Errorf("T(P(50 K)) = %g, %v", T50, err)
	}
}
