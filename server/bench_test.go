package server

import (
	"context"
	"testing"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

var benchSink *pb.EvaluateResponse

// BenchmarkEvaluateHandler measures the table path of Evaluate without the
// transport, per point; allocations per call must not grow with the batch.
func BenchmarkEvaluateHandler(b *testing.B) {
	srv, _, _ := testServer(b)
	for _, tc := range []struct {
		name   string
		curve  pb.CurveKind
		given  pb.Variable
		lo, hi float64
		latent bool
	}{
		{"saturation-P(T)", sat, byT, 280, 640, false},
		{"saturation-T(P)", sat, byP, 1e3, 2e7, false},
		{"saturation-P(T)-latent", sat, byT, 280, 640, true},
		{"melting-T(P)", melt, byP, 1e3, 340e6, false},
	} {
		for _, n := range []int{1, 1000, 100000} {
			vals := make([]float64, n)
			for i := range vals {
				vals[i] = tc.lo + (tc.hi-tc.lo)*float64(i)/float64(max(n-1, 1))
			}
			req := &pb.EvaluateRequest{Substance: "water", Curve: tc.curve, Given: tc.given, Values: vals, IncludeLatentHeat: tc.latent}
			b.Run(tc.name+"/n="+itoa(n), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					r, err := srv.Evaluate(context.Background(), req)
					if err != nil {
						b.Fatal(err)
					}
					benchSink = r
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/point")
			})
		}
	}
}

func itoa(n int) string {
	s := ""
	for {
		s = string(rune('0'+n%10)) + s
		n /= 10
		if n == 0 {
			return s
		}
	}
}
