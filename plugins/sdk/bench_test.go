package sdk

import (
	"context"
	"testing"
)

var benchSink EvalResult

// BenchmarkHostEvaluate measures a 100,000-point P(T) batch through a real
// plugin process (marshalling, a unix socket both ways, the correlation).
// ns/point is the figure to compare with in-process evaluation.
func BenchmarkHostEvaluate(b *testing.B) {
	h := newTestHost(b, HostConfig{})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "bench"}); err != nil {
		b.Fatal(err)
	}
	const n = 100_000
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = 200 + 100*float64(i)/(n-1)
	}
	req := EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: ts}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		res, err := h.Evaluate(ctx, "bench", req)
		if err != nil {
			b.Fatal(err)
		}
		benchSink = res
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
}

// BenchmarkInProcessEvaluate is the same batch with no process boundary:
// the backend's loop alone, for the ratio.
func BenchmarkInProcessEvaluate(b *testing.B) {
	const n = 100_000
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = 200 + 100*float64(i)/(n-1)
	}
	c, err := lineFamily{}.New(lineParams, 200, 300)
	if err != nil {
		b.Fatal(err)
	}
	res := EvalResult{Results: make([]float64, n), Derivatives: make([]float64, n)}
	b.ReportAllocs()
	for b.Loop() {
		for i, t := range ts {
			p, d, err := c.PressureSlope(t)
			if err != nil {
				b.Fatal(err)
			}
			res.Results[i], res.Derivatives[i] = p, d
		}
	}
	benchSink = res
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
}
