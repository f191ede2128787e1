package thermo

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

var (
	// famWaterWagnerPruss is the vapour-pressure equation of IAPWS
	// SR1-86(1992) (Wagner & Pruss 1993), Tc = 647.096 K, pc = 22.064 MPa.
	famWaterWagnerPruss = Params{"t_ref": {647.096}, "p_ref": {22.064e6},
		"a": {-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502}, // IAPWS SR1-86(1992), vapour-pressure equation (from memory)
		"e": {1, 1.5, 3, 3.5, 4, 7.5}}
	// famCO2Saturation is the Span & Wagner (1996) vapour-pressure
	// equation.
	famCO2Saturation = Params{"t_ref": {304.1282}, "p_ref": {7.3773e6},
		"a": {-7.0602087, 1.9391218, -1.6463597, -3.2995634}, // Span & Wagner (1996), vapour-pressure equation (from memory)
		"e": {1, 1.5, 2, 4}}
	// famCO2Sublimation is the Span & Wagner (1996) sublimation equation,
	// referred to the triple point.
	famCO2Sublimation = Params{"t_ref": {216.592}, "p_ref": {0.51795e6},
		"a": {-14.740846, 2.4327015, -5.3061778}, // Span & Wagner (1996), sublimation-pressure equation (from memory)
		"e": {1, 1.9, 2.9}}
)

// TestWagnerPrussAgreesWithIF97 checks that the two IAPWS saturation
// equations agree to the precision both claim. IAPWS-IF97 reproduces the
// scientific formulation's vapour pressure within about ±0.025 %, and the
// 1992 supplementary release represents the same data better than that, so
// the two must agree within 0.025 % = 2.5e-4 relative from the triple
// point to the critical point. (Their largest difference, near 460 K, is
// about 1.8e-4.)
func TestWagnerPrussAgreesWithIF97(t *testing.T) {
	t.Parallel()
	w := famNew(t, "wagner", famWaterWagnerPruss, 273.16, 647.096)
	f := famNew(t, "iapws-if97", nil, IF97Tmin, IF97Tc)
	worst := 0.0
	for T := 273.16; T <= 647.096; T += 0.25 {
		pw, err := w.Pressure(T)
		if err != nil {
			t.Fatal(err)
		}
		pf, _ := f.Pressure(T)
		worst = math.Max(worst, math.Abs(pw/pf-1))
		if !scalar.EqualWithinAbsOrRel(pw, pf, 0, 2.5e-4) { // IAPWS SR1-86(1992) vs IAPWS-IF97: ±0.025 %
			t.Errorf("P(%g K): Wagner-Pruss %.8g Pa, IF97 %.8g Pa", T, pw, pf)
		}
	}
	t.Logf("largest relative difference %.3g", worst)
	// The critical point is the reference point of both.
	pc, _ := w.Pressure(647.096)
	if pc != 22.064e6 {
		t.Errorf("Wagner-Pruss P(Tc) = %.10g, want exactly pc = 22.064 MPa", pc) // IAPWS SR1-86(1992): pc = 22.064 MPa
	}
}

// TestCO2TriplePointMeets checks the Span & Wagner (1996) saturation,
// melting and sublimation equations meet at the triple point and the
// saturation curve ends at the critical point.
func TestCO2TriplePointMeets(t *testing.T) {
	t.Parallel()
	const Tt, pt = 216.592, 0.51795e6 // Span & Wagner (1996), triple point (from memory)
	sat := famNew(t, "wagner", famCO2Saturation, Tt, 304.1282)
	sub := famNew(t, "wagner", famCO2Sublimation, 150, Tt)
	mel := famNew(t, "shifted-power-sum", famCO2Melting, Tt, 327)
	for _, tc := range []struct {
		name string
		c    Correlation
		tol  float64
	}{
		// The vapour-pressure equation, fitted separately, gives
		// 0.517962 MPa at Tt: 2.3e-5 relative; allow 5e-5.
		{"saturation", sat, 5e-5},
		{"sublimation", sub, 1e-12}, // referred to (Tt, pt)
		{"melting", mel, 1e-12},     // referred to (Tt, pt)
	} {
		p, err := tc.c.Pressure(Tt)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(p, pt, 0, tc.tol) {
			t.Errorf("%s P(Tt) = %.8g Pa, triple point %.8g Pa", tc.name, p, pt)
		}
	}
	pc, _ := sat.Pressure(304.1282)
	if pc != 7.3773e6 { // Span & Wagner (1996): critical point 304.1282 K, 7.3773 MPa (from memory)
		t.Errorf("saturation P(Tc) = %.10g, want 7.3773 MPa", pc)
	}
	// Slopes at the triple point order as the latent heats:
	// melting ≫ sublimation > vaporisation (common practice).
	ds, _ := sat.Slope(Tt)
	db, _ := sub.Slope(Tt)
	dm, _ := mel.Slope(Tt)
	if !(dm > db && db > ds && ds > 0) {
		t.Errorf("slopes at Tt: melting %g, sublimation %g, saturation %g Pa/K", dm, db, ds)
	}
}

// TestCO2Landmarks checks values of the trade.
func TestCO2Landmarks(t *testing.T) {
	t.Parallel()
	sat := famNew(t, "wagner", famCO2Saturation, 216.592, 304.1282)
	sub := famNew(t, "wagner", famCO2Sublimation, 150, 216.592)
	// Dry ice sublimes at −78.46 °C = 194.69 K under 1 atm (common practice).
	T, err := sub.Temperature(101325)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbsOrRel(T, 194.69, 0.02, 0) {
		t.Errorf("CO2 sublimation T(1 atm) = %.4f K, want 194.69 K (common practice)", T)
	}
	// CO2 vapour pressure at 0 °C is about 3.485 MPa (common practice).
	p, _ := sat.Pressure(273.15)
	if !scalar.EqualWithinAbsOrRel(p, 3.485e6, 0, 2e-3) {
		t.Errorf("CO2 Psat(273.15 K) = %.5g Pa, want about 3.485 MPa (common practice)", p)
	}
}
