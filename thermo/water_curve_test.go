package thermo

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Published curves built through the registered families, for the tests of
// curves, phase location and tables on real substances.

func tstBranch(t testing.TB, family, name, form string, p Params, tmin, tmax float64) Branch {
	t.Helper()
	f, err := GetFamily(family)
	if err != nil {
		t.Fatal(err)
	}
	c, err := f.New(p, tmin, tmax)
	if err != nil {
		t.Fatalf("%s %s: %v", family, name, err)
	}
	return Branch{Name: name, SolidForm: form, Corr: c}
}

// tstWaterMelting is water's melting curve, IAPWS R14-08(2011) equations
// 1–5, as five branches in the catalog's family forms.
func tstWaterMelting(t testing.TB) *Curve {
	t.Helper()
	cv, err := NewCurve(Melting,
		// IAPWS R14-08(2011) eq. 1, ice Ih: P/Pt = 1 − Σ aᵢ(1 − θ^bᵢ), Tt = 273.16 K, Pt = 611.657 Pa
		tstBranch(t, "power-sum", "ice-Ih", "ice-Ih", Params{"t_ref": {273.16}, "p_ref": {611.657},
			"a": {-0.119539337e7, -0.808183159e5, -0.333826860e4}, "b": {3, 25.75, 103.75}}, 251.165, 273.16),
		// IAPWS R14-08(2011) eq. 2, ice III: T* = 251.165 K, P* = 208.566 MPa
		tstBranch(t, "power-sum", "ice-III", "ice-III", Params{"t_ref": {251.165}, "p_ref": {208.566e6},
			"a": {0.299948}, "b": {60}}, 251.165, 256.164),
		// IAPWS R14-08(2011) eq. 3, ice V: T* = 256.164 K, P* = 350.1 MPa
		tstBranch(t, "power-sum", "ice-V", "ice-V", Params{"t_ref": {256.164}, "p_ref": {350.1e6},
			"a": {1.18721}, "b": {8}}, 256.164, 273.31),
		// IAPWS R14-08(2011) eq. 4, ice VI: T* = 273.31 K, P* = 632.4 MPa
		tstBranch(t, "power-sum", "ice-VI", "ice-VI", Params{"t_ref": {273.31}, "p_ref": {632.4e6},
			"a": {1.07476}, "b": {4.6}}, 273.31, 355),
		// IAPWS R14-08(2011) eq. 5, ice VII: T* = 355 K, P* = 2216 MPa
		tstBranch(t, "log-power-sum", "ice-VII", "ice-VII", Params{"t_ref": {355}, "p_ref": {2216e6},
			"a": {-1.73683, 0.0544606, -0.806106e-7}, "b": {-1, 5, 22}}, 355, 715),
	)
	if err != nil {
		t.Fatal(err)
	}
	return cv
}

// tstWaterSublimation is IAPWS R14-08(2011) eq. 6, ice Ih, 50 K ≤ T ≤ 273.16 K.
func tstWaterSublimation(t testing.TB) *Curve {
	t.Helper()
	cv, err := NewCurve(Sublimation,
		tstBranch(t, "inverse-log-power-sum", "ice-Ih", "ice-Ih", Params{"t_ref": {273.16}, "p_ref": {611.657},
			"a": {-0.212144006e2, 0.273203819e2, -0.610598130e1}, "b": {0.333333333e-2, 0.120666667e1, 0.170333333e1}}, 50, 273.16))
	if err != nil {
		t.Fatal(err)
	}
	return cv
}

// tstWaterSaturation is IAPWS-IF97 region 4 over its whole range.
func tstWaterSaturation(t testing.TB) *Curve {
	t.Helper()
	cv, err := NewCurve(Saturation, tstBranch(t, "iapws-if97", "", "", Params{}, 273.15, 647.096))
	if err != nil {
		t.Fatal(err)
	}
	return cv
}

func tstWaterDiagram(t testing.TB) *PhaseDiagram {
	t.Helper()
	d, err := NewPhaseDiagram(PhaseDiagramSpec{
		Saturation:  tstWaterSaturation(t),
		Melting:     tstWaterMelting(t),
		Sublimation: tstWaterSublimation(t),
		Triple: []TriplePoint{
			{Phases: []string{"ice-Ih", "liquid", "vapor"}, StatePoint: StatePoint{273.16, 611.657}},      // IAPWS R14-08(2011) triple point
			{Phases: []string{"ice-Ih", "ice-III", "liquid"}, StatePoint: StatePoint{251.165, 208.566e6}}, // IAPWS R14-08(2011)
		},
		Critical: &StatePoint{647.096, 22.064e6}, // IAPWS R7-97(2012) critical point
	})
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// tstCO2Diagram is carbon dioxide after Span & Wagner (1996): eqs. 3.13
// (vapour pressure), 3.10 (melting) and 3.12 (sublimation).
func tstCO2Diagram(t testing.TB) *PhaseDiagram {
	t.Helper()
	const tt, pt, tc, pc = 216.592, 0.51795e6, 304.1282, 7.3773e6 // Span & Wagner (1996) triple and critical points
	sat, err := NewCurve(Saturation, tstBranch(t, "wagner", "", "", Params{"t_ref": {tc}, "p_ref": {pc},
		"a": {-7.0602087, 1.9391218, -1.6463597, -3.2995634}, "e": {1, 1.5, 2, 4}}, tt, tc)) // Span & Wagner (1996) eq. 3.13
	if err != nil {
		t.Fatal(err)
	}
	melt, err := NewCurve(Melting, tstBranch(t, "shifted-power-sum", "", "dry-ice", Params{"t_ref": {tt}, "p_ref": {pt},
		"a": {1955.5390, 2055.4593}, "b": {1, 2}}, tt, 327)) // Span & Wagner (1996) eq. 3.10
	if err != nil {
		t.Fatal(err)
	}
	sub, err := NewCurve(Sublimation, tstBranch(t, "wagner", "", "dry-ice", Params{"t_ref": {tt}, "p_ref": {pt},
		"a": {-14.740846, 2.4327015, -5.3061778}, "e": {1, 1.9, 2.9}}, 150, tt)) // Span & Wagner (1996) eq. 3.12
	if err != nil {
		t.Fatal(err)
	}
	d, err := NewPhaseDiagram(PhaseDiagramSpec{Saturation: sat, Melting: melt, Sublimation: sub,
		Triple:   []TriplePoint{{Phases: []string{"solid", "liquid", "vapor"}, StatePoint: StatePoint{tt, pt}}},
		Critical: &StatePoint{tc, pc}})
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func TestWaterMeltingCurve(t *testing.T) {
	t.Parallel()
	cv := tstWaterMelting(t)
	for _, tc := range []struct {
		branch string
		t, p   float64 // K, Pa
	}{
		{"ice-Ih", 260, 138.268e6},      // IAPWS R14-08(2011), Table 3 check value
		{"ice-III", 254, 268.685e6},     // IAPWS R14-08(2011), Table 3 check value (from memory)
		{"ice-V", 265, 479.640e6},       // IAPWS R14-08(2011), Table 3 check value (from memory)
		{"ice-VI", 320, 1356.76e6},      // IAPWS R14-08(2011), Table 3 check value (from memory)
		{"ice-VII", 550, 6308.71e6},     // IAPWS R14-08(2011), Table 3 check value (from memory)
		{"ice-Ih", 273.16, 611.657},     // IAPWS R14-08(2011) triple point Ih–liquid–vapour
		{"ice-III", 251.165, 208.566e6}, // IAPWS R14-08(2011) triple point Ih–III–liquid
		{"ice-V", 256.164, 350.1e6},     // IAPWS R14-08(2011) triple point III–V–liquid
		{"ice-VI", 273.31, 632.4e6},     // IAPWS R14-08(2011) triple point V–VI–liquid
		{"ice-VII", 355, 2216e6},        // IAPWS R14-08(2011) triple point VI–VII–liquid
	} {
		pt, err := cv.Pressure(tc.t, CurveOptions{Branch: tc.branch})
		if err != nil {
			t.Errorf("%s at %g K: %v", tc.branch, tc.t, err)
			continue
		}
		if !scalar.EqualWithinAbsOrRel(pt.Pressure, tc.p, 0, 5e-6) {
			t.Errorf("%s at %g K: P = %.6g Pa, want %.6g", tc.branch, tc.t, pt.Pressure, tc.p)
		}
		// T(P) with automatic branch choice comes back to the same state:
		// the melting temperature is single-valued in pressure. At a
		// triple point the first branch answers, and the branches meet
		// there only to about 3e-6 in pressure (IAPWS R14-08 rounding).
		back, err := cv.Temperature(pt.Pressure, CurveOptions{})
		if err != nil || !scalar.EqualWithinAbsOrRel(back.Temperature, tc.t, 0, 1e-6) {
			t.Errorf("%s: T(%g Pa) = %+v, %v; want %g K", tc.branch, pt.Pressure, back, err, tc.t)
		}
	}
	// Branches meet at their triple points within BranchMeetTolerance, so
	// an unqualified P(T) there is not ambiguous and takes the first branch.
	for _, tc := range []struct {
		t      float64
		branch int
	}{{251.165, 0}, {256.164, -1}, {273.31, -1}, {355, 3}} {
		pt, err := cv.Pressure(tc.t, CurveOptions{})
		if tc.branch < 0 {
			// Ice Ih also exists at 256.164 K and 273.31 K? Only up to 273.16 K:
			// at 256.164 K ice Ih's own point (about 150 MPa) differs.
			if tc.t < 273.16 && !errors.Is(err, ErrAmbiguousBranch) {
				t.Errorf("P(%g K): got %+v, %v; want ambiguous (ice Ih is there too)", tc.t, pt, err)
			}
			if tc.t > 273.16 && (err != nil || pt.Branch != 2) {
				t.Errorf("P(%g K): got %+v, %v; want ice-V (first of V and VI)", tc.t, pt, err)
			}
			continue
		}
		if err != nil || pt.Branch != tc.branch {
			t.Errorf("P(%g K): got %+v, %v; want branch %d", tc.t, pt, err, tc.branch)
		}
	}
	// Ice Ih melts with a negative slope, about −13.5 MPa/K near 0 °C (common practice).
	pt, err := cv.Pressure(273.15, CurveOptions{Branch: "ice-Ih"})
	if err != nil || !scalar.EqualWithinAbsOrRel(pt.Slope, -13.5e6, 0, 0.02) {
		t.Errorf("ice Ih slope at 273.15 K: %+v, %v; want about −13.5 MPa/K", pt, err)
	}
	// At 254 K both ice Ih and ice III melt: P(T) must name them.
	var amb *AmbiguousBranchError
	if _, err := cv.Pressure(254, CurveOptions{}); !errors.As(err, &amb) || strings.Join(amb.Branches, ",") != "ice-Ih,ice-III" {
		t.Errorf("P(254 K): got %v, want ambiguous between ice-Ih and ice-III", err)
	}
	// The seam between ice V (ends at 632.3993 MPa) and ice VI (starts at
	// 632.4 MPa) is served without a range error and without a flag.
	seam, err := cv.Temperature(632.3996e6, CurveOptions{})
	if err != nil || seam.Extrapolated || !scalar.EqualWithinAbsOrRel(seam.Temperature, 273.31, 0, 1e-6) {
		t.Errorf("T in the V–VI seam: %+v, %v; want ≈ 273.31 K", seam, err)
	}
}

func TestWaterPhase(t *testing.T) {
	t.Parallel()
	d := tstWaterDiagram(t)
	names := d.BoundaryNames()
	for _, tc := range []struct {
		name       string
		t, p       float64
		phase      Phase
		form       string
		nearestT   string  // boundary nearest along the isobar
		marginTmin float64 // K, lower bound of the margin at fixed P
	}{
		{"ice at 263.15 K, 0.1 MPa", 263.15, 0.1e6, PhaseSolid, "ice-Ih", "melting/ice-Ih", 9.9},                // common practice
		{"pressure melting: 263.15 K, 200 MPa is liquid", 263.15, 200e6, PhaseLiquid, "", "melting/ice-Ih", 10}, // IAPWS R14-08(2011): below the Ih–III triple point 208.566 MPa
		{"liquid at 300 K, 1 atm", 300, 101325, PhaseLiquid, "", "melting/ice-Ih", 26},                          // common practice
		{"vapor at 400 K, 1 atm", 400, 101325, PhaseVapor, "", "saturation", 26},                                // common practice (boils at 373.12 K)
		{"supercritical at 700 K, 30 MPa", 700, 30e6, PhaseSupercritical, "", "critical-temperature", 52},       // common practice
		{"compressed liquid at 600 K, 30 MPa", 600, 30e6, PhaseLiquid, "", "critical-temperature", 47},
		{"gas above Tc below Pc", 700, 10e6, PhaseVapor, "", "", 0},
		{"ice III at 250 K, 250 MPa", 250, 250e6, PhaseSolid, "ice-III", "melting/ice-III", 1},
		{"ice VI at 280 K, 1 GPa", 280, 1e9, PhaseSolid, "ice-VI", "melting/ice-VI", 1},
		{"frost below the triple point", 250, 100, PhaseSolid, "ice-Ih", "sublimation/ice-Ih", 1},
		{"vapor below the triple point", 250, 10, PhaseVapor, "", "sublimation/ice-Ih", 1},
	} {
		st, err := d.Locate(tc.t, tc.p)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if st.Phase != tc.phase || st.Form != tc.form {
			t.Errorf("%s: %v %q, want %v %q", tc.name, st.Phase, st.Form, tc.phase, tc.form)
		}
		if tc.nearestT != "" && (st.NearestT < 0 || names[st.NearestT] != tc.nearestT || st.MarginT < tc.marginTmin) {
			t.Errorf("%s: nearest along the isobar %d (%v) at %g K, want %s beyond %g K", tc.name, st.NearestT, names, st.MarginT, tc.nearestT, tc.marginTmin)
		}
	}
	// The margins are distances to real crossings: at 0.1 MPa ice Ih
	// melts at 273.1525 K (IAPWS R14-08(2011) eq. 1; common practice 0 °C at 1 atm).
	st, err := d.Locate(263.15, 0.1e6)
	if err != nil || !scalar.EqualWithinAbsOrRel(st.MarginT, 273.1525-263.15, 1e-3, 0) {
		t.Errorf("margin at (263.15 K, 0.1 MPa): %+v, %v; want ≈ 10.0025 K", st, err)
	}
	// Along the isotherm 263.15 K the nearest boundary is the sublimation
	// curve at about 260 Pa (IAPWS R14-08(2011) eq. 6; 259.9 Pa from memory).
	if names[st.NearestP] != "sublimation/ice-Ih" || !scalar.EqualWithinAbsOrRel(0.1e6-st.MarginP, 259.9, 0, 0.01) {
		t.Errorf("isotherm margin at (263.15 K, 0.1 MPa): %g Pa to %s", st.MarginP, names[st.NearestP])
	}
	// Above the last melting branch the phase would be a guess.
	for _, s := range []StatePoint{{300, 3e10}, {800, 1e6}} {
		if _, err := d.Locate(s.Temperature, s.Pressure); !errors.Is(err, ErrOutsideCoverage) && s.Pressure > 2.1e10 {
			t.Errorf("Locate(%v): got %v, want ErrOutsideCoverage", s, err)
		}
	}
	var ie *InputError
	for _, s := range []StatePoint{{math.NaN(), 1e5}, {300, math.Inf(1)}, {0, 1e5}, {300, -1}, {-300, 1e5}, {300, 0}} {
		if _, err := d.Locate(s.Temperature, s.Pressure); !errors.As(err, &ie) {
			t.Errorf("Locate(%v): got %v, want an InputError", s, err)
		}
	}
}

func TestWaterPhaseZeroAllocs(t *testing.T) {
	d := tstWaterDiagram(t)
	if n := testing.AllocsPerRun(50, func() { _, _ = d.Locate(263.15, 200e6) }); n != 0 {
		t.Errorf("Locate allocates %v times, want 0", n)
	}
}

func TestCO2Phase(t *testing.T) {
	t.Parallel()
	d := tstCO2Diagram(t)
	for _, tc := range []struct {
		name  string
		t, p  float64
		phase Phase
	}{
		{"dry ice at 190 K, 1 atm", 190, 101325, PhaseSolid},            // common practice: dry ice sublimes at about 194.7 K at 1 atm
		{"vapor at 200 K, 1 atm", 200, 101325, PhaseVapor},              // Span & Wagner (1996) eq. 3.12: sublimation pressure at 200 K ≈ 155 kPa > 1 atm
		{"vapor at 300 K, 1 atm", 300, 101325, PhaseVapor},              // common practice
		{"liquid at 250 K, 5 MPa", 250, 5e6, PhaseLiquid},               // common practice (saturation ≈ 1.79 MPa, from memory)
		{"supercritical at 310 K, 8 MPa", 310, 8e6, PhaseSupercritical}, // common practice
		{"solid at 220 K, 100 MPa", 220, 100e6, PhaseSolid},             // Span & Wagner (1996) eq. 3.10: melts near 229 K at 100 MPa
	} {
		st, err := d.Locate(tc.t, tc.p)
		if err != nil || st.Phase != tc.phase {
			t.Errorf("%s: %+v, %v; want %v", tc.name, st, err, tc.phase)
		}
	}
	// The sublimation temperature at 1 atm is the margin from 200 K.
	st, _ := d.Locate(200, 101325)
	if !scalar.EqualWithinAbsOrRel(200-st.MarginT, 194.69, 0.05, 0) { // common practice: −78.5 °C
		t.Errorf("CO2 sublimation temperature at 1 atm: %g K, want ≈ 194.69 K", 200-st.MarginT)
	}
}
