package sdk

import (
	"context"
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/hashicorp/go-hclog"
	"github.com/hashicorp/go-plugin"
	"gonum.org/v1/gonum/floats/scalar"

	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
	"github.com/phasebound/phasebound/thermo"
)

// inProcess connects a host-side stub to a backend server over go-plugin's
// in-process gRPC test connection.
func inProcess(t *testing.T, b Backend) pluginpb.BackendServiceClient {
	t.Helper()
	ps := map[string]plugin.Plugin{pluginName: &grpcPlugin{server: newBackendServer(b, hclog.NewNullLogger())}}
	client, _ := plugin.TestPluginGRPCConn(t, false, ps)
	// Close asks the server to stop through go-plugin's controller; a
	// second Stop of our own would race with it.
	t.Cleanup(func() { _ = client.Close() })
	raw, err := client.Dispense(pluginName)
	if err != nil {
		t.Fatal(err)
	}
	return raw.(pluginpb.BackendServiceClient)
}

var lineParams = thermo.Params{"a": {1000}, "b": {50}} // invented test line P = 1000 Pa + 50 Pa/K·T

func TestProtocolEvaluate(t *testing.T) {
	rpc := inProcess(t, testBackend("proto"))
	nan, inf := math.NaN(), math.Inf(1)
	type want struct {
		results  []float64 // NaN where the point fails
		derivs   []float64
		failures []Failure // Message checked for non-emptiness only
		extrap   []int
	}
	tests := []struct {
		name string
		req  EvalRequest
		want want
	}{
		{
			name: "pressure in range, at both ends",
			req:  EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{200, 250.5, 300}},
			want: want{results: []float64{11000, 13525, 16000}, derivs: []float64{50, 50, 50}},
		},
		{
			name: "pressure failures classified",
			req:  EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{nan, -1, 0, 199, 301, inf, 250}},
			want: want{
				results: []float64{nan, nan, nan, nan, nan, nan, 13500},
				derivs:  []float64{nan, nan, nan, nan, nan, nan, 50},
				failures: []Failure{
					{Index: 0, Kind: FailInvalid}, {Index: 1, Kind: FailInvalid}, {Index: 2, Kind: FailInvalid},
					{Index: 3, Kind: FailOutOfRange, Min: 200, Max: 300}, {Index: 4, Kind: FailOutOfRange, Min: 200, Max: 300},
					{Index: 5, Kind: FailInvalid},
				},
			},
		},
		{
			name: "pressure extrapolated on request",
			req: EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure,
				Values: []float64{150, 250, 400, -5}, AllowExtrapolation: true},
			want: want{
				results:  []float64{8500, 13500, 21000, nan},
				derivs:   []float64{50, 50, 50, nan},
				failures: []Failure{{Index: 3, Kind: FailInvalid}},
				extrap:   []int{0, 2},
			},
		},
		{
			name: "temperature in range and out",
			req:  EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpTemperature, Values: []float64{13500, 20000, 0}},
			want: want{
				results:  []float64{250, nan, nan},
				derivs:   []float64{50, nan, nan},
				failures: []Failure{{Index: 1, Kind: FailOutOfRange, Min: 11000, Max: 16000}, {Index: 2, Kind: FailInvalid}},
			},
		},
		{
			name: "temperature extrapolated",
			req: EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpTemperature,
				Values: []float64{21000}, AllowExtrapolation: true},
			want: want{results: []float64{400}, derivs: []float64{50}, extrap: []int{0}},
		},
		{
			name: "volume with pressures",
			req: EvalRequest{Family: "test-ideal", Tmin: 200, Tmax: 300, Op: OpVolume,
				Values: []float64{250, 250, 350}, Pressures: []float64{1e5, -1, 1e5}},
			want: want{
				results:  []float64{thermo.R * 250 / 1e5, nan, nan},
				derivs:   []float64{thermo.R / 1e5, nan, nan},
				failures: []Failure{{Index: 1, Kind: FailInvalid}, {Index: 2, Kind: FailOutOfRange, Min: 200, Max: 300}},
			},
		},
		{
			name: "volume extrapolated",
			req: EvalRequest{Family: "test-ideal", Tmin: 200, Tmax: 300, Op: OpVolume,
				Values: []float64{350}, Pressures: []float64{2e5}, AllowExtrapolation: true},
			want: want{results: []float64{thermo.R * 350 / 2e5}, derivs: []float64{thermo.R / 2e5}, extrap: []int{0}},
		},
		{
			name: "empty batch",
			req:  EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure},
			want: want{},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			for _, chunk := range []int{maxChunkPoints, 2} {
				got, err := evaluate(context.Background(), "proto", rpc, nil, tc.req, chunk)
				if err != nil {
					t.Fatalf("chunk %d: %v", chunk, err)
				}
				checkFloats(t, "results", got.Results, tc.want.results)
				checkFloats(t, "derivatives", got.Derivatives, tc.want.derivs)
				if len(got.Failures) != len(tc.want.failures) {
					t.Fatalf("chunk %d: failures = %+v, want %+v", chunk, got.Failures, tc.want.failures)
				}
				for i, f := range got.Failures {
					w := tc.want.failures[i]
					if f.Index != w.Index || f.Kind != w.Kind || f.Min != w.Min || f.Max != w.Max || f.Message == "" {
						t.Errorf("chunk %d: failure %d = %+v, want %+v with a message", chunk, i, f, w)
					}
				}
				if !slices.Equal(got.Extrapolated, tc.want.extrap) {
					t.Errorf("chunk %d: extrapolated = %v, want %v", chunk, got.Extrapolated, tc.want.extrap)
				}
			}
		})
	}
}

func checkFloats(t *testing.T, what string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", what, len(got), len(want))
	}
	for i := range got {
		if math.IsNaN(want[i]) != math.IsNaN(got[i]) ||
			(!math.IsNaN(want[i]) && !scalar.EqualWithinAbsOrRel(got[i], want[i], 0, 1e-14)) {
			t.Errorf("%s[%d] = %v, want %v", what, i, got[i], want[i])
		}
	}
}

func TestProtocolSetupErrors(t *testing.T) {
	rpc := inProcess(t, testBackend("proto"))
	tests := []struct {
		name    string
		req     EvalRequest
		mention []string
	}{
		{"unknown family", EvalRequest{Family: "nope", Op: OpPressure, Values: []float64{1}}, []string{`"nope"`, "test-line"}},
		{"unknown volume family", EvalRequest{Family: "test-line", Op: OpVolume, Values: []float64{1}}, []string{`"test-line"`, "test-ideal"}},
		{"missing parameter", EvalRequest{Family: "test-line", Params: thermo.Params{"a": {1}}, Tmin: 1, Tmax: 2, Op: OpPressure, Values: []float64{1}}, []string{`"b"`}},
		{"bad parameter", EvalRequest{Family: "test-line", Params: thermo.Params{"a": {1}, "b": {-1}}, Tmin: 1, Tmax: 2, Op: OpPressure, Values: []float64{1}}, []string{`"b"`, "> 0"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := evaluate(context.Background(), "proto", rpc, nil, tc.req, maxChunkPoints)
			var se *SetupError
			if !errors.As(err, &se) {
				t.Fatalf("err = %v, want a *SetupError", err)
			}
			if errors.Is(err, ErrBackendUnavailable) {
				t.Errorf("a setup error must not read as unavailable: %v", err)
			}
			for _, m := range tc.mention {
				if !strings.Contains(err.Error(), m) {
					t.Errorf("error %q does not mention %s", err, m)
				}
			}
		})
	}
}

func TestProtocolPanicIsContained(t *testing.T) {
	rpc := inProcess(t, testBackend("proto"))
	_, err := evaluate(context.Background(), "proto", rpc, nil,
		EvalRequest{Family: "test-panic", Op: OpPressure, Values: []float64{1}}, maxChunkPoints)
	if err == nil || errors.Is(err, ErrBackendUnavailable) || !strings.Contains(err.Error(), "panicked") {
		t.Fatalf("err = %v, want a plain error saying the family panicked", err)
	}
	got, err := evaluate(context.Background(), "proto", rpc, nil,
		EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{250}}, maxChunkPoints)
	if err != nil || got.Results[0] != 13500 {
		t.Fatalf("after a panic: %v, %v; want 13500", got.Results, err)
	}
}

func TestProtocolCachesBuiltCorrelations(t *testing.T) {
	b := testBackend("proto")
	counter := b.Families[3].(*countingFamily)
	rpc := inProcess(t, b)
	call := func(p thermo.Params, tmax float64) {
		t.Helper()
		if _, err := evaluate(context.Background(), "proto", rpc, nil,
			EvalRequest{Family: "test-counting", Params: p, Tmin: 200, Tmax: tmax, Op: OpPressure, Values: []float64{250}}, 1); err != nil {
			t.Fatal(err)
		}
	}
	call(lineParams, 300)
	call(thermo.Params{"b": {50}, "a": {1000}}, 300) // same key, other map order
	if n := counter.builds.Load(); n != 1 {
		t.Errorf("built %d times for one key, want 1", n)
	}
	call(thermo.Params{"a": {1000}, "b": {50.000000001}}, 300)
	call(lineParams, 301)
	if n := counter.builds.Load(); n != 3 {
		t.Errorf("built %d times for three keys, want 3", n)
	}
}

func TestProtocolDescribe(t *testing.T) {
	rpc := inProcess(t, testBackend("proto"))
	d, err := rpc.Describe(context.Background(), &pluginpb.DescribeRequest{})
	if err != nil {
		t.Fatal(err)
	}
	if d.GetBackend() != "proto" || d.GetVersion() != "test" ||
		!slices.Equal(d.GetCurveFamilies(), []string{"test-counting", "test-line", "test-panic", "test-sleep"}) ||
		!slices.Equal(d.GetVolumeFamilies(), []string{"test-ideal"}) {
		t.Errorf("Describe = %v", d)
	}
}

func TestEvalRequestCheck(t *testing.T) {
	tests := []struct {
		name string
		req  EvalRequest
		ok   bool
	}{
		{"pressure", EvalRequest{Op: OpPressure}, true},
		{"no op", EvalRequest{}, false},
		{"op out of range", EvalRequest{Op: 9}, false},
		{"volume without pressures", EvalRequest{Op: OpVolume, Values: []float64{1, 2}}, true},
		{"volume pressures mismatched", EvalRequest{Op: OpVolume, Values: []float64{1, 2}, Pressures: []float64{1}}, false},
	}
	for _, tc := range tests {
		if err := tc.req.check(); (err == nil) != tc.ok {
			t.Errorf("%s: check() = %v, want ok=%v", tc.name, err, tc.ok)
		}
	}
}

func TestBackendValidate(t *testing.T) {
	tests := []struct {
		name string
		b    Backend
		ok   bool
	}{
		{"test backend", testBackend("ok"), true},
		{"bad name", Backend{Name: "Bad Name", Families: []thermo.Family{lineFamily{}}}, false},
		{"no families", Backend{Name: "empty"}, false},
		{"duplicate", Backend{Name: "dup", Families: []thermo.Family{lineFamily{}, lineFamily{}}}, false},
		{"nil family", Backend{Name: "nil", Families: []thermo.Family{nil}}, false},
	}
	for _, tc := range tests {
		if err := tc.b.validate(); (err == nil) != tc.ok {
			t.Errorf("%s: validate() = %v, want ok=%v", tc.name, err, tc.ok)
		}
	}
}

// TestWireNumbering: Op and FailureKind convert to and from the wire by
// value, so their numbering must match the protocol's enums.
func TestWireNumbering(t *testing.T) {
	for op, name := range opNames {
		if got := pluginpb.Operation(op).String(); got != "OPERATION_"+strings.ToUpper(name) {
			t.Errorf("Op %v is %s on the wire", op, got)
		}
	}
	for kind, name := range failNames {
		if got := pluginpb.FailureKind(kind).String(); got != "FAILURE_KIND_"+strings.ToUpper(strings.ReplaceAll(name, "-", "_")) {
			t.Errorf("FailureKind %v is %s on the wire", kind, got)
		}
	}
}
