package thermo

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestIF97Region4Verification checks the saturation equations against the
// verification tables of the release.
func TestIF97Region4Verification(t *testing.T) {
	t.Parallel()
	c := famNew(t, "iapws-if97", nil, IF97Tmin, IF97Tc)
	for _, tc := range []struct {
		T, p float64
	}{
		{300, 0.353658941e-2 * 1e6}, // IAPWS-IF97 (R7-97), Table 35 verification value (from memory)
		{500, 0.263889776e1 * 1e6},  // IAPWS-IF97 (R7-97), Table 35 verification value (from memory)
		{600, 0.123443146e2 * 1e6},  // IAPWS-IF97 (R7-97), Table 35 verification value (from memory)
	} {
		p, err := c.Pressure(tc.T)
		if err != nil {
			t.Fatal(err)
		}
		// Nine significant digits are tabulated: half a unit in the
		// last place is at most 4e-9 relative.
		if !scalar.EqualWithinAbsOrRel(p, tc.p, 0, 5e-9) {
			t.Errorf("Psat(%g K) = %.10g Pa, IF97 table %.10g Pa", tc.T, p, tc.p)
		}
	}
	for _, tc := range []struct {
		p, T float64
	}{
		{0.1e6, 0.372755919e3}, // IAPWS-IF97 (R7-97), Table 36 verification value (from memory)
		{1e6, 0.453035632e3},   // IAPWS-IF97 (R7-97), Table 36 verification value (from memory)
		{10e6, 0.584149488e3},  // IAPWS-IF97 (R7-97), Table 36 verification value (from memory)
	} {
		T, err := c.Temperature(tc.p)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(T, tc.T, 0, 5e-9) { // nine digits tabulated
			t.Errorf("Tsat(%g Pa) = %.10g K, IF97 table %.10g K", tc.p, T, tc.T)
		}
	}
}

// TestIF97Landmarks checks the ends of region 4 and the normal boiling
// point.
func TestIF97Landmarks(t *testing.T) {
	t.Parallel()
	c := famNew(t, "iapws-if97", nil, IF97Tmin, IF97Tc)
	r := c.Range()
	for _, tc := range []struct {
		what      string
		got, want float64
		rel       float64
	}{
		{"Psat(273.15 K)", r.Pmin, 611.213, 1e-6},   // IAPWS-IF97 (R7-97), section 8: lower end of region 4, 611.213 Pa
		{"Psat(647.096 K)", r.Pmax, 22.064e6, 1e-8}, // IAPWS-IF97 (R7-97): critical pressure 22.064 MPa
	} {
		if !scalar.EqualWithinAbsOrRel(tc.got, tc.want, 0, tc.rel) {
			t.Errorf("%s = %.9g, want %.9g", tc.what, tc.got, tc.want)
		}
	}
	T, err := c.Temperature(101325)
	if err != nil {
		t.Fatal(err)
	}
	// Normal boiling point on ITS-90: 99.974 °C = 373.124 K (common practice).
	if !scalar.EqualWithinAbsOrRel(T, 373.124, 1e-3, 0) {
		t.Errorf("Tsat(1 atm) = %.5f K, want 373.124 K (common practice)", T)
	}
	// The triple point: 611.657 Pa at 273.16 K (IAPWS R14-08(2011) reference point).
	p, _ := c.Pressure(273.16)
	if !scalar.EqualWithinAbsOrRel(p, 611.657, 0, 1e-6) {
		t.Errorf("Psat(273.16 K) = %.7g Pa, want 611.657 Pa (IAPWS R14-08(2011) triple point)", p)
	}
}

// TestIF97BackwardConsistency checks the backward equation inverts the
// basic one to rounding error over the whole region.
func TestIF97BackwardConsistency(t *testing.T) {
	t.Parallel()
	c := famNew(t, "iapws-if97", nil, IF97Tmin, IF97Tc)
	for T := IF97Tmin; T <= IF97Tc; T += 0.37 {
		p, _ := c.Pressure(T)
		T2, err := c.Temperature(p)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(T2, T, 0, 1e-13) {
			t.Errorf("T(P(%.6g)) = %.15g", T, T2)
		}
	}
}
