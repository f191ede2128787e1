package sdk

import (
	"context"
	"math"
	"testing"

	"github.com/hashicorp/go-hclog"

	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
)

// fuzzTemplates give each standard family its parameter names and list
// lengths; the fuzzer supplies the numbers.
var fuzzTemplates = []struct {
	family string
	volume bool
	params []string // name, or name[2] for a two-element list
}{
	{"clapeyron-linear", false, []string{"t0", "p0", "delta_h", "delta_v"}},
	{"clausius-clapeyron", false, []string{"t0", "p0", "delta_h"}},
	{"simon-glatzel", false, []string{"t0", "p0", "a", "c"}},
	{"power-sum", false, []string{"t_ref", "p_ref", "a[2]", "b[2]"}},
	{"log-power-sum", false, []string{"t_ref", "p_ref", "a[2]", "b[2]"}},
	{"shifted-power-sum", false, []string{"t_ref", "p_ref", "a[2]", "b[2]"}},
	{"inverse-log-power-sum", false, []string{"t_ref", "p_ref", "a[2]", "b[2]"}},
	{"antoine", false, []string{"a", "b", "c"}},
	{"extended-antoine", false, []string{"a", "b", "c", "d", "e"}},
	{"wagner", false, []string{"t_ref", "p_ref", "a[2]", "e[2]"}},
	{"iapws-if97", false, nil},
	{"density-power-series", true, []string{"t_c", "rho_c", "b[2]", "t[2]", "molar_mass"}},
	{"density-log-series", true, []string{"t_c", "rho_c", "c[2]", "t[2]", "molar_mass"}},
	{"rackett", true, []string{"t_c", "p_c", "z_ra"}},
	{"ideal-gas", true, nil},
	{"second-virial", true, []string{"b0", "b1", "b2"}},
	{"linear-density", true, []string{"rho0", "t0", "drho_dt", "molar_mass"}},
}

// FuzzBackendEvaluate feeds the standard families arbitrary parameters,
// ranges and points through the backend's evaluation and checks the
// boundary's promises: no panic, and every point either a finite value or
// exactly one classified failure (a volume's slope may be ±Inf, as at a
// critical point).
func FuzzBackendEvaluate(f *testing.F) {
	servers := map[bool]*backendServer{}
	for _, name := range StandardNames() {
		b, err := Standard(name)
		if err != nil {
			f.Fatal(err)
		}
		s := newBackendServer(b, hclog.NewNullLogger())
		if name == "volume" {
			servers[true] = s
		} else {
			// vapor and solid share one server for the fuzzer's purposes.
			if servers[false] == nil {
				servers[false] = s
			} else {
				for n, fam := range s.curves {
					servers[false].curves[n] = fam
				}
			}
		}
	}
	// Seeds: plausible magnitudes (invented), then hostile ones.
	f.Add(uint8(0), uint8(1), 273.16, 611.657, 6000.0, -1.6e-6, 2.0, 3.0, 250.0, 300.0, 260.0, 1000.0, false)
	f.Add(uint8(1), uint8(2), 273.16, 611.657, 51000.0, 0.0, 0.0, 0.0, 200.0, 273.16, 100.0, 611.0, true)
	f.Add(uint8(2), uint8(1), 273.16, 611.657, 4e8, 1.5, 0.0, 0.0, 273.16, 350.0, 300.0, 1e9, true)
	f.Add(uint8(3), uint8(2), 273.16, 611.657, 1.0, 2.0, 3.0, 60.0, 250.0, 273.16, 5e7, 611.657, false)
	f.Add(uint8(7), uint8(1), 10.0, 1700.0, -40.0, 0.0, 0.0, 0.0, 280.0, 380.0, 300.0, 350.0, false)
	f.Add(uint8(9), uint8(2), 647.0, 22e6, -7.8, 1.8, 1.0, 1.5, 273.16, 647.0, 1e5, 1e6, true)
	f.Add(uint8(10), uint8(2), 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 273.15, 647.096, 1e5, 22.1e6, true)
	f.Add(uint8(11), uint8(3), 647.0, 17873.0, 1.99, 0.33, 1.0, 0.018, 273.16, 640.0, 300.0, 1e5, false)
	f.Add(uint8(13), uint8(3), 647.0, 22e6, 0.23, 0.0, 0.0, 0.0, 273.16, 640.0, 1e-300, 1e5, true)
	f.Add(uint8(15), uint8(3), -1e-3, 1.0, 1e5, 0.0, 0.0, 0.0, 200.0, 300.0, 250.0, -1.0, true)
	f.Add(uint8(5), uint8(1), math.Inf(1), math.NaN(), -0.0, 1e308, -1e308, 5e-324, 0.0, -1.0, math.NaN(), math.Inf(-1), true)
	f.Fuzz(func(t *testing.T, fam, op uint8, x0, x1, x2, x3, x4, x5, tmin, tmax, v0, v1 float64, allow bool) {
		tpl := fuzzTemplates[int(fam)%len(fuzzTemplates)]
		xs := []float64{x0, x1, x2, x3, x4, x5}
		k := 0
		next := func() float64 { v := xs[k%len(xs)]; k++; return v }
		params := map[string]*pluginpb.ParamValues{}
		for _, p := range tpl.params {
			if len(p) > 3 && p[len(p)-3:] == "[2]" {
				params[p[:len(p)-3]] = &pluginpb.ParamValues{Values: []float64{next(), next()}}
			} else {
				params[p] = &pluginpb.ParamValues{Values: []float64{next()}}
			}
		}
		req := &pluginpb.EvaluateRequest{
			Family: tpl.family, Params: params, MinTemperatureK: tmin, MaxTemperatureK: tmax,
			Values: []float64{v0, v1}, AllowExtrapolation: allow,
		}
		if tpl.volume {
			req.Operation = pluginpb.Operation_OPERATION_VOLUME
			req.Pressures = []float64{v1, v0}
		} else if op%2 == 0 {
			req.Operation = pluginpb.Operation_OPERATION_TEMPERATURE
		} else {
			req.Operation = pluginpb.Operation_OPERATION_PRESSURE
		}
		resp, err := servers[tpl.volume].Evaluate(context.Background(), req)
		if err != nil {
			t.Fatalf("%s %v: %v", tpl.family, req, err)
		}
		if resp.GetSetupError() != "" {
			if len(resp.GetResults()) != 0 {
				t.Fatalf("setup error with results: %v", resp)
			}
			return
		}
		failed := map[uint32]bool{}
		for _, f := range resp.GetFailures() {
			if failed[f.GetIndex()] || f.GetIndex() >= 2 || f.GetKind() == pluginpb.FailureKind_FAILURE_KIND_UNSPECIFIED || f.GetMessage() == "" {
				t.Fatalf("bad failure %v in %v", f, resp)
			}
			failed[f.GetIndex()] = true
		}
		for i, r := range resp.GetResults() {
			d := resp.GetDerivatives()[i]
			if failed[uint32(i)] {
				if !math.IsNaN(r) || !math.IsNaN(d) {
					t.Fatalf("failed point %d has values %v, %v", i, r, d)
				}
			} else if math.IsNaN(r) || math.IsInf(r, 0) || math.IsNaN(d) || (math.IsInf(d, 0) && !tpl.volume) {
				t.Fatalf("point %d: non-finite %v, %v without a failure", i, r, d)
			}
		}
	})
}
