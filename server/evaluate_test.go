package server

import (
	"context"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"google.golang.org/genproto/googleapis/rpc/errdetails"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

const (
	sat  = pb.CurveKind_CURVE_KIND_SATURATION
	melt = pb.CurveKind_CURVE_KIND_MELTING
	subl = pb.CurveKind_CURVE_KIND_SUBLIMATION
	byT  = pb.Variable_VARIABLE_TEMPERATURE
	byP  = pb.Variable_VARIABLE_PRESSURE
)

func TestEvaluateReferenceValues(t *testing.T) {
	_, c, _ := testServer(t)
	tests := []struct {
		name   string
		curve  pb.CurveKind
		branch string
		given  pb.Variable
		x      float64
		want   float64 // P in Pa for byT, T in K for byP
		rel    float64
	}{
		{"IF97 Psat(300 K)", sat, "", byT, 300, 3.53658941e3, 1e-8},                 // IAPWS-IF97, Table 35 check value
		{"IF97 Psat(500 K)", sat, "", byT, 500, 2.63889776e6, 1e-8},                 // IAPWS-IF97, Table 35 check value (from memory)
		{"IF97 Psat(600 K)", sat, "", byT, 600, 1.23443146e7, 1e-8},                 // IAPWS-IF97, Table 35 check value (from memory)
		{"IF97 Tsat(0.1 MPa)", sat, "", byP, 0.1e6, 372.755919, 1e-8},               // IAPWS-IF97, Table 36 check value (from memory)
		{"IF97 Tsat(1 MPa)", sat, "", byP, 1e6, 453.035632, 1e-8},                   // IAPWS-IF97, Table 36 check value (from memory)
		{"IF97 Tsat(10 MPa)", sat, "", byP, 10e6, 584.149488, 1e-8},                 // IAPWS-IF97, Table 36 check value (from memory)
		{"ice Ih melting 260 K", melt, "ice-Ih", byT, 260, 138.268e6, 1e-5},         // IAPWS R14-08(2011), Table 3 check value
		{"ice III melting 254 K", melt, "ice-III", byT, 254, 268.685e6, 1e-5},       // IAPWS R14-08(2011), Table 3 check value
		{"ice Ih sublimation 230 K", subl, "", byT, 230, 8.94735, 1e-5},             // IAPWS R14-08(2011), Table 3 check value
		{"ice Ih sublimation 230 K named", subl, "ice-Ih", byT, 230, 8.94735, 1e-5}, // IAPWS R14-08(2011), Table 3 check value
	}
	for _, tt := range tests {
		for _, exact := range []bool{false, true} {
			resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
				Substance: "water", Curve: tt.curve, Branch: tt.branch, Given: tt.given,
				Values: []float64{tt.x}, Exact: exact,
			})
			if err != nil {
				t.Fatalf("%s (exact %v): %v", tt.name, exact, err)
			}
			expand(t, resp)
			if resp.Status[0] != pb.PointStatus_POINT_STATUS_OK {
				t.Fatalf("%s (exact %v): status %v %v", tt.name, exact, resp.Status[0], resp.Errors)
			}
			got := resp.PressurePa[0]
			if tt.given == byP {
				got = resp.TemperatureK[0]
			}
			if !scalar.EqualWithinAbsOrRel(got, tt.want, 0, tt.rel) {
				t.Errorf("%s (exact %v) = %.9g, want %.9g (rel %g)", tt.name, exact, got, tt.want, tt.rel)
			}
			if resp.Exact != exact || resp.CatalogVersion == "" {
				t.Errorf("%s: exact %v, catalog version %q", tt.name, resp.Exact, resp.CatalogVersion)
			}
			if !exact && !(resp.TableMaxRelError > 0 && resp.TableMaxRelError <= 1e-10) {
				t.Errorf("%s: table error %g outside (0, 1e-10]", tt.name, resp.TableMaxRelError)
			}
		}
	}
}

// TestTablesAgreeWithBackend compares the table path with the exact path
// over a dense batch: the measured table errors must hold for values and
// slopes.
func TestTablesAgreeWithBackend(t *testing.T) {
	_, c, _ := testServer(t)
	for _, q := range []struct {
		curve      pb.CurveKind
		branch     string
		given      pb.Variable
		lo, hi     float64
		slopeRelTo float64
	}{
		{sat, "", byT, 273.16, 647.0, 1e-7},
		{sat, "", byP, 700, 22e6, 1e-7},
		{melt, "ice-Ih", byT, 251.2, 273.16, 1e-7},
		{melt, "", byP, 1000, 350e6, 1e-7},
		{subl, "", byT, 50, 273.16, 1e-7},
	} {
		const n = 2001
		vals := make([]float64, n)
		for i := range vals {
			vals[i] = q.lo + (q.hi-q.lo)*float64(i)/(n-1)
		}
		req := &pb.EvaluateRequest{Substance: "water", Curve: q.curve, Branch: q.branch, Given: q.given, Values: vals}
		tab, err := c.Evaluate(context.Background(), req)
		if err != nil {
			t.Fatal(err)
		}
		req.Exact = true
		ex, err := c.Evaluate(context.Background(), req)
		if err != nil {
			t.Fatal(err)
		}
		expand(t, tab)
		expand(t, ex)
		for i := range vals {
			if tab.Status[i] != ex.Status[i] {
				t.Fatalf("%v %s at %g: table status %v, exact %v", q.curve, q.branch, vals[i], tab.Status[i], ex.Status[i])
			}
			if tab.Status[i] != pb.PointStatus_POINT_STATUS_OK {
				continue
			}
			if !scalar.EqualWithinAbsOrRel(tab.PressurePa[i], ex.PressurePa[i], 0, 1e-10) ||
				!scalar.EqualWithinAbsOrRel(tab.TemperatureK[i], ex.TemperatureK[i], 0, 1e-10) {
				t.Errorf("%v %s at %g: table (%.15g K, %.15g Pa), exact (%.15g K, %.15g Pa)", q.curve, q.branch, vals[i],
					tab.TemperatureK[i], tab.PressurePa[i], ex.TemperatureK[i], ex.PressurePa[i])
			}
			if !scalar.EqualWithinAbsOrRel(tab.DpdtPaPerK[i], ex.DpdtPaPerK[i], 1e-12*math.Abs(ex.PressurePa[i]), q.slopeRelTo) {
				t.Errorf("%v %s at %g: slope table %.12g, exact %.12g", q.curve, q.branch, vals[i], tab.DpdtPaPerK[i], ex.DpdtPaPerK[i])
			}
		}
	}
}

func TestEvaluatePointStatuses(t *testing.T) {
	_, c, _ := testServer(t)
	vals := []float64{300, math.NaN(), -5, 0, 700, math.Inf(1), 250}
	resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: sat, Given: byT, Values: vals,
	})
	if err != nil {
		t.Fatal(err)
	}
	want := []pb.PointStatus{
		pb.PointStatus_POINT_STATUS_OK, pb.PointStatus_POINT_STATUS_INVALID, pb.PointStatus_POINT_STATUS_INVALID,
		pb.PointStatus_POINT_STATUS_INVALID, pb.PointStatus_POINT_STATUS_OUT_OF_RANGE, pb.PointStatus_POINT_STATUS_INVALID,
		pb.PointStatus_POINT_STATUS_OUT_OF_RANGE,
	}
	for i, w := range want {
		if resp.Status[i] != w {
			t.Errorf("point %d (%v): status %v, want %v", i, vals[i], resp.Status[i], w)
		}
		if w != pb.PointStatus_POINT_STATUS_OK && !math.IsNaN(resp.PressurePa[i]) {
			t.Errorf("point %d failed but has pressure %v", i, resp.PressurePa[i])
		}
	}
	if len(resp.Errors) != 6 {
		t.Fatalf("%d point errors, want 6: %v", len(resp.Errors), resp.Errors)
	}
	for k, e := range resp.Errors {
		if k > 0 && e.Index <= resp.Errors[k-1].Index {
			t.Errorf("errors not in index order: %v", resp.Errors)
		}
		if e.Status == pb.PointStatus_POINT_STATUS_OUT_OF_RANGE && !(e.ValidMin == 273.15 && e.ValidMax == 647.096) {
			t.Errorf("out-of-range point %d: valid range [%g, %g], want [273.15, 647.096]", e.Index, e.ValidMin, e.ValidMax)
		}
	}
	if got := resp.BranchNames[resp.BranchIndex[0]]; got != "" {
		t.Errorf("branch of point 0 = %q", got)
	}
}

func TestEvaluateAmbiguousBranch(t *testing.T) {
	_, c, _ := testServer(t)
	// 254 K lies on both the ice Ih and the ice III melting branch (IAPWS R14-08(2011) ranges).
	resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: melt, Given: byT, Values: []float64{254, 270},
	})
	if err != nil {
		t.Fatal(err)
	}
	if resp.Status[0] != pb.PointStatus_POINT_STATUS_AMBIGUOUS_BRANCH {
		t.Fatalf("254 K: status %v, want ambiguous", resp.Status[0])
	}
	if m := resp.Errors[0].Message; !strings.Contains(m, "ice-Ih") || !strings.Contains(m, "ice-III") {
		t.Errorf("ambiguity message %q does not name both branches", m)
	}
	if resp.Status[1] != pb.PointStatus_POINT_STATUS_OK || resp.BranchNames[resp.BranchIndex[1]] != "ice-Ih" {
		t.Errorf("270 K: status %v branch %q", resp.Status[1], resp.BranchNames[resp.BranchIndex[1]])
	}
	// T(P) picks the branch by pressure: 250 MPa is on ice III.
	resp, err = c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: melt, Given: byP, Values: []float64{100e6, 250e6},
	})
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range []string{"ice-Ih", "ice-III"} {
		if resp.Status[i] != pb.PointStatus_POINT_STATUS_OK || resp.BranchNames[resp.BranchIndex[i]] != w {
			t.Errorf("point %d: status %v, branch %q, want %q", i, resp.Status[i], resp.BranchNames[resp.BranchIndex[i]], w)
		}
	}
	// Ice Ih melts under pressure: T falls as P rises (negative slope, common practice).
	if !(resp.DpdtPaPerK[0] < 0 && resp.TemperatureK[0] < 273.16) {
		t.Errorf("ice Ih at 100 MPa: T %g, slope %g", resp.TemperatureK[0], resp.DpdtPaPerK[0])
	}
}

func badRequestOf(t *testing.T, err error) (codes.Code, string, []*errdetails.BadRequest_FieldViolation) {
	t.Helper()
	st, ok := status.FromError(err)
	if !ok {
		t.Fatalf("not a status: %v", err)
	}
	for _, d := range st.Details() {
		if br, ok := d.(*errdetails.BadRequest); ok {
			return st.Code(), st.Message(), br.FieldViolations
		}
	}
	t.Fatalf("status %v carries no BadRequest", st)
	return 0, "", nil
}

func TestEvaluateRequestErrors(t *testing.T) {
	_, c, _ := testServer(t)
	ctx := context.Background()
	tests := []struct {
		name    string
		req     *pb.EvaluateRequest
		code    codes.Code
		field   string
		mention []string
	}{
		{"unknown substance", &pb.EvaluateRequest{Substance: "unobtainium", Curve: sat, Given: byT, Values: []float64{300}},
			codes.InvalidArgument, "substance", []string{"unobtainium", "water"}},
		{"missing curve", &pb.EvaluateRequest{Substance: "water", Given: byT, Values: []float64{300}},
			codes.InvalidArgument, "curve", []string{"saturation", "melting", "sublimation"}},
		{"absent curve", &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_TRANSITION, Given: byT, Values: []float64{300}},
			codes.InvalidArgument, "curve", []string{"transition", "saturation"}},
		{"unknown branch", &pb.EvaluateRequest{Substance: "water", Curve: melt, Branch: "ice-XX", Given: byT, Values: []float64{260}},
			codes.InvalidArgument, "branch", []string{"ice-XX", "ice-Ih", "ice-III"}},
		{"missing given", &pb.EvaluateRequest{Substance: "water", Curve: sat, Values: []float64{300}},
			codes.InvalidArgument, "given", []string{"TEMPERATURE"}},
		{"strict out of range", &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: []float64{300, 700}, Strict: true},
			codes.OutOfRange, "values[1]", []string{"700", "273.15", "647.096"}},
		{"strict NaN", &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: []float64{math.NaN(), 700}, Strict: true},
			codes.InvalidArgument, "values[0]", []string{"NaN"}},
	}
	for _, tt := range tests {
		_, err := c.Evaluate(ctx, tt.req)
		code, msg, fv := badRequestOf(t, err)
		if code != tt.code {
			t.Errorf("%s: code %v, want %v (%s)", tt.name, code, tt.code, msg)
		}
		if len(fv) == 0 || fv[0].Field != tt.field {
			t.Errorf("%s: violations %v, want field %q first", tt.name, fv, tt.field)
		}
		for _, m := range tt.mention {
			if !strings.Contains(msg, m) {
				t.Errorf("%s: message %q does not mention %q", tt.name, msg, m)
			}
		}
	}
}

func TestEvaluateTooManyPoints(t *testing.T) {
	srv, c, _ := testServer(t)
	_, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: sat, Given: byT, Values: make([]float64, srv.opts.MaxPointsPerRequest+1),
	})
	if status.Code(err) != codes.ResourceExhausted {
		t.Fatalf("error %v, want ResourceExhausted", err)
	}
}

func TestEvaluateExtrapolation(t *testing.T) {
	_, c, _ := testServer(t)
	resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: subl, Given: byT, Values: []float64{40, 230}, AllowExtrapolation: true,
	})
	if err != nil {
		t.Fatal(err)
	}
	if resp.Status[0] != pb.PointStatus_POINT_STATUS_EXTRAPOLATED || !(resp.PressurePa[0] > 0 && resp.PressurePa[0] < 8.94735) {
		t.Errorf("40 K extrapolated: status %v, P %g", resp.Status[0], resp.PressurePa[0])
	}
	if resp.Status[1] != pb.PointStatus_POINT_STATUS_OK {
		t.Errorf("230 K: status %v", resp.Status[1])
	}
}

func TestEvaluateLatentHeat(t *testing.T) {
	_, c, _ := testServer(t)
	for _, exact := range []bool{false, true} {
		resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
			Substance: "water", Curve: sat, Given: byT, Values: []float64{373.124}, IncludeLatentHeat: true, Exact: exact,
		})
		if err != nil {
			t.Fatal(err)
		}
		if resp.LatentHeatSource[0] != pb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON {
			t.Fatalf("source %v", resp.LatentHeatSource[0])
		}
		// Ideal vapour and a constant liquid: about 2257 kJ/kg at the normal boiling
		// point (common practice) within the few per cent the ideal vapour costs.
		if h := resp.LatentHeatJPerKg[0]; !scalar.EqualWithinAbsOrRel(h, 2257e3, 0, 0.03) {
			t.Errorf("exact %v: latent heat %g J/kg", exact, h)
		}
		want := resp.TemperatureK[0] * (resp.VolumeHighTPhaseM3PerMol[0] - resp.VolumeLowTPhaseM3PerMol[0]) * resp.DpdtPaPerK[0]
		if !scalar.EqualWithinAbsOrRel(resp.LatentHeatJPerMol[0], want, 0, 1e-12) {
			t.Errorf("latent heat %g J/mol is not T·Δv·dP/dT = %g", resp.LatentHeatJPerMol[0], want)
		}
	}
	// Sublimation has no volumes in the test catalog: the ideal-gas estimate.
	resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: subl, Given: byT, Values: []float64{250}, IncludeLatentHeat: true,
	})
	if err != nil {
		t.Fatal(err)
	}
	// ΔH_sub of ice about 51 kJ/mol, common practice.
	if resp.LatentHeatSource[0] != pb.LatentHeatSource_LATENT_HEAT_SOURCE_IDEAL_GAS_ESTIMATE ||
		!scalar.EqualWithinAbsOrRel(resp.LatentHeatJPerMol[0], 51e3, 0, 0.02) {
		t.Errorf("sublimation: source %v, %g J/mol", resp.LatentHeatSource[0], resp.LatentHeatJPerMol[0])
	}
	// Melting without volumes: no value, and says why.
	resp, err = c.Evaluate(context.Background(), &pb.EvaluateRequest{
		Substance: "water", Curve: melt, Branch: "ice-Ih", Given: byT, Values: []float64{260}, IncludeLatentHeat: true,
	})
	if err != nil {
		t.Fatal(err)
	}
	if resp.LatentHeatSource[0] != pb.LatentHeatSource_LATENT_HEAT_SOURCE_NO_VOLUMES || !math.IsNaN(resp.LatentHeatJPerMol[0]) {
		t.Errorf("melting: source %v, %g J/mol", resp.LatentHeatSource[0], resp.LatentHeatJPerMol[0])
	}
}

// TestEvaluateLargeBatchInParallel covers the batch size at which the table
// pass splits over goroutines: statuses, values and error order must be as
// for small batches.
func TestEvaluateLargeBatchInParallel(t *testing.T) {
	_, c, _ := testServer(t)
	const n = 5 * parallelMin
	vals := make([]float64, n)
	for i := range vals {
		vals[i] = 280 + 360*float64(i)/n
	}
	bad := []int{0, parallelMin - 1, parallelMin, 3*parallelMin + 7, n - 1}
	for _, i := range bad {
		vals[i] = -1
	}
	for _, exact := range []bool{false, true} {
		resp, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{
			Substance: "water", Curve: sat, Given: byT, Values: vals, Exact: exact, IncludeLatentHeat: true,
		})
		if err != nil {
			t.Fatal(err)
		}
		if len(resp.Errors) != len(bad) {
			t.Fatalf("exact %v: %d errors, want %d", exact, len(resp.Errors), len(bad))
		}
		for k, e := range resp.Errors {
			if int(e.Index) != bad[k] || e.Status != pb.PointStatus_POINT_STATUS_INVALID {
				t.Errorf("exact %v: error %d = %v, want index %d", exact, k, e, bad[k])
			}
		}
		for i := 1; i < n-1; i++ {
			if vals[i] < 0 {
				continue
			}
			if resp.Status[i] != pb.PointStatus_POINT_STATUS_OK || !(resp.PressurePa[i] > resp.PressurePa[i-1] || vals[i-1] < 0) {
				t.Fatalf("exact %v: point %d (%g K): %v %g", exact, i, vals[i], resp.Status[i], resp.PressurePa[i])
			}
		}
	}
}
