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
