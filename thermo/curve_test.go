package thermo

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// tstComposite is an invented melting-like curve of three linear branches
// shaped like water's: "A" falls with temperature (pressure melting), "B"
// rises from A's low end to a triple point with "C", which rises beyond
// A's high end. At 252 K both A and B exist; at 260 K both A and C.
func tstComposite(t *testing.T) *Curve {
	t.Helper()
	a := newTstLin(273.16, 611.657, -1.35e7, 250, 273.16)
	pa250 := a.eval(250)
	b := newTstLin(250, pa250, (3.5e8-pa250)/6, 250, 256)
	c := newTstLin(256, 3.5e8, 2e7, 256, 273.3)
	cv, err := NewCurve(Melting,
		Branch{Name: "A", SolidForm: "solid-A", Corr: a},
		Branch{Name: "B", SolidForm: "solid-B", Corr: b},
		Branch{Name: "C", SolidForm: "solid-C", Corr: c})
	if err != nil {
		t.Fatal(err)
	}
	return cv
}

func TestCurvePressure(t *testing.T) {
	t.Parallel()
	cv := tstComposite(t)
	a := cv.Branches[0].Corr.(*tstLinCorr)
	c := cv.Branches[2].Corr.(*tstLinCorr)
	tests := []struct {
		name   string
		t      float64
		opt    CurveOptions
		branch int
		p, d   float64
		extra  bool
	}{
		{"only C above A's range", 273.2, CurveOptions{}, 2, c.eval(273.2), 2e7, false},
		{"A and B meet at 250 K: first in order", 250, CurveOptions{}, 0, a.eval(250), -1.35e7, false},
		{"B and C meet at 256 K but A also holds 256 K", 256, CurveOptions{Branch: "C"}, 2, 3.5e8, 2e7, false},
		{"named A at 260 K", 260, CurveOptions{Branch: "A"}, 0, a.eval(260), -1.35e7, false},
		{"named C at 260 K", 260, CurveOptions{Branch: "C"}, 2, c.eval(260), 2e7, false},
		{"extrapolate above: nearest is C", 280, CurveOptions{AllowExtrapolation: true}, 2, c.eval(280), 2e7, true},
		{"extrapolate below: A and B tie, first wins", 240, CurveOptions{AllowExtrapolation: true}, 0, a.eval(240), -1.35e7, true},
		{"named A extrapolated", 274, CurveOptions{Branch: "A", AllowExtrapolation: true}, 0, a.eval(274), -1.35e7, true},
		{"extrapolation allowed but not needed", 273.2, CurveOptions{AllowExtrapolation: true}, 2, c.eval(273.2), 2e7, false},
	}
	for _, tc := range tests {
		pt, err := cv.Pressure(tc.t, tc.opt)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if pt.Branch != tc.branch || pt.Extrapolated != tc.extra || pt.Temperature != tc.t ||
			!scalar.EqualWithinAbsOrRel(pt.Pressure, tc.p, 0, 1e-14) || !scalar.EqualWithinAbsOrRel(pt.Slope, tc.d, 0, 1e-14) {
			t.Errorf("%s: got %+v, want branch %d P %g dP/dT %g extrapolated %v", tc.name, pt, tc.branch, tc.p, tc.d, tc.extra)
		}
	}
}

func TestCurvePressureErrors(t *testing.T) {
	t.Parallel()
	cv := tstComposite(t)
	var amb *AmbiguousBranchError
	for _, tc := range []struct {
		t     float64
		names []string
	}{{252, []string{"A", "B"}}, {260, []string{"A", "C"}}, {256, []string{"A", "B", "C"}}} {
		_, err := cv.Pressure(tc.t, CurveOptions{})
		if !errors.As(err, &amb) || !errors.Is(err, ErrAmbiguousBranch) {
			t.Fatalf("P(%g): got %v, want an ambiguous-branch error", tc.t, err)
		}
		if strings.Join(amb.Branches, ",") != strings.Join(tc.names, ",") || amb.Temperature != tc.t {
			t.Errorf("P(%g): ambiguous branches %v, want %v", tc.t, amb.Branches, tc.names)
		}
	}
	_, err := cv.Pressure(260, CurveOptions{Branch: "ice-XX"})
	if !errors.Is(err, ErrUnknownBranch) || !strings.Contains(err.Error(), "A, B, C") {
		t.Errorf("unknown branch: got %v, want ErrUnknownBranch listing A, B, C", err)
	}
	var re *RangeError
	_, err = cv.Pressure(300, CurveOptions{})
	if !errors.As(err, &re) || re.Min != 250 || re.Max != 273.3 || re.Value != 300 || re.Unit != "K" {
		t.Errorf("T = 300 K: got %v, want a RangeError [250, 273.3] K", err)
	}
	// Just past the curve's end is not a seam between branches.
	if _, err := cv.Pressure(273.3001, CurveOptions{}); !errors.As(err, &re) {
		t.Errorf("T just past the last branch: got %v, want a RangeError", err)
	}
	_, err = cv.Pressure(260, CurveOptions{Branch: "B"})
	if !errors.As(err, &re) || re.Min != 250 || re.Max != 256 {
		t.Errorf("B at 260 K: got %v, want a RangeError [250, 256]", err)
	}
	var ie *InputError
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, math.Copysign(0, -1), -5} {
		if _, err := cv.Pressure(v, CurveOptions{AllowExtrapolation: true}); !errors.As(err, &ie) {
			t.Errorf("P(%v): got %v, want an InputError", v, err)
		}
	}
}

func TestCurveTemperature(t *testing.T) {
	t.Parallel()
	cv := tstComposite(t)
	a := cv.Branches[0].Corr.(*tstLinCorr)
	b := cv.Branches[1].Corr.(*tstLinCorr)
	c := cv.Branches[2].Corr.(*tstLinCorr)
	tests := []struct {
		name   string
		p      float64
		opt    CurveOptions
		branch int
		want   float64
		extra  bool
	}{
		{"pressure melting on A", 1e8, CurveOptions{}, 0, a.t0 + (1e8-a.p0)/a.k, false},
		{"A's low end: A and B meet", a.eval(250), CurveOptions{}, 0, 250, false},
		{"on B", 3.3e8, CurveOptions{}, 1, b.t0 + (3.3e8-b.p0)/b.k, false},
		{"B and C meet at 3.5e8 Pa: first in order", 3.5e8, CurveOptions{}, 1, 256, false},
		{"on C", 4e8, CurveOptions{}, 2, 256 + (4e8-3.5e8)/2e7, false},
		{"named C", 3.9e8, CurveOptions{Branch: "C"}, 2, 256 + (3.9e8-3.5e8)/2e7, false},
		{"beyond C, extrapolated", 1e9, CurveOptions{AllowExtrapolation: true}, 2, c.t0 + (1e9-c.p0)/c.k, true},
		{"below A, extrapolated", 100, CurveOptions{AllowExtrapolation: true}, 0, a.t0 + (100-a.p0)/a.k, true},
	}
	for _, tc := range tests {
		pt, err := cv.Temperature(tc.p, tc.opt)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if pt.Branch != tc.branch || pt.Extrapolated != tc.extra || pt.Pressure != tc.p ||
			!scalar.EqualWithinAbsOrRel(pt.Temperature, tc.want, 0, 1e-13) {
			t.Errorf("%s: got %+v, want branch %d T %g extrapolated %v", tc.name, pt, tc.branch, tc.want, tc.extra)
		}
		want := cv.Branches[tc.branch].Corr.(*tstLinCorr).k
		if pt.Slope != want {
			t.Errorf("%s: slope %g, want %g", tc.name, pt.Slope, want)
		}
	}
	var re *RangeError
	if _, err := cv.Temperature(1e9, CurveOptions{}); !errors.As(err, &re) || re.Unit != "Pa" || re.Max != cv.Branches[2].Corr.Range().Pmax {
		t.Errorf("T(1e9 Pa): got %v, want a RangeError up to C's Pmax", err)
	}
	var ie *InputError
	if _, err := cv.Temperature(math.NaN(), CurveOptions{}); !errors.As(err, &ie) {
		t.Errorf("T(NaN): got %v, want an InputError", err)
	}
}

// A transition-like curve that turns back in pressure gives an ambiguous T(P).
func TestCurveTemperatureAmbiguous(t *testing.T) {
	t.Parallel()
	up := newTstLin(200, 1e8, 1e7, 200, 210)    // 1e8 … 2e8 Pa
	down := newTstLin(210, 2e8, -1e7, 210, 220) // 2e8 … 1e8 Pa
	cv, err := NewCurve(Transition, Branch{Name: "up", Corr: up}, Branch{Name: "down", Corr: down})
	if err != nil {
		t.Fatal(err)
	}
	var amb *AmbiguousPressureError
	_, err = cv.Temperature(1.5e8, CurveOptions{})
	if !errors.As(err, &amb) || !errors.Is(err, ErrAmbiguousBranch) || len(amb.Branches) != 2 {
		t.Fatalf("got %v, want an AmbiguousPressureError naming up and down", err)
	}
	pt, err := cv.Temperature(2e8, CurveOptions{}) // the turning point: both meet
	if err != nil || pt.Branch != 0 || pt.Temperature != 210 {
		t.Errorf("turning point: got %+v, %v; want branch 0 at 210 K", pt, err)
	}
}

func TestNewCurveErrors(t *testing.T) {
	t.Parallel()
	l := newTstLin(273.16, 611.657, -1.35e7, 250, 273.16)
	for _, tc := range []struct {
		name string
		kind CurveKind
		br   []Branch
	}{
		{"no branches", Melting, nil},
		{"bad kind", CurveKind(9), []Branch{{Corr: l}}},
		{"nil correlation", Melting, []Branch{{Name: "x"}}},
		{"unnamed among several", Melting, []Branch{{Name: "x", Corr: l}, {Corr: l}}},
		{"duplicate name", Melting, []Branch{{Name: "x", Corr: l}, {Name: "x", Corr: l}}},
	} {
		if _, err := NewCurve(tc.kind, tc.br...); !errors.Is(err, ErrBadParam) {
			t.Errorf("%s: got %v, want ErrBadParam", tc.name, err)
		}
	}
	if cv, err := NewCurve(Saturation, Branch{Corr: l}); err != nil || cv.BranchNames()[0] != "" {
		t.Errorf("single unnamed branch: %v", err)
	}
	var empty Curve
	if _, err := empty.Pressure(300, CurveOptions{}); !errors.Is(err, ErrBadParam) {
		t.Errorf("zero Curve: got %v, want ErrBadParam", err)
	}
}

func TestCurveZeroAllocs(t *testing.T) {
	cv := tstComposite(t)
	var sink float64
	for _, tc := range []struct {
		name string
		f    func()
	}{
		{"Pressure auto", func() { pt, _ := cv.Pressure(273.2, CurveOptions{}); sink += pt.Pressure }},
		{"Pressure at shared point", func() { pt, _ := cv.Pressure(250, CurveOptions{}); sink += pt.Pressure }},
		{"Pressure named", func() { pt, _ := cv.Pressure(260, CurveOptions{Branch: "C"}); sink += pt.Pressure }},
		{"Pressure extrapolated", func() { pt, _ := cv.Pressure(280, CurveOptions{AllowExtrapolation: true}); sink += pt.Pressure }},
		{"Temperature auto", func() { pt, _ := cv.Temperature(1e8, CurveOptions{}); sink += pt.Temperature }},
	} {
		if n := testing.AllocsPerRun(100, tc.f); n != 0 {
			t.Errorf("%s: %v allocations, want 0", tc.name, n)
		}
	}
	_ = sink
}
