package thermo

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Water's melting branches after IAPWS R14-08(2011), written in this
// package's families. The release's ice Ih equation reads
// 1 + Σ aᵢ(1 − θ^bᵢ); our power-sum form is 1 + Σ aᵢ(θ^bᵢ − 1), so its
// coefficients change sign. Ice III, V and VI read 1 − a(1 − θ^b), which is
// our form with a unchanged.
var (
	famIceIh = Params{"t_ref": {273.16}, "p_ref": {611.657}, // IAPWS R14-08(2011), ice Ih melting-pressure equation
		"a": {-0.119539337e7, -0.808183159e5, -0.333826860e4}, "b": {0.300000e1, 0.257500e2, 0.103750e3}}
	famIceIII = Params{"t_ref": {251.165}, "p_ref": {208.566e6}, "a": {0.299948}, "b": {60}} // IAPWS R14-08(2011), ice III melting-pressure equation
	famIceV   = Params{"t_ref": {256.164}, "p_ref": {350.1e6}, "a": {1.18721}, "b": {8}}     // IAPWS R14-08(2011), ice V melting-pressure equation
	famIceVI  = Params{"t_ref": {273.31}, "p_ref": {632.4e6}, "a": {1.07476}, "b": {4.6}}    // IAPWS R14-08(2011), ice VI melting-pressure equation
)

// famWaterMelting lists the five melting branches with the ranges of
// IAPWS R14-08(2011).
var famWaterMelting = []struct {
	name, family string
	p            Params
	tmin, tmax   float64
}{
	{"ice-Ih", "power-sum", famIceIh, 251.165, 273.16},
	{"ice-III", "power-sum", famIceIII, 251.165, 256.164},
	{"ice-V", "power-sum", famIceV, 256.164, 273.31},
	{"ice-VI", "power-sum", famIceVI, 273.31, 355},
	{"ice-VII", "log-power-sum", famIceVII, 355, 715},
}

// TestWaterMeltingIAPWS checks every melting branch against the check
// values of the release.
func TestWaterMeltingIAPWS(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		branch string
		T, p   float64
	}{
		{"ice-Ih", 260, 138.268e6},  // IAPWS R14-08(2011), melting-pressure check value (from memory)
		{"ice-III", 254, 268.685e6}, // IAPWS R14-08(2011), melting-pressure check value (from memory)
		{"ice-V", 265, 479.640e6},   // IAPWS R14-08(2011), melting-pressure check value (from memory)
		{"ice-VI", 320, 1356.76e6},  // IAPWS R14-08(2011), melting-pressure check value (from memory)
		{"ice-VII", 550, 6308.71e6}, // IAPWS R14-08(2011), melting-pressure check value (from memory)
	} {
		for _, b := range famWaterMelting {
			if b.name != tc.branch {
				continue
			}
			c := famNew(t, b.family, b.p, b.tmin, b.tmax)
			p, err := c.Pressure(tc.T)
			if err != nil {
				t.Fatalf("%s: %v", b.name, err)
			}
			// The table gives six significant digits: half a unit in
			// the last place is at most 4e-6 relative.
			if !scalar.EqualWithinAbsOrRel(p, tc.p, 0, 5e-6) {
				t.Errorf("%s: P(%g K) = %.7g Pa, IAPWS %.7g Pa", b.name, tc.T, p, tc.p)
			}
			T, err := c.Temperature(tc.p)
			if err != nil {
				t.Fatalf("%s: %v", b.name, err)
			}
			// Invert the rounded table value: error = 5e-6·P/(T·dP/dT) ≪ 1 mK.
			if !scalar.EqualWithinAbsOrRel(T, tc.T, 2e-3, 0) {
				t.Errorf("%s: T(%g Pa) = %.6f K, IAPWS %g K", b.name, tc.p, T, tc.T)
			}
		}
	}
}

// TestWaterMeltingBranchesMeet checks that neighbouring branches meet at
// the triple points the release builds them on.
func TestWaterMeltingBranchesMeet(t *testing.T) {
	t.Parallel()
	byName := map[string]Correlation{}
	for _, b := range famWaterMelting {
		byName[b.name] = famNew(t, b.family, b.p, b.tmin, b.tmax)
	}
	for _, tc := range []struct {
		low, high string
		T, p      float64
	}{
		{"ice-Ih", "ice-III", 251.165, 208.566e6}, // IAPWS R14-08(2011): Ih–III–liquid triple point
		{"ice-III", "ice-V", 256.164, 350.1e6},    // IAPWS R14-08(2011): III–V–liquid triple point
		{"ice-V", "ice-VI", 273.31, 632.4e6},      // IAPWS R14-08(2011): V–VI–liquid triple point
		{"ice-VI", "ice-VII", 355, 2216e6},        // IAPWS R14-08(2011): VI–VII–liquid triple point
	} {
		pl, err := byName[tc.low].Pressure(tc.T)
		if err != nil {
			t.Fatal(err)
		}
		ph, err := byName[tc.high].Pressure(tc.T)
		if err != nil {
			t.Fatal(err)
		}
		// The branches were fitted separately and meet to within 1e-5
		// relative (largest gap: Ih at 251.165 K, 2.7e-6).
		for _, p := range []float64{pl, ph} {
			if !scalar.EqualWithinAbsOrRel(p, tc.p, 0, 1e-5) {
				t.Errorf("%s/%s at %g K: P = %.9g Pa, triple point %.9g Pa", tc.low, tc.high, tc.T, p, tc.p)
			}
		}
	}
}

// TestWaterIceMeltsUnderPressure checks pressure melting: on the ice Ih
// branch P(T) falls as T rises, so at a fixed temperature below 273.16 K a
// higher pressure crosses into the liquid.
func TestWaterIceMeltsUnderPressure(t *testing.T) {
	t.Parallel()
	c := famNew(t, "power-sum", famIceIh, 251.165, 273.16)
	prev, _ := c.Pressure(251.165)
	for T := 252.0; T <= 273.16; T++ {
		p, _ := c.Pressure(T)
		if p >= prev {
			t.Errorf("ice Ih melting pressure not falling: P(%g) = %g ≥ %g", T, p, prev) // common practice
		}
		prev = p
	}
	d, _ := c.Slope(273.15)
	// Common practice: about −13.5 MPa/K near 0 °C; 2 % covers the spread
	// of quoted values (−13.4 to −13.6 MPa/K).
	if !scalar.EqualWithinAbsOrRel(d, -13.5e6, 0, 0.02) {
		t.Errorf("ice Ih melting slope at 273.15 K = %g Pa/K, want about −13.5 MPa/K (common practice)", d)
	}
	// Pure ice under 1 atm melts about 7.5 mK below the triple point, at
	// 273.1525 K (common practice; the 273.15 K ice point is that of
	// air-saturated water).
	T, err := c.Temperature(101325)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbsOrRel(T, 273.1525, 5e-4, 0) {
		t.Errorf("ice Ih melting temperature at 1 atm = %.5f K, want 273.1525 K (common practice)", T)
	}
}

// TestPowerSumClosedFormMatchesSolver checks the single-term closed-form
// inverse against the numerical solver used for several terms, by writing
// ice V once as one term and once with a zero-weight second term.
func TestPowerSumClosedFormMatchesSolver(t *testing.T) {
	t.Parallel()
	one := famNew(t, "power-sum", famIceV, 256.164, 273.31)
	two := famNew(t, "power-sum", Params{"t_ref": {256.164}, "p_ref": {350.1e6}, "a": {1.18721, 0}, "b": {8, 2}}, 256.164, 273.31)
	for p := 360e6; p < 630e6; p += 10e6 {
		t1, err1 := one.Temperature(p)
		t2, err2 := two.Temperature(p)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if !scalar.EqualWithinAbsOrRel(t1, t2, 0, 1e-13) {
			t.Errorf("T(%g): closed form %.15g, solver %.15g", p, t1, t2)
		}
	}
}
