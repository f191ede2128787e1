package server

import (
	"context"
	"math"
	"testing"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"
	"google.golang.org/protobuf/proto"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// allowedCodes are the codes a request may fail with: bad input, a limit,
// or a backend restarting. Anything else (Internal, Unknown, a panic) is a
// validation bug.
var allowedCodes = map[codes.Code]bool{
	codes.InvalidArgument:    true,
	codes.OutOfRange:         true,
	codes.ResourceExhausted:  true,
	codes.FailedPrecondition: true,
	codes.Unavailable:        true,
}

// FuzzRequestValidation feeds arbitrary wire bytes, decoded as an
// EvaluateRequest and as a LocatePhaseRequest, through the limits and the
// real handlers on the test catalog. Every request must either fail with a
// status code of bad input or a limit, or answer every point: a status per
// point, finite numbers for good points, NaN for failed ones, and no panic.
func FuzzRequestValidation(f *testing.F) {
	seeds := []proto.Message{
		&phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
			Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: []float64{373.124, 300, math.NaN(), -1, 0, 1e300, math.Inf(1)}},
		&phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_MELTING,
			Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: []float64{254, 260, 251.165}, IncludeLatentHeat: true},
		&phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_MELTING, Branch: "ice-III",
			Given: phaseboundpb.Variable_VARIABLE_PRESSURE, Values: []float64{250e6, 1e5}, Strict: true},
		&phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_SUBLIMATION,
			Given: phaseboundpb.Variable_VARIABLE_PRESSURE, Values: []float64{100, 611.657, 1e-30}, Exact: true, AllowExtrapolation: true},
		&phaseboundpb.EvaluateRequest{Substance: "nosuch", Curve: 99, Given: 7, Branch: "\x00"},
		&phaseboundpb.LocatePhaseRequest{Substance: "water", TemperatureK: []float64{258.15, 400, math.NaN()}, PressurePa: []float64{101325, 1e5}},
	}
	for _, m := range seeds {
		b, err := proto.Marshal(m)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Add([]byte{})
	f.Add([]byte{0x2a, 0xff, 0xff, 0xff, 0xff, 0x0f}) // values: a packed field claiming 4 GiB
	f.Fuzz(func(t *testing.T, data []byte) {
		s, _, _ := testServer(t)
		lim := NewLimiter(LimitsConfig{MaxPointsPerRequest: 4096})
		ctx := context.Background()

		var ev phaseboundpb.EvaluateRequest
		if proto.Unmarshal(data, &ev) == nil {
			resp, err := lim.UnaryInterceptor()(ctx, &ev, &grpc.UnaryServerInfo{FullMethod: "/phasebound.v1.BoundaryService/Evaluate"},
				func(ctx context.Context, req any) (any, error) {
					return s.Evaluate(ctx, req.(*phaseboundpb.EvaluateRequest))
				})
			checkEvaluate(t, &ev, resp, err)
		}
		var lp phaseboundpb.LocatePhaseRequest
		if proto.Unmarshal(data, &lp) == nil {
			resp, err := lim.UnaryInterceptor()(ctx, &lp, &grpc.UnaryServerInfo{FullMethod: "/phasebound.v1.BoundaryService/LocatePhase"},
				func(ctx context.Context, req any) (any, error) {
					return s.LocatePhase(ctx, req.(*phaseboundpb.LocatePhaseRequest))
				})
			if err != nil {
				checkCode(t, "LocatePhase", err)
				return
			}
			r := resp.(*phaseboundpb.LocatePhaseResponse)
			if n := len(lp.GetTemperatureK()); len(r.GetStatus()) != n || len(r.GetPhase()) != n {
				t.Fatalf("LocatePhase: %d states, %d statuses, %d phases", n, len(r.GetStatus()), len(r.GetPhase()))
			}
		}
	})
}

func checkCode(t *testing.T, what string, err error) {
	t.Helper()
	st, ok := status.FromError(err)
	if !ok || !allowedCodes[st.Code()] {
		t.Fatalf("%s: error %v is not a status of bad input or a limit", what, err)
	}
	if st.Message() == "" {
		t.Fatalf("%s: %v with an empty message", what, st.Code())
	}
}

func checkEvaluate(t *testing.T, req *phaseboundpb.EvaluateRequest, resp any, err error) {
	t.Helper()
	if err != nil {
		checkCode(t, "Evaluate", err)
		return
	}
	r := resp.(*phaseboundpb.EvaluateResponse)
	n := len(req.GetValues())
	if len(r.GetPressurePa()) != n || len(r.GetTemperatureK()) != n || len(r.GetDpdtPaPerK()) != n {
		t.Fatalf("Evaluate: %d points but %d pressures, %d temperatures, %d slopes",
			n, len(r.GetPressurePa()), len(r.GetTemperatureK()), len(r.GetDpdtPaPerK()))
	}
	// Either the compact form (every point OK on one branch: no statuses,
	// no branch indices, one branch name) or one status and branch index
	// per point.
	ns, nb := len(r.GetStatus()), len(r.GetBranchIndex())
	compact := ns == 0 && nb == 0 && n > 0 && len(r.GetBranchNames()) == 1
	if !compact && (ns != n || nb != n) {
		t.Fatalf("Evaluate: %d points but %d statuses, %d branch indices, %d branch names", n, ns, nb, len(r.GetBranchNames()))
	}
	if compact && len(r.GetErrors()) != 0 {
		t.Fatalf("Evaluate: compact form with %d point errors", len(r.GetErrors()))
	}
	expand(t, r)
	failed := 0
	for i, st := range r.GetStatus() {
		p, tk := r.GetPressurePa()[i], r.GetTemperatureK()[i]
		switch st {
		case phaseboundpb.PointStatus_POINT_STATUS_OK, phaseboundpb.PointStatus_POINT_STATUS_EXTRAPOLATED:
			if math.IsNaN(p) || math.IsInf(p, 0) || math.IsNaN(tk) || math.IsInf(tk, 0) || tk <= 0 {
				t.Fatalf("Evaluate point %d (%g): status %v with T = %g, P = %g", i, req.GetValues()[i], st, tk, p)
			}
		case phaseboundpb.PointStatus_POINT_STATUS_UNSPECIFIED:
			t.Fatalf("Evaluate point %d: no status", i)
		default:
			// The given quantity is echoed; the computed one and the
			// slope must be NaN.
			failed++
			computed, name := p, "P"
			if req.GetGiven() == phaseboundpb.Variable_VARIABLE_PRESSURE {
				computed, name = tk, "T"
			}
			if !math.IsNaN(computed) || !math.IsNaN(r.GetDpdtPaPerK()[i]) {
				t.Fatalf("Evaluate point %d (%g): status %v but %s = %g, dP/dT = %g; want NaN", i, req.GetValues()[i], st, name, computed, r.GetDpdtPaPerK()[i])
			}
		}
	}
	if len(r.GetErrors()) != failed {
		t.Fatalf("Evaluate: %d failed points but %d errors", failed, len(r.GetErrors()))
	}
}
