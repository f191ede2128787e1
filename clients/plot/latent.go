package plot

import (
	"context"
	"fmt"
	"image/color"
	"math"

	gp "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// LatentHeat draws the latent heat ΔH along every curve of substance id
// against temperature, as the server serves it (the Clapeyron equation
// with the coexisting-phase volumes, or the ideal-gas estimate on vapour
// curves without volumes, drawn dashed). The axis is kJ/kg when the
// substance has a molar mass, kJ/mol otherwise. opt.Tmin and opt.Tmax
// narrow the temperature axis; pressures and Data are ignored.
func LatentHeat(ctx context.Context, src Source, id string, opt Options) (*gp.Plot, error) {
	sub, err := describe(ctx, src, id)
	if err != nil {
		return nil, err
	}
	perKg := sub.GetMolarMassKgPerMol() > 0
	unit := "kJ/mol"
	if perKg {
		unit = "kJ/kg"
	}
	title := opt.Title
	if title == "" {
		name := sub.GetName()
		if name == "" {
			name = sub.GetId()
		}
		title = name + " — latent heat along each curve (Clapeyron)"
		if invented(sub) {
			title += "\ninvented data: not for design"
		}
	}
	p := newPlot(title, "temperature T (K)", "latent heat ΔH ("+unit+")")
	p.Legend.Top = true
	p.Legend.Left = false
	p.Legend.XOffs = -vg.Points(6)
	p.Legend.YOffs = -vg.Points(6)
	tlo, thi := math.Inf(1), 0.0
	ymax := 0.0
	drawn := 0
	var lines []gp.Plotter
	var missing []string // curves without a latent heat
	for _, c := range sub.GetCurves() {
		for bi, b := range c.GetBranches() {
			v := b.GetValidity()
			t0, t1 := v.GetMinTemperatureK(), v.GetMaxTemperatureK()
			if opt.Tmin > 0 {
				t0 = math.Max(t0, opt.Tmin)
			}
			if opt.Tmax > 0 {
				t1 = math.Min(t1, opt.Tmax)
			}
			if !(t1 > t0) {
				continue
			}
			const n = 200
			ts := make([]float64, n)
			for i := range ts {
				ts[i] = t0 + (t1-t0)*float64(i)/(n-1)
			}
			ts[n-1] = t1
			r, err := evaluate(ctx, src, &phaseboundpb.EvaluateRequest{
				Substance: id, Curve: c.GetKind(), Branch: b.GetName(),
				Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: ts, IncludeLatentHeat: true,
			})
			if err != nil {
				return nil, fmt.Errorf("plot: %s %s: %w", kindName(c.GetKind()), b.GetName(), err)
			}
			var exact, estimate plotter.XYs
			for i := range r.GetStatus() {
				if r.Status[i] != phaseboundpb.PointStatus_POINT_STATUS_OK || i >= len(r.GetLatentHeatJPerMol()) {
					continue
				}
				y := r.LatentHeatJPerMol[i]
				if perKg && i < len(r.GetLatentHeatJPerKg()) {
					y = r.LatentHeatJPerKg[i]
				}
				if math.IsNaN(y) || math.IsInf(y, 0) {
					continue
				}
				pt := plotter.XY{X: r.TemperatureK[i], Y: y / 1000}
				switch src := sourceAt(r, i); src {
				case phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON:
					exact = append(exact, pt)
				case phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_IDEAL_GAS_ESTIMATE:
					estimate = append(estimate, pt)
				}
			}
			label := branchLabel(c.GetKind(), b, len(c.GetBranches()))
			if len(exact) < 2 && len(estimate) < 2 {
				missing = append(missing, label)
				continue
			}
			clr := shade(kindColor(c.GetKind()), bi, len(c.GetBranches()))
			for k, xy := range []plotter.XYs{exact, estimate} {
				if len(xy) < 2 {
					continue
				}
				l, err := plotter.NewLine(xy)
				if err != nil {
					return nil, fmt.Errorf("plot: %s: %w", label, err)
				}
				l.Color = clr
				l.Width = vg.Points(2)
				name := label
				if k == 1 {
					l.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
					name += " (ideal-gas estimate)"
				}
				lines = append(lines, l)
				p.Legend.Add(name, l)
				drawn++
				for _, q := range xy {
					tlo, thi = math.Min(tlo, q.X), math.Max(thi, q.X)
					ymax = math.Max(ymax, q.Y)
				}
			}
		}
	}
	for _, m := range missing {
		p.Legend.Add(m + ": no phase volumes, not drawn")
	}
	if drawn == 0 {
		return nil, fmt.Errorf("plot: substance %q has no latent heat to draw (no curve has phase volumes and none is a vapour curve)", id)
	}
	p.X.Min, p.X.Max = tlo, thi
	if opt.Tmin > 0 {
		p.X.Min = opt.Tmin
	}
	if opt.Tmax > 0 {
		p.X.Max = opt.Tmax
	}
	p.Y.Min, p.Y.Max = 0, ymax*1.25 // room for the legend
	p.X.Tick.Marker = linearTicks{}
	p.Add(grid{xs: linearTicks{}.Ticks(p.X.Min, p.X.Max), ys: linearTicks{}.Ticks(p.Y.Min, p.Y.Max)})
	p.Y.Tick.Marker = linearTicks{}
	p.Add(lines...)
	return p, nil
}

func sourceAt(r *phaseboundpb.EvaluateResponse, i int) phaseboundpb.LatentHeatSource {
	if s := r.GetLatentHeatSource(); i < len(s) {
		return s[i]
	}
	return phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON
}

// shade returns colour c darkened or lightened for branch i of n, so the
// branches of one curve share a hue and stay apart.
func shade(c color.Color, i, n int) color.Color {
	if n <= 1 {
		return c
	}
	r, g, b, _ := c.RGBA()
	f := 0.7 + 0.6*float64(i)/float64(n-1) // 0.7 … 1.3
	mix := func(v uint32) uint8 {
		x := float64(v >> 8)
		if f <= 1 {
			x *= f
		} else {
			x += (255 - x) * (f - 1)
		}
		return uint8(math.Max(0, math.Min(255, x)))
	}
	return color.RGBA{mix(r), mix(g), mix(b), 0xff}
}
