package thermo

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// famCO2Melting is the Span & Wagner (1996) melting equation:
// p/pt = 1 + 1955.5390(T/Tt − 1) + 2055.4593(T/Tt − 1)².
var famCO2Melting = Params{"t_ref": {216.592}, "p_ref": {0.51795e6},
	"a": {1955.5390, 2055.4593}, "b": {1, 2}} // Span & Wagner (1996), melting-pressure equation (from memory)

// TestShiftedPowerSumCO2 checks the CO2 melting equation against its
// closed form evaluated independently, and its inverse.
func TestShiftedPowerSumCO2(t *testing.T) {
	t.Parallel()
	c := famNew(t, "shifted-power-sum", famCO2Melting, 216.592, 327)
	for _, T := range []float64{216.592, 220, 250, 300, 327} {
		x := T/216.592 - 1
		want := 0.51795e6 * (1 + 1955.5390*x + 2055.4593*x*x) // Span & Wagner (1996), melting-pressure equation
		p, d, err := c.PressureSlope(T)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(p, want, 0, 1e-14) {
			t.Errorf("P(%g) = %.15g, want %.15g", T, p, want)
		}
		wantD := 0.51795e6 * (1955.5390 + 2*2055.4593*x) / 216.592
		if !scalar.EqualWithinAbsOrRel(d, wantD, 0, 1e-14) {
			t.Errorf("dP/dT(%g) = %.15g, want %.15g", T, d, wantD)
		}
	}
	// At 327 K the equation reaches about 800 MPa, the upper pressure
	// limit of the Span–Wagner equation of state (from memory).
	r := c.Range()
	if !scalar.EqualWithinAbsOrRel(r.Pmax, 793.5e6, 0, 1e-3) {
		t.Errorf("Pmax = %g", r.Pmax)
	}
	// Non-integer exponents: defined only at and above t_ref.
	h := famNew(t, "shifted-power-sum", Params{"t_ref": {200}, "p_ref": {1e6}, "a": {50}, "b": {1.5}}, 200, 250)
	p, _ := h.Pressure(225)
	if want := 1e6 * (1 + 50*0.125*math.Sqrt(0.125)); !scalar.EqualWithinAbsOrRel(p, want, 0, 1e-14) {
		t.Errorf("P(225) = %.15g, want %.15g", p, want)
	}
}

// TestShiftedPowerSumTwoTurningPoints checks a curve with a maximum and a
// minimum inside its range: P/P* = 1 − 0.03x + x³, x = θ − 1, over
// −0.2 ≤ x ≤ 0.2 (invented). The turning points are at x = ∓0.1, the
// pressures span [0.998, 1.002]·P*, and P = P* has three roots, x = 0 and
// ±√0.03, of which T(P) returns the one nearest Tmin.
func TestShiftedPowerSumTwoTurningPoints(t *testing.T) {
	t.Parallel()
	const tr, pr = 200.0, 1e6
	c := famNew(t, "shifted-power-sum", Params{"t_ref": {tr}, "p_ref": {pr}, "a": {-0.03, 1}, "b": {1, 3}}, 0.8*tr, 1.2*tr)
	r := c.Range()
	if !scalar.EqualWithinAbsOrRel(r.Pmin, 0.998*pr, 0, 1e-12) || !scalar.EqualWithinAbsOrRel(r.Pmax, 1.002*pr, 0, 1e-12) {
		t.Errorf("range P [%.15g, %.15g], want [0.998, 1.002]·P*", r.Pmin, r.Pmax)
	}
	for _, tc := range []struct{ p, x float64 }{
		{pr, -math.Sqrt(0.03)},   // three roots: the lowest
		{1.002 * pr, -0.1},       // the maximum, reached again at Tmax
		{0.998 * pr, -0.2},       // at Tmin, reached again at the minimum
		{1.001 * pr, math.NaN()}, // between the pressures at Tmin and at the maximum: checked by P only
	} {
		T, err := c.Temperature(tc.p)
		if err != nil {
			t.Fatalf("Temperature(%g): %v", tc.p, err)
		}
		x := T/tr - 1
		got := 1 - 0.03*x + x*x*x
		if !scalar.EqualWithinAbsOrRel(got*pr, tc.p, 0, 1e-12) {
			t.Errorf("Temperature(%g) = %g: P there %g", tc.p, T, got*pr)
		}
		// The lowest root lies on the first rising piece, x ≤ −0.1.
		if x > -0.1+1e-6 {
			t.Errorf("Temperature(%g) = %g (x = %g): not the root nearest Tmin", tc.p, T, x)
		}
		if !math.IsNaN(tc.x) && !scalar.EqualWithinAbsOrRel(x, tc.x, 1e-6, 0) {
			t.Errorf("Temperature(%g): x = %.9g, want %.9g", tc.p, x, tc.x)
		}
	}
}
