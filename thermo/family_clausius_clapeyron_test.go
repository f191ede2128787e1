package thermo

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestClausiusClapeyronWater checks the ideal-gas form for water, anchored
// at the normal boiling point with ΔH_vap = 40.65 kJ/mol (common practice),
// against IAPWS-IF97: within 5 % from 65 °C to 127 °C (the error grows to
// 17 % at 27 °C as ΔH_vap rises), and exact at the
// anchor.
func TestClausiusClapeyronWater(t *testing.T) {
	t.Parallel()
	c := famNew(t, "clausius-clapeyron", Params{"t0": {373.15}, "p0": {101325}, "delta_h": {40650}}, 330, 400) // common practice ΔH_vap at 100 °C
	w := famNew(t, "iapws-if97", nil, IF97Tmin, IF97Tc)
	for T := 338.15; T <= 400; T += 5 {
		p, _ := c.Pressure(T)
		pw, _ := w.Pressure(T)
		if !scalar.EqualWithinAbsOrRel(p, pw, 0, 0.05) { // IAPWS-IF97 vs the ideal-gas Clapeyron form
			t.Errorf("P(%g K) = %.6g Pa, IF97 %.6g Pa", T, p, pw)
		}
	}
	p, _ := c.Pressure(373.15)
	if !scalar.EqualWithinAbsOrRel(p, 101325, 0, 1e-15) {
		t.Errorf("P(T0) = %.15g, want P0", p)
	}
	// d ln P/dT = ΔH/(R T²), the defining relation.
	d, _ := c.Slope(373.15)
	if want := 101325 * 40650 / (R * 373.15 * 373.15); !scalar.EqualWithinAbsOrRel(d, want, 0, 1e-14) {
		t.Errorf("slope = %g, want %g", d, want)
	}
}
