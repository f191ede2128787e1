package main

import (
	"math"
	"sync"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"google.golang.org/protobuf/proto"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/thermo"
)

func protoTable(t testing.TB, tb *thermo.Table) *phaseboundpb.ChebyshevTable {
	t.Helper()
	if tb == nil {
		return nil
	}
	d := tb.Data()
	return &phaseboundpb.ChebyshevTable{
		XTransform: phaseboundpb.Transform(d.XTransform), YTransform: phaseboundpb.Transform(d.YTransform),
		Breaks: d.Breaks, Offsets: d.Offsets, Coefficients: d.Coeffs, XMin: d.XMin, XMax: d.XMax, MaxRelError: d.MaxRelError,
		XReference: d.XReference,
	}
}

func corr(t testing.TB, family string, p thermo.Params, tmin, tmax float64) thermo.Correlation {
	t.Helper()
	f, err := thermo.GetFamily(family)
	if err != nil {
		t.Fatal(err)
	}
	c, err := f.New(p, tmin, tmax)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// branchTables compiles P(T) and, unless noTofP, T(P) of c as the server
// does (identity transforms), plus constant phase volumes when vl, vh > 0.
func branchTables(t testing.TB, kind phaseboundpb.CurveKind, name string, c thermo.Correlation, noTofP bool, vl, vh float64) *phaseboundpb.BranchTables {
	t.Helper()
	id := thermo.TableOptions{XTransform: thermo.TransformIdentity, YTransform: thermo.TransformIdentity}
	pt, err := thermo.BuildPressureTable(c, id)
	if err != nil {
		t.Fatal(err)
	}
	bt := &phaseboundpb.BranchTables{Curve: kind, Branch: name, Pressure: protoTable(t, pt)}
	if !noTofP {
		tp, err := thermo.BuildTemperatureTable(c, id)
		if err != nil {
			t.Fatal(err)
		}
		bt.Temperature = protoTable(t, tp)
	}
	r := c.Range()
	constant := func(v float64) *phaseboundpb.ChebyshevTable {
		tb, err := thermo.BuildTable(func(x, y []float64) error {
			for i := range x {
				y[i] = v
			}
			return nil
		}, r.Tmin, r.Tmax, id)
		if err != nil {
			t.Fatal(err)
		}
		return protoTable(t, tb)
	}
	if vl > 0 && vh > 0 {
		bt.VolumeLowTPhase, bt.VolumeHighTPhase = constant(vl), constant(vh)
	}
	return bt
}

const molarMassWater = 0.018015268 // kg/mol, IAPWS R6-95(2018)

// testExport is water's IF97 saturation curve with constant phase volumes,
// and an invented two-branch melting curve whose branches overlap in
// temperature (to exercise branch choice); branch "b" has no T(P) table.
func testExport(t testing.TB) *phaseboundpb.ExportTablesResponse {
	sat := corr(t, "iapws-if97", thermo.Params{}, 273.15, 647.096)
	a := corr(t, "simon-glatzel", thermo.Params{"t0": {250}, "p0": {1e5}, "a": {3e8}, "c": {5}}, 250, 260) // invented
	b := corr(t, "simon-glatzel", thermo.Params{"t0": {255}, "p0": {2e8}, "a": {4e8}, "c": {4}}, 255, 265) // invented
	// Liquid water at 958.35 kg/m³ and vapour at 0.5977 kg/m³, the
	// saturated densities at 100 °C (common practice), as constants.
	vl, vh := molarMassWater/958.35, molarMassWater/0.5977
	return &phaseboundpb.ExportTablesResponse{
		CatalogVersion: "v1", MolarMassKgPerMol: molarMassWater,
		Tables: []*phaseboundpb.BranchTables{
			branchTables(t, phaseboundpb.CurveKind_CURVE_KIND_SATURATION, "", sat, false, vl, vh),
			branchTables(t, phaseboundpb.CurveKind_CURVE_KIND_MELTING, "a", a, false, 0, 0),
			branchTables(t, phaseboundpb.CurveKind_CURVE_KIND_MELTING, "b", b, true, 0, 0),
		},
	}
}

func TestLocalEvaluate(t *testing.T) {
	t.Parallel()
	ts, err := newTableSet("water", testExport(t))
	if err != nil {
		t.Fatal(err)
	}
	nan := math.NaN()
	for _, tc := range []struct {
		name   string
		kind   thermo.CurveKind
		branch string
		byT    bool
		x      float64
		want   float64 // P or T; NaN when the point fails
		tol    float64
		status int32
	}{
		{"IF97 Psat(300 K)", thermo.Saturation, "", true, 300, 0.353658941e-2 * 1e6, 1e-8, statusOK}, // IAPWS R7-97(2012), Table 35 check value (from memory)
		{"IF97 Psat(500 K)", thermo.Saturation, "", true, 500, 0.263889776e1 * 1e6, 1e-8, statusOK},  // IAPWS R7-97(2012), Table 35 check value (from memory)
		{"IF97 Tsat(0.1 MPa)", thermo.Saturation, "", false, 0.1e6, 0.372755919e3, 1e-8, statusOK},   // IAPWS R7-97(2012), Table 36 check value (from memory)
		{"IF97 Tsat(1 MPa)", thermo.Saturation, "", false, 1e6, 0.453035632e3, 1e-8, statusOK},       // IAPWS R7-97(2012), Table 36 check value (from memory)
		{"above the critical point", thermo.Saturation, "", true, 700, nan, 0, statusOutOfRange},
		{"negative T", thermo.Saturation, "", true, -1, nan, 0, statusInvalid},
		{"NaN", thermo.Saturation, "", true, nan, nan, 0, statusInvalid},
		{"zero P", thermo.Saturation, "", false, 0, nan, 0, statusInvalid},
		{"branch a alone", thermo.Melting, "", true, 252, 1e5 + 3e8*(math.Pow(252.0/250, 5)-1), 1e-10, statusOK}, // Simon–Glatzel form, invented parameters
		{"overlap: ambiguous", thermo.Melting, "", true, 257, nan, 0, statusAmbiguous},
		{"overlap, branch named", thermo.Melting, "b", true, 257, 2e8 + 4e8*(math.Pow(257.0/255, 4)-1), 1e-10, statusOK}, // Simon–Glatzel form, invented parameters
		{"T(P) on a branch without a T(P) table", thermo.Melting, "b", false, 2.5e8, nan, 0, statusNeedsServer},
	} {
		out := outputs{T: []float64{0}, P: []float64{0}, D: []float64{0}, Status: []int32{0}, Latent: []float64{0}}
		failed, first, err := ts.evaluate(tc.kind, tc.branch, tc.byT, []float64{tc.x}, out)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if out.Status[0] != tc.status {
			t.Errorf("%s: status %d, want %d (%s)", tc.name, out.Status[0], tc.status, first)
		}
		got := out.P[0]
		if !tc.byT {
			got = out.T[0]
		}
		if math.IsNaN(tc.want) {
			if failed != 1 || !math.IsNaN(got) || !math.IsNaN(out.Latent[0]) || first == "" {
				t.Errorf("%s: failed %d, value %g, latent %g, message %q; want one failure with NaN and a message", tc.name, failed, got, out.Latent[0], first)
			}
			continue
		}
		if failed != 0 || !scalar.EqualWithinAbsOrRel(got, tc.want, 0, tc.tol) {
			t.Errorf("%s: got %.12g (failed %d: %s), want %.12g ± %g relative", tc.name, got, failed, first, tc.want, tc.tol)
		}
	}
}

func TestLocalLatentHeat(t *testing.T) {
	t.Parallel()
	ts, err := newTableSet("water", testExport(t))
	if err != nil {
		t.Fatal(err)
	}
	out := outputs{P: make([]float64, 1), D: make([]float64, 1), Latent: make([]float64, 1)}
	if _, _, err := ts.evaluate(thermo.Saturation, "", true, []float64{373.124}, out); err != nil {
		t.Fatal(err)
	}
	// Clapeyron with the constant volumes: about 2257 kJ/kg at the normal
	// boiling point (common practice); the volumes are those of 100 °C.
	if h := out.Latent[0]; !scalar.EqualWithinAbsOrRel(h, 2257e3, 0, 5e-3) {
		t.Errorf("latent heat at 373.124 K = %g J/kg, want about 2257e3 (common practice)", h)
	}
	want := 373.124 * (molarMassWater/0.5977 - molarMassWater/958.35) * out.D[0] / molarMassWater
	if !scalar.EqualWithinAbsOrRel(out.Latent[0], want, 0, 1e-9) {
		t.Errorf("latent heat %g, want T·Δv·dP/dT / M = %g", out.Latent[0], want)
	}
	// A melting curve without volumes has no latent heat.
	if _, _, err := ts.evaluate(thermo.Melting, "a", true, []float64{252}, out); err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(out.Latent[0]) {
		t.Errorf("melting curve without volumes: latent heat %g, want NaN", out.Latent[0])
	}
}

func TestLocalWholeCallErrors(t *testing.T) {
	t.Parallel()
	ts, err := newTableSet("water", testExport(t))
	if err != nil {
		t.Fatal(err)
	}
	out := outputs{P: make([]float64, 1)}
	for _, tc := range []struct {
		kind   thermo.CurveKind
		branch string
		want   string
	}{
		{thermo.Sublimation, "", `substance "water" has no sublimation curve (valid: saturation, melting)`},
		{thermo.Melting, "ice-XX", `unknown branch "ice-XX" on the melting curve (valid: a, b)`},
	} {
		_, _, err := ts.evaluate(tc.kind, tc.branch, true, []float64{252}, out)
		if err == nil || err.Error() != tc.want {
			t.Errorf("%v %q: error %v, want %q", tc.kind, tc.branch, err, tc.want)
		}
	}
	if _, err := kindFromProto(9); err == nil {
		t.Error("curve kind 9 accepted")
	}
}

// TestBadTablesRefused checks that broken table data is an error, not a
// panic, whatever field is wrong.
func TestBadTablesRefused(t *testing.T) {
	t.Parallel()
	for name, spoil := range map[string]func(r *phaseboundpb.ExportTablesResponse){
		"no pressure table": func(r *phaseboundpb.ExportTablesResponse) { r.Tables[0].Pressure = nil },
		"offsets short": func(r *phaseboundpb.ExportTablesResponse) {
			r.Tables[0].Pressure.Offsets = r.Tables[0].Pressure.Offsets[:1]
		},
		"NaN coefficient":    func(r *phaseboundpb.ExportTablesResponse) { r.Tables[0].Pressure.Coefficients[0] = math.NaN() },
		"unknown curve kind": func(r *phaseboundpb.ExportTablesResponse) { r.Tables[1].Curve = 42 },
		"duplicate branch":   func(r *phaseboundpb.ExportTablesResponse) { r.Tables[2].Branch = "a" },
		"bad volume table":   func(r *phaseboundpb.ExportTablesResponse) { r.Tables[0].VolumeLowTPhase.XMin = math.Inf(1) },
	} {
		r := testExport(t)
		spoil(r)
		if _, err := newTableSet("water", r); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

// TestConcurrentEvaluateAndSwap evaluates from many goroutines while the
// tables are swapped (run with -race): every answer comes from one
// complete table set.
func TestConcurrentEvaluateAndSwap(t *testing.T) {
	t.Parallel()
	r := testExport(t)
	ts1, err := newTableSet("water", r)
	if err != nil {
		t.Fatal(err)
	}
	r.CatalogVersion = "v2"
	ts2, err := newTableSet("water", r)
	if err != nil {
		t.Fatal(err)
	}
	th := &tablesHandle{substance: "water"}
	th.cur.Store(ts1)
	var wg sync.WaitGroup
	xs := make([]float64, 256)
	for i := range xs {
		xs[i] = 280 + 300*float64(i)/255
	}
	errs := make(chan string, 8)
	for g := 0; g < 8; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			p := make([]float64, len(xs))
			for k := 0; k < 50; k++ {
				if g == 0 {
					if k%2 == 0 {
						th.cur.Store(ts2)
					} else {
						th.cur.Store(ts1)
					}
				}
				failed, first, err := th.cur.Load().evaluate(thermo.Saturation, "", true, xs, outputs{P: p})
				if err != nil || failed != 0 {
					errs <- first
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}
}

// FuzzTableSet feeds arbitrary bytes as an ExportTables response: decoding,
// rebuilding and evaluating must never panic.
func FuzzTableSet(f *testing.F) {
	b, err := proto.Marshal(testExport(f))
	if err != nil {
		f.Fatal(err)
	}
	f.Add(b, 300.0)
	f.Add(b[:len(b)/2], 257.0)
	f.Add([]byte{}, 1.0)
	f.Fuzz(func(t *testing.T, data []byte, x float64) {
		var r phaseboundpb.ExportTablesResponse
		if proto.Unmarshal(data, &r) != nil {
			return
		}
		ts, err := newTableSet("fuzz", &r)
		if err != nil {
			return
		}
		out := outputs{T: make([]float64, 1), P: make([]float64, 1), D: make([]float64, 1), Status: make([]int32, 1), Latent: make([]float64, 1)}
		for _, k := range []thermo.CurveKind{thermo.Saturation, thermo.Melting, thermo.Sublimation, thermo.Transition} {
			ts.evaluate(k, "", true, []float64{x}, out)
			ts.evaluate(k, "", false, []float64{x}, out)
		}
	})
}

// TestFastPathMatchesCurve checks that the direct table evaluation of a
// named or single branch gives exactly thermo.Curve's values.
func TestFastPathMatchesCurve(t *testing.T) {
	t.Parallel()
	ts, err := newTableSet("water", testExport(t))
	if err != nil {
		t.Fatal(err)
	}
	lc := ts.curves[thermo.Saturation]
	for i := 0; i <= 1000; i++ {
		x := 273.15 + (647.096-273.15)*float64(i)/1000
		p := 611.2 * math.Pow(22.064e6/611.2, float64(i)/1000)
		for _, tc := range []struct {
			byT bool
			v   float64
		}{{true, x}, {false, p}} {
			fast, ok := lc.branches[0].fastPoint(tc.v, tc.byT, 0)
			var slow thermo.CurvePoint
			var err error
			if tc.byT {
				slow, err = lc.curve.Pressure(tc.v, thermo.CurveOptions{})
			} else {
				slow, err = lc.curve.Temperature(tc.v, thermo.CurveOptions{})
			}
			if ok != (err == nil) {
				t.Fatalf("byT %v at %g: fast ok %v, curve error %v", tc.byT, tc.v, ok, err)
			}
			if ok && fast != slow {
				t.Fatalf("byT %v at %g: fast %+v, curve %+v", tc.byT, tc.v, fast, slow)
			}
		}
	}
}

var benchSink float64

// BenchmarkLocalEvaluate is the library's per-cell path (without the cgo
// call): P(T), slope and latent heat for a batch of 1000 cells.
func BenchmarkLocalEvaluate(b *testing.B) {
	ts, err := newTableSet("water", testExport(b))
	if err != nil {
		b.Fatal(err)
	}
	const n = 1000
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = 274 + 370*float64((i*389)%n)/n
	}
	out := outputs{P: make([]float64, n), D: make([]float64, n), Status: make([]int32, n)}
	for _, latent := range []bool{false, true} {
		name := "pressure"
		if latent {
			name = "latent"
			out.Latent = make([]float64, n)
		}
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if failed, first, err := ts.evaluate(thermo.Saturation, "", true, xs, out); err != nil || failed > 0 {
					b.Fatal(err, first)
				}
				benchSink += out.P[0]
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
		})
	}
}

// The batched local path (fastRun, runs of up to runPoints points) gives
// the values of one-point calls bit for bit, including around points it
// cannot take (NaN, out of range, a point on another branch of the
// melting curve) inside a run, at run boundaries, and with outputs the
// caller did not ask for.
func TestBatchedLocalMatchesPointwise(t *testing.T) {
	t.Parallel()
	ts, err := newTableSet("water", testExport(t))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name   string
		kind   thermo.CurveKind
		branch string
		byT    bool
		lo, hi float64
	}{
		{"saturation P(T)", thermo.Saturation, "", true, 273.16, 647.096},
		{"saturation T(P)", thermo.Saturation, "", false, 611.7, 22.06e6},
		{"melting branch a P(T)", thermo.Melting, "a", true, 250, 260},
		{"melting branch a T(P)", thermo.Melting, "a", false, 2e5, 6e7},
	} {
		const n = 3*runPoints + 17
		xs := make([]float64, n)
		for i := range xs {
			xs[i] = tc.lo + (tc.hi-tc.lo)*float64((i*389)%n)/n
		}
		// Bad points inside runs and at run boundaries.
		xs[5], xs[runPoints-1], xs[runPoints], xs[2*runPoints+3] = math.NaN(), -1, 1e30, tc.hi*1.5
		for _, latent := range []bool{false, true} {
			all := outputs{T: make([]float64, n), P: make([]float64, n), D: make([]float64, n), Status: make([]int32, n)}
			some := outputs{P: make([]float64, n), Status: make([]int32, n)}
			if latent {
				all.Latent, some.Latent = make([]float64, n), make([]float64, n)
			}
			fa, _, err := ts.evaluate(tc.kind, tc.branch, tc.byT, xs, all)
			if err != nil {
				t.Fatal(err)
			}
			fs, _, err := ts.evaluate(tc.kind, tc.branch, tc.byT, xs, some)
			if err != nil {
				t.Fatal(err)
			}
			if fa != 4 || fs != 4 {
				t.Errorf("%s: %d and %d failed points, want 4", tc.name, fa, fs)
			}
			for i, x := range xs {
				one := outputs{T: []float64{0}, P: []float64{0}, D: []float64{0}, Status: []int32{0}}
				if latent {
					one.Latent = []float64{0}
				}
				if _, _, err := ts.evaluate(tc.kind, tc.branch, tc.byT, []float64{x}, one); err != nil {
					t.Fatal(err)
				}
				same := func(a, b float64) bool {
					return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
				}
				if !same(all.T[i], one.T[0]) || !same(all.P[i], one.P[0]) || !same(all.D[i], one.D[0]) || all.Status[i] != one.Status[0] ||
					!same(some.P[i], one.P[0]) || some.Status[i] != one.Status[0] {
					t.Fatalf("%s latent=%v point %d (%g): batch (%g, %g, %g, %d), partial (%g, %d), one (%g, %g, %g, %d)", tc.name, latent, i, x,
						all.T[i], all.P[i], all.D[i], all.Status[i], some.P[i], some.Status[i], one.T[0], one.P[0], one.D[0], one.Status[0])
				}
				if latent && (!same(all.Latent[i], one.Latent[0]) || !same(some.Latent[i], one.Latent[0])) {
					t.Fatalf("%s point %d (%g): latent %g / %g, one %g", tc.name, i, x, all.Latent[i], some.Latent[i], one.Latent[0])
				}
			}
		}
	}
}
