package thermo

import (
	"encoding/binary"
	"errors"
	"math"
	"testing"
)

// FuzzTable feeds LoadTable arbitrary exported data (as a client would
// receive it) and evaluates the result anywhere: bad data is an error
// wrapping ErrBadParam, never a panic, and a table that loads evaluates
// inside its domain only, allocation-free, and survives a round trip
// through Data. With build set it also compiles a fuzzed smooth function
// and checks the measured error against the tolerance.
func FuzzTable(f *testing.F) {
	f.Add(uint8(1), uint8(1), uint8(2), []byte{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16}, 1.0, 3.0, 2.0, false)
	f.Add(uint8(3), uint8(2), uint8(1), []byte{0, 0, 0, 0, 0, 0, 0xf0, 0x3f}, 273.16, 647.0, 300.0, true)
	f.Add(uint8(2), uint8(3), uint8(4), []byte{}, 611.0, 22e6, 1e5, true)
	f.Add(uint8(0), uint8(7), uint8(0), []byte{0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0x7f}, math.NaN(), math.Inf(1), -1.0, false)
	f.Add(uint8(3), uint8(1), uint8(3), []byte{9, 9, 9}, -5.0, 5.0, 0.0, true)
	f.Fuzz(func(t *testing.T, xt, yt, nseg uint8, raw []byte, xmin, xmax, x float64, build bool) {
		d := TableData{XTransform: Transform(xt % 5), YTransform: Transform(yt % 5), XMin: xmin, XMax: xmax, MaxRelError: 1e-12}
		n := int(nseg % 6)
		ua, ub := d.XTransform.forward(xmin), d.XTransform.forward(xmax)
		if ua > ub {
			ua, ub = ub, ua
		}
		off := uint32(0)
		for i := 0; i <= n; i++ {
			d.Breaks = append(d.Breaks, ua+(ub-ua)*float64(i)/math.Max(float64(n), 1))
			d.Offsets = append(d.Offsets, off)
			if len(raw) > i {
				off += 1 + uint32(raw[i]%5)
			} else {
				off++
			}
		}
		for i := 0; len(d.Coeffs) < int(d.Offsets[len(d.Offsets)-1]); i++ {
			var v float64
			if len(raw) >= 8*(i+1) {
				v = math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
			} else {
				v = float64(i%7) - 3
			}
			d.Coeffs = append(d.Coeffs, v)
		}
		if len(raw) > 0 && raw[0] == 0xff { // also try inconsistent offsets
			d.Offsets = d.Offsets[:len(d.Offsets)-1]
		}
		tb, err := LoadTable(d, "x", "")
		if err != nil {
			if !errors.Is(err, ErrBadParam) {
				t.Fatalf("LoadTable: error %v does not wrap ErrBadParam", err)
			}
		} else {
			y, dy, err := tb.Eval(x)
			lo, hi := tb.Domain()
			inside := x >= lo && x <= hi
			if inside != (err == nil) {
				t.Fatalf("Eval(%g) on [%g, %g]: err %v", x, lo, hi, err)
			}
			back, err2 := LoadTable(tb.Data(), "x", "")
			if err2 != nil {
				t.Fatalf("round trip refused: %v", err2)
			}
			y2, dy2, _ := back.Eval(x)
			if err == nil && !(y2 == y || (math.IsNaN(y) && math.IsNaN(y2))) {
				t.Fatalf("round trip changed Eval(%g): %g %g vs %g %g", x, y, dy, y2, dy2)
			}
			if n := testing.AllocsPerRun(3, func() { _, _, _ = tb.Eval(0.5 * (lo + hi)) }); n != 0 {
				t.Fatalf("Eval allocates %v", n)
			}
			// The batch loop (two points at a time on identity tables)
			// gives TablePoint's values and stops where it refuses.
			r := Range{Tmin: lo, Tmax: hi}
			xs := []float64{0.5 * (lo + hi), lo, hi, x, 0.25*lo + 0.75*hi, x}
			ts, ps, ds := make([]float64, len(xs)), make([]float64, len(xs)), make([]float64, len(xs))
			k := TablePoints(tb, nil, r, xs, true, ts, ps, ds)
			same := func(a, b float64) bool {
				return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
			}
			for j := 0; j < k; j++ {
				pt, ok := TablePoint(tb, nil, r, xs[j], true, 0)
				if !ok || !same(ts[j], pt.Temperature) || !same(ps[j], pt.Pressure) || !same(ds[j], pt.Slope) {
					t.Fatalf("TablePoints at %g: (%g, %g, %g), TablePoint (%g, %g, %g) ok %v", xs[j], ts[j], ps[j], ds[j], pt.Temperature, pt.Pressure, pt.Slope, ok)
				}
			}
			if k < len(xs) {
				if _, ok := TablePoint(tb, nil, r, xs[k], true, 0); ok {
					t.Fatalf("TablePoints stopped at %g, which TablePoint takes", xs[k])
				}
			}
		}
		if !build || !(xmin < xmax) || xmax-xmin > 1e6 || math.Abs(xmin) > 1e6 {
			return
		}
		// A smooth, positive source: y = 2 + sin(a·x) + exp(b·x) with a, b
		// from the fuzzed coefficients, scaled to stay moderate.
		a, b := 1.0, 0.1
		if len(d.Coeffs) > 1 {
			a = math.Mod(math.Abs(d.Coeffs[0]), 3)
			b = math.Mod(d.Coeffs[1], 1)
		}
		if math.IsNaN(a) || math.IsNaN(b) || math.Abs(b*xmax) > 50 || math.Abs(b*xmin) > 50 || a*(xmax-xmin) > 300 {
			return
		}
		src := func(xs, ys []float64) error {
			for i, v := range xs {
				ys[i] = 2 + math.Sin(a*v) + math.Exp(b*v)
			}
			return nil
		}
		opts := TableOptions{XTransform: Transform(xt%3 + 1), YTransform: Transform(yt%3 + 1), Tolerance: 1e-9, MaxSegments: 64}
		tab, err := BuildTable(src, xmin, xmax, opts)
		var te *ToleranceError
		switch {
		case errors.As(err, &te):
			if te.Best == nil || te.Achieved <= te.Tolerance {
				t.Fatalf("inconsistent ToleranceError %+v", te)
			}
		case err != nil:
			if !errors.Is(err, ErrBadParam) {
				t.Fatalf("BuildTable: %v", err)
			}
		default:
			if tab.MaxRelError() > opts.Tolerance {
				t.Fatalf("built with error %g above %g", tab.MaxRelError(), opts.Tolerance)
			}
			for _, v := range []float64{xmin, xmax, 0.5 * (xmin + xmax)} {
				y, _, err := tab.Eval(v)
				ys := []float64{0}
				_ = src([]float64{v}, ys)
				if err != nil || math.Abs(y-ys[0]) > 1e-9*math.Abs(ys[0]) {
					t.Fatalf("Eval(%g) = %g, %v; source %g", v, y, err, ys[0])
				}
			}
		}
	})
}
