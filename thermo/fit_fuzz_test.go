package thermo

import (
	"encoding/binary"
	"math"
	"testing"
)

// fuzzFixed are the fixed parameters each family needs to be fitted at all.
var fuzzFixed = map[string]Params{
	"clapeyron-linear":      {"delta_v": {-1.6e-6}},
	"wagner":                {"t_ref": {647.096}, "p_ref": {22.064e6}, "e": {1, 1.5, 3}},
	"power-sum":             {"t_ref": {273.16}, "p_ref": {611.657}, "b": {3, 25.75}},
	"log-power-sum":         {"t_ref": {273.16}, "p_ref": {611.657}},
	"shifted-power-sum":     {"t_ref": {216.592}, "p_ref": {517950}, "b": {1, 2}},
	"inverse-log-power-sum": {"t_ref": {273.16}, "p_ref": {611.657}, "b": {0.00333333333, 1.20666667}},
}

// encodePoints packs points as little-endian float64 triples (T, P, W).
func encodePoints(pts []FitPoint) []byte {
	b := make([]byte, 0, 24*len(pts))
	for _, p := range pts {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(p.Temperature))
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(p.Pressure))
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(p.Weight))
	}
	return b
}

// FuzzFitInput feeds arbitrary points (any bit patterns: NaN, ±Inf,
// negative, huge, duplicated) to every fit family. Fit must never panic;
// when it succeeds, every number it returns is finite.
func FuzzFitInput(f *testing.F) {
	curve := func(family string, p Params, tmin, tmax float64, n int) []byte {
		c := mustCurve(f, family, p, tmin, tmax)
		var pts []FitPoint
		for i := range n {
			t := tmin + (tmax-tmin)*float64(i)/float64(n-1)
			pr, _ := c.Pressure(t)
			pts = append(pts, FitPoint{Temperature: t, Pressure: pr * (1 + 1e-3*float64(i%3-1))})
		}
		return encodePoints(pts)
	}
	f.Add(uint8(0), curve("antoine", Params{"a": {10.2}, "b": {1737}, "c": {-39}}, 280, 370, 8), false)
	f.Add(uint8(6), curve("power-sum", iceIhMeltingParams(), 251.165, 273.16, 8), true)
	f.Add(uint8(9), curve("wagner", co2SaturationParams(), 220, 300, 6), false)
	f.Add(uint8(8), curve("simon-glatzel", Params{"t0": {216.592}, "p0": {517950}, "a": {4e8}, "c": {2.5}}, 217, 400, 5), false)
	f.Add(uint8(3), []byte{1, 2, 3}, false)
	f.Add(uint8(2), encodePoints([]FitPoint{{300, 1e3, 0}, {300, 2e3, 1}, {math.NaN(), 1, 1}}), false)
	families := FitFamilies()
	f.Fuzz(func(t *testing.T, which uint8, raw []byte, fitExponents bool) {
		var pts []FitPoint
		for len(raw) >= 24 && len(pts) < 24 {
			v := func(i int) float64 { return math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:])) }
			pts = append(pts, FitPoint{Temperature: v(0), Pressure: v(1), Weight: v(2)})
			raw = raw[24:]
		}
		family := families[int(which)%len(families)]
		res, err := Fit(family, pts, FitOptions{Fixed: fuzzFixed[family], FitExponents: fitExponents, Solver: &LMSettings{MaxIterations: 300}})
		if err != nil {
			return
		}
		finite := func(what string, v float64) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("%s: %s = %v in a successful fit", family, what, v)
			}
		}
		for name, vs := range res.Params {
			for _, v := range vs {
				finite(name, v)
			}
		}
		for name, vs := range res.StdErr {
			for _, v := range vs {
				finite("std err "+name, v)
			}
		}
		finite("RMS", res.RMSRelDev)
		finite("max", res.MaxRelDev)
		for _, r := range res.Residuals {
			finite("residual", r)
		}
		if res.MaxRelDevRow < 1 || res.MaxRelDevRow > len(pts) {
			t.Fatalf("%s: MaxRelDevRow %d of %d", family, res.MaxRelDevRow, len(pts))
		}
	})
}
