package thermo

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// tstSource is a closed-form y(x) with its derivative, for table tests.
type tstSource struct {
	name       string
	f, df      func(x float64) float64
	xmin, xmax float64
	opts       TableOptions
	slopeTol   float64 // relative error allowed on dy/dx; 0 means 1e4 × tolerance
}

func (s tstSource) sample(x, y []float64) error {
	for i, v := range x {
		y[i] = s.f(v)
	}
	return nil
}

func tstSources() []tstSource {
	// ln(P/Pa) = 23.2 − 4900/T: a vapour-pressure-like curve (invented).
	vap := func(t float64) float64 { return math.Exp(23.2 - 4900/t) }
	dvap := func(t float64) float64 { return vap(t) * 4900 / (t * t) }
	// A Wagner-like term with a τ^1.5 endpoint singularity at T = 647 K.
	wag := func(t float64) float64 {
		tau := 1 - t/647
		return 22e6 * math.Exp(647/t*(-7.8*tau+1.8*math.Pow(tau, 1.5)-11.8*math.Pow(tau, 3)))
	}
	dwag := func(t float64) float64 {
		tau := 1 - t/647
		s := -7.8*tau + 1.8*math.Pow(tau, 1.5) - 11.8*math.Pow(tau, 3)
		ds := (-7.8 + 2.7*math.Sqrt(tau) - 35.4*tau*tau) * (-1.0 / 647)
		return wag(t) * (-647/(t*t)*s + 647/t*ds)
	}
	return []tstSource{
		{"vapour ln P vs 1/T", vap, dvap, 273.16, 647, TableOptions{XTransform: TransformReciprocal, YTransform: TransformLog}, 0},
		{"vapour identity", vap, dvap, 273.16, 647, TableOptions{}, 0},
		{"vapour log/log", vap, dvap, 273.16, 647, TableOptions{XTransform: TransformLog, YTransform: TransformLog}, 0},
		{"wagner-like to the critical point", wag, dwag, 273.16, 647, TableOptions{XTransform: TransformReciprocal, YTransform: TransformLog},
			1e-4}, // the slope of τ^1.5 is not analytic at τ = 0: the interpolant's derivative converges slowly there
		{"inverse 1/T vs ln P", func(p float64) float64 { return 4900 / (23.2 - math.Log(p)) },
			func(p float64) float64 { return 4900 / (p * math.Pow(23.2-math.Log(p), 2)) }, 611, 22e6,
			TableOptions{XTransform: TransformLog, YTransform: TransformReciprocal}, 0},
		{"oscillating", func(x float64) float64 { return 2 + math.Sin(x) }, math.Cos, -3, 12, TableOptions{Nodes: 12}, 0},
		{"melting line with negative slope", func(t float64) float64 { return 611.657 - 1.35e7*(t-273.16) },
			func(float64) float64 { return -1.35e7 }, 251.165, 273.16, TableOptions{}, 0},
		{"loose tolerance", math.Exp, math.Exp, 0, 5, TableOptions{Tolerance: 1e-6, Nodes: 8}, 0},
	}
}

func TestBuildTable(t *testing.T) {
	t.Parallel()
	for _, src := range tstSources() {
		tb, err := BuildTable(src.sample, src.xmin, src.xmax, src.opts)
		if err != nil {
			t.Errorf("%s: %v", src.name, err)
			continue
		}
		tol := src.opts.Tolerance
		if tol == 0 {
			tol = DefaultTableTolerance
		}
		if !(tb.MaxRelError() <= tol) {
			t.Errorf("%s: measured error %g above tolerance %g", src.name, tb.MaxRelError(), tol)
		}
		// An independent check on 20001 evenly spaced points: the check
		// grid must not miss errors worse than twice the tolerance.
		const n = 20000
		var worst, worstD float64
		for i := 0; i <= n; i++ {
			x := src.xmin + (src.xmax-src.xmin)*float64(i)/n
			if i == n {
				x = src.xmax
			}
			y, d, err := tb.Eval(x)
			if err != nil {
				t.Fatalf("%s: Eval(%g): %v", src.name, x, err)
			}
			want := src.f(x)
			e := math.Abs(y - want)
			if want != 0 {
				e /= math.Abs(want)
			}
			worst = math.Max(worst, e)
			dw := src.df(x)
			if math.Abs(dw) > 1e-3 { // relative slope error away from zeros of the slope
				worstD = math.Max(worstD, math.Abs(d-dw)/math.Abs(dw))
			}
		}
		if worst > 2*tol+1e-15 {
			t.Errorf("%s: independent check error %g above 2×tolerance %g", src.name, worst, 2*tol)
		}
		// The slope of the interpolant loses a few digits against the value.
		slopeTol := src.slopeTol
		if slopeTol == 0 {
			slopeTol = 1e4 * tol
		}
		if worstD > slopeTol {
			t.Errorf("%s: slope relative error %g above %g", src.name, worstD, slopeTol)
		}
		t.Logf("%s: %d segments, %d coefficients, build error %.2e, independent %.2e, slope %.2e",
			src.name, tb.Segments(), tb.Coefficients(), tb.MaxRelError(), worst, worstD)
	}
}

func TestTableRoundTrip(t *testing.T) {
	t.Parallel()
	src := tstSources()[3]
	tb, err := BuildTable(src.sample, src.xmin, src.xmax, src.opts)
	if err != nil {
		t.Fatal(err)
	}
	d := tb.Data()
	if len(d.Offsets) != len(d.Breaks) || d.Offsets[len(d.Offsets)-1] != uint32(len(d.Coeffs)) || d.XMin != src.xmin || d.XMax != src.xmax {
		t.Fatalf("inconsistent export: %d breaks, %d offsets, %d coefficients", len(d.Breaks), len(d.Offsets), len(d.Coeffs))
	}
	back, err := LoadTable(d, "temperature", "K")
	if err != nil {
		t.Fatal(err)
	}
	if back.MaxRelError() != tb.MaxRelError() {
		t.Errorf("max error %g after reload, want %g", back.MaxRelError(), tb.MaxRelError())
	}
	for i := 0; i <= 1000; i++ {
		x := src.xmin + (src.xmax-src.xmin)*float64(i)/1000
		y1, d1, err1 := tb.Eval(x)
		y2, d2, err2 := back.Eval(x)
		if y1 != y2 || d1 != d2 || (err1 == nil) != (err2 == nil) {
			t.Fatalf("Eval(%g): %g %g vs reloaded %g %g", x, y1, d1, y2, d2)
		}
	}
	// The export is a copy: editing it leaves the table alone.
	d.Coeffs[0] = 1e300
	if y, _ := tb.Value(300); y == back.mustValue(t, 300)*2 {
		t.Error("unreachable")
	}
	if y1, y2 := tb.mustValue(t, 300), back.mustValue(t, 300); y1 != y2 {
		t.Errorf("export aliases the table: %g vs %g", y1, y2)
	}
}

func (t *Table) mustValue(tt *testing.T, x float64) float64 {
	tt.Helper()
	y, err := t.Value(x)
	if err != nil {
		tt.Fatal(err)
	}
	return y
}

func TestLoadTableRejects(t *testing.T) {
	t.Parallel()
	good := func() TableData {
		return TableData{
			XTransform: TransformIdentity, YTransform: TransformLog,
			Breaks: []float64{1, 2, 3}, Offsets: []uint32{0, 2, 5},
			Coeffs: []float64{1, 0.5, 2, 0.1, 0.01}, XMin: 1, XMax: 3, MaxRelError: 1e-12,
		}
	}
	if _, err := LoadTable(good(), "", ""); err != nil {
		t.Fatalf("good table refused: %v", err)
	}
	for _, tc := range []struct {
		name string
		edit func(*TableData)
	}{
		{"unspecified x transform", func(d *TableData) { d.XTransform = 0 }},
		{"unknown y transform", func(d *TableData) { d.YTransform = 7 }},
		{"no breaks", func(d *TableData) { d.Breaks = nil }},
		{"one break", func(d *TableData) { d.Breaks = d.Breaks[:1] }},
		{"offsets short", func(d *TableData) { d.Offsets = d.Offsets[:2] }},
		{"first offset not 0", func(d *TableData) { d.Offsets[0] = 1 }},
		{"offsets not increasing", func(d *TableData) { d.Offsets[1] = 0 }},
		{"last offset past coefficients", func(d *TableData) { d.Offsets[2] = 9 }},
		{"breaks not increasing", func(d *TableData) { d.Breaks[1] = 1 }},
		{"NaN break", func(d *TableData) { d.Breaks[1] = math.NaN() }},
		{"Inf coefficient", func(d *TableData) { d.Coeffs[3] = math.Inf(1) }},
		{"NaN domain", func(d *TableData) { d.XMin = math.NaN() }},
		{"empty domain", func(d *TableData) { d.XMax = d.XMin }},
		{"breaks do not span the domain", func(d *TableData) { d.XMax = 4 }},
		{"log of non-positive x", func(d *TableData) { d.XTransform = TransformLog; d.XMin = -1 }},
		{"negative error", func(d *TableData) { d.MaxRelError = -1 }},
		{"NaN error", func(d *TableData) { d.MaxRelError = math.NaN() }},
		{"zero value", func(d *TableData) { *d = TableData{} }},
	} {
		d := good()
		tc.edit(&d)
		if _, err := LoadTable(d, "temperature", "K"); !errors.Is(err, ErrBadParam) {
			t.Errorf("%s: got %v, want ErrBadParam", tc.name, err)
		}
	}
}

func TestTableEvalErrors(t *testing.T) {
	t.Parallel()
	c := newTstExp(373.15, 101325, 4900, 273.16, 647)
	tb, err := BuildPressureTable(c, TableOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var re *RangeError
	for _, x := range []float64{273.15, 647.0001, 1e6} {
		if _, _, err := tb.Eval(x); !errors.As(err, &re) || re.Min != 273.16 || re.Max != 647 || re.Quantity != "temperature" || re.Unit != "K" {
			t.Errorf("Eval(%g): got %v, want a RangeError [273.16, 647] K", x, err)
		}
	}
	var ie *InputError
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, -1} {
		if _, _, err := tb.Eval(x); !errors.As(err, &ie) {
			t.Errorf("Eval(%v): got %v, want an InputError", x, err)
		}
	}
	// The ends evaluate exactly to the source within the tolerance.
	for _, x := range []float64{273.16, 647} {
		y, d, err := tb.Eval(x)
		want, wantD, _ := c.PressureSlope(x)
		if err != nil || !scalar.EqualWithinAbsOrRel(y, want, 0, 1e-11) || !scalar.EqualWithinAbsOrRel(d, wantD, 0, 1e-9) {
			t.Errorf("Eval(%g) = %g, %g, %v; want %g, %g", x, y, d, err, want, wantD)
		}
	}
}

func TestBuildTableErrors(t *testing.T) {
	t.Parallel()
	ok := func(x, y []float64) error {
		for i := range x {
			y[i] = 1 + x[i]
		}
		return nil
	}
	boom := errors.New("backend down")
	for _, tc := range []struct {
		name       string
		f          SampleFunc
		xmin, xmax float64
		o          TableOptions
	}{
		{"nil source", nil, 0, 1, TableOptions{}},
		{"empty domain", ok, 1, 1, TableOptions{}},
		{"reversed domain", ok, 2, 1, TableOptions{}},
		{"NaN domain", ok, math.NaN(), 1, TableOptions{}},
		{"infinite domain", ok, 0, math.Inf(1), TableOptions{}},
		{"log of zero", ok, 0, 1, TableOptions{XTransform: TransformLog}},
		{"reciprocal across zero", ok, -1, 1, TableOptions{XTransform: TransformReciprocal}},
		{"bad transform", ok, 0, 1, TableOptions{YTransform: 4}},
		{"tolerance too tight", ok, 0, 1, TableOptions{Tolerance: 1e-17}},
		{"negative tolerance", ok, 0, 1, TableOptions{Tolerance: -1}},
		{"too few nodes", ok, 0, 1, TableOptions{Nodes: 2}},
		{"too many nodes", ok, 0, 1, TableOptions{Nodes: 100}},
		{"negative segment cap", ok, 0, 1, TableOptions{MaxSegments: -1}},
		{"log of a negative source", ok, -3, -2, TableOptions{YTransform: TransformLog}},
		{"NaN source", func(x, y []float64) error { y[0] = math.NaN(); return nil }, 0, 1, TableOptions{}},
	} {
		if _, err := BuildTable(tc.f, tc.xmin, tc.xmax, tc.o); !errors.Is(err, ErrBadParam) {
			t.Errorf("%s: got %v, want ErrBadParam", tc.name, err)
		}
	}
	if _, err := BuildTable(func(x, y []float64) error { return boom }, 0, 1, TableOptions{}); !errors.Is(err, boom) {
		t.Errorf("failing source: got %v, want it wrapped", err)
	}
}

// A jump cannot be interpolated to 1e-11: the builder stops at the segment
// cap and hands back its best table with the measured error.
func TestBuildTableToleranceError(t *testing.T) {
	t.Parallel()
	step := func(x, y []float64) error {
		for i, v := range x {
			y[i] = 1
			if v > 0.3 {
				y[i] = 2
			}
		}
		return nil
	}
	_, err := BuildTable(step, 0, 1, TableOptions{MaxSegments: 16})
	var te *ToleranceError
	if !errors.As(err, &te) {
		t.Fatalf("got %v, want a ToleranceError", err)
	}
	if te.Best == nil || te.Segments > 16 || te.Segments != te.Best.Segments() || te.Achieved <= te.Tolerance || te.Achieved != te.Best.MaxRelError() {
		t.Errorf("ToleranceError %+v inconsistent with its table", te)
	}
	if _, err := te.Best.Value(0.1); err != nil {
		t.Errorf("best table unusable: %v", err)
	}
}

// The source is sampled in a few large batches, never point by point.
func TestBuildTableBatches(t *testing.T) {
	t.Parallel()
	calls, points := 0, 0
	src := tstSources()[3]
	tb, err := BuildTable(func(x, y []float64) error {
		calls++
		points += len(x)
		if len(x) != len(y) {
			t.Fatalf("len(x) = %d, len(y) = %d", len(x), len(y))
		}
		return src.sample(x, y)
	}, src.xmin, src.xmax, src.opts)
	if err != nil {
		t.Fatal(err)
	}
	if calls > 64 || points < tb.Segments()*(DefaultTableNodes*(TableCheckDensity+1)+1) {
		t.Errorf("%d calls, %d points for %d segments", calls, points, tb.Segments())
	}
}

func TestTableCorrelation(t *testing.T) {
	t.Parallel()
	c := newTstExp(373.15, 101325, 4900, 273.16, 647)
	pt, err := BuildPressureTable(c, TableOptions{})
	if err != nil {
		t.Fatal(err)
	}
	tp, err := BuildTemperatureTable(c, TableOptions{})
	if err != nil {
		t.Fatal(err)
	}
	tc, err := NewTableCorrelation(pt, tp)
	if err != nil {
		t.Fatal(err)
	}
	if r := tc.Range(); r != c.Range() {
		t.Errorf("range %+v, want %+v", r, c.Range())
	}
	for _, temp := range []float64{273.16, 300, 373.15, 500, 647} {
		p, d, err := tc.PressureSlope(temp)
		wp, wd, _ := c.PressureSlope(temp)
		if err != nil || !scalar.EqualWithinAbsOrRel(p, wp, 0, 2e-11) || !scalar.EqualWithinAbsOrRel(d, wd, 0, 1e-8) {
			t.Errorf("PressureSlope(%g) = %g, %g, %v; want %g, %g", temp, p, d, err, wp, wd)
		}
		back, err := tc.Temperature(wp)
		if err != nil || !scalar.EqualWithinAbsOrRel(back, temp, 0, 2e-11) {
			t.Errorf("Temperature(%g) = %g, %v; want %g", wp, back, err, temp)
		}
	}
	var re *RangeError
	if _, err := tc.Pressure(700); !errors.As(err, &re) {
		t.Errorf("Pressure(700): got %v, want RangeError", err)
	}
	if _, err := tc.Temperature(1e9); !errors.As(err, &re) || re.Quantity != "pressure" {
		t.Errorf("Temperature(1e9): got %v, want a pressure RangeError", err)
	}
	if _, err := NewTableCorrelation(nil, tp); !errors.Is(err, ErrBadParam) {
		t.Errorf("nil table: got %v", err)
	}
	noInv, err := NewTableCorrelation(pt, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := noInv.Temperature(1e5); !errors.Is(err, ErrNotImplemented) {
		t.Errorf("no T(P) table: got %v, want ErrNotImplemented", err)
	}
}

func TestTableZeroAllocs(t *testing.T) {
	var sink float64
	for _, src := range tstSources() {
		tb, err := BuildTable(src.sample, src.xmin, src.xmax, src.opts)
		if err != nil {
			t.Fatal(err)
		}
		x := 0.5 * (src.xmin + src.xmax)
		if n := testing.AllocsPerRun(100, func() { y, d, _ := tb.Eval(x); sink += y + d }); n != 0 {
			t.Errorf("%s: %v allocations per Eval, want 0", src.name, n)
		}
	}
	_ = sink
}
