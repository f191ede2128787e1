package thermo

import (
	"errors"
	"math"
	"testing"
)

// FuzzBranchSelect checks branch selection on an invented three-branch
// composite and on water's five melting branches: nothing panics, every
// error is one of the documented kinds, and every answer is consistent with
// the branch it names.
func FuzzBranchSelect(f *testing.F) {
	f.Add(260.0, 1e8, uint8(0), false, false)
	f.Add(250.0, 3.2e8, uint8(1), false, true)
	f.Add(256.164, 3.501e8, uint8(3), true, true)
	f.Add(251.165, 208.566e6, uint8(0), false, true)
	f.Add(273.31, 632.3996e6, uint8(0), false, true)
	f.Add(-1.0, math.NaN(), uint8(9), true, false)
	f.Add(1e300, 1e-300, uint8(4), true, true)
	f.Add(math.Inf(1), 0.0, uint8(2), false, false)
	water := tstWaterMelting(f)
	composite := tstCompositeTB(f)
	f.Fuzz(func(t *testing.T, temp, pres float64, pick uint8, extrapolate, useWater bool) {
		cv := composite
		if useWater {
			cv = water
		}
		o := CurveOptions{AllowExtrapolation: extrapolate}
		if k := int(pick % 8); k < len(cv.Branches) {
			o.Branch = cv.Branches[k].Name
		} else if k == 7 {
			o.Branch = "no-such-branch"
		}
		check := func(what string, pt CurvePoint, err error, byT bool) {
			if err != nil {
				var ie *InputError
				var re *RangeError
				if !errors.As(err, &ie) && !errors.As(err, &re) && !errors.Is(err, ErrAmbiguousBranch) &&
					!errors.Is(err, ErrUnknownBranch) && !errors.Is(err, ErrNotImplemented) && !errors.Is(err, ErrNoBracket) &&
					!errors.Is(err, ErrNoConvergence) {
					t.Fatalf("%s: undocumented error %T: %v", what, err, err)
				}
				if o.Branch == "no-such-branch" && !errors.Is(err, ErrUnknownBranch) && !errors.As(err, &ie) {
					t.Fatalf("%s: unknown branch gave %v", what, err)
				}
				return
			}
			if pt.Branch < 0 || pt.Branch >= len(cv.Branches) {
				t.Fatalf("%s: branch index %d", what, pt.Branch)
			}
			if o.Branch != "" && cv.Branches[pt.Branch].Name != o.Branch {
				t.Fatalf("%s: asked for %q, got branch %d", what, o.Branch, pt.Branch)
			}
			if pt.Extrapolated && !extrapolate {
				t.Fatalf("%s: extrapolated without permission: %+v", what, pt)
			}
			r := cv.Branches[pt.Branch].Corr.Range()
			if byT && !pt.Extrapolated && !r.ContainsT(pt.Temperature) && math.Abs(pt.Temperature-math.Max(r.Tmin, math.Min(r.Tmax, pt.Temperature))) > BranchMeetTolerance*pt.Temperature {
				t.Fatalf("%s: T %g outside branch %d range %+v and not flagged", what, pt.Temperature, pt.Branch, r)
			}
			if math.IsNaN(pt.Pressure) || math.IsNaN(pt.Temperature) || math.IsNaN(pt.Slope) {
				t.Fatalf("%s: NaN in %+v", what, pt)
			}
			if !pt.Extrapolated && r.ContainsT(pt.Temperature) {
				want, err := cv.Branches[pt.Branch].Corr.Pressure(pt.Temperature)
				if err != nil || math.Abs(want-pt.Pressure) > 1e-6*math.Abs(want) {
					t.Fatalf("%s: P %g on branch %d, its correlation gives %g (%v)", what, pt.Pressure, pt.Branch, want, err)
				}
			}
		}
		pt, err := cv.Pressure(temp, o)
		if err == nil && pt.Temperature != temp {
			t.Fatalf("Pressure(%g): point at T %g", temp, pt.Temperature)
		}
		check("Pressure", pt, err, true)
		pt, err = cv.Temperature(pres, o)
		if err == nil && pt.Pressure != pres {
			t.Fatalf("Temperature(%g): point at P %g", pres, pt.Pressure)
		}
		check("Temperature", pt, err, false)
	})
}

// tstCompositeTB is tstComposite for fuzz targets and benchmarks.
func tstCompositeTB(tb testing.TB) *Curve {
	tb.Helper()
	a := newTstLin(273.16, 611.657, -1.35e7, 250, 273.16)
	pa250 := a.eval(250)
	b := newTstLin(250, pa250, (3.5e8-pa250)/6, 250, 256)
	c := newTstLin(256, 3.5e8, 2e7, 256, 273.3)
	cv, err := NewCurve(Melting, Branch{Name: "A", Corr: a}, Branch{Name: "B", Corr: b}, Branch{Name: "C", Corr: c})
	if err != nil {
		tb.Fatal(err)
	}
	return cv
}
