package thermo

import (
	"math"
	"testing"
)

// TablePoints gives TablePoint's values bit for bit and stops exactly at
// the first point TablePoint refuses, on every published branch of water
// and carbon dioxide (IAPWS R14-08 melting and sublimation, IAPWS-IF97
// saturation, Span-Wagner carbon dioxide), both ways.
func TestTablePointsMatchesTablePoint(t *testing.T) {
	for _, br := range tstRealBranches(t) {
		pt, tp := tstDefaultTables(t, br.kind, br.corr)
		r := br.corr.Range()
		for _, byT := range []bool{true, false} {
			lo, hi := r.Pmin, r.Pmax
			if byT {
				lo, hi = r.Tmin, r.Tmax
			}
			xs := benchPoints(lo, hi, 2000, !byT)
			// Both ends exactly, then points TablePoint refuses: just
			// outside, NaN, ±Inf, zero and negative.
			xs = append(xs, lo, hi, math.Nextafter(lo, 0), math.Nextafter(hi, math.Inf(1)),
				math.NaN(), math.Inf(1), math.Inf(-1), 0, -lo, 3)
			for start := 0; start < len(xs); {
				n := len(xs) - start
				ts, ps, ds := make([]float64, n), make([]float64, n), make([]float64, n)
				k := TablePoints(pt, tp, r, xs[start:], byT, ts, ps, ds)
				for j := 0; j < k; j++ {
					want, ok := TablePoint(pt, tp, r, xs[start+j], byT, 7)
					if !ok {
						t.Fatalf("%s byT=%v: TablePoints wrote x = %g, which TablePoint refuses", br.name, byT, xs[start+j])
					}
					if !sameBits(ts[j], want.Temperature) || !sameBits(ps[j], want.Pressure) || !sameBits(ds[j], want.Slope) {
						t.Fatalf("%s byT=%v at %g: (%v, %v, %v), TablePoint (%v, %v, %v)", br.name, byT, xs[start+j],
							ts[j], ps[j], ds[j], want.Temperature, want.Pressure, want.Slope)
					}
				}
				if start+k < len(xs) {
					if _, ok := TablePoint(pt, tp, r, xs[start+k], byT, 7); ok {
						t.Fatalf("%s byT=%v: TablePoints stopped at x = %g, which TablePoint accepts", br.name, byT, xs[start+k])
					}
				}
				start += k + 1
			}
		}
	}
}

// tstDefaultTables builds c's P(T) and T(P) tables with the default
// transforms of kind k.
func tstDefaultTables(t testing.TB, k CurveKind, c Correlation) (pOfT, tOfP *Table) {
	t.Helper()
	po, to := DefaultTransforms(k)
	pOfT, err := BuildPressureTable(c, po)
	if err != nil {
		t.Fatal(err)
	}
	tOfP, err = BuildTemperatureTable(c, to)
	if err != nil {
		t.Fatal(err)
	}
	return pOfT, tOfP
}

func sameBits(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// BenchmarkTablePoints measures the batch loop the server's table pass
// uses, against one TablePoint call per point, on IAPWS-IF97 saturation
// P(T) (ns/op is per batch of 1024 points; see ns/point).
func BenchmarkTablePoints(b *testing.B) {
	c := tstWaterSaturation(b).Branches[0].Corr
	po, _ := DefaultTransforms(Saturation)
	pt, err := BuildPressureTable(c, po)
	if err != nil {
		b.Fatal(err)
	}
	r := c.Range()
	xs := benchPoints(r.Tmin, r.Tmax, 1024, false)
	ts, ps, ds := make([]float64, 1024), make([]float64, 1024), make([]float64, 1024)
	b.Run("one-by-one", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			for k, x := range xs {
				p, _ := TablePoint(pt, nil, r, x, true, 0)
				ts[k], ps[k], ds[k] = p.Temperature, p.Pressure, p.Slope
			}
		}
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1024, "ns/point")
	})
	b.Run("batch", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if TablePoints(pt, nil, r, xs, true, ts, ps, ds) != len(xs) {
				b.Fatal("short batch")
			}
		}
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1024, "ns/point")
	})
}

// Eval's padded evaluation gives the values of segmentEval on each
// segment's own (truncated) coefficients, the evaluation BuildTable
// measures its error with, so the measured maximum error holds for Eval.
// Checked on the P(T) and T(P) tables of every published branch of water
// and carbon dioxide (IAPWS R14-08, IAPWS-IF97, Span-Wagner), at 3000
// points each.
func TestEvalMatchesBuildEvaluation(t *testing.T) {
	for _, br := range tstRealBranches(t) {
		pt, tp := tstDefaultTables(t, br.kind, br.corr)
		for _, tab := range []*Table{pt, tp} {
			var u func(x float64) float64
			switch tab.xt {
			case TransformIdentity:
				u = func(x float64) float64 { return x }
			case TransformLog:
				u = math.Log
			case TransformReciprocal:
				u = func(x float64) float64 { return 1 / x }
			default:
				t.Fatalf("%s: unexpected x transform %v", br.name, tab.xt)
			}
			lo, hi := tab.Domain()
			for _, x := range benchPoints(lo, hi, 3000, tab.xt != TransformIdentity) {
				got, _ := tab.eval(x)
				ux := u(x)
				i := tab.segment(ux)
				inv := tab.invWidth[i]
				c := tab.coeffs[tab.offsets[i]:tab.offsets[i+1]]
				cd := segmentCoefficients(nil, c, 2*inv)
				yy, _ := segmentEval(cd, len(c), ((ux-tab.breaks[i])-(tab.breaks[i+1]-ux))*inv)
				if want := tab.yt.inverse(yy); got != want {
					t.Fatalf("%s at x = %.17g (segment %d, %d terms): Eval %.17g, build evaluation %.17g",
						br.name, x, i, tab.offsets[i+1]-tab.offsets[i], got, want)
				}
			}
		}
	}
}
