package plot

import (
	"context"
	"fmt"
	"math"

	gp "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// Residual is one data point's relative deviation from a curve,
// (P_measured − P_curve)/P_measured, at temperature T (K): positive where
// the data lie above the curve, and of the same size as the deviations a
// fit reports (P_fit/P − 1, which is −Rel).
type Residual struct {
	T, Rel float64
}

// Residuals draws relative deviations in percent against temperature, with
// the zero line and the ±RMS band; title names what was fitted.
func Residuals(res []Residual, title string) (*gp.Plot, error) {
	if len(res) == 0 {
		return nil, fmt.Errorf("plot: no residuals to draw")
	}
	xy := make(plotter.XYs, 0, len(res))
	sum2, maxAbs := 0.0, 0.0
	tlo, thi := math.Inf(1), math.Inf(-1)
	for _, r := range res {
		if math.IsNaN(r.Rel) || math.IsInf(r.Rel, 0) || math.IsNaN(r.T) {
			continue
		}
		xy = append(xy, plotter.XY{X: r.T, Y: 100 * r.Rel})
		sum2 += r.Rel * r.Rel
		maxAbs = math.Max(maxAbs, math.Abs(r.Rel))
		tlo, thi = math.Min(tlo, r.T), math.Max(thi, r.T)
	}
	if len(xy) == 0 {
		return nil, fmt.Errorf("plot: every residual is NaN or infinite")
	}
	rms := math.Sqrt(sum2 / float64(len(xy)))
	if title == "" {
		title = "Residuals"
	}
	title = fmt.Sprintf("%s\nn = %d, RMS %.3g %%, max |dev| %.3g %%", title, len(xy), 100*rms, 100*maxAbs)
	p := newPlot(title, "temperature T (K)", "relative deviation (P_data − P_curve)/P_data (%)")
	span := thi - tlo
	if span == 0 {
		span = math.Max(1, 0.02*thi)
	}
	p.X.Min, p.X.Max = tlo-0.04*span, thi+0.04*span
	lim := 100 * maxAbs * 1.25
	if lim == 0 {
		lim = 1e-6
	}
	p.Y.Min, p.Y.Max = -lim, lim
	p.X.Tick.Marker = linearTicks{}
	p.Add(grid{xs: linearTicks{}.Ticks(p.X.Min, p.X.Max), ys: linearTicks{}.Ticks(p.Y.Min, p.Y.Max)})
	p.Y.Tick.Marker = linearTicks{}
	hline := func(y float64, sty draw.LineStyle) (*plotter.Line, error) {
		l, err := plotter.NewLine(plotter.XYs{{X: p.X.Min, Y: y}, {X: p.X.Max, Y: y}})
		if err != nil {
			return nil, err
		}
		l.LineStyle = sty
		return l, nil
	}
	zero, err := hline(0, draw.LineStyle{Color: inkColor, Width: vg.Points(1)})
	if err != nil {
		return nil, err
	}
	band := draw.LineStyle{Color: kindColors[phaseboundpb.CurveKind_CURVE_KIND_SATURATION], Width: vg.Points(1),
		Dashes: []vg.Length{vg.Points(5), vg.Points(3)}}
	up, err := hline(100*rms, band)
	if err != nil {
		return nil, err
	}
	down, err := hline(-100*rms, band)
	if err != nil {
		return nil, err
	}
	s, err := plotter.NewScatter(xy)
	if err != nil {
		return nil, err
	}
	s.GlyphStyle = draw.GlyphStyle{Color: dataColor, Radius: vg.Points(2.8), Shape: draw.RingGlyph{}}
	p.Add(zero, up, down, s)
	p.Legend.Add("measured point", s)
	p.Legend.Add("± RMS", up)
	p.Legend.Top = true
	p.Legend.XOffs = -vg.Points(6)
	p.Legend.YOffs = -vg.Points(4)
	return p, nil
}

// ResidualsAgainst evaluates the served curve (kind, branch) of substance
// id at each data point's temperature and returns the relative deviations
// of the measured pressures. A point the curve cannot serve (outside its
// validity range, say) is an error naming it.
func ResidualsAgainst(ctx context.Context, src Source, id string, kind phaseboundpb.CurveKind, branch string, data []Point) ([]Residual, error) {
	if len(data) == 0 {
		return nil, fmt.Errorf("plot: no data points")
	}
	ts := make([]float64, len(data))
	for i, q := range data {
		ts[i] = q.T
	}
	r, err := evaluate(ctx, src, &phaseboundpb.EvaluateRequest{
		Substance: id, Curve: kind, Branch: branch, Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: ts,
	})
	if err != nil {
		return nil, err
	}
	if len(r.GetStatus()) != len(data) || len(r.GetPressurePa()) != len(data) {
		return nil, fmt.Errorf("plot: the server answered %d of %d points", len(r.GetPressurePa()), len(data))
	}
	out := make([]Residual, len(data))
	for i, q := range data {
		if r.Status[i] != phaseboundpb.PointStatus_POINT_STATUS_OK {
			msg := r.Status[i].String()
			for _, e := range r.GetErrors() {
				if int(e.GetIndex()) == i {
					msg = e.GetMessage()
				}
			}
			return nil, fmt.Errorf("plot: data point %d (T = %g K): %s", i+1, q.T, msg)
		}
		out[i] = Residual{T: q.T, Rel: (q.P - r.PressurePa[i]) / q.P}
	}
	return out, nil
}
