package thermo

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestSimonGlatzelIceIII checks the Simon–Glatzel form with the ice III
// melting equation of IAPWS R14-08(2011), which has exactly this shape:
// P = P* + P*·0.299948·((T/T*)^60 − 1).
func TestSimonGlatzelIceIII(t *testing.T) {
	t.Parallel()
	c := famNew(t, "simon-glatzel", Params{"t0": {251.165}, "p0": {208.566e6}, "a": {208.566e6 * 0.299948}, "c": {60}}, 251.165, 256.164)
	p, err := c.Pressure(254)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbsOrRel(p, 268.685e6, 0, 5e-6) { // IAPWS R14-08(2011), melting-pressure check value (from memory)
		t.Errorf("P(254 K) = %.7g Pa, IAPWS 268.685 MPa", p)
	}
	T, err := c.Temperature(268.685e6)
	if err != nil || !scalar.EqualWithinAbsOrRel(T, 254, 1e-3, 0) {
		t.Errorf("T(268.685 MPa) = %.6f K, %v", T, err)
	}
}

// TestSimonGlatzelForm checks the equation, slope and closed-form inverse,
// with P0 = 0 (the usual simplification; the range then starts above T0,
// where P > 0) and a falling curve (a < 0).
func TestSimonGlatzelForm(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ t0, p0, a, c float64 }{
		{83.8, 0, 2.1e8, 1.6}, // invented, argon-like magnitudes
		{100, 1e8, -1e7, 2},   // invented falling curve
		{50, 1e6, 5e8, 0.5},   // invented c < 1
		{200, 1e9, 1e8, -1.5}, // invented negative exponent
	} {
		c := famNew(t, "simon-glatzel", Params{"t0": {tc.t0}, "p0": {tc.p0}, "a": {tc.a}, "c": {tc.c}}, tc.t0*1.01, tc.t0*1.25)
		for i := 0; i <= 10; i++ {
			T := tc.t0 * (1.02 + 0.02*float64(i))
			p, d, err := c.PressureSlope(T)
			if err != nil {
				t.Fatal(err)
			}
			if want := tc.p0 + tc.a*(math.Pow(T/tc.t0, tc.c)-1); !scalar.EqualWithinAbsOrRel(p, want, 1e-6, 1e-14) {
				t.Errorf("%+v: P(%g) = %.15g, want %.15g", tc, T, p, want)
			}
			if want := tc.a * tc.c / tc.t0 * math.Pow(T/tc.t0, tc.c-1); !scalar.EqualWithinAbsOrRel(d, want, 0, 1e-13) {
				t.Errorf("%+v: slope(%g) = %g, want %g", tc, T, d, want)
			}
			T2, err := c.Temperature(p)
			if err != nil || !scalar.EqualWithinAbsOrRel(T2, T, 0, 1e-13) {
				t.Errorf("%+v: T(P(%g)) = %.15g, %v", tc, T, T2, err)
			}
		}
	}
}
