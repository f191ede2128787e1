package thermo

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// critVolumeSource samples a phase volume along a curve, v(T, P(T)), the
// way the server samples its backends.
func critVolumeSource(curve Correlation, v VolumeCorrelation) SampleFunc {
	return func(x, y []float64) error {
		for i, t := range x {
			p, err := curve.Pressure(t)
			if err != nil {
				return err
			}
			vv, _, err := v.Volume(t, p)
			if err != nil {
				return err
			}
			y[i] = vv
		}
		return nil
	}
}

// critCase is a saturated-volume table of a published curve that ends at
// its critical point.
type critCase struct {
	name       string
	curve      Correlation
	vol        VolumeCorrelation
	yt         Transform // the server's choice: identity for the liquid, log for the vapour
	tmin, tc   float64
	risesWithT bool // v of the liquid grows toward Tc, that of the vapour shrinks
}

func critCases(t testing.TB) []critCase {
	ws := mustCurve(t, "iapws-if97", nil, 273.16, waterTc)
	cs := mustCurve(t, "wagner", co2SaturationParams(), co2Ttriple, co2Tc)
	return []critCase{
		{"water liquid", ws, mustVolume(t, "density-power-series", waterLiquidParams(), 273.16, waterTc), TransformIdentity, 273.16, waterTc, true},
		{"water vapour", ws, mustVolume(t, "density-log-series", waterVapourParams(), 273.16, waterTc), TransformLog, 273.16, waterTc, false},
		{"CO2 liquid", cs, mustVolume(t, "density-log-series", co2LiquidParams(), co2Ttriple, co2Tc), TransformIdentity, co2Ttriple, co2Tc, true},
		{"CO2 vapour", cs, mustVolume(t, "density-log-series", co2VapourParams(), co2Ttriple, co2Tc), TransformLog, co2Ttriple, co2Tc, false},
	}
}

func (c critCase) build(t testing.TB) *Table {
	t.Helper()
	tb, err := BuildTable(critVolumeSource(c.curve, c.vol), c.tmin, c.tc, TableOptions{
		XTransform: TransformCriticalRoot, YTransform: c.yt, XReference: c.tc, Quantity: "temperature", Unit: "K"})
	if err != nil {
		t.Fatalf("%s: %v", c.name, err)
	}
	return tb
}

// critCheckPoints returns temperatures spread uniformly over [tmin, tc]
// and geometrically toward tc (down to an ulp away), and tc itself.
func critCheckPoints(rng *rand.Rand, tmin, tc float64) []float64 {
	var ts []float64
	for range 4000 {
		ts = append(ts, tmin+(tc-tmin)*rng.Float64())
	}
	for k := 1.0; k <= 16; k += 0.05 {
		ts = append(ts, math.Max(tmin, tc-tc*math.Pow(10, -k)))
	}
	return append(ts, math.Nextafter(tc, 0), tc)
}

// Saturated volumes tabulated against (1 − T/Tc)^(1/6) meet the default
// tolerance over the whole range up to Tc, where tables against T stop at
// about 1e-4 whatever the segment count; independent checks (uniform and
// crowding toward Tc) agree with the build-time measurement; the slope
// follows the analytic dv/dT and is infinite, with the right sign, at Tc.
func TestCriticalRootTableSaturatedVolumes(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(7, 11))
	for _, c := range critCases(t) {
		// Without the transform (the server's former choice: identity, or
		// reciprocal/log for the vapour) the cusp at Tc defeats the tolerance.
		old := TableOptions{XTransform: TransformIdentity, YTransform: TransformIdentity, MaxSegments: 512}
		if c.yt == TransformLog {
			old.XTransform, old.YTransform = TransformReciprocal, TransformLog
		}
		_, err := BuildTable(critVolumeSource(c.curve, c.vol), c.tmin, c.tc, old)
		var te *ToleranceError
		if !errors.As(err, &te) || te.Achieved < 1e-6 {
			t.Errorf("%s against T: got %v, want a tolerance error above 1e-6 (the cusp at Tc)", c.name, err)
		}

		tb := c.build(t)
		if tb.MaxRelError() > DefaultTableTolerance {
			t.Errorf("%s: measured error %g above the tolerance %g", c.name, tb.MaxRelError(), DefaultTableTolerance)
		}
		if lo, hi := tb.Domain(); lo != c.tmin || hi != c.tc {
			t.Errorf("%s: domain [%g, %g], want [%g, %g]", c.name, lo, hi, c.tmin, c.tc)
		}
		src := critVolumeSource(c.curve, c.vol)
		ts := critCheckPoints(rng, c.tmin, c.tc)
		want := make([]float64, len(ts))
		if err := src(ts, want); err != nil {
			t.Fatal(err)
		}
		var worst, worstT float64
		for i, temp := range ts {
			v, d, err := tb.Eval(temp)
			if err != nil {
				t.Fatalf("%s: Eval(%g): %v", c.name, temp, err)
			}
			if e := math.Abs(v-want[i]) / want[i]; e > worst {
				worst, worstT = e, temp
			}
			if math.IsNaN(d) || (math.IsInf(d, 0) && temp != c.tc) {
				t.Errorf("%s: dv/dT(%.17g) = %g", c.name, temp, d)
			}
		}
		t.Logf("%s: %d segments, built error %.3g, independent check %.3g at T = %.15g K (against T: %.3g)",
			c.name, tb.Segments(), tb.MaxRelError(), worst, worstT, te.Achieved)
		if worst > 1e-10 {
			t.Errorf("%s: independent check error %g at %.17g K, above 1e-10", c.name, worst, worstT)
		}

		// Slope: the interpolant's derivative against the analytic one,
		// even a picokelvin from Tc.
		for _, dt := range []float64{c.tc - c.tmin - 0.01, 60, 10, 1, 0.1, 1e-3, 1e-6, 1e-9, 1e-12} {
			temp := c.tc - dt
			_, d, _ := tb.Eval(temp)
			_, dv, _ := c.vol.Volume(temp, 0)
			if !scalar.EqualWithinRel(d, dv, 1e-6) {
				t.Errorf("%s: dv/dT(Tc − %g K) = %g, analytic %g", c.name, dt, d, dv)
			}
		}
		v, d, err := tb.Eval(c.tc)
		if err != nil {
			t.Fatal(err)
		}
		if vc, _, _ := c.vol.Volume(c.tc, 0); !scalar.EqualWithinRel(v, vc, 1e-13) {
			t.Errorf("%s: v(Tc) = %.17g, source %.17g", c.name, v, vc)
		}
		sign := 1
		if !c.risesWithT {
			sign = -1
		}
		if !math.IsInf(d, sign) {
			t.Errorf("%s: dv/dT(Tc) = %g, want %+dInf", c.name, d, sign)
		}
	}
}

// The SR1-86 check values hold through the tables.
func TestCriticalRootTableSR1Checks(t *testing.T) {
	t.Parallel()
	cs := critCases(t)
	liq, vap := cs[0].build(t), cs[1].build(t)
	tests := []struct {
		name string
		tb   *Table
		t    float64
		rho  float64 // kg/m³
		tol  float64 // relative
	}{
		{"liquid 273.16 K", liq, 273.16, 999.789, 2e-6},       // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"liquid 373.1243 K", liq, 373.1243, 958.365, 2e-6},   // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"liquid Tc", liq, waterTc, 322, 1e-12},               // IAPWS SR1-86(1992), Table 3 check value: ρ' = ρc at Tc
		{"vapour 273.16 K", vap, 273.16, 0.485426e-2, 2e-6},   // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"vapour 373.1243 K", vap, 373.1243, 0.597586, 2e-6},  // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"vapour Tc", vap, waterTc, 322, 1e-12},               // IAPWS SR1-86(1992), Table 3 check value: ρ'' = ρc at Tc
		{"liquid 0 °C rounded", liq, 273.16, 999.79, 1e-5},    // common practice
		{"liquid 100 °C rounded", liq, 373.1243, 958.4, 1e-4}, // common practice
	}
	for _, tc := range tests {
		v, err := tc.tb.Value(tc.t)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if rho := waterMolarMass / v; !scalar.EqualWithinRel(rho, tc.rho, tc.tol) {
			t.Errorf("%s: ρ = %.9g kg/m³ through the table, want %.9g (rel tol %g)", tc.name, rho, tc.rho, tc.tol)
		}
	}
}

// The latent heat of vaporisation of water from tables alone (the server's
// fast path: P(T) table slope and the two volume tables) agrees with the
// direct Clapeyron route on the correlations up to the critical point, and
// vanishes there.
func TestCriticalRootTableLatentHeatWater(t *testing.T) {
	t.Parallel()
	direct := waterSaturation(t)
	cs := critCases(t)
	liq, vap := cs[0].build(t), cs[1].build(t)
	po, _ := DefaultTransforms(Saturation)
	pt, err := BuildPressureTable(cs[0].curve, po)
	if err != nil {
		t.Fatal(err)
	}
	fromTables := func(temp float64) (h, bound float64) {
		t.Helper()
		_, dpdt, err := pt.Eval(temp)
		if err != nil {
			t.Fatal(err)
		}
		vl, err1 := liq.Value(temp)
		vh, err2 := vap.Value(temp)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		// bound: what the volume tables' measured errors allow in ΔH.
		return temp * (vh - vl) * dpdt, temp * dpdt * (vl*liq.MaxRelError() + vh*vap.MaxRelError())
	}
	prev := math.Inf(1)
	for _, temp := range []float64{600, 640, 646, 647} {
		h, _ := fromTables(temp)
		l, err := direct.At(temp)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinRel(h, l.Molar, 1e-6) {
			t.Errorf("ΔH_vap(%g K): tables %.10g J/mol, direct Clapeyron %.10g J/mol (rel %.2g)", temp, h, l.Molar, (h-l.Molar)/l.Molar)
		}
		t.Logf("ΔH_vap(%g K): tables %.10g J/mol, direct %.10g J/mol, rel %.2g", temp, h, l.Molar, (h-l.Molar)/l.Molar)
		if !(h < prev) {
			t.Errorf("ΔH_vap(%g K) = %g J/mol is not below %g at the previous temperature", temp, h, prev)
		}
		prev = h
	}
	// Common practice: the latent heat vanishes at the critical point.
	h, bound := fromTables(waterTc)
	h600, _ := fromTables(600)
	t.Logf("ΔH_vap(Tc) from tables: %g J/mol (bound %g)", h, bound)
	if math.Abs(h) > bound || math.Abs(h) > 1e-9*h600 {
		t.Errorf("ΔH_vap(Tc) from tables = %g J/mol, want 0 within %g (the volume tables' errors) and 1e-9 of ΔH(600 K) = %g", h, bound, h600)
	}
	if l, err := direct.At(waterTc); err != nil || l.Molar != 0 {
		t.Errorf("direct ΔH_vap(Tc) = %v J/mol (%v), want 0", l.Molar, err)
	}
}

// Export and import keep the transform and its reference; x_reference 0
// means x_max; bad references are refused with errors that name the
// field; a reference above x_max is allowed (the slope stays finite).
func TestCriticalRootTableData(t *testing.T) {
	t.Parallel()
	c := critCases(t)[1]
	tb := c.build(t)
	d := tb.Data()
	if d.XTransform != TransformCriticalRoot || d.XReference != waterTc || d.XTransform.String() != "critical-root" {
		t.Fatalf("Data: transform %v, reference %g", d.XTransform, d.XReference)
	}
	unset := d
	unset.XReference = 0
	for name, dd := range map[string]TableData{"as exported": d, "x_reference unset": unset} {
		back, err := LoadTable(dd, "temperature", "K")
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if got := back.Data().XReference; got != waterTc {
			t.Errorf("%s: reloaded reference %g", name, got)
		}
		for _, temp := range []float64{273.16, 500, 647, math.Nextafter(waterTc, 0), waterTc} {
			y1, d1, _ := tb.Eval(temp)
			y2, d2, _ := back.Eval(temp)
			if y1 != y2 || d1 != d2 {
				t.Errorf("%s: Eval(%g) = %g, %g after the round trip, %g, %g before", name, temp, y2, d2, y1, d1)
			}
		}
	}

	bad := []struct {
		name string
		edit func(*TableData)
		want string
	}{
		{"reference below x_max", func(d *TableData) { d.XReference = 600 }, "x_reference"},
		{"negative reference", func(d *TableData) { d.XReference = -1 }, "x_reference"},
		{"infinite reference", func(d *TableData) { d.XReference = math.Inf(1) }, "x_reference"},
		{"NaN reference", func(d *TableData) { d.XReference = math.NaN() }, "x_reference"},
		{"reference with identity", func(d *TableData) { d.XTransform = TransformIdentity }, "x_reference"},
		{"critical root for y", func(d *TableData) { d.YTransform = TransformCriticalRoot }, "critical-root for x only"},
		{"breaks off the domain", func(d *TableData) { d.XReference = 2 * waterTc }, "breaks span"},
	}
	for _, tc := range bad {
		dd := tb.Data()
		tc.edit(&dd)
		_, err := LoadTable(dd, "temperature", "K")
		if !errors.Is(err, ErrBadParam) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want ErrBadParam naming %q", tc.name, err, tc.want)
		}
	}

	src := critVolumeSource(c.curve, c.vol)
	for _, tc := range []struct {
		name string
		o    TableOptions
		hi   float64
	}{
		{"reference below xmax", TableOptions{XTransform: TransformCriticalRoot, XReference: 600}, waterTc},
		{"reference with log", TableOptions{XTransform: TransformLog, XReference: waterTc}, waterTc},
		{"y transform", TableOptions{YTransform: TransformCriticalRoot}, waterTc},
	} {
		if _, err := BuildTable(src, 273.16, tc.hi, tc.o); !errors.Is(err, ErrBadParam) {
			t.Errorf("BuildTable %s: error %v, want ErrBadParam", tc.name, err)
		}
	}
	// A table that stops short of its reference: finite slope at x_max.
	short, err := BuildTable(src, 273.16, 640, TableOptions{XTransform: TransformCriticalRoot, YTransform: TransformLog, XReference: waterTc})
	if err != nil {
		t.Fatal(err)
	}
	v, dv, err := short.Eval(640)
	_, want, _ := c.vol.Volume(640, 0)
	if err != nil || !scalar.EqualWithinRel(dv, want, 1e-6) {
		t.Errorf("short table at 640 K: v %g, dv/dT %g (%v), analytic %g", v, dv, err, want)
	}
	if _, _, err := short.Eval(641); !errors.As(err, new(*RangeError)) {
		t.Errorf("short table at 641 K: error %v, want a *RangeError", err)
	}
}

// FuzzCriticalRootTable builds critical-root tables of a cusped source,
// y = 2 + τ^(1/3) − τ^(2/3)/2 + τ^0.34 with τ = 1 − x/x_ref, on fuzzed
// domains and references: bad input is an error wrapping ErrBadParam,
// never a panic; a built table meets its tolerance at a fuzzed point,
// never gives NaN, an infinite slope only at x_ref, and survives the
// round trip through Data.
func FuzzCriticalRootTable(f *testing.F) {
	f.Add(273.16, 647.096, 647.096, 646.0)
	f.Add(273.16, 647.096, 0.0, 647.096)
	f.Add(216.592, 300.0, 304.1282, 299.9)
	f.Add(1.0, 2.0, 1.5, 1.2)
	f.Add(-5.0, 5.0, 5.0, 0.0)
	f.Add(1e-3, 1e-3, math.NaN(), 1e-3)
	f.Fuzz(func(t *testing.T, xmin, xmax, ref, x float64) {
		refEff := ref
		if ref == 0 {
			refEff = xmax
		}
		y := func(x float64) float64 {
			tau := math.Max(0, 1-x/refEff)
			return 2 + math.Cbrt(tau) - 0.5*math.Cbrt(tau*tau) + math.Pow(tau, 0.34)
		}
		src := func(xs, ys []float64) error {
			for i, v := range xs {
				ys[i] = y(v)
			}
			return nil
		}
		const tol = 1e-9
		tb, err := BuildTable(src, xmin, xmax, TableOptions{XTransform: TransformCriticalRoot, XReference: ref, Tolerance: tol, MaxSegments: 64})
		var te *ToleranceError
		switch {
		case errors.As(err, &te):
			tb = te.Best
		case err != nil:
			if !errors.Is(err, ErrBadParam) {
				t.Fatalf("BuildTable: error %v does not wrap ErrBadParam", err)
			}
			return
		}
		if !(xmin < xmax) || !(xmax <= refEff) {
			t.Fatalf("built a table on [%g, %g] with reference %g", xmin, xmax, ref)
		}
		got, d, err := tb.Eval(x)
		inside := x >= xmin && x <= xmax
		if inside != (err == nil) {
			t.Fatalf("Eval(%g) on [%g, %g]: %v", x, xmin, xmax, err)
		}
		if !inside {
			return
		}
		if math.IsNaN(got) || math.IsNaN(d) || (math.IsInf(d, 0) && x != refEff) {
			t.Fatalf("Eval(%g) = %g, %g", x, got, d)
		}
		if te == nil && xmax-xmin > 1e-6*math.Abs(xmax) && !scalar.EqualWithinAbsOrRel(got, y(x), 0, 100*tol) {
			t.Fatalf("Eval(%g) = %.17g, source %.17g", x, got, y(x))
		}
		back, err := LoadTable(tb.Data(), "x", "")
		if err != nil {
			t.Fatalf("round trip refused: %v", err)
		}
		if g2, d2, _ := back.Eval(x); g2 != got || !(d2 == d || (math.IsNaN(d) && math.IsNaN(d2))) {
			t.Fatalf("round trip changed Eval(%g): %g %g vs %g %g", x, g2, d2, got, d)
		}
	})
}

var critSink float64

// BenchmarkCriticalRootTableEval compares Eval on the water vapour volume
// table against the critical-root transform with the former
// reciprocal/log table of the same volume (which stops at 1e-4 accuracy):
// the difference is what the sixth root of the transform costs.
func BenchmarkCriticalRootTableEval(b *testing.B) {
	c := critCases(b)[1]
	cr := c.build(b)
	old, err := BuildTable(critVolumeSource(c.curve, c.vol), c.tmin, c.tc,
		TableOptions{XTransform: TransformReciprocal, YTransform: TransformLog, MaxSegments: 512})
	var te *ToleranceError
	if errors.As(err, &te) {
		old = te.Best
	} else if err != nil {
		b.Fatal(err)
	}
	ts := make([]float64, 1024)
	for i := range ts {
		ts[i] = c.tmin + (c.tc-c.tmin)*(float64(i)+0.5)/float64(len(ts))
	}
	for k, tb := range []*Table{old, cr} {
		b.Run([]string{"reciprocal-log", "critical-root"}[k], func(b *testing.B) {
			b.ReportAllocs()
			var s float64
			i := 0
			for b.Loop() {
				y, d, _ := tb.Eval(ts[i&1023])
				s += y + d
				i++
			}
			critSink = s
		})
	}
}

// criticalRoot agrees with ∛√τ from the math package to a few ulps, from
// the float64 resolution next to a critical point up to far below it.
func TestCriticalRootFunction(t *testing.T) {
	t.Parallel()
	for _, tau := range []float64{1e-300, 2.2e-16, 1.1e-16, 3e-10, 1e-5, 0.01, 0.3, 0.5779, 0.9, 1, 2, 1e10, 1e300} {
		for k := range 1000 {
			x := tau * (1 + float64(k)*1e-3)
			if got, want := criticalRoot(x), math.Cbrt(math.Sqrt(x)); !scalar.EqualWithinRel(got, want, 1e-15) {
				t.Fatalf("criticalRoot(%g) = %.17g, ∛√τ = %.17g", x, got, want)
			}
		}
	}
	for _, tc := range []struct{ tau, want float64 }{{0, 0}, {-1, 0}, {math.Inf(-1), 0}} {
		if got := criticalRoot(tc.tau); got != tc.want {
			t.Errorf("criticalRoot(%g) = %g, want %g", tc.tau, got, tc.want)
		}
	}
	if got := criticalRoot(math.NaN()); !math.IsNaN(got) {
		t.Errorf("criticalRoot(NaN) = %g", got)
	}
}
