package thermo

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Water and carbon-dioxide coexisting-density parameters used across the
// volume and latent-heat tests. Each coefficient set is the published one.
const (
	waterMolarMass = 0.018015268 // kg/mol, IAPWS-95 / IAPWS-IF97 value
	waterTc        = 647.096     // K, IAPWS SR1-86(1992)
	waterRhoc      = 322.0       // kg/m³, IAPWS SR1-86(1992)
	co2MolarMass   = 0.0440098   // kg/mol, Span & Wagner (1996)
	co2Tc          = 304.1282    // K, Span & Wagner (1996)
	co2Rhoc        = 467.6       // kg/m³, Span & Wagner (1996)
	co2Ttriple     = 216.592     // K, Span & Wagner (1996)
)

// IAPWS SR1-86(1992) Eq. 2 (saturated liquid density), coefficients b1..b6
// and exponents 1/3, 2/3, 5/3, 16/3, 43/3, 110/3.
func waterLiquidParams() Params {
	return Params{
		"t_c": {waterTc}, "rho_c": {waterRhoc}, "molar_mass": {waterMolarMass},
		"b": {1.99274064, 1.09965342, -0.510839303, -1.75493479, -45.5170352, -6.74694450e5},
		"t": {1.0 / 3, 2.0 / 3, 5.0 / 3, 16.0 / 3, 43.0 / 3, 110.0 / 3},
	}
}

// IAPWS SR1-86(1992) Eq. 3 (saturated vapour density), coefficients c1..c6
// and exponents 2/6, 4/6, 8/6, 18/6, 37/6, 71/6.
func waterVapourParams() Params {
	return Params{
		"t_c": {waterTc}, "rho_c": {waterRhoc}, "molar_mass": {waterMolarMass},
		"c": {-2.03150240, -2.68302940, -5.38626492, -17.2991605, -44.7586581, -63.9201063},
		"t": {2.0 / 6, 4.0 / 6, 8.0 / 6, 18.0 / 6, 37.0 / 6, 71.0 / 6},
	}
}

// Span & Wagner (1996) Eq. 3.14 (saturated liquid density) (from memory).
func co2LiquidParams() Params {
	return Params{
		"t_c": {co2Tc}, "rho_c": {co2Rhoc}, "molar_mass": {co2MolarMass},
		"c": {1.9245108, -0.62385555, -0.32731127, 0.39245142},
		"t": {0.34, 0.5, 10.0 / 6, 11.0 / 6},
	}
}

// Span & Wagner (1996) Eq. 3.15 (saturated vapour density) (from memory).
func co2VapourParams() Params {
	return Params{
		"t_c": {co2Tc}, "rho_c": {co2Rhoc}, "molar_mass": {co2MolarMass},
		"c": {-1.7074879, -0.82274670, -4.6008549, -10.111178, -29.742252},
		"t": {0.34, 0.5, 1, 7.0 / 3, 14.0 / 3},
	}
}

func mustVolume(t testing.TB, family string, p Params, tmin, tmax float64) VolumeCorrelation {
	t.Helper()
	f, err := GetVolumeFamily(family)
	if err != nil {
		t.Fatal(err)
	}
	v, err := f.New(p, tmin, tmax)
	if err != nil {
		t.Fatalf("%s.New: %v", family, err)
	}
	return v
}

func TestVolumeDensityChecks(t *testing.T) {
	t.Parallel()
	wl := mustVolume(t, "density-power-series", waterLiquidParams(), 273.16, waterTc)
	wv := mustVolume(t, "density-log-series", waterVapourParams(), 273.16, waterTc)
	cl := mustVolume(t, "density-log-series", co2LiquidParams(), co2Ttriple, co2Tc)
	cv := mustVolume(t, "density-log-series", co2VapourParams(), co2Ttriple, co2Tc)
	tests := []struct {
		name string
		v    VolumeCorrelation
		m    float64
		t    float64
		rho  float64 // kg/m³
		tol  float64 // relative
	}{
		// The release's equations reproduce its check values to the printed digits.
		{"water liquid 273.16 K", wl, waterMolarMass, 273.16, 999.789, 2e-6},        // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"water liquid 373.1243 K", wl, waterMolarMass, 373.1243, 958.365, 2e-6},    // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"water liquid Tc", wl, waterMolarMass, waterTc, 322, 1e-12},                // IAPWS SR1-86(1992), Table 3 check value
		{"water vapour 273.16 K", wv, waterMolarMass, 273.16, 0.485426e-2, 2e-6},    // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"water vapour 373.1243 K", wv, waterMolarMass, 373.1243, 0.597586, 2e-6},   // IAPWS SR1-86(1992), Table 3 check value (from memory)
		{"water vapour Tc", wv, waterMolarMass, waterTc, 322, 1e-12},                // IAPWS SR1-86(1992), Table 3 check value
		{"water liquid 0 °C rounded", wl, waterMolarMass, 273.16, 999.79, 1e-5},     // common practice
		{"water liquid boiling rounded", wl, waterMolarMass, 373.1243, 958.4, 1e-4}, // common practice
		// The auxiliary equations agree with the reference equation of state to
		// well within 0.05 % at the triple point.
		{"CO2 liquid triple point", cl, co2MolarMass, co2Ttriple, 1178.46, 5e-4}, // Span & Wagner (1996), Table 3.4 triple-point liquid density (from memory)
		{"CO2 vapour triple point", cv, co2MolarMass, co2Ttriple, 13.761, 5e-4},  // Span & Wagner (1996), Table 3.4 triple-point vapour density (from memory)
		{"CO2 liquid Tc", cl, co2MolarMass, co2Tc, co2Rhoc, 1e-12},               // Span & Wagner (1996), critical density
		{"CO2 vapour Tc", cv, co2MolarMass, co2Tc, co2Rhoc, 1e-12},               // Span & Wagner (1996), critical density
	}
	for _, tc := range tests {
		v, _, err := tc.v.Volume(tc.t, 0)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if rho := tc.m / v; !scalar.EqualWithinRel(rho, tc.rho, tc.tol) {
			t.Errorf("%s: ρ = %.9g kg/m³, want %.9g (rel tol %g)", tc.name, rho, tc.rho, tc.tol)
		}
	}
}

// TestVolumeDerivatives compares every family's analytic dv/dT with a
// central difference (at constant P for the vapour forms).
func TestVolumeDerivatives(t *testing.T) {
	t.Parallel()
	tests := []struct {
		family     string
		p          Params
		tmin, tmax float64
		temps      []float64
		pres       float64
	}{
		{"density-power-series", waterLiquidParams(), 273.16, waterTc, []float64{273.2, 300, 450, 600, 640}, 0},
		{"density-log-series", waterVapourParams(), 273.16, waterTc, []float64{273.2, 300, 450, 600, 640}, 0},
		{"density-log-series", co2LiquidParams(), co2Ttriple, co2Tc, []float64{220, 273.15, 300}, 0},
		{"rackett", Params{"t_c": {co2Tc}, "p_c": {7.3773e6}, "z_ra": {0.2722}}, 200, co2Tc, []float64{220, 273.15, 300}, 0},
		{"ideal-gas", nil, 50, 400, []float64{60, 273.16, 390}, 611.657},
		{"second-virial", Params{"b0": {1e-4}, "b1": {-0.05}, "b2": {-3}}, 200, 400, []float64{220, 300, 390}, 1e5},
		{"linear-density", Params{"rho0": {916.7}, "t0": {273.15}, "drho_dt": {-0.15}, "molar_mass": {waterMolarMass}}, 200, 274, []float64{200, 250, 274}, 0},
	}
	for _, tc := range tests {
		v := mustVolume(t, tc.family, tc.p, tc.tmin, tc.tmax)
		for _, temp := range tc.temps {
			_, d, err := v.Volume(temp, tc.pres)
			if err != nil {
				t.Fatalf("%s at %g K: %v", tc.family, temp, err)
			}
			h := 1e-4
			lo, hi := math.Max(temp-h, tc.tmin), math.Min(temp+h, tc.tmax)
			vl, _, _ := v.Volume(lo, tc.pres)
			vh, _, _ := v.Volume(hi, tc.pres)
			fd := (vh - vl) / (hi - lo)
			if !scalar.EqualWithinAbsOrRel(d, fd, 1e-16, 1e-5) {
				t.Errorf("%s at %g K: dv/dT = %.10g, central difference %.10g", tc.family, temp, d, fd)
			}
		}
	}
}

func TestVolumeAtCriticalPoint(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		family string
		p      Params
		sign   float64 // sign of dv/dT as T → Tc
	}{
		{"density-power-series", waterLiquidParams(), +1}, // liquid expands toward Tc
		{"density-log-series", waterVapourParams(), -1},   // vapour contracts toward Tc
		{"rackett", Params{"t_c": {waterTc}, "p_c": {22.064e6}, "z_ra": {0.2338}}, +1},
	} {
		v := mustVolume(t, tc.family, tc.p, 300, waterTc)
		_, d, err := v.Volume(waterTc, 0)
		if err != nil {
			t.Fatal(err)
		}
		if !math.IsInf(d, int(tc.sign)) {
			t.Errorf("%s: dv/dT at Tc = %v, want %v", tc.family, d, math.Inf(int(tc.sign)))
		}
	}
}

func TestVolumeValues(t *testing.T) {
	t.Parallel()
	ig := mustVolume(t, "ideal-gas", nil, 50, 300)
	v, _, err := ig.Volume(273.16, 611.657)
	if err != nil {
		t.Fatal(err)
	}
	if want := R * 273.16 / 611.657; v != want {
		t.Errorf("ideal gas v = %g, want %g", v, want)
	}
	sv := mustVolume(t, "second-virial", Params{"b0": {-1e-4}, "b1": {0}, "b2": {0}}, 200, 400)
	v, _, err = sv.Volume(300, 1e5)
	if err != nil {
		t.Fatal(err)
	}
	if want := R*300/1e5 - 1e-4; !scalar.EqualWithinRel(v, want, 1e-15) {
		t.Errorf("second virial v = %g, want %g", v, want)
	}
	// Rackett at Tc: v = R·Tc·Z_RA/Pc exactly.
	rk := mustVolume(t, "rackett", Params{"t_c": {co2Tc}, "p_c": {7.3773e6}, "z_ra": {0.2722}}, 200, co2Tc)
	v, _, err = rk.Volume(co2Tc, 0)
	if err != nil {
		t.Fatal(err)
	}
	if want := R * co2Tc * 0.2722 / 7.3773e6; !scalar.EqualWithinRel(v, want, 1e-14) {
		t.Errorf("Rackett v(Tc) = %g, want %g", v, want)
	}
	// Rackett for CO2 with Z_RA = 0.2722 against the Span–Wagner liquid
	// density at 250 K: the generalised form is good to a few percent.
	cl := mustVolume(t, "density-log-series", co2LiquidParams(), co2Ttriple, co2Tc)
	vr, _, _ := rk.Volume(250, 0)
	vs, _, _ := cl.Volume(250, 0)
	if !scalar.EqualWithinRel(vr, vs, 0.03) {
		t.Errorf("Rackett CO2 at 250 K: v = %g, Span–Wagner liquid %g (want within 3 %%)", vr, vs)
	}
	// Ice Ih at 273.15 K, 916.7 kg/m³ (common practice).
	ice := mustVolume(t, "linear-density", Params{"rho0": {916.7}, "t0": {273.15}, "drho_dt": {0}, "molar_mass": {waterMolarMass}}, 200, 273.16)
	v, d, err := ice.Volume(273.15, 0)
	if err != nil {
		t.Fatal(err)
	}
	if want := waterMolarMass / 916.7; v != want || d != 0 {
		t.Errorf("ice v = %g dv/dT = %g, want %g and 0", v, d, want)
	}
}

func TestVolumeBadInput(t *testing.T) {
	t.Parallel()
	good := map[string]Params{
		"density-power-series": waterLiquidParams(),
		"density-log-series":   waterVapourParams(),
		"rackett":              {"t_c": {waterTc}, "p_c": {22.064e6}, "z_ra": {0.2338}},
		"ideal-gas":            nil,
		"second-virial":        {"b0": {0}, "b1": {0}, "b2": {0}},
		"linear-density":       {"rho0": {916.7}, "t0": {273.15}, "drho_dt": {0}, "molar_mass": {waterMolarMass}},
	}
	for fam, p := range good {
		v := mustVolume(t, fam, p, 300, 600)
		for _, temp := range []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, -1, math.Copysign(0, -1), 299.999, 600.001} {
			if _, _, err := v.Volume(temp, 1e5); err == nil {
				t.Errorf("%s: Volume(%v) accepted", fam, temp)
			}
		}
		var re *RangeError
		if _, _, err := v.Volume(700, 1e5); !errors.As(err, &re) || re.Min != 300 || re.Max != 600 {
			t.Errorf("%s: Volume(700) error %v, want a *RangeError [300, 600]", fam, err)
		}
	}
	for _, fam := range []string{"ideal-gas", "second-virial"} {
		v := mustVolume(t, fam, good[fam], 300, 600)
		for _, p := range []float64{math.NaN(), math.Inf(1), 0, -5} {
			var ie *InputError
			if _, _, err := v.Volume(400, p); !errors.As(err, &ie) {
				t.Errorf("%s: Volume(400, %v) error %v, want *InputError", fam, p, err)
			}
		}
	}
	// Second virial beyond Z = 0.5.
	sv := mustVolume(t, "second-virial", Params{"b0": {-1e-3}, "b1": {0}, "b2": {0}}, 200, 400)
	var re *RangeError
	if _, _, err := sv.Volume(300, 2e6); !errors.As(err, &re) {
		t.Errorf("second virial at Z < 0.5: error %v, want *RangeError", err)
	}

	with := func(p Params, k string, v ...float64) Params {
		q := Params{}
		for kk, vv := range p {
			q[kk] = vv
		}
		if v == nil {
			delete(q, k)
		} else {
			q[k] = v
		}
		return q
	}
	bad := []struct {
		name       string
		family     string
		p          Params
		tmin, tmax float64
		want       error
	}{
		{"missing t_c", "density-power-series", with(good["density-power-series"], "t_c"), 300, 600, ErrMissingParam},
		{"negative rho_c", "density-power-series", with(good["density-power-series"], "rho_c", -1), 300, 600, ErrBadParam},
		{"missing molar mass", "density-log-series", with(good["density-log-series"], "molar_mass"), 300, 600, ErrMissingParam},
		{"length mismatch", "density-power-series", with(good["density-power-series"], "t", 1), 300, 600, ErrBadParam},
		{"empty list", "density-log-series", with(with(good["density-log-series"], "c", []float64{}...), "t", []float64{}...), 300, 600, ErrBadParam},
		{"negative exponent", "density-log-series", with(good["density-log-series"], "t", -1, 1, 1, 1, 1, 1), 300, 600, ErrBadParam},
		{"NaN coefficient", "density-power-series", with(good["density-power-series"], "b", math.NaN(), 0, 0, 0, 0, 0), 300, 600, ErrBadParam},
		{"above Tc", "density-power-series", good["density-power-series"], 300, 700, ErrBadParam},
		{"reversed range", "rackett", good["rackett"], 600, 300, ErrBadParam},
		{"zero tmin", "ideal-gas", nil, 0, 300, ErrBadParam},
		{"NaN range", "ideal-gas", nil, math.NaN(), 300, ErrBadParam},
		{"unknown ideal-gas param", "ideal-gas", Params{"b0": {1}}, 200, 300, ErrBadParam},
		{"misspelt rackett param", "rackett", with(good["rackett"], "zra", 0.25), 300, 600, ErrBadParam},
		{"misspelt virial param", "second-virial", with(good["second-virial"], "b3", 0), 300, 600, ErrBadParam},
		{"misspelt series param", "density-log-series", with(good["density-log-series"], "tc", 600), 300, 600, ErrBadParam},
		{"z_ra ≥ 1", "rackett", with(good["rackett"], "z_ra", 1.2), 300, 600, ErrBadParam},
		{"missing b2", "second-virial", with(good["second-virial"], "b2"), 300, 600, ErrMissingParam},
		{"negative density", "linear-density", with(good["linear-density"], "drho_dt", 10), 100, 273, ErrBadParam},
		{"negative density series", "density-power-series", with(good["density-power-series"], "b", -2, 0, 0, 0, 0, 0), 300, 600, ErrBadParam},
	}
	for _, tc := range bad {
		f, err := GetVolumeFamily(tc.family)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := f.New(tc.p, tc.tmin, tc.tmax); !errors.Is(err, tc.want) {
			t.Errorf("%s: New error %v, want %v", tc.name, err, tc.want)
		}
	}
	if _, err := GetVolumeFamily("no-such"); !errors.Is(err, ErrUnknownFamily) {
		t.Errorf("GetVolumeFamily(no-such) = %v", err)
	}
}

func TestVolumeFamiliesRegistered(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"density-power-series", "density-log-series", "rackett", "ideal-gas", "second-virial", "linear-density"} {
		f, err := GetVolumeFamily(name)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if f.Name() != name {
			t.Errorf("family %q reports name %q", name, f.Name())
		}
	}
}

var volumeSink float64

func BenchmarkVolume(b *testing.B) {
	for _, bc := range []struct {
		family string
		p      Params
		pres   float64
	}{
		{"density-power-series", waterLiquidParams(), 0},
		{"density-log-series", waterVapourParams(), 0},
		{"rackett", Params{"t_c": {waterTc}, "p_c": {22.064e6}, "z_ra": {0.2338}}, 0},
		{"ideal-gas", nil, 1e5},
		{"second-virial", Params{"b0": {-1e-4}, "b1": {0}, "b2": {0}}, 1e5},
		{"linear-density", Params{"rho0": {916.7}, "t0": {273.15}, "drho_dt": {0}, "molar_mass": {waterMolarMass}}, 0},
	} {
		v := mustVolume(b, bc.family, bc.p, 300, 600)
		b.Run(bc.family, func(b *testing.B) {
			b.ReportAllocs()
			temp := 300.0
			for b.Loop() {
				x, d, _ := v.Volume(temp, bc.pres)
				volumeSink += x + d
				temp += 1e-6
				if temp > 600 {
					temp = 300
				}
			}
		})
	}
}
