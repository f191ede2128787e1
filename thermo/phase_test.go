package thermo

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// tstInventedDiagram builds an invented substance (closed-form curves, no
// published data): triple point 200 K / 1000 Pa, critical point 400 K.
func tstInventedDiagram(t *testing.T, withMelt, withSub, withCrit, withTriple bool) (*PhaseDiagram, error) {
	t.Helper()
	sat, err := NewCurve(Saturation, Branch{Corr: newTstExp(200, 1000, 3000, 200, 400)})
	if err != nil {
		t.Fatal(err)
	}
	spec := PhaseDiagramSpec{Saturation: sat}
	if withMelt {
		spec.Melting, err = NewCurve(Melting, Branch{Name: "alpha", SolidForm: "alpha", Corr: newTstLin(200, 1000, 1e7, 200, 300)})
		if err != nil {
			t.Fatal(err)
		}
	}
	if withSub {
		spec.Sublimation, err = NewCurve(Sublimation, Branch{Name: "alpha", SolidForm: "alpha", Corr: newTstExp(200, 1000, 4000, 100, 200)})
		if err != nil {
			t.Fatal(err)
		}
	}
	if withCrit {
		pc, _ := sat.Branches[0].Corr.Pressure(400)
		spec.Critical = &StatePoint{400, pc}
	}
	if withTriple {
		spec.Triple = []TriplePoint{{Phases: []string{"alpha", "liquid", "vapour"}, StatePoint: StatePoint{200, 1000}}}
	}
	return NewPhaseDiagram(spec)
}

func TestPhaseInvented(t *testing.T) {
	t.Parallel()
	d, err := tstInventedDiagram(t, true, true, true, false) // triple point from the saturation curve's low end
	if err != nil {
		t.Fatal(err)
	}
	if tp := d.TriplePoint(); tp.Temperature != 200 || math.Abs(tp.Pressure-1000) > 1e-9 {
		t.Errorf("triple point %+v, want (200 K, 1000 Pa)", tp)
	}
	c, ok := d.Critical()
	if !ok || c.Temperature != 400 {
		t.Errorf("critical point %+v, %v", c, ok)
	}
	names := strings.Join(d.BoundaryNames(), ",")
	if names != "saturation,melting/alpha,sublimation/alpha,critical-temperature,critical-pressure" {
		t.Errorf("boundary names %s", names)
	}
	pc := c.Pressure
	// Saturation: P = 1000·exp(−3000(1/T − 1/200)) Pa, so 20086 Pa at 250 K,
	// 148413 Pa at 300 K; melting: T = 200 K + (P − 1000 Pa)/(1e7 Pa/K).
	for _, tc := range []struct {
		t, p  float64
		phase Phase
		form  string
	}{
		{150, 10, PhaseSolid, "alpha"},        // below the sublimation temperature at 10 Pa
		{150, 0.001, PhaseVapor, ""},          // above it
		{250, 500, PhaseVapor, ""},            // P < Pt and T ≥ Tt
		{199, 1e5, PhaseSolid, "alpha"},       // below the melting line
		{250, 1e6, PhaseLiquid, ""},           // above melting (200.1 K) and saturation
		{300, 1e5, PhaseVapor, ""},            // below saturation
		{300, 2e5, PhaseLiquid, ""},           // above saturation
		{401, pc * 2, PhaseSupercritical, ""}, // above Tc and Pc
		{401, pc / 2, PhaseVapor, ""},         // a gas above Tc
		{400, pc * 2, PhaseLiquid, ""},        // exactly Tc is not above it
		{350, pc * 2, PhaseLiquid, ""},        // compressed liquid
	} {
		st, err := d.Locate(tc.t, tc.p)
		if err != nil || st.Phase != tc.phase || st.Form != tc.form {
			t.Errorf("Locate(%g K, %g Pa) = %+v, %v; want %v %q", tc.t, tc.p, st, err, tc.phase, tc.form)
		}
	}
	// Margins measure to the crossing: the isobar 1e5 Pa meets the melting
	// line at 200 + (1e5 − 1000)/1e7 K.
	st, err := d.Locate(199, 1e5)
	if err != nil || math.Abs(st.MarginT-(200+(1e5-1000)/1e7-199)) > 1e-9 || d.BoundaryNames()[st.NearestT] != "melting/alpha" {
		t.Errorf("margin at (199 K, 1e5 Pa) = %+v, %v", st, err)
	}
	// Above the melting line's coverage (300 K → 1000 + 1e9 Pa) the state may be solid: refused.
	if _, err := d.Locate(350, 2e9); !errors.Is(err, ErrOutsideCoverage) {
		t.Errorf("above the melting curve: got %v, want ErrOutsideCoverage", err)
	}
	// Below the sublimation curve's coverage (P(100 K)) at low T.
	if _, err := d.Locate(90, 1e-12); !errors.Is(err, ErrOutsideCoverage) {
		t.Errorf("below the sublimation curve: got %v, want ErrOutsideCoverage", err)
	}
	var re *RangeError
	if _, err := d.Locate(90, 1e-12); !errors.As(err, &re) {
		t.Errorf("coverage error does not carry the RangeError: %v", err)
	}
}

func TestPhaseMissingCurves(t *testing.T) {
	t.Parallel()
	noMelt, err := tstInventedDiagram(t, false, true, true, true)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := noMelt.Locate(300, 1e5); !errors.Is(err, ErrOutsideCoverage) || !strings.Contains(err.Error(), "melting") {
		t.Errorf("no melting curve: got %v", err)
	}
	if st, err := noMelt.Locate(300, 10); err != nil || st.Phase != PhaseVapor {
		t.Errorf("no melting curve, P < Pt: %+v, %v; want vapor", st, err)
	}
	noSub, err := tstInventedDiagram(t, true, false, true, true)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := noSub.Locate(150, 10); !errors.Is(err, ErrOutsideCoverage) || !strings.Contains(err.Error(), "sublimation") {
		t.Errorf("no sublimation curve: got %v", err)
	}
	noCrit, err := tstInventedDiagram(t, true, true, false, true)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := noCrit.Locate(450, 1e5); !errors.Is(err, ErrOutsideCoverage) {
		t.Errorf("above the saturation curve without a critical point: got %v", err)
	}
	if _, ok := noCrit.Critical(); ok {
		t.Error("critical point reported but not given")
	}
	if n := strings.Join(noCrit.BoundaryNames(), ","); strings.Contains(n, "critical") {
		t.Errorf("critical lines without a critical point: %s", n)
	}
}

func TestNewPhaseDiagramErrors(t *testing.T) {
	t.Parallel()
	melt, _ := NewCurve(Melting, Branch{Corr: newTstLin(200, 1000, 1e7, 200, 300)})
	sat, _ := NewCurve(Saturation, Branch{Corr: newTstExp(200, 1000, 3000, 200, 400)})
	tp := []TriplePoint{{Phases: []string{"solid", "liquid", "vapor"}, StatePoint: StatePoint{200, 1000}}}
	for _, tc := range []struct {
		name string
		spec PhaseDiagramSpec
	}{
		{"no curves", PhaseDiagramSpec{Triple: tp}},
		{"wrong kind", PhaseDiagramSpec{Saturation: melt, Triple: tp}},
		{"no triple point and no saturation", PhaseDiagramSpec{Melting: melt}},
		{"triple point not positive", PhaseDiagramSpec{Melting: melt, Triple: []TriplePoint{{Phases: []string{"liquid", "gas"}, StatePoint: StatePoint{-1, 1}}}}},
		{"critical below triple", PhaseDiagramSpec{Saturation: sat, Triple: tp, Critical: &StatePoint{100, 10}}},
		{"nil transition", PhaseDiagramSpec{Saturation: sat, Transitions: []*Curve{nil}}},
		{"empty curve", PhaseDiagramSpec{Saturation: &Curve{Kind: Saturation}}},
	} {
		if _, err := NewPhaseDiagram(tc.spec); !errors.Is(err, ErrBadParam) {
			t.Errorf("%s: got %v, want ErrBadParam", tc.name, err)
		}
	}
	// A transition curve contributes margins.
	tr, _ := NewCurve(Transition, Branch{Name: "alpha-beta", Corr: newTstLin(150, 1e6, 1e6, 100, 199)})
	d, err := NewPhaseDiagram(PhaseDiagramSpec{Saturation: sat, Melting: melt, Triple: tp, Transitions: []*Curve{tr}})
	if err != nil {
		t.Fatal(err)
	}
	st, err := d.Locate(151, 1e6)
	if err != nil || st.Phase != PhaseSolid || d.BoundaryNames()[st.NearestT] != "transition/alpha-beta" || math.Abs(st.MarginT-1) > 1e-9 {
		t.Errorf("transition margin: %+v, %v", st, err)
	}
	if Phase(9).String() != "Phase(9)" || PhaseSupercritical.String() != "supercritical" {
		t.Error("Phase.String")
	}
}
