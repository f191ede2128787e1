package plot

import (
	"context"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	xfont "golang.org/x/image/font"
	gp "gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/phasebound/phasebound/clients/goclient"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// Source serves the data a plot draws. *goclient.Client satisfies it, so a
// plot works against a remote server and against one run in-process.
type Source interface {
	DescribeSubstance(ctx context.Context, id string) (*phaseboundpb.DescribeSubstanceResponse, error)
	Evaluate(ctx context.Context, req *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error)
	LocatePhase(ctx context.Context, req *phaseboundpb.LocatePhaseRequest) (*phaseboundpb.LocatePhaseResponse, error)
}

// evaluate asks src for req and returns the answer in the per-point form,
// one status and branch index per point: a Source may answer in the
// compact form (status and branch_index empty when every point is OK on
// one branch), which goclient.Expand turns into the per-point one.
func evaluate(ctx context.Context, src Source, req *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	r, err := src.Evaluate(ctx, req)
	if err != nil {
		return nil, err
	}
	if err := goclient.Expand(r); err != nil {
		return nil, err
	}
	return r, nil
}

// Point is a measured state, K and Pa.
type Point struct {
	T, P float64
}

// Options shape a phase diagram or latent-heat plot. The zero value draws
// the whole of every curve with automatic axes.
type Options struct {
	// Tmin, Tmax (K) and Pmin, Pmax (Pa) bound the axes; 0 means
	// automatic. The automatic pressure axis spans at most 13 decades below
	// the highest pressure drawn, so a sublimation curve valid down to
	// 1e-40 Pa does not squash everything else.
	Tmin, Tmax, Pmin, Pmax float64
	// Data are measured points drawn over the curves.
	Data []Point
	// DataLabel names Data in the legend; "" means "measured".
	DataLabel string
	// Title replaces the automatic title.
	Title string
}

// Width and Height are the image size: 24 cm × 16 cm, which at PNGDPI is
// 1361 × 907 pixels.
var (
	Width  = 24 * vg.Centimeter
	Height = 16 * vg.Centimeter
)

// PNGDPI is the resolution of PNG output, sharp on screens and in reports.
const PNGDPI = 144

// Save writes p to path as PNG or SVG, chosen by the extension (.png or
// .svg), at Width × Height.
func Save(p *gp.Plot, path string) error {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	var wt io.WriterTo
	switch ext {
	case "png":
		c := vgimg.NewWith(vgimg.UseWH(Width, Height), vgimg.UseDPI(PNGDPI))
		p.Draw(draw.New(c))
		wt = vgimg.PngCanvas{Canvas: c}
	case "svg":
		c := vgsvg.New(Width, Height)
		p.Draw(draw.New(c))
		wt = c
	default:
		return fmt.Errorf("plot: output %q must end in .png or .svg", path)
	}
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("plot: %w", err)
	}
	if _, err := wt.WriteTo(f); err != nil {
		f.Close()
		return fmt.Errorf("plot: write %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("plot: write %s: %w", path, err)
	}
	return nil
}

// The house style: white ground, grey grid, one colour per curve kind.
var (
	inkColor      = color.RGBA{0x22, 0x26, 0x2e, 0xff}
	gridColor     = color.RGBA{0xdd, 0xe1, 0xe6, 0xff}
	minorColor    = color.RGBA{0xee, 0xf0, 0xf3, 0xff}
	regionColor   = color.RGBA{0x5a, 0x63, 0x70, 0xff}
	criticalColor = color.RGBA{0xc0, 0x25, 0x25, 0xff}
	dataColor     = color.RGBA{0x10, 0x10, 0x10, 0xff}
	haloColor     = color.NRGBA{0xff, 0xff, 0xff, 0xe6}

	kindColors = map[phaseboundpb.CurveKind]color.RGBA{
		phaseboundpb.CurveKind_CURVE_KIND_SATURATION:  {0x1f, 0x5f, 0xb4, 0xff}, // blue
		phaseboundpb.CurveKind_CURVE_KIND_MELTING:     {0xc8, 0x6a, 0x10, 0xff}, // amber
		phaseboundpb.CurveKind_CURVE_KIND_SUBLIMATION: {0x6b, 0x3f, 0xa0, 0xff}, // violet
		phaseboundpb.CurveKind_CURVE_KIND_TRANSITION:  {0x4d, 0x7f, 0x3a, 0xff}, // green
	}
)

func kindColor(k phaseboundpb.CurveKind) color.Color {
	if c, ok := kindColors[k]; ok {
		return c
	}
	return inkColor
}

// kindName returns the catalog name of a curve kind.
func kindName(k phaseboundpb.CurveKind) string {
	return strings.ToLower(strings.TrimPrefix(k.String(), "CURVE_KIND_"))
}

func newPlot(title, xlabel, ylabel string) *gp.Plot {
	p := gp.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = sans(13)
	p.Title.TextStyle.Color = inkColor
	p.Title.Padding = 6
	for _, ax := range []*gp.Axis{&p.X, &p.Y} {
		ax.Color = inkColor
		ax.Label.TextStyle.Color = inkColor
		ax.Label.TextStyle.Font = sans(11)
		ax.Tick.Label.Color = inkColor
		ax.Tick.Label.Font = sans(9.5)
		ax.Tick.Color = inkColor
		ax.Padding = 0
	}
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	p.Legend.TextStyle.Font = sans(9.5)
	p.Legend.TextStyle.Color = inkColor
	p.Legend.ThumbnailWidth = 0.9 * vg.Centimeter
	p.Legend.Padding = 2
	return p
}

// grid draws the major grid lines (and, on log axes, the minor ones) in
// the data area, under the curves.
type grid struct {
	xs, ys []gp.Tick
}

func (g grid) Plot(c draw.Canvas, p *gp.Plot) {
	tx, ty := p.Transforms(&c)
	major := draw.LineStyle{Color: gridColor, Width: vg.Points(0.6)}
	minor := draw.LineStyle{Color: minorColor, Width: vg.Points(0.5)}
	for _, t := range g.xs {
		if t.Value < p.X.Min || t.Value > p.X.Max {
			continue
		}
		sty := major
		if t.Label == "" {
			sty = minor
		}
		x := tx(t.Value)
		c.StrokeLine2(sty, x, c.Min.Y, x, c.Max.Y)
	}
	for _, t := range g.ys {
		if t.Value < p.Y.Min || t.Value > p.Y.Max {
			continue
		}
		sty := major
		if t.Label == "" {
			sty = minor
		}
		y := ty(t.Value)
		c.StrokeLine2(sty, c.Min.X, y, c.Max.X, y)
	}
}

// pressureTicks labels each decade with an SI prefix ("1 kPa", "10 MPa")
// on an axis of log10(P/Pa); over a wide span it labels every second or
// third decade and drops the minor ticks. (The diagram draws log10 P on a
// linear axis rather than P on a log axis so that the axis label stays
// centred.)
type pressureTicks struct{}

func (pressureTicks) Ticks(min, max float64) []gp.Tick {
	lo, hi := int(math.Floor(min+1e-9)), int(math.Ceil(max-1e-9))
	span := hi - lo
	step := 1
	switch {
	case span > 14:
		step = 3
	case span > 8:
		step = 2
	}
	var ticks []gp.Tick
	for e := lo; e <= hi; e++ {
		v := float64(e)
		if v >= min-1e-9 && v <= max+1e-9 {
			label := ""
			if ((e%step)+step)%step == 0 {
				label = FormatPressure(math.Pow(10, v))
			}
			ticks = append(ticks, gp.Tick{Value: v, Label: label})
		}
		if span <= 6 {
			for m := 2; m <= 9; m++ {
				w := v + math.Log10(float64(m))
				if w >= min && w <= max {
					label := ""
					if span <= 3 && (m == 2 || m == 5) {
						label = FormatPressure(float64(m) * math.Pow(10, v))
					}
					ticks = append(ticks, gp.Tick{Value: w, Label: label})
				}
			}
		}
	}
	if len(ticks) < 2 {
		return gp.DefaultTicks{}.Ticks(min, max)
	}
	return ticks
}

// FormatPressure writes p in Pa with an SI prefix and at most four
// significant digits: "611.7 Pa", "22.06 MPa", "1 mPa".
func FormatPressure(p float64) string {
	return formatSI(p, "Pa")
}

func formatSI(v float64, unit string) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Sprintf("%g %s", v, unit)
	}
	prefixes := []struct {
		s string
		f float64
	}{{"T", 1e12}, {"G", 1e9}, {"M", 1e6}, {"k", 1e3}, {"", 1}, {"m", 1e-3}, {"µ", 1e-6}, {"n", 1e-9}, {"p", 1e-12}}
	a := math.Abs(v)
	for _, pr := range prefixes {
		if a >= pr.f*(1-1e-12) {
			return trimNumber(v/pr.f) + " " + pr.s + unit
		}
	}
	return fmt.Sprintf("%.3g %s", v, unit)
}

func trimNumber(x float64) string { return fmt.Sprintf("%.4g", x) }

func sans(size float64) font.Font {
	return font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(size)}
}

// newTextStyle returns a centred sans-serif style.
func newTextStyle(size float64, bold, italic bool, clr color.Color) text.Style {
	f := sans(size)
	if bold {
		f.Weight = xfont.WeightBold
	}
	if italic {
		f.Style = xfont.StyleItalic
	}
	return text.Style{Color: clr, Font: f, XAlign: draw.XCenter, YAlign: draw.YCenter, Handler: gp.DefaultTextHandler}
}

// drawLabel draws txt centred in r over a white halo, so it reads where it
// crosses a curve or a grid line.
func drawLabel(c *draw.Canvas, txt string, sty text.Style, r vg.Rectangle) {
	c.SetColor(haloColor)
	c.Fill(r.Path())
	ctr := vg.Point{X: (r.Min.X + r.Max.X) / 2, Y: (r.Min.Y + r.Max.Y) / 2}
	c.FillText(sty, ctr, txt)
}

// displayForm turns a solid-form id into label text: "ice-Ih" → "ice Ih".
func displayForm(f string) string {
	return strings.ReplaceAll(f, "-", " ")
}

// linearTicks puts about eight labelled ticks on a linear axis
// at round steps (1, 2 or 5 × 10^k), with unlabelled ticks between.
type linearTicks struct{}

func (linearTicks) Ticks(min, max float64) []gp.Tick {
	span := max - min
	if !(span > 0) {
		return gp.DefaultTicks{}.Ticks(min, max)
	}
	raw := span / 8
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, m := range []float64{1, 2, 5, 10} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	minor := step / 2
	if step/mag == 2 {
		minor = step / 4
	}
	var ticks []gp.Tick
	for v := math.Ceil(min/minor) * minor; v <= max+1e-9*span; v += minor {
		label := ""
		if r := math.Mod(math.Abs(v), step); r < 1e-6*step || step-r < 1e-6*step {
			x := math.Round(v/minor) * minor
			if x == 0 {
				x = 0 // not "-0" when the axis starts a hair below zero
			}
			label = strconv.FormatFloat(x, 'g', 6, 64)
		}
		ticks = append(ticks, gp.Tick{Value: v, Label: label})
	}
	return ticks
}

// formatKelvin writes a temperature with up to five significant digits
// ("273.16", "647.1").
func formatKelvin(t float64) string { return fmt.Sprintf("%.5g", t) }
