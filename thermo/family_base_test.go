package thermo

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// famNew builds a correlation through the registry, failing the test on error.
func famNew(tb testing.TB, family string, p Params, tmin, tmax float64) Correlation {
	tb.Helper()
	f, err := GetFamily(family)
	if err != nil {
		tb.Fatal(err)
	}
	c, err := f.New(p, tmin, tmax)
	if err != nil {
		tb.Fatalf("%s.New: %v", family, err)
	}
	return c
}

// famCase is one representative instance of a family, used by the
// family-independent checks, the examples and the benchmarks.
type famCase struct {
	name       string // a label for the instance
	family     string
	params     Params
	tmin, tmax float64
}

// famCases holds at least one instance of every registered family. The
// parameters are the published ones where a source is named in the label;
// the rest are plausible values chosen for the test (invented).
var famCases = []famCase{
	{"clapeyron-linear/ice-Ih (common practice ΔH, ΔV)", "clapeyron-linear",
		Params{"t0": {273.16}, "p0": {611.657}, "delta_h": {6010}, "delta_v": {-1.63e-6}}, 263.15, 273.16},
	{"clapeyron-linear/linearized (invented)", "clapeyron-linear",
		Params{"t0": {300}, "p0": {1e5}, "delta_h": {5000}, "delta_v": {2e-6}, "linearized": {1}}, 300, 400},
	{"clausius-clapeyron/water (common practice ΔH_vap)", "clausius-clapeyron",
		Params{"t0": {373.15}, "p0": {101325}, "delta_h": {40650}}, 330, 400},
	{"simon-glatzel/ice-III (IAPWS R14-08 as Simon-Glatzel)", "simon-glatzel",
		Params{"t0": {251.165}, "p0": {208.566e6}, "a": {208.566e6 * 0.299948}, "c": {60}}, 251.165, 256.164},
	{"power-sum/ice-Ih (IAPWS R14-08)", "power-sum", famIceIh, 251.165, 273.16},
	{"power-sum/ice-V (IAPWS R14-08)", "power-sum", famIceV, 256.164, 273.31},
	{"log-power-sum/ice-VII (IAPWS R14-08)", "log-power-sum", famIceVII, 355, 715},
	{"shifted-power-sum/CO2 melting (Span-Wagner 1996)", "shifted-power-sum", famCO2Melting, 216.592, 327},
	{"inverse-log-power-sum/ice-Ih sublimation (IAPWS R14-08)", "inverse-log-power-sum", famIceSubl, 50, 273.16},
	{"antoine/water 1-100 degC (handbook, from memory)", "antoine", famWaterAntoineLow(), 274.15, 373.15},
	{"extended-antoine/water (handbook, from memory)", "extended-antoine", famWaterExtAntoine, 273.16, 647.096},
	{"wagner/water (IAPWS SR1-86(1992))", "wagner", famWaterWagnerPruss, 273.16, 647.096},
	{"wagner/CO2 saturation (Span-Wagner 1996)", "wagner", famCO2Saturation, 216.592, 304.1282},
	{"iapws-if97/water", "iapws-if97", nil, 273.15, 647.096},
}

// TestFamiliesAllRegistered checks that every family of the catalog
// contract is registered and has a representative case here.
func TestFamiliesAllRegistered(t *testing.T) {
	t.Parallel()
	want := []string{"clapeyron-linear", "clausius-clapeyron", "simon-glatzel", "power-sum", "log-power-sum",
		"shifted-power-sum", "inverse-log-power-sum", "antoine", "extended-antoine", "wagner", "iapws-if97"}
	for _, name := range want {
		f, err := GetFamily(name)
		if err != nil {
			t.Errorf("GetFamily(%q): %v", name, err)
			continue
		}
		if f.Name() != name {
			t.Errorf("GetFamily(%q).Name() = %q", name, f.Name())
		}
		found := false
		for _, c := range famCases {
			found = found || c.family == name
		}
		if !found {
			t.Errorf("no famCases entry for %q", name)
		}
	}
}

// TestFamiliesSlopeMatchesDifference compares the analytic dP/dT with a
// central difference of P(T) across each range.
func TestFamiliesSlopeMatchesDifference(t *testing.T) {
	t.Parallel()
	for _, fc := range famCases {
		c := famNew(t, fc.family, fc.params, fc.tmin, fc.tmax)
		for i := 1; i < 20; i++ {
			T := fc.tmin + (fc.tmax-fc.tmin)*float64(i)/20
			p, d, err := c.PressureSlope(T)
			if err != nil {
				t.Fatalf("%s: PressureSlope(%g): %v", fc.name, T, err)
			}
			// Step small against both the range and the scale on
			// which ln P changes, so that the difference's error,
			// about (h·d ln P/dT)²/6, stays near 1e-9.
			h := 1e-4 * (fc.tmax - fc.tmin)
			if d != 0 {
				h = math.Min(h, 1e-4*p/math.Abs(d))
			}
			pp, _ := c.Pressure(T + h)
			pm, _ := c.Pressure(T - h)
			fd := (pp - pm) / (2 * h)
			if !scalar.EqualWithinAbsOrRel(d, fd, 1e-7*p/(fc.tmax-fc.tmin), 1e-6) {
				t.Errorf("%s: dP/dT(%g) = %g, central difference %g", fc.name, T, d, fd)
			}
			p2, _ := c.Pressure(T)
			d2, _ := c.Slope(T)
			if p2 != p || d2 != d {
				t.Errorf("%s: Pressure/Slope (%g, %g) differ from PressureSlope (%g, %g)", fc.name, p2, d2, p, d)
			}
		}
	}
}

// TestFamiliesRoundTrip checks T(P(T)) = T and P(T(P)) = P across each range,
// including its ends.
func TestFamiliesRoundTrip(t *testing.T) {
	t.Parallel()
	for _, fc := range famCases {
		c := famNew(t, fc.family, fc.params, fc.tmin, fc.tmax)
		for i := 0; i <= 40; i++ {
			T := fc.tmin + (fc.tmax-fc.tmin)*float64(i)/40
			if i == 40 {
				T = fc.tmax
			}
			p, err := c.Pressure(T)
			if err != nil {
				t.Fatalf("%s: Pressure(%g): %v", fc.name, T, err)
			}
			T2, err := c.Temperature(p)
			if err != nil {
				t.Fatalf("%s: Temperature(%g): %v", fc.name, p, err)
			}
			// 1e-12 relative is the promised inverse accuracy.
			if !scalar.EqualWithinAbsOrRel(T2, T, 0, 1e-12) {
				t.Errorf("%s: T(P(%.15g)) = %.15g", fc.name, T, T2)
			}
		}
	}
}

// TestFamiliesRangeExtremes checks that Range's pressures are the curve's
// extremes over [Tmin, Tmax], whichever way it slopes.
func TestFamiliesRangeExtremes(t *testing.T) {
	t.Parallel()
	for _, fc := range famCases {
		c := famNew(t, fc.family, fc.params, fc.tmin, fc.tmax)
		r := c.Range()
		if r.Tmin != fc.tmin || r.Tmax != fc.tmax {
			t.Errorf("%s: range T [%g, %g], want [%g, %g]", fc.name, r.Tmin, r.Tmax, fc.tmin, fc.tmax)
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := 0; i <= 1000; i++ {
			p, _ := c.Pressure(fc.tmin + (fc.tmax-fc.tmin)*float64(i)/1000)
			lo, hi = math.Min(lo, p), math.Max(hi, p)
		}
		if !scalar.EqualWithinAbsOrRel(r.Pmin, lo, 0, 1e-12) || !scalar.EqualWithinAbsOrRel(r.Pmax, hi, 0, 1e-12) {
			t.Errorf("%s: range P [%g, %g], sampled [%g, %g]", fc.name, r.Pmin, r.Pmax, lo, hi)
		}
	}
}

// TestFamiliesNegativeSlopeRange checks that a falling curve (ice Ih
// melting) has its lowest pressure at Tmax.
func TestFamiliesNegativeSlopeRange(t *testing.T) {
	t.Parallel()
	c := famNew(t, "power-sum", famIceIh, 251.165, 273.16)
	r := c.Range()
	pTmax, _ := c.Pressure(273.16)
	pTmin, _ := c.Pressure(251.165)
	if r.Pmin != pTmax || r.Pmax != pTmin {
		t.Errorf("ice Ih range P [%g, %g], want [P(Tmax)=%g, P(Tmin)=%g]", r.Pmin, r.Pmax, pTmax, pTmin)
	}
}

// TestFamiliesNonMonotonic checks a curve with an interior maximum: Range
// reaches the maximum, and T(P) returns the root nearest Tmin.
func TestFamiliesNonMonotonic(t *testing.T) {
	t.Parallel()
	// P/P* = 1 + (θ − 1) − 0.5(θ² − 1): maximum P = P* at θ = 1 (invented).
	p := Params{"t_ref": {200}, "p_ref": {1e6}, "a": {1, -0.5}, "b": {1, 2}}
	c := famNew(t, "power-sum", p, 100, 290)
	r := c.Range()
	if !scalar.EqualWithinAbsOrRel(r.Pmax, 1e6, 0, 1e-12) {
		t.Errorf("Pmax = %g, want the interior maximum 1e6", r.Pmax)
	}
	// θ = 0.5 → 0.875 P*, θ = 1.45 → 0.89875 P*: both ends below the maximum.
	for _, tc := range []struct{ p, want float64 }{
		{0.9e6, 200 * (1 - math.Sqrt(0.2))},       // two roots; the low one, θ = 1 − √0.2
		{0.875e6, 100},                            // exactly at Tmin
		{0.999999e6, 200 * (1 - math.Sqrt(2e-6))}, // near the top
	} {
		got, err := c.Temperature(tc.p)
		if err != nil {
			t.Fatalf("Temperature(%g): %v", tc.p, err)
		}
		if !scalar.EqualWithinAbsOrRel(got, tc.want, 0, 1e-9) {
			t.Errorf("Temperature(%g) = %.12g, want the low root %.12g", tc.p, got, tc.want)
		}
	}
	// Below Pmin there is no root at all.
	if _, err := c.Temperature(0.87e6); err == nil {
		t.Errorf("Temperature(0.87e6) below Pmin: want a range error")
	}
}

// TestFamiliesBadInput checks NaN, ±Inf, −0, non-positive and
// out-of-range inputs are refused with typed errors carrying the value.
func TestFamiliesBadInput(t *testing.T) {
	t.Parallel()
	for _, fc := range famCases {
		c := famNew(t, fc.family, fc.params, fc.tmin, fc.tmax)
		r := c.Range()
		for _, tc := range []struct {
			v         float64
			wantRange bool // *RangeError rather than *InputError
		}{
			{math.NaN(), false}, {math.Inf(1), false}, {math.Inf(-1), false},
			{math.Copysign(0, -1), false}, {0, false}, {-1, false},
			{r.Tmin * (1 - 1e-9), true}, {r.Tmax * (1 + 1e-9), true},
		} {
			_, err := c.Pressure(tc.v)
			famCheckErr(t, fc.name+" Pressure", err, tc.v, tc.wantRange, r.Tmin, r.Tmax)
			_, err = c.Slope(tc.v)
			famCheckErr(t, fc.name+" Slope", err, tc.v, tc.wantRange, r.Tmin, r.Tmax)
			_, _, err = c.PressureSlope(tc.v)
			famCheckErr(t, fc.name+" PressureSlope", err, tc.v, tc.wantRange, r.Tmin, r.Tmax)
		}
		for _, tc := range []struct {
			v         float64
			wantRange bool
		}{
			{math.NaN(), false}, {math.Inf(1), false}, {math.Inf(-1), false},
			{math.Copysign(0, -1), false}, {0, false}, {-1e5, false},
			{r.Pmin * (1 - 1e-9), true}, {r.Pmax * (1 + 1e-9), true},
		} {
			_, err := c.Temperature(tc.v)
			famCheckErr(t, fc.name+" Temperature", err, tc.v, tc.wantRange, r.Pmin, r.Pmax)
		}
		x, ok := c.(Extrapolator)
		if !ok {
			t.Errorf("%s does not implement Extrapolator", fc.name)
			continue
		}
		for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1), math.Copysign(0, -1), 0, -1} {
			if _, _, err := x.PressureSlopeBeyond(v); !famIsInput(err, v) {
				t.Errorf("%s: PressureSlopeBeyond(%v) = %v, want *InputError", fc.name, v, err)
			}
			if _, err := x.TemperatureBeyond(v); !famIsInput(err, v) {
				t.Errorf("%s: TemperatureBeyond(%v) = %v, want *InputError", fc.name, v, err)
			}
		}
	}
}

func famIsInput(err error, v float64) bool {
	var ie *InputError
	return errors.As(err, &ie) && (ie.Value == v || (math.IsNaN(v) && math.IsNaN(ie.Value)))
}

func famCheckErr(t *testing.T, what string, err error, v float64, wantRange bool, lo, hi float64) {
	t.Helper()
	if err == nil {
		t.Errorf("%s(%v): no error", what, v)
		return
	}
	if !wantRange {
		if !famIsInput(err, v) {
			t.Errorf("%s(%v) = %v, want *InputError carrying the value", what, v, err)
		}
		return
	}
	var re *RangeError
	if !errors.As(err, &re) {
		t.Errorf("%s(%v) = %v, want *RangeError", what, v, err)
		return
	}
	if re.Value != v || re.Min != lo || re.Max != hi {
		t.Errorf("%s(%v): RangeError{Value %g, Min %g, Max %g}, want value and [%g, %g]", what, v, re.Value, re.Min, re.Max, lo, hi)
	}
}

// TestFamiliesExtrapolation checks the opt-in evaluation beyond the range
// follows the formula and inverts consistently.
func TestFamiliesExtrapolation(t *testing.T) {
	t.Parallel()
	for _, fc := range famCases {
		c := famNew(t, fc.family, fc.params, fc.tmin, fc.tmax)
		x := c.(Extrapolator)
		// Inside the range the two paths agree exactly.
		mid := 0.5 * (fc.tmin + fc.tmax)
		p1, d1, _ := c.PressureSlope(mid)
		p2, d2, err := x.PressureSlopeBeyond(mid)
		if err != nil || p1 != p2 || d1 != d2 {
			t.Errorf("%s: PressureSlopeBeyond(%g) = %g, %g, %v; in range %g, %g", fc.name, mid, p2, d2, err, p1, d1)
		}
		// Just outside each end the formula either gives a value that
		// inverts back, or (where it leaves its domain or P ≤ 0) an
		// *InputError; at least one side must work.
		worked := 0
		for _, tb := range []float64{fc.tmin - 0.01*(fc.tmax-fc.tmin), fc.tmax + 0.01*(fc.tmax-fc.tmin)} {
			if _, err := c.Pressure(tb); err == nil {
				t.Errorf("%s: Pressure(%g) outside the range accepted without opt-in", fc.name, tb)
			}
			pb, _, err := x.PressureSlopeBeyond(tb)
			if err != nil {
				if !famIsInput(err, tb) {
					t.Errorf("%s: PressureSlopeBeyond(%g) = %v, want a value or *InputError", fc.name, tb, err)
				}
				continue
			}
			worked++
			if c.Range().ContainsP(pb) {
				continue // a non-monotonic curve may come back into range
			}
			tb2, err := x.TemperatureBeyond(pb)
			if err != nil {
				t.Errorf("%s: TemperatureBeyond(%g): %v", fc.name, pb, err)
				continue
			}
			if !scalar.EqualWithinAbsOrRel(tb2, tb, 0, 1e-11) {
				t.Errorf("%s: TemperatureBeyond(P(%g)) = %.14g", fc.name, tb, tb2)
			}
		}
		if worked == 0 {
			t.Errorf("%s: no extrapolation possible on either side", fc.name)
		}
	}
}

// TestWagnerBeyondCriticalRefused checks that extrapolation does not
// invent a vapour pressure above T_ref, where the Wagner form is undefined.
func TestWagnerBeyondCriticalRefused(t *testing.T) {
	t.Parallel()
	c := famNew(t, "wagner", famCO2Saturation, 216.592, 304.1282).(Extrapolator)
	if _, _, err := c.PressureSlopeBeyond(310); !famIsInput(err, 310) {
		t.Errorf("PressureSlopeBeyond(310 K) above Tc: %v, want *InputError", err)
	}
	if _, err := c.TemperatureBeyond(8e6); !errors.Is(err, ErrNoBracket) {
		t.Errorf("TemperatureBeyond(8 MPa) above pc: %v, want ErrNoBracket", err)
	}
	w := famNew(t, "iapws-if97", nil, 273.15, 647.096).(Extrapolator)
	if _, _, err := w.PressureSlopeBeyond(650); err == nil {
		t.Errorf("iapws-if97 PressureSlopeBeyond(650 K) above Tc: no error")
	}
}

// TestFamiliesParamErrors checks that bad parameters are refused with an
// error wrapping ErrBadParam or ErrMissingParam.
func TestFamiliesParamErrors(t *testing.T) {
	t.Parallel()
	good := Params{"t_ref": {273.16}, "p_ref": {611.657}, "a": {-1e6}, "b": {3}}
	with := func(p Params, k string, v ...float64) Params {
		q := Params{}
		for n, x := range p {
			q[n] = x
		}
		if v == nil {
			delete(q, k)
		} else {
			q[k] = v
		}
		return q
	}
	cl := Params{"t0": {273.16}, "p0": {611.657}, "delta_h": {6010}, "delta_v": {-1.63e-6}}
	for _, tc := range []struct {
		name, family string
		p            Params
		tmin, tmax   float64
		want         error
	}{
		{"missing t_ref", "power-sum", with(good, "t_ref"), 260, 270, ErrMissingParam},
		{"missing list", "power-sum", with(good, "b"), 260, 270, ErrMissingParam},
		{"a and b differ", "power-sum", with(good, "b", 3, 4), 260, 270, ErrBadParam},
		{"empty lists", "log-power-sum", with(with(good, "a", []float64{}...), "b", []float64{}...), 260, 270, ErrBadParam},
		{"zero exponent", "power-sum", with(good, "b", 0), 260, 270, ErrBadParam},
		{"t_ref <= 0", "power-sum", with(good, "t_ref", 0), 260, 270, ErrBadParam},
		{"p_ref <= 0", "inverse-log-power-sum", with(good, "p_ref", -1), 260, 270, ErrBadParam},
		{"scalar given as list", "power-sum", with(good, "t_ref", 1, 2), 260, 270, ErrBadParam},
		{"NaN parameter", "power-sum", with(good, "p_ref", math.NaN()), 260, 270, ErrBadParam},
		{"unknown parameter", "power-sum", with(good, "c", 1), 260, 270, ErrBadParam},
		{"tmin >= tmax", "power-sum", good, 270, 260, ErrBadParam},
		{"tmin = tmax", "power-sum", good, 270, 270, ErrBadParam},
		{"tmin <= 0", "power-sum", good, 0, 270, ErrBadParam},
		{"tmax Inf", "power-sum", good, 260, math.Inf(1), ErrBadParam},
		{"negative pressure in range", "power-sum", good, 200, 300, ErrBadParam},
		{"delta_v = 0", "clapeyron-linear", with(cl, "delta_v", 0), 260, 273, ErrBadParam},
		{"delta_h = 0", "clapeyron-linear", with(cl, "delta_h", 0), 260, 273, ErrBadParam},
		{"t0 <= 0", "clapeyron-linear", with(cl, "t0", -5), 260, 273, ErrBadParam},
		{"p0 <= 0", "clapeyron-linear", with(cl, "p0", 0), 260, 273, ErrBadParam},
		{"linearized 2", "clapeyron-linear", with(cl, "linearized", 2), 260, 273, ErrBadParam},
		{"cc delta_h < 0", "clausius-clapeyron", Params{"t0": {373.15}, "p0": {101325}, "delta_h": {-1}}, 300, 400, ErrBadParam},
		{"cc p0 <= 0", "clausius-clapeyron", Params{"t0": {373.15}, "p0": {0}, "delta_h": {40650}}, 300, 400, ErrBadParam},
		{"sg a = 0", "simon-glatzel", Params{"t0": {100}, "p0": {0}, "a": {0}, "c": {2}}, 100, 200, ErrBadParam},
		{"sg c = 0", "simon-glatzel", Params{"t0": {100}, "p0": {0}, "a": {1e8}, "c": {0}}, 100, 200, ErrBadParam},
		{"sg p0 < 0", "simon-glatzel", Params{"t0": {100}, "p0": {-1}, "a": {1e8}, "c": {2}}, 100, 200, ErrBadParam},
		{"antoine b = 0", "antoine", Params{"a": {10}, "b": {0}, "c": {-40}}, 300, 350, ErrBadParam},
		{"antoine T + C <= 0", "antoine", Params{"a": {10}, "b": {1700}, "c": {-300}}, 280, 350, ErrBadParam},
		{"antoine missing c", "antoine", Params{"a": {10}, "b": {1700}}, 280, 350, ErrMissingParam},
		{"ext-antoine missing e", "extended-antoine", Params{"a": {1}, "b": {1}, "c": {1}, "d": {1}}, 280, 350, ErrMissingParam},
		{"wagner above t_ref", "wagner", famCO2Saturation, 216.592, 310, ErrBadParam},
		{"wagner e <= 0", "wagner", Params{"t_ref": {300}, "p_ref": {1e6}, "a": {-7}, "e": {0}}, 200, 290, ErrBadParam},
		{"wagner a/e differ", "wagner", Params{"t_ref": {300}, "p_ref": {1e6}, "a": {-7, 1}, "e": {1}}, 200, 290, ErrBadParam},
		{"shifted non-integer below t_ref", "shifted-power-sum", Params{"t_ref": {200}, "p_ref": {1e6}, "a": {10}, "b": {1.5}}, 190, 250, ErrBadParam},
		{"shifted b <= 0", "shifted-power-sum", Params{"t_ref": {200}, "p_ref": {1e6}, "a": {10}, "b": {-1}}, 200, 250, ErrBadParam},
		{"if97 parameter given", "iapws-if97", Params{"a": {1}}, 300, 400, ErrBadParam},
		{"if97 above Tc", "iapws-if97", nil, 300, 650, ErrBadParam},
		{"if97 below 273.15 K", "iapws-if97", nil, 270, 400, ErrBadParam},
	} {
		f, err := GetFamily(tc.family)
		if err != nil {
			t.Fatal(err)
		}
		c, err := f.New(tc.p, tc.tmin, tc.tmax)
		if !errors.Is(err, tc.want) {
			t.Errorf("%s: %s.New = %v, %v; want an error wrapping %v", tc.name, tc.family, c, err, tc.want)
		}
		if c != nil {
			t.Errorf("%s: non-nil correlation with error", tc.name)
		}
	}
	if _, err := GetFamily("no-such-family"); !errors.Is(err, ErrUnknownFamily) {
		t.Errorf("GetFamily(unknown) = %v, want ErrUnknownFamily", err)
	}
}

// TestFamiliesZeroAllocs checks that successful evaluation allocates
// nothing.
func TestFamiliesZeroAllocs(t *testing.T) {
	for _, fc := range famCases {
		c := famNew(t, fc.family, fc.params, fc.tmin, fc.tmax)
		T := fc.tmin + 0.37*(fc.tmax-fc.tmin)
		p, _ := c.Pressure(T)
		x := c.(Extrapolator)
		allocs := testing.AllocsPerRun(50, func() {
			famSink, _, _ = c.PressureSlope(T)
			famSink, _ = c.Temperature(p)
			famSink, _, _ = x.PressureSlopeBeyond(T)
			famSink, _ = x.TemperatureBeyond(p)
		})
		if allocs != 0 {
			t.Errorf("%s: %g allocations per evaluation, want 0", fc.name, allocs)
		}
	}
}
