package thermo

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestClapeyronLinearIceSlope checks the Clapeyron slope of melting ice from
// ΔH_fus ≈ 6.01 kJ/mol and ΔV_fus ≈ −1.63 cm³/mol: about −13.5 MPa/K
// (common practice), and agreement with the IAPWS ice Ih branch near 0 °C.
func TestClapeyronLinearIceSlope(t *testing.T) {
	t.Parallel()
	p := Params{"t0": {273.16}, "p0": {611.657}, "delta_h": {6010}, "delta_v": {-1.63e-6}} // common practice ΔH_fus, ΔV_fus
	for _, lin := range []float64{0, 1} {
		q := Params{"linearized": {lin}}
		for k, v := range p {
			q[k] = v
		}
		c := famNew(t, "clapeyron-linear", q, 263.15, 273.16)
		d, _ := c.Slope(273.16)
		if !scalar.EqualWithinAbsOrRel(d, -13.5e6, 0, 0.01) { // common practice: −13.5 MPa/K
			t.Errorf("linearized=%g: slope at 273.16 K = %g Pa/K", lin, d)
		}
		// Ice melts under pressure: P rises as T falls.
		p1, _ := c.Pressure(272)
		p2, _ := c.Pressure(273)
		if !(p1 > p2) {
			t.Errorf("linearized=%g: P(272) = %g not above P(273) = %g", lin, p1, p2)
		}
		// Within 0.5 K of the triple point the constant-ΔH, ΔV model
		// is within 2.5 % of the IAPWS branch in P − pt (measured 1.8 %;
		// the real curve bends, 6 % at 2 K).
		ih := famNew(t, "power-sum", famIceIh, 251.165, 273.16)
		pi, _ := ih.Pressure(272.66)
		pc, _ := c.Pressure(272.66)
		if !scalar.EqualWithinAbsOrRel(pc-611.657, pi-611.657, 0, 0.025) { // IAPWS R14-08(2011) ice Ih vs Clapeyron
			t.Errorf("linearized=%g: P(272.66) = %g, IAPWS %g", lin, pc, pi)
		}
	}
}

// TestClapeyronLinearForms checks both forms against their equations and
// closed-form inverses, for both signs of ΔV.
func TestClapeyronLinearForms(t *testing.T) {
	t.Parallel()
	for _, dv := range []float64{-1.63e-6, 2.5e-6} {
		const t0, p0, dh = 300.0, 1e9, 5000.0
		log := famNew(t, "clapeyron-linear", Params{"t0": {t0}, "p0": {p0}, "delta_h": {dh}, "delta_v": {dv}}, 290, 310)
		lin := famNew(t, "clapeyron-linear", Params{"t0": {t0}, "p0": {p0}, "delta_h": {dh}, "delta_v": {dv}, "linearized": {1}}, 290, 310)
		for _, T := range []float64{290, 295, 300, 305, 310} {
			pl, dl, _ := log.PressureSlope(T)
			if want := p0 + dh/dv*math.Log(T/t0); !scalar.EqualWithinAbsOrRel(pl, want, 1e-6, 1e-14) {
				t.Errorf("ΔV=%g log form P(%g) = %.15g, want %.15g", dv, T, pl, want)
			}
			if want := dh / (T * dv); !scalar.EqualWithinAbsOrRel(dl, want, 0, 1e-14) {
				t.Errorf("ΔV=%g log form slope(%g) = %g, want %g", dv, T, dl, want)
			}
			pn, dn, _ := lin.PressureSlope(T)
			if want := p0 + dh/(t0*dv)*(T-t0); !scalar.EqualWithinAbsOrRel(pn, want, 1e-6, 1e-14) {
				t.Errorf("ΔV=%g linear P(%g) = %.15g, want %.15g", dv, T, pn, want)
			}
			if want := dh / (t0 * dv); !scalar.EqualWithinAbsOrRel(dn, want, 0, 1e-15) {
				t.Errorf("ΔV=%g linear slope = %g, want %g", dv, dn, want)
			}
		}
	}
}
