package thermo

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// sample returns n points of the registered family with parameters p,
// evenly spaced in [tmin, tmax], with relative Gaussian noise sigma drawn
// from a fixed seed.
func sample(t testing.TB, family string, p Params, tmin, tmax float64, n int, sigma float64, seed uint64) []FitPoint {
	t.Helper()
	c := mustCurve(t, family, p, tmin, tmax)
	rng := rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15))
	pts := make([]FitPoint, n)
	for i := range pts {
		temp := tmin + (tmax-tmin)*float64(i)/float64(n-1)
		if i == n-1 {
			temp = tmax
		}
		pr, err := c.Pressure(temp)
		if err != nil {
			t.Fatal(err)
		}
		pts[i] = FitPoint{Temperature: temp, Pressure: pr * (1 + sigma*rng.NormFloat64())}
	}
	return pts
}

// fitCase is a family with known parameters, the parameters the fit is
// given as fixed, and a data range.
type fitCase struct {
	name       string
	family     string
	truth      Params
	fixed      []string // names in truth passed as fixed
	tmin, tmax float64
	n          int
	opt        FitOptions
}

func (fc fitCase) options() FitOptions {
	o := fc.opt
	o.Fixed = Params{}
	for _, k := range fc.fixed {
		o.Fixed[k] = fc.truth[k]
	}
	return o
}

var syntheticCases = []fitCase{
	{name: "clausius-clapeyron", family: "clausius-clapeyron", truth: Params{"t0": {350}, "p0": {41.7e3}, "delta_h": {42000}}, fixed: []string{"t0"}, tmin: 300, tmax: 400, n: 40},
	{name: "antoine water-like", family: "antoine", truth: Params{"a": {10.2}, "b": {1737}, "c": {-39}}, tmin: 280, tmax: 370, n: 40},
	{name: "extended-antoine, e fixed", family: "extended-antoine", truth: Params{"a": {62.2}, "b": {-6885}, "c": {-5.458}, "d": {1.693e-11}, "e": {3.772}}, fixed: []string{"e"}, tmin: 280, tmax: 600, n: 40},
	{name: "simon-glatzel, p0 fixed", family: "simon-glatzel", truth: Params{"t0": {216.592}, "p0": {517950}, "a": {4e8}, "c": {2.5}}, fixed: []string{"t0", "p0"}, tmin: 217, tmax: 400, n: 40},                                 // invented parameters
	{name: "simon-glatzel, p0 fitted", family: "simon-glatzel", truth: Params{"t0": {216.592}, "p0": {517950}, "a": {4e8}, "c": {2.5}}, fixed: []string{"t0"}, tmin: 217, tmax: 400, n: 40},                                      // invented parameters
	{name: "clapeyron-linear ice-like", family: "clapeyron-linear", truth: Params{"t0": {273.16}, "p0": {611.657}, "delta_h": {6007}, "delta_v": {-1.634e-6}}, fixed: []string{"t0", "delta_v"}, tmin: 265, tmax: 273.16, n: 20}, // ice Ih-like values (common practice)
	{name: "wagner CO2", family: "wagner", truth: co2SaturationParams(), fixed: []string{"t_ref", "p_ref", "e"}, tmin: co2Ttriple, tmax: co2Tc, n: 40},
	{name: "power-sum ice Ih", family: "power-sum", truth: iceIhMeltingParams(), fixed: []string{"t_ref", "p_ref", "b"}, tmin: 251.165, tmax: 273.16, n: 40},
	{name: "power-sum one fitted exponent", family: "power-sum", truth: Params{"t_ref": {273.16}, "p_ref": {611.657}, "a": {-3.5e5}, "b": {9}}, fixed: []string{"t_ref", "p_ref"}, tmin: 251, tmax: 273.16, n: 40}, // invented parameters
	{name: "inverse-log-power-sum ice Ih", family: "inverse-log-power-sum", truth: iceIhSublimationParams(), fixed: []string{"t_ref", "p_ref", "b"}, tmin: 150, tmax: 273.16, n: 40},
	{name: "log-power-sum", family: "log-power-sum", truth: Params{"t_ref": {300}, "p_ref": {1e5}, "a": {8, 1.5}, "b": {-1, 2}}, fixed: []string{"t_ref", "p_ref", "b"}, tmin: 250, tmax: 350, n: 40}, // invented parameters
	{name: "shifted-power-sum CO2 melting", family: "shifted-power-sum", truth: co2MeltingParams(), fixed: []string{"t_ref", "p_ref", "b"}, tmin: co2Ttriple, tmax: 300, n: 40},
}

// Span & Wagner (1996) Eq. 3.10, the melting curve of carbon dioxide,
// p/pt = 1 + a1(T/Tt − 1) + a2(T/Tt − 1)² (coefficients from memory).
func co2MeltingParams() Params {
	return Params{"t_ref": {co2Ttriple}, "p_ref": {0.51795e6}, "a": {1955.5390, 2055.4593}, "b": {1, 2}}
}

// Span & Wagner (1996) Eq. 3.12, the sublimation curve of carbon dioxide,
// in the Wagner form reduced by the triple point (coefficients from memory).
func co2SublimationParams() Params {
	return Params{"t_ref": {co2Ttriple}, "p_ref": {0.51795e6}, "a": {-14.740846, 2.4327015, -5.3061778}, "e": {1, 1.9, 2.9}}
}

// TestFitSynthetic fits data drawn from known parameters, without noise
// and with relative noise of 1e-4, 1e-3 and 1e-2 at three seeds each. It
// checks that noise-free data give the parameters back, that with noise
// every fitted parameter lies within 5 standard errors of the truth, and
// that the RMS relative deviation matches the noise level.
func TestFitSynthetic(t *testing.T) {
	t.Parallel()
	for _, fc := range syntheticCases {
		for _, sigma := range []float64{0, 1e-4, 1e-3, 1e-2} {
			for seed := uint64(1); seed <= 3; seed++ {
				if sigma == 0 && seed > 1 {
					continue
				}
				name := fmt.Sprintf("%s/σ=%g/seed=%d", fc.name, sigma, seed)
				pts := sample(t, fc.family, fc.truth, fc.tmin, fc.tmax, fc.n, sigma, seed)
				res, err := Fit(fc.family, pts, fc.options())
				if err != nil {
					t.Errorf("%s: %v", name, err)
					continue
				}
				if res.Tmin != fc.tmin || res.Tmax != fc.tmax || res.N != fc.n || len(res.Residuals) != fc.n {
					t.Errorf("%s: range [%g, %g], n %d, %d residuals", name, res.Tmin, res.Tmax, res.N, len(res.Residuals))
				}
				for k, label := range res.Names {
					base, idx := splitParamName(label)
					want := fc.truth[base][max(idx, 0)]
					got := res.Values[k]
					if sigma == 0 {
						if !scalar.EqualWithinAbsOrRel(got, want, 1e-9, 1e-6) {
							t.Errorf("%s: %s = %.12g, want %.12g", name, label, got, want)
						}
						continue
					}
					se := res.StdErr[base][max(idx, 0)]
					if math.Abs(got-want) > 5*se {
						t.Errorf("%s: %s = %.8g ± %.3g, truth %.8g is %.1f standard errors away", name, label, got, se, want, math.Abs(got-want)/se)
					}
				}
				if sigma == 0 {
					if res.RMSRelDev > 1e-9 {
						t.Errorf("%s: RMS relative deviation %g on exact data", name, res.RMSRelDev)
					}
					continue
				}
				if res.RMSRelDev < 0.6*sigma || res.RMSRelDev > 1.4*sigma {
					t.Errorf("%s: RMS relative deviation %.3g, noise %.3g", name, res.RMSRelDev, sigma)
				}
			}
		}
	}
}

// TestFitPublishedRefits fits points generated from published equations
// and recovers their coefficients and values, with automatic starting
// values (only the reference point and the exponents are given).
func TestFitPublishedRefits(t *testing.T) {
	t.Parallel()
	wagnerPruss := Params{"t_ref": {waterTc}, "p_ref": {22.064e6},
		"a": {-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502}, "e": {1, 1.5, 3, 3.5, 4, 7.5}} // IAPWS SR1-86(1992) Eq. 1, Wagner & Pruss (1993) (from memory)
	// The coefficients above are checked through the release's check
	// value before they are refitted.
	wp := mustCurve(t, "wagner", wagnerPruss, 273.16, waterTc)
	if p, _ := wp.Pressure(373.1243); !scalar.EqualWithinRel(p, 101325, 2e-6) { // IAPWS SR1-86(1992), Table 3: p(373.1243 K) = 0.101325 MPa (from memory)
		t.Fatalf("Wagner–Pruss p(373.1243 K) = %g Pa", p)
	}
	tests := []fitCase{
		{name: "water, Wagner–Pruss vapour pressure", family: "wagner", truth: wagnerPruss, fixed: []string{"t_ref", "p_ref", "e"}, tmin: 273.16, tmax: waterTc, n: 60},
		{name: "water, IAPWS R14-08 ice Ih melting", family: "power-sum", truth: iceIhMeltingParams(), fixed: []string{"t_ref", "p_ref", "b"}, tmin: 251.165, tmax: 273.16, n: 30},
		{name: "water, IAPWS R14-08 ice Ih sublimation", family: "inverse-log-power-sum", truth: iceIhSublimationParams(), fixed: []string{"t_ref", "p_ref", "b"}, tmin: 50, tmax: 273.16, n: 60},
		{name: "CO2, Span–Wagner vapour pressure", family: "wagner", truth: co2SaturationParams(), fixed: []string{"t_ref", "p_ref", "e"}, tmin: co2Ttriple, tmax: co2Tc, n: 40},
		{name: "CO2, Span–Wagner melting", family: "shifted-power-sum", truth: co2MeltingParams(), fixed: []string{"t_ref", "p_ref", "b"}, tmin: co2Ttriple, tmax: 1100, n: 40},
		{name: "CO2, Span–Wagner sublimation", family: "wagner", truth: co2SublimationParams(), fixed: []string{"t_ref", "p_ref", "e"}, tmin: 150, tmax: co2Ttriple, n: 40},
		{name: "ice Ih melting, exponents refitted", family: "power-sum", truth: iceIhMeltingParams(), fixed: []string{"t_ref", "p_ref", "b"}, tmin: 251.165, tmax: 273.16, n: 30,
			opt: FitOptions{FitExponents: true}},
	}
	for _, fc := range tests {
		pts := sample(t, fc.family, fc.truth, fc.tmin, fc.tmax, fc.n, 0, 1)
		res, err := Fit(fc.family, pts, fc.options())
		if err != nil {
			t.Errorf("%s: %v", fc.name, err)
			continue
		}
		for name, want := range fc.truth {
			got := res.Params[name]
			if len(got) != len(want) {
				t.Errorf("%s: %s has %d values, want %d", fc.name, name, len(got), len(want))
				continue
			}
			for i := range want {
				if !scalar.EqualWithinAbsOrRel(got[i], want[i], 1e-9, 1e-6) {
					t.Errorf("%s: %s[%d] = %.10g, published %.10g", fc.name, name, i, got[i], want[i])
				}
			}
		}
		if res.MaxRelDev > 1e-9 {
			t.Errorf("%s: max relative deviation %g", fc.name, res.MaxRelDev)
		}
		if len(res.Warnings) != 0 && !fc.opt.FitExponents {
			t.Errorf("%s: unexpected warnings %q", fc.name, res.Warnings)
		}
	}
}

// TestFitIF97 refits IAPWS-IF97 saturation pressures with the Wagner form
// and the exponents of the Wagner–Pruss equation: the two IAPWS equations
// agree to a few parts in 10⁵, so the refit must reproduce IF97 that well
// and land near the published Wagner–Pruss coefficients.
func TestFitIF97(t *testing.T) {
	t.Parallel()
	pts := sample(t, "iapws-if97", nil, 273.16, waterTc, 75, 0, 1)
	res, err := Fit("wagner", pts, FitOptions{Fixed: Params{"t_ref": {waterTc}, "p_ref": {22.064e6}, "e": {1, 1.5, 3, 3.5, 4, 7.5}}})
	if err != nil {
		t.Fatal(err)
	}
	if res.MaxRelDev > 2e-4 || res.RMSRelDev > 5e-5 { // IAPWS-IF97 region 4 and IAPWS SR1-86 agree within about 1e-4 (from memory)
		t.Errorf("wagner refit of IF97: RMS %.3g, max %.3g", res.RMSRelDev, res.MaxRelDev)
	}
	// The leading coefficient is fixed by the slope at the critical point
	// and comes out close to Wagner–Pruss's; the others trade off.
	if a := res.Params["a"][0]; !scalar.EqualWithinRel(a, -7.85951783, 5e-3) { // IAPWS SR1-86(1992) a1 (from memory)
		t.Errorf("a[0] = %g, Wagner–Pruss −7.85951783", a)
	}
	// And the refitted curve agrees with Wagner–Pruss everywhere.
	wp := mustCurve(t, "wagner", Params{"t_ref": {waterTc}, "p_ref": {22.064e6},
		"a": {-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502}, "e": {1, 1.5, 3, 3.5, 4, 7.5}}, 273.16, waterTc) // IAPWS SR1-86(1992) (from memory)
	fit := mustCurve(t, "wagner", res.Params, res.Tmin, res.Tmax)
	for temp := 273.16; temp < waterTc; temp += 7 {
		a, _ := wp.Pressure(temp)
		b, _ := fit.Pressure(temp)
		if !scalar.EqualWithinRel(a, b, 2e-4) {
			t.Errorf("at %g K: refit %g Pa, Wagner–Pruss %g Pa", temp, b, a)
		}
	}
}

// TestFitWaterAntoine fits the Antoine form to IF97 points from 1 °C to
// 100 °C and compares with the handbook constants for water,
// log10(P/mmHg) = 8.07131 − 1730.63/(t/°C + 233.426), valid 1–100 °C
// (from memory). In SI with T in K: a = 8.07131 + log10(133.322368),
// b = 1730.63, c = 233.426 − 273.15. The handbook constants were fitted to
// older data with another weighting, and the three-parameter form cannot
// follow water's curve to better than a few tenths of a percent over the
// range, so the comparison is generous: b within 1 %, c within 1.5 K, the
// handbook curve within 1 % of IF97, and the fit, made to these very
// points, within 0.3 % of IF97 (better than the handbook's).
func TestFitWaterAntoine(t *testing.T) {
	t.Parallel()
	pts := sample(t, "iapws-if97", nil, 274.15, 373.15, 34, 0, 1)
	res, err := Fit("antoine", pts, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	hb := Params{"a": {8.07131 + math.Log10(133.322368)}, "b": {1730.63}, "c": {233.426 - 273.15}} // handbook Antoine constants for water, 1–100 °C (from memory)
	if b := res.Params["b"][0]; !scalar.EqualWithinRel(b, hb["b"][0], 0.01) {
		t.Errorf("b = %g K, handbook %g K", b, hb["b"][0])
	}
	if c := res.Params["c"][0]; !scalar.EqualWithinAbs(c, hb["c"][0], 1.5) {
		t.Errorf("c = %g K, handbook %g K", c, hb["c"][0])
	}
	hc := mustCurve(t, "antoine", hb, 274.15, 373.15)
	for _, p := range pts {
		if a, _ := hc.Pressure(p.Temperature); !scalar.EqualWithinRel(a, p.Pressure, 0.01) {
			t.Errorf("at %g K: handbook Antoine %g Pa, IF97 %g Pa", p.Temperature, a, p.Pressure)
		}
	}
	if res.MaxRelDev > 3e-3 {
		t.Errorf("Antoine fit against IF97, 1–100 °C: max deviation %g", res.MaxRelDev)
	}
}

func TestFitBadData(t *testing.T) {
	t.Parallel()
	good := sample(t, "antoine", Params{"a": {10.2}, "b": {1737}, "c": {-39}}, 300, 370, 8, 0, 1)
	with := func(row int, f func(*FitPoint)) []FitPoint {
		d := append([]FitPoint(nil), good...)
		f(&d[row-1])
		return d
	}
	tests := []struct {
		name    string
		family  string
		data    []FitPoint
		opt     FitOptions
		row     int    // expected FitDataError row; -1: not a FitDataError
		want    error  // when row = -1
		contain string // in the message
	}{
		{"NaN temperature", "antoine", with(3, func(p *FitPoint) { p.Temperature = math.NaN() }), FitOptions{}, 3, nil, "not a finite"},
		{"infinite temperature", "antoine", with(4, func(p *FitPoint) { p.Temperature = math.Inf(1) }), FitOptions{}, 4, nil, "not a finite"},
		{"zero temperature", "antoine", with(1, func(p *FitPoint) { p.Temperature = 0 }), FitOptions{}, 1, nil, "> 0 K"},
		{"negative temperature", "antoine", with(2, func(p *FitPoint) { p.Temperature = -300 }), FitOptions{}, 2, nil, "> 0 K"},
		{"NaN pressure", "antoine", with(5, func(p *FitPoint) { p.Pressure = math.NaN() }), FitOptions{}, 5, nil, "not a finite"},
		{"zero pressure", "antoine", with(6, func(p *FitPoint) { p.Pressure = 0 }), FitOptions{}, 6, nil, "> 0 Pa"},
		{"negative pressure", "antoine", with(7, func(p *FitPoint) { p.Pressure = -1 }), FitOptions{}, 7, nil, "> 0 Pa"},
		{"negative weight", "antoine", with(8, func(p *FitPoint) { p.Weight = -1 }), FitOptions{}, 8, nil, "weight"},
		{"NaN weight", "antoine", with(2, func(p *FitPoint) { p.Weight = math.NaN() }), FitOptions{}, 2, nil, "weight"},
		{"duplicated temperature", "antoine", with(6, func(p *FitPoint) { p.Temperature = good[1].Temperature }), FitOptions{}, 6, nil, "repeats row 2"},
		{"non-monotonic vapour pressure", "antoine", with(4, func(p *FitPoint) { p.Pressure = good[1].Pressure }), FitOptions{}, 4, nil, "rises with temperature"},
		{"non-monotonic melting curve", "clapeyron-linear", with(4, func(p *FitPoint) { p.Pressure = good[7].Pressure * 2 }), FitOptions{Fixed: Params{"delta_v": {1e-6}}}, 5, nil, "trend of row 4"},
		{"too few points", "antoine", good[:2], FitOptions{}, 0, nil, "too few points"},
		{"too few for the wagner terms", "wagner", sample(t, "wagner", co2SaturationParams(), 220, 300, 3, 0, 1), FitOptions{Fixed: Params{"t_ref": {co2Tc}, "p_ref": {7.3773e6}, "e": {1, 1.5, 2, 4}}}, 0, nil, "at least 4"},
		{"no points", "antoine", nil, FitOptions{}, 0, nil, "no data"},
		{"wagner above t_ref", "wagner", good, FitOptions{Fixed: Params{"t_ref": {350}, "p_ref": {1e5}, "e": {1, 1.5}}}, 7, nil, "above t_ref"},
		{"shifted below t_ref with fitted exponent", "shifted-power-sum", good, FitOptions{Fixed: Params{"t_ref": {310}, "p_ref": {1e4}}}, 1, nil, "below t_ref"},
		{"unknown family", "no-such", good, FitOptions{}, -1, ErrUnknownFamily, "valid:"},
		{"fit of a non-fittable family", "iapws-if97", good, FitOptions{}, -1, ErrUnknownFamily, "antoine"},
		{"unknown fixed parameter", "antoine", good, FitOptions{Fixed: Params{"t_ref": {300}}}, -1, ErrBadParam, "has no parameter"},
		{"NaN fixed parameter", "antoine", good, FitOptions{Fixed: Params{"c": {math.NaN()}}}, -1, ErrBadParam, "NaN"},
		{"list for a scalar", "antoine", good, FitOptions{Fixed: Params{"c": {1, 2}}}, -1, ErrBadParam, "single number"},
		{"wagner without reference", "wagner", good, FitOptions{Fixed: Params{"e": {1, 1.5}}}, -1, ErrMissingParam, "t_ref and p_ref"},
		{"wagner without exponents", "wagner", good, FitOptions{Fixed: Params{"t_ref": {400}, "p_ref": {1e6}}}, -1, ErrMissingParam, "exponents"},
		{"clapeyron-linear ratio only", "clapeyron-linear", good, FitOptions{}, -1, ErrMissingParam, "ratio"},
		{"everything fixed", "antoine", good, FitOptions{Fixed: Params{"a": {10}, "b": {1700}, "c": {-40}}}, -1, ErrBadParam, "nothing to fit"},
		{"narrowed range", "antoine", good, FitOptions{Tmin: 310}, -1, ErrBadParam, "only widen"},
		{"narrowed upper range", "antoine", good, FitOptions{Tmax: 360}, -1, ErrBadParam, "only widen"},
		{"wrong list length", "power-sum", good, FitOptions{Fixed: Params{"t_ref": {300}, "p_ref": {1e4}, "b": {1, 2}, "a": {1}}}, -1, ErrBadParam, "terms"},
	}
	for _, tc := range tests {
		_, err := Fit(tc.family, tc.data, tc.opt)
		if err == nil {
			t.Errorf("%s: no error", tc.name)
			continue
		}
		var de *FitDataError
		if tc.row >= 0 {
			if !errors.As(err, &de) || de.Row != tc.row {
				t.Errorf("%s: error %v, want a data error at row %d", tc.name, err, tc.row)
			}
		} else if !errors.Is(err, tc.want) {
			t.Errorf("%s: error %v, want %v", tc.name, err, tc.want)
		}
		if !strings.Contains(err.Error(), tc.contain) {
			t.Errorf("%s: error %q does not say %q", tc.name, err, tc.contain)
		}
		if tc.row > 0 && !strings.Contains(err.Error(), fmt.Sprintf("row %d:", tc.row)) {
			t.Errorf("%s: error %q does not name row %d", tc.name, err, tc.row)
		}
	}
}

func TestFitWarnings(t *testing.T) {
	t.Parallel()
	ref := Params{"t_ref": {273.16}, "p_ref": {611.657}}
	fixed := func(b ...float64) FitOptions {
		return FitOptions{Fixed: Params{"t_ref": ref["t_ref"], "p_ref": ref["p_ref"], "b": b}}
	}
	one := Params{"t_ref": ref["t_ref"], "p_ref": ref["p_ref"], "a": {-3.5e5}, "b": {9}} // invented parameters
	exact := sample(t, "power-sum", one, 251, 273, 25, 0, 1)
	// Alternating deviations of 1e-3: nearly orthogonal to any smooth
	// basis function, so a superfluous term comes out near zero with a
	// standard error far larger than itself.
	alt := append([]FitPoint(nil), exact...)
	for i := range alt {
		alt[i].Pressure *= 1 + 1e-3*float64(1-2*(i%2))
	}
	tests := []struct {
		name    string
		family  string
		data    []FitPoint
		opt     FitOptions
		contain string
		noSE    bool
	}{
		{"identical exponents", "power-sum", exact, fixed(9, 9), "do not determine a[0], a[1]", true},
		{"nearly identical exponents", "power-sum", alt, fixed(9, 9.000001), "ill-conditioned", false},
		{"superfluous term", "power-sum", alt, fixed(9, 40), "do not determine a[1]", false},
		{"as many points as parameters", "clausius-clapeyron", sample(t, "clausius-clapeyron", Params{"t0": {350}, "p0": {4e4}, "delta_h": {4e4}}, 300, 400, 2, 0, 1), FitOptions{}, "as many points as parameters", true},
		{"widened range", "power-sum", exact, FitOptions{Fixed: fixed(9).Fixed, Tmin: 250}, "widened below the data", false},
		{"widened range above", "power-sum", exact, FitOptions{Fixed: fixed(9).Fixed, Tmax: 273.16}, "widened above the data", false},
		// Pressures far below what 611.657·(1 − a₀ − a₁) can resolve at
		// θ ≈ 0: the best fit misses by a factor of about 1e154
		// (FuzzFitInput regression; tiny weights kept the solver's sum
		// finite).
		{"form cannot reach the data", "power-sum", []FitPoint{{1.4e-76, 1.4e-76, 1.4e-76}, {9.2e-72, 4.3e-168, 1.4e-76}}, fixed(3, 25.75), "relative deviation above 100 %", true},
	}
	for _, tc := range tests {
		res, err := Fit(tc.family, tc.data, tc.opt)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		// RMS lies between the largest deviation over √n and the largest.
		if r, m := res.RMSRelDev, res.MaxRelDev; math.IsInf(r, 0) || math.IsNaN(r) || r > m || r < m/math.Sqrt(float64(res.N))*(1-1e-15) {
			t.Errorf("%s: RMS %g with max %g over %d points", tc.name, r, m, res.N)
		}
		if !strings.Contains(strings.Join(res.Warnings, "\n"), tc.contain) {
			t.Errorf("%s: warnings %q do not say %q", tc.name, res.Warnings, tc.contain)
		}
		if tc.noSE != (res.StdErr == nil) || (res.StdErr == nil) != (res.Correlation == nil) {
			t.Errorf("%s: StdErr %v, Correlation %v", tc.name, res.StdErr, res.Correlation)
		}
	}
	// A clean fit has no warnings, a symmetric unit-diagonal correlation
	// matrix, and its widened range is used.
	res, err := Fit("power-sum", alt, FitOptions{Fixed: fixed(9).Fixed, Tmin: 250, Tmax: 273.16})
	if err != nil {
		t.Fatal(err)
	}
	if res.Tmin != 250 || res.Tmax != 273.16 {
		t.Errorf("range [%g, %g], want [250, 273.16]", res.Tmin, res.Tmax)
	}
	res, err = Fit("antoine", sample(t, "antoine", Params{"a": {10.2}, "b": {1737}, "c": {-39}}, 280, 370, 30, 1e-3, 7), FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Warnings) != 0 {
		t.Errorf("clean Antoine fit warns: %q", res.Warnings)
	}
	for i := range res.Correlation {
		if res.Correlation[i][i] != 1 {
			t.Errorf("correlation[%d][%d] = %g", i, i, res.Correlation[i][i])
		}
		for j := range res.Correlation {
			if c := res.Correlation[i][j]; c != res.Correlation[j][i] || math.Abs(c) > 1+1e-12 {
				t.Errorf("correlation[%d][%d] = %g, [%d][%d] = %g", i, j, c, j, i, res.Correlation[j][i])
			}
		}
	}
	// Weights: a point with a huge weight is matched almost exactly.
	pts := sample(t, "antoine", Params{"a": {10.2}, "b": {1737}, "c": {-39}}, 280, 370, 30, 1e-2, 3)
	pts[10].Weight = 1e8
	res, err = Fit("antoine", pts, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Residuals[10]) > 1e-4*res.RMSRelDev*100 {
		t.Errorf("heavily weighted point: deviation %g, RMS %g", res.Residuals[10], res.RMSRelDev)
	}
	if math.Abs(res.Residuals[res.MaxRelDevRow-1]) != res.MaxRelDev {
		t.Errorf("MaxRelDevRow %d does not hold MaxRelDev %g", res.MaxRelDevRow, res.MaxRelDev)
	}
}

func TestFitFamilies(t *testing.T) {
	t.Parallel()
	want := []string{"antoine", "clapeyron-linear", "clausius-clapeyron", "extended-antoine", "inverse-log-power-sum", "log-power-sum", "power-sum", "shifted-power-sum", "simon-glatzel", "wagner"}
	got := FitFamilies()
	if strings.Join(got, ",") != strings.Join(want, ",") {
		t.Errorf("FitFamilies() = %v", got)
	}
	for _, f := range got {
		if _, err := GetFamily(f); err != nil {
			t.Errorf("fit family %q is not a registered curve family: %v", f, err)
		}
	}
}

var fitSink float64

func BenchmarkFit(b *testing.B) {
	for _, fc := range []fitCase{syntheticCases[1], syntheticCases[6]} {
		pts := sample(b, fc.family, fc.truth, fc.tmin, fc.tmax, 100, 1e-3, 1)
		opt := fc.options()
		b.Run(fc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				res, err := Fit(fc.family, pts, opt)
				if err != nil {
					b.Fatal(err)
				}
				fitSink += res.RMSRelDev
			}
		})
	}
}
