package thermo

import "testing"

// famSink keeps the compiler from discarding benchmarked results.
var famSink float64

// BenchmarkFamilies reports ns per point for every family's P(T) with
// slope and for its T(P), on the representative instances of famCases.
func BenchmarkFamilies(b *testing.B) {
	for _, fc := range famCases {
		c := famNew(b, fc.family, fc.params, fc.tmin, fc.tmax)
		const n = 64
		var ts, ps [n]float64
		for i := range ts {
			ts[i] = fc.tmin + (fc.tmax-fc.tmin)*(float64(i)+0.5)/n
			ps[i], _ = c.Pressure(ts[i])
		}
		b.Run("PressureSlope/"+fc.name, func(b *testing.B) {
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				p, d, _ := c.PressureSlope(ts[i%n])
				famSink += p + d
				i++
			}
		})
		b.Run("Temperature/"+fc.name, func(b *testing.B) {
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				t, _ := c.Temperature(ps[i%n])
				famSink += t
				i++
			}
		})
	}
}

// BenchmarkRootFinder reports the cost of one bracketed solve of a
// vapour-pressure-like equation.
func BenchmarkRootFinder(b *testing.B) {
	b.ReportAllocs()
	target := 11.5
	for b.Loop() {
		x, _ := RootFinder{}.Solve(func(T float64) (float64, float64) {
			return 23 - 5000/T - target, 5000 / (T * T)
		}, 200, 700)
		famSink += x
	}
}
