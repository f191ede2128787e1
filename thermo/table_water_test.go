package thermo

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// tstRealBranches lists every published branch of the water and carbon
// dioxide test curves with its curve kind.
func tstRealBranches(t testing.TB) []struct {
	name string
	kind CurveKind
	corr Correlation
} {
	var out []struct {
		name string
		kind CurveKind
		corr Correlation
	}
	co2 := tstCO2Diagram(t)
	for _, c := range []struct {
		sub string
		cv  *Curve
	}{
		{"water", tstWaterMelting(t)}, {"water", tstWaterSublimation(t)}, {"water", tstWaterSaturation(t)},
		{"carbon-dioxide", co2.sat}, {"carbon-dioxide", co2.melt}, {"carbon-dioxide", co2.sub},
	} {
		for _, b := range c.cv.Branches {
			out = append(out, struct {
				name string
				kind CurveKind
				corr Correlation
			}{c.sub + " " + c.cv.Kind.String() + " " + b.Name, c.cv.Kind, b.Corr})
		}
	}
	return out
}

// Tables of every published branch meet the default tolerance, and an
// independent check at 4000 random points agrees with the build-time
// measurement.
func TestTablesOfPublishedCurves(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	for _, br := range tstRealBranches(t) {
		po, to := DefaultTransforms(br.kind)
		pt, err := BuildPressureTable(br.corr, po)
		if err != nil {
			t.Errorf("%s P(T): %v", br.name, err)
			continue
		}
		tp, err := BuildTemperatureTable(br.corr, to)
		if err != nil {
			t.Errorf("%s T(P): %v", br.name, err)
			continue
		}
		r := br.corr.Range()
		var worstP, worstT, worstSlope float64
		for i := 0; i < 4000; i++ {
			temp := r.Tmin + (r.Tmax-r.Tmin)*rng.Float64()
			p, d, err := pt.Eval(temp)
			wp, wd, err2 := br.corr.PressureSlope(temp)
			if err != nil || err2 != nil {
				t.Fatalf("%s at %g K: %v / %v", br.name, temp, err, err2)
			}
			worstP = math.Max(worstP, math.Abs(p-wp)/wp)
			worstSlope = math.Max(worstSlope, math.Abs(d-wd)/math.Abs(wd))
			// T(P) at a pressure inside the range, geometric spread.
			pr := r.Pmin * math.Pow(r.Pmax/r.Pmin, rng.Float64())
			tv, err := tp.Value(pr)
			wt, err2 := br.corr.Temperature(pr)
			if err != nil || err2 != nil {
				t.Fatalf("%s at %g Pa: %v / %v", br.name, pr, err, err2)
			}
			worstT = math.Max(worstT, math.Abs(tv-wt)/wt)
		}
		if pt.MaxRelError() > DefaultTableTolerance || tp.MaxRelError() > DefaultTableTolerance ||
			worstP > 2*DefaultTableTolerance || worstT > 2*DefaultTableTolerance {
			t.Errorf("%s: build errors %.2g / %.2g, independent %.2g / %.2g; want ≤ %g (build), ≤ %g (independent)",
				br.name, pt.MaxRelError(), tp.MaxRelError(), worstP, worstT, DefaultTableTolerance, 2*DefaultTableTolerance)
		}
		// The table's slope is the derivative of the interpolant; near a
		// critical point (τ^1.5 terms) it converges more slowly.
		slopeTol := 1e-8
		if br.kind == Saturation {
			slopeTol = 1e-6
		}
		if worstSlope > slopeTol {
			t.Errorf("%s: slope relative error %.2g, want ≤ %g", br.name, worstSlope, slopeTol)
		}
		t.Logf("%-34s P(T) %2d seg %3d coef err %.1e (random %.1e, slope %.1e) | T(P) %2d seg %3d coef err %.1e (random %.1e)",
			br.name, pt.Segments(), pt.Coefficients(), pt.MaxRelError(), worstP, worstSlope,
			tp.Segments(), tp.Coefficients(), tp.MaxRelError(), worstT)
	}
}

// A melting curve made of table-backed branches answers like the source,
// seams included.
func TestTableBackedCurve(t *testing.T) {
	t.Parallel()
	src := tstWaterMelting(t)
	var brs []Branch
	for _, b := range src.Branches {
		po, to := DefaultTransforms(Melting)
		pt, err := BuildPressureTable(b.Corr, po)
		if err != nil {
			t.Fatal(err)
		}
		tp, err := BuildTemperatureTable(b.Corr, to)
		if err != nil {
			t.Fatal(err)
		}
		tc, err := NewTableCorrelation(pt, tp)
		if err != nil {
			t.Fatal(err)
		}
		brs = append(brs, Branch{Name: b.Name, SolidForm: b.SolidForm, Corr: tc})
	}
	cv, err := NewCurve(Melting, brs...)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range []float64{1e5, 150e6, 208.566e6, 300e6, 632.3996e6, 1e9, 1e10} {
		got, err := cv.Temperature(p, CurveOptions{})
		want, err2 := src.Temperature(p, CurveOptions{})
		slopeTol := 1e-7
		if p == 632.3996e6 { // in the V–VI seam the table continues its slope linearly
			slopeTol = 1e-6
		}
		if err != nil || err2 != nil || got.Branch != want.Branch || !scalar.EqualWithinAbsOrRel(got.Temperature, want.Temperature, 0, 2e-11) ||
			!scalar.EqualWithinAbsOrRel(got.Slope, want.Slope, 0, slopeTol) {
			t.Errorf("T(%g Pa): table %+v (%v), source %+v (%v)", p, got, err, want, err2)
		}
	}
	// Tables extrapolate only across seams.
	var re *RangeError
	if _, err := cv.Temperature(3e10, CurveOptions{AllowExtrapolation: true}); !errors.As(err, &re) || !errors.Is(err, ErrNotImplemented) {
		t.Errorf("far extrapolation from tables: got %v, want a RangeError wrapping ErrNotImplemented", err)
	}
	pt, err := cv.Pressure(715.001, CurveOptions{AllowExtrapolation: true})
	if err != nil || !pt.Extrapolated {
		t.Errorf("a hair beyond the last branch: %+v, %v", pt, err)
	}
}
