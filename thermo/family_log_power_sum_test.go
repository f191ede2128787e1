package thermo

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// famIceVII is the IAPWS R14-08(2011) ice VII melting equation,
// ln(p/p*) = Σ aᵢ(1 − θ^bᵢ), in log-power-sum form: the coefficients
// change sign.
var famIceVII = Params{"t_ref": {355}, "p_ref": {2216e6},
	"a": {-0.173683e1, 0.544606e-1, -0.806106e-7}, "b": {-1, 5, 22}}

// TestLogPowerSumIceVII checks the ice VII branch at its check value, its
// ends and its closed-form single-term inverse.
func TestLogPowerSumIceVII(t *testing.T) {
	t.Parallel()
	c := famNew(t, "log-power-sum", famIceVII, 355, 715)
	for _, tc := range []struct {
		T, p, tol float64
	}{
		{550, 6308.71e6, 5e-6}, // IAPWS R14-08(2011), melting-pressure check value (from memory)
		{355, 2216e6, 2e-6},    // IAPWS R14-08(2011): VI–VII–liquid triple point, the reference point
	} {
		p, err := c.Pressure(tc.T)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(p, tc.p, 0, tc.tol) {
			t.Errorf("ice VII P(%g K) = %.7g, want %.7g", tc.T, p, tc.p)
		}
	}
	// A single term has a closed-form inverse; compare with P(T).
	one := famNew(t, "log-power-sum", Params{"t_ref": {355}, "p_ref": {2216e6}, "a": {0.5}, "b": {3}}, 355, 715)
	for T := 360.0; T < 715; T += 25 {
		p, _ := one.Pressure(T)
		T2, err := one.Temperature(p)
		if err != nil || !scalar.EqualWithinAbsOrRel(T2, T, 0, 1e-14) {
			t.Errorf("single-term T(P(%g)) = %.15g, %v", T, T2, err)
		}
	}
}
