package sdk

import (
	"context"
	"os/exec"
	"testing"

	"github.com/phasebound/phasebound/thermo"
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

// BenchmarkIF97 compares IAPWS-IF97 saturation pressure for a 100,000-point
// batch computed in-process and through the standard vapor backend.
func BenchmarkIF97(b *testing.B) {
	const n = 100_000
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = 280 + 360*float64(i)/(n-1)
	}
	b.Run("direct", func(b *testing.B) {
		fam, err := thermo.GetFamily("iapws-if97")
		if err != nil {
			b.Fatal(err)
		}
		c, err := fam.New(nil, 273.15, 647.096)
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
	})
	b.Run("plugin", func(b *testing.B) {
		h := newTestHost(b, HostConfig{Command: func(name string) (*exec.Cmd, error) { return testCommand("std:" + name) }})
		ctx := context.Background()
		if err := h.Start(ctx, BackendSpec{Name: "vapor"}); err != nil {
			b.Fatal(err)
		}
		req := EvalRequest{Family: "iapws-if97", Tmin: 273.15, Tmax: 647.096, Op: OpPressure, Values: ts}
		b.ReportAllocs()
		for b.Loop() {
			res, err := h.Evaluate(ctx, "vapor", req)
			if err != nil || len(res.Failures) != 0 {
				b.Fatal(err, res.Failures)
			}
			benchSink = res
		}
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
	})
}
