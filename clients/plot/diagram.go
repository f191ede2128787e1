package plot

import (
	"context"
	"fmt"
	"math"
	"sort"
	"strings"

	gp "gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// curveData is one branch sampled along its whole visible length.
type curveData struct {
	kind   phaseboundpb.CurveKind
	branch string // "" for a single-branch curve
	label  string // what the diagram writes next to it
	ts, ps []float64
}

// diagram is everything a phase diagram draws, in SI units.
type diagram struct {
	sub                    *phaseboundpb.Substance
	curves                 []curveData
	tmin, tmax, pmin, pmax float64
	regions                *phaseGrid // nil when phase location failed
}

// sampleBranch evaluates one branch at temperatures spread over [t0, t1]
// and, where p1 > p0 > 0, at pressures spread logarithmically over
// [p0, p1] (so a steep melting branch is drawn where it plunges), and
// returns the successful points sorted by temperature.
func sampleBranch(ctx context.Context, src Source, id string, kind phaseboundpb.CurveKind, branch string,
	t0, t1, p0, p1 float64, n int) ([]float64, []float64, error) {
	type pt struct{ t, p float64 }
	var pts []pt
	collect := func(given phaseboundpb.Variable, vals []float64) error {
		if len(vals) == 0 {
			return nil
		}
		resp, err := evaluate(ctx, src, &phaseboundpb.EvaluateRequest{
			Substance: id, Curve: kind, Branch: branch, Given: given, Values: vals,
		})
		if err != nil {
			return err
		}
		for i := range resp.GetStatus() {
			if resp.Status[i] != phaseboundpb.PointStatus_POINT_STATUS_OK {
				continue
			}
			t, p := resp.TemperatureK[i], resp.PressurePa[i]
			if t > 0 && p > 0 && !math.IsInf(p, 0) {
				pts = append(pts, pt{t, p})
			}
		}
		return nil
	}
	if t1 > t0 {
		ts := make([]float64, n)
		for i := range ts {
			ts[i] = t0 + (t1-t0)*float64(i)/float64(n-1)
		}
		ts[n-1] = t1
		if err := collect(phaseboundpb.Variable_VARIABLE_TEMPERATURE, ts); err != nil {
			return nil, nil, err
		}
	}
	if p0 > 0 && p1 > p0 {
		ps := make([]float64, n)
		l0, l1 := math.Log(p0), math.Log(p1)
		for i := range ps {
			ps[i] = math.Exp(l0 + (l1-l0)*float64(i)/float64(n-1))
		}
		if err := collect(phaseboundpb.Variable_VARIABLE_PRESSURE, ps); err != nil {
			return nil, nil, err
		}
	}
	sort.Slice(pts, func(i, j int) bool { return pts[i].t < pts[j].t })
	ts, ps := make([]float64, 0, len(pts)), make([]float64, 0, len(pts))
	for _, q := range pts {
		if len(ts) > 0 && q.t == ts[len(ts)-1] {
			continue
		}
		ts, ps = append(ts, q.t), append(ps, q.p)
	}
	return ts, ps, nil
}

func branchLabel(kind phaseboundpb.CurveKind, b *phaseboundpb.Branch, branches int) string {
	k := kindName(kind)
	if branches <= 1 || b.GetName() == "" {
		return k
	}
	return k + " · " + displayForm(b.GetName())
}

// describe asks src for substance id and refuses an answer without one.
func describe(ctx context.Context, src Source, id string) (*phaseboundpb.Substance, error) {
	resp, err := src.DescribeSubstance(ctx, id)
	if err != nil {
		return nil, err
	}
	sub := resp.GetSubstance()
	if sub == nil {
		return nil, fmt.Errorf("plot: the server returned no substance %q", id)
	}
	return sub, nil
}

// fetchDiagram gathers a substance's curves and picks the axes.
func fetchDiagram(ctx context.Context, src Source, id string, opt Options) (*diagram, error) {
	sub, err := describe(ctx, src, id)
	if err != nil {
		return nil, err
	}
	d := &diagram{sub: sub}
	// First pass: coarse samples over each branch's whole validity range
	// choose the axes.
	pmaxData, pminData := 0.0, math.Inf(1)
	type coarse struct{ ts, ps []float64 }
	var first []coarse
	for _, c := range sub.GetCurves() {
		for _, b := range c.GetBranches() {
			v := b.GetValidity()
			ts, ps, err := sampleBranch(ctx, src, id, c.GetKind(), b.GetName(), v.GetMinTemperatureK(), v.GetMaxTemperatureK(), 0, 0, 64)
			if err != nil {
				return nil, fmt.Errorf("plot: %s %s: %w", kindName(c.GetKind()), b.GetName(), err)
			}
			first = append(first, coarse{ts, ps})
			for _, p := range ps {
				pmaxData, pminData = math.Max(pmaxData, p), math.Min(pminData, p)
			}
		}
	}
	if pmaxData == 0 {
		return nil, fmt.Errorf("plot: substance %q has no curve points to draw", id)
	}
	if cp := sub.GetCriticalPoint(); cp != nil && cp.GetPressurePa() > 0 {
		pmaxData = math.Max(pmaxData, cp.GetPressurePa())
	}
	d.pmax = opt.Pmax
	if d.pmax <= 0 {
		d.pmax = pmaxData * 2.5
	}
	d.pmin = opt.Pmin
	if d.pmin <= 0 {
		d.pmin = math.Max(pminData/2.5, d.pmax*1e-13)
	}
	if d.pmin >= d.pmax {
		return nil, fmt.Errorf("plot: pressure axis [%g, %g] Pa is empty (want pmin < pmax)", d.pmin, d.pmax)
	}
	tlo, thi := math.Inf(1), 0.0
	for _, c := range first {
		for i, t := range c.ts {
			if c.ps[i] >= d.pmin && c.ps[i] <= d.pmax {
				tlo, thi = math.Min(tlo, t), math.Max(thi, t)
			}
		}
	}
	if math.IsInf(tlo, 1) {
		tlo, thi = 1, 1000
	}
	if cp := sub.GetCriticalPoint(); cp != nil && cp.GetTemperatureK() > 0 {
		// Leave the supercritical region room for its name.
		thi = math.Max(thi, cp.GetTemperatureK()+0.12*(cp.GetTemperatureK()-tlo))
	}
	pad := 0.04 * (thi - tlo)
	d.tmin, d.tmax = opt.Tmin, opt.Tmax
	if d.tmin <= 0 {
		d.tmin = math.Max(0, math.Floor((tlo-pad)/10)*10)
	}
	if d.tmax <= 0 {
		d.tmax = math.Ceil((thi+pad)/10) * 10
	}
	if d.tmin >= d.tmax {
		return nil, fmt.Errorf("plot: temperature axis [%g, %g] K is empty (want tmin < tmax)", d.tmin, d.tmax)
	}
	// Second pass: dense samples of the visible part.
	for _, c := range sub.GetCurves() {
		for _, b := range c.GetBranches() {
			v := b.GetValidity()
			t0, t1 := math.Max(v.GetMinTemperatureK(), d.tmin), math.Min(v.GetMaxTemperatureK(), d.tmax)
			p0, p1 := math.Max(v.GetMinPressurePa(), d.pmin), math.Min(v.GetMaxPressurePa(), d.pmax)
			ts, ps, err := sampleBranch(ctx, src, id, c.GetKind(), b.GetName(), t0, t1, p0, p1, 240)
			if err != nil {
				return nil, fmt.Errorf("plot: %s %s: %w", kindName(c.GetKind()), b.GetName(), err)
			}
			if len(ts) < 2 {
				continue
			}
			d.curves = append(d.curves, curveData{
				kind: c.GetKind(), branch: b.GetName(), label: branchLabel(c.GetKind(), b, len(c.GetBranches())),
				ts: ts, ps: ps,
			})
		}
	}
	d.regions = locateRegions(ctx, src, id, d)
	return d, nil
}

// PhaseDiagram draws the phase diagram of substance id: log P against T,
// every curve and branch drawn and labelled, the phase regions named, the
// triple and critical points marked, and opt.Data overlaid.
func PhaseDiagram(ctx context.Context, src Source, id string, opt Options) (*gp.Plot, error) {
	d, err := fetchDiagram(ctx, src, id, opt)
	if err != nil {
		return nil, err
	}
	title := opt.Title
	if title == "" {
		title = d.sub.GetName() + " — phase diagram"
		if d.sub.GetName() == "" {
			title = d.sub.GetId() + " — phase diagram"
		}
		if invented(d.sub) {
			title += "\ninvented data: not for design"
		}
	}
	p := newPlot(title, "temperature T (K)", "pressure P (logarithmic)")
	p.X.Min, p.X.Max = d.tmin, d.tmax
	p.Y.Min, p.Y.Max = math.Log10(d.pmin), math.Log10(d.pmax)
	p.Y.Tick.Marker = pressureTicks{}
	p.X.Tick.Marker = linearTicks{}
	p.Add(grid{xs: linearTicks{}.Ticks(p.X.Min, p.X.Max), ys: pressureTicks{}.Ticks(p.Y.Min, p.Y.Max)})

	seen := map[phaseboundpb.CurveKind]bool{}
	for _, c := range d.curves {
		xy := make(plotter.XYs, len(c.ts))
		for i := range c.ts {
			xy[i] = plotter.XY{X: c.ts[i], Y: math.Log10(c.ps[i])}
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return nil, fmt.Errorf("plot: %s: %w", c.label, err)
		}
		l.Color = kindColor(c.kind)
		l.Width = vg.Points(2)
		if c.kind == phaseboundpb.CurveKind_CURVE_KIND_TRANSITION {
			l.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
		}
		p.Add(l)
		visible := false
		for i := range c.ts {
			visible = visible || c.ts[i] >= d.tmin && c.ts[i] <= d.tmax && c.ps[i] >= d.pmin && c.ps[i] <= d.pmax
		}
		if visible && !seen[c.kind] {
			seen[c.kind] = true
			p.Legend.Add(kindName(c.kind), l)
		}
	}
	if len(opt.Data) > 0 {
		var xy plotter.XYs
		for _, q := range opt.Data {
			if q.T >= d.tmin && q.T <= d.tmax && q.P >= d.pmin && q.P <= d.pmax {
				xy = append(xy, plotter.XY{X: q.T, Y: math.Log10(q.P)})
			}
		}
		if len(xy) > 0 {
			s, err := plotter.NewScatter(xy)
			if err != nil {
				return nil, fmt.Errorf("plot: data: %w", err)
			}
			s.GlyphStyle = dataGlyph
			p.Add(s)
			name := opt.DataLabel
			if name == "" {
				name = "measured"
			}
			p.Legend.Add(fmt.Sprintf("%s (%d points)", name, len(xy)), s)
		}
	}
	if cp := d.sub.GetCriticalPoint(); cp != nil && cp.GetTemperatureK() > d.tmin && cp.GetTemperatureK() < d.tmax &&
		cp.GetPressurePa() > d.pmin && cp.GetPressurePa() < d.pmax {
		// The conventional bounds of the supercritical region: T > Tc and P > Pc.
		tc, lpc := cp.GetTemperatureK(), math.Log10(cp.GetPressurePa())
		for _, xy := range []plotter.XYs{{{X: tc, Y: lpc}, {X: tc, Y: p.Y.Max}}, {{X: tc, Y: lpc}, {X: d.tmax, Y: lpc}}} {
			l, err := plotter.NewLine(xy)
			if err != nil {
				return nil, err
			}
			l.Color = regionColor
			l.Width = vg.Points(0.8)
			l.Dashes = []vg.Length{vg.Points(2), vg.Points(3)}
			p.Add(l)
		}
	}
	ann := &annotations{d: d, data: opt.Data}
	tp := markerGlyph(tripleGlyph)
	cp := markerGlyph(criticalGlyph)
	inside := func(t, pr float64) bool { return t >= d.tmin && t <= d.tmax && pr >= d.pmin && pr <= d.pmax }
	for _, x := range d.sub.GetTriplePoints() {
		if inside(x.GetTemperatureK(), x.GetPressurePa()) {
			p.Legend.Add("triple point", tp)
			break
		}
	}
	if x := d.sub.GetCriticalPoint(); x != nil && inside(x.GetTemperatureK(), x.GetPressurePa()) {
		p.Legend.Add("critical point", cp)
	}
	p.Legend.Top = false
	p.Legend.Left = false
	p.Legend.XOffs = -vg.Points(6)
	p.Legend.YOffs = vg.Points(6)
	ann.legend = &p.Legend
	p.Add(ann)
	// Adding plotters widens the axes to their data; the diagram's limits win.
	p.X.Min, p.X.Max = d.tmin, d.tmax
	p.Y.Min, p.Y.Max = math.Log10(d.pmin), math.Log10(d.pmax)
	return p, nil
}

func invented(s *phaseboundpb.Substance) bool {
	if s.GetProvenance().GetKind() == phaseboundpb.ProvenanceKind_PROVENANCE_KIND_INVENTED {
		return true
	}
	for _, c := range s.GetCurves() {
		for _, b := range c.GetBranches() {
			if b.GetProvenance().GetKind() == phaseboundpb.ProvenanceKind_PROVENANCE_KIND_INVENTED {
				return true
			}
		}
	}
	return false
}

var (
	dataGlyph     = draw.GlyphStyle{Color: dataColor, Radius: vg.Points(2.6), Shape: draw.RingGlyph{}}
	tripleGlyph   = draw.GlyphStyle{Color: inkColor, Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}
	criticalGlyph = draw.GlyphStyle{Color: criticalColor, Radius: vg.Points(4.5), Shape: draw.CircleGlyph{}}
)

// markerGlyph is a legend thumbnail of a glyph.
type markerGlyph draw.GlyphStyle

func (g markerGlyph) Thumbnail(c *draw.Canvas) {
	c.DrawGlyph(draw.GlyphStyle(g), c.Center())
}

// phaseGrid is the phase of each cell of a regular grid over the plot
// area (T linear, P logarithmic), from the server's phase location.
type phaseGrid struct {
	nx, ny int
	id     []int    // per cell, index into names; -1 unknown
	names  []string // region labels
}

const gridNX, gridNY = 120, 90

// locateRegions asks the server for the phase of every grid cell centre.
// It returns nil when phase location is not available, and the diagram is
// then drawn without region names.
func locateRegions(ctx context.Context, src Source, id string, d *diagram) *phaseGrid {
	n := gridNX * gridNY
	ts, ps := make([]float64, n), make([]float64, n)
	l0, l1 := math.Log(d.pmin), math.Log(d.pmax)
	for j := 0; j < gridNY; j++ {
		for i := 0; i < gridNX; i++ {
			k := j*gridNX + i
			ts[k] = d.tmin + (d.tmax-d.tmin)*(float64(i)+0.5)/gridNX
			ps[k] = math.Exp(l0 + (l1-l0)*(float64(j)+0.5)/gridNY)
		}
	}
	resp, err := src.LocatePhase(ctx, &phaseboundpb.LocatePhaseRequest{Substance: id, TemperatureK: ts, PressurePa: ps})
	if err != nil || len(resp.GetPhase()) != n {
		return nil
	}
	g := &phaseGrid{nx: gridNX, ny: gridNY, id: make([]int, n)}
	index := map[string]int{}
	for k := range g.id {
		g.id[k] = -1
		if st := resp.GetStatus(); len(st) == n && st[k] != phaseboundpb.PointStatus_POINT_STATUS_OK {
			continue
		}
		var name string
		switch resp.Phase[k] {
		case phaseboundpb.Phase_PHASE_SOLID:
			name = "solid"
			if fi := resp.GetFormIndex(); len(fi) == n && int(fi[k]) < len(resp.GetFormNames()) {
				if f := resp.FormNames[fi[k]]; f != "" {
					name = displayForm(f)
					if !strings.Contains(strings.ToLower(f), "ice") && !strings.Contains(strings.ToLower(f), "solid") {
						name = "solid " + name
					}
				}
			}
		case phaseboundpb.Phase_PHASE_LIQUID:
			name = "liquid"
		case phaseboundpb.Phase_PHASE_VAPOR:
			name = "vapor"
		case phaseboundpb.Phase_PHASE_SUPERCRITICAL:
			name = "supercritical fluid"
		default:
			continue
		}
		x, ok := index[name]
		if !ok {
			x = len(g.names)
			index[name] = x
			g.names = append(g.names, name)
		}
		g.id[k] = x
	}
	if len(g.names) == 0 {
		return nil
	}
	return g
}

// annotations places the text of a phase diagram when it is drawn, on the
// real canvas: it rasterises the curves, markers and legend into a grid of
// cells and puts each label where it covers nothing else.
type annotations struct {
	d      *diagram
	legend *gp.Legend
	data   []Point
}

const (
	cellFree   = -1
	cellBlock  = -3 // marker, legend or placed label
	cellShared = -2 // two curves
)

type placer struct {
	c      draw.Canvas
	nx, ny int
	owner  []int // per cell: cellFree, curve index, cellShared or cellBlock
	region *phaseGrid
}

func (pl *placer) cellOf(pt vg.Point) (int, int) {
	w, h := pl.c.Max.X-pl.c.Min.X, pl.c.Max.Y-pl.c.Min.Y
	i := int(float64((pt.X - pl.c.Min.X) / w * vg.Length(pl.nx)))
	j := int(float64((pt.Y - pl.c.Min.Y) / h * vg.Length(pl.ny)))
	return i, j
}

func (pl *placer) mark(i, j, v int) {
	if i < 0 || j < 0 || i >= pl.nx || j >= pl.ny {
		return
	}
	k := j*pl.nx + i
	switch {
	case v == cellBlock || pl.owner[k] == cellFree:
		pl.owner[k] = v
	case pl.owner[k] >= 0 && pl.owner[k] != v && v >= 0:
		pl.owner[k] = cellShared
	}
}

// markPolyline marks every cell a polyline passes through.
func (pl *placer) markPolyline(pts []vg.Point, v int) {
	cw := (pl.c.Max.X - pl.c.Min.X) / vg.Length(pl.nx)
	for k := 1; k < len(pts); k++ {
		a, b := pts[k-1], pts[k]
		d := math.Hypot(float64(b.X-a.X), float64(b.Y-a.Y))
		steps := int(d/float64(cw)*3) + 1
		for s := 0; s <= steps; s++ {
			f := vg.Length(float64(s) / float64(steps))
			i, j := pl.cellOf(vg.Point{X: a.X + (b.X-a.X)*f, Y: a.Y + (b.Y-a.Y)*f})
			pl.mark(i, j, v)
		}
	}
}

func (pl *placer) markRect(r vg.Rectangle, v int) {
	i0, j0 := pl.cellOf(r.Min)
	i1, j1 := pl.cellOf(r.Max)
	for j := j0; j <= j1; j++ {
		for i := i0; i <= i1; i++ {
			pl.mark(i, j, v)
		}
	}
}

// conflicts counts the cells of r (grown by grow cells) that are taken:
// outside the canvas, by another curve, a marker or label, or (for a
// region label, region ≥ 0) by another phase.
func (pl *placer) conflicts(r vg.Rectangle, grow int, allow int, region int) int {
	i0, j0 := pl.cellOf(r.Min)
	i1, j1 := pl.cellOf(r.Max)
	i0, j0, i1, j1 = i0-grow, j0-grow, i1+grow, j1+grow
	n := 0
	for j := j0; j <= j1; j++ {
		for i := i0; i <= i1; i++ {
			if i < 0 || j < 0 || i >= pl.nx || j >= pl.ny {
				n++
				continue
			}
			k := j*pl.nx + i
			if o := pl.owner[k]; o != cellFree && !(allow >= 0 && o == allow) {
				n++
				continue
			}
			if region >= 0 && (pl.region == nil || pl.region.id[k] != region) {
				n++
			}
		}
	}
	return n
}

func (a *annotations) Plot(c draw.Canvas, p *gp.Plot) {
	tx, ty := p.Transforms(&c)
	d := a.d
	pl := &placer{c: c, nx: gridNX, ny: gridNY, owner: make([]int, gridNX*gridNY), region: d.regions}
	for k := range pl.owner {
		pl.owner[k] = cellFree
	}
	in := func(t, pr float64) bool { return t >= d.tmin && t <= d.tmax && pr >= d.pmin && pr <= d.pmax }
	// Curves in canvas space, clipped to the data area.
	lines := make([][][]vg.Point, len(d.curves))
	for ci, cd := range d.curves {
		pts := make([]vg.Point, len(cd.ts))
		for i := range cd.ts {
			pts[i] = vg.Point{X: tx(cd.ts[i]), Y: ty(math.Log10(cd.ps[i]))}
		}
		lines[ci] = c.ClipLinesXY(pts)
		for _, seg := range lines[ci] {
			pl.markPolyline(seg, ci)
		}
	}
	if cp := d.sub.GetCriticalPoint(); cp != nil && in(cp.GetTemperatureK(), cp.GetPressurePa()) {
		at := vg.Point{X: tx(cp.GetTemperatureK()), Y: ty(math.Log10(cp.GetPressurePa()))}
		pl.markPolyline([]vg.Point{at, {X: at.X, Y: c.Max.Y}}, cellBlock)
		pl.markPolyline([]vg.Point{at, {X: c.Max.X, Y: at.Y}}, cellBlock)
	}
	if a.legend != nil {
		lc := c
		r := a.legend.Rectangle(lc)
		r.Min.X -= 4
		r.Min.Y -= 4
		r.Max.X += 4
		r.Max.Y += 4
		pl.markRect(r, cellBlock)
	}
	// Markers.
	type marker struct {
		at    vg.Point
		label string
		sty   draw.GlyphStyle
	}
	var markers []marker
	sub := d.sub
	for _, tp := range sub.GetTriplePoints() {
		t, pr := tp.GetTemperatureK(), tp.GetPressurePa()
		if !in(t, pr) {
			continue
		}
		label := ""
		if hasVapourPhase(tp.GetPhases()) {
			label = fmt.Sprintf("triple point\n%s K, %s", formatKelvin(t), FormatPressure(pr))
		}
		markers = append(markers, marker{vg.Point{X: tx(t), Y: ty(math.Log10(pr))}, label, tripleGlyph})
	}
	if cp := sub.GetCriticalPoint(); cp != nil && in(cp.GetTemperatureK(), cp.GetPressurePa()) {
		markers = append(markers, marker{vg.Point{X: tx(cp.GetTemperatureK()), Y: ty(math.Log10(cp.GetPressurePa()))},
			fmt.Sprintf("critical point\n%s K, %s", formatKelvin(cp.GetTemperatureK()), FormatPressure(cp.GetPressurePa())),
			criticalGlyph})
	}
	for _, m := range markers {
		r := m.sty.Rectangle().Add(m.at)
		pl.markRect(r, cellBlock)
	}
	for _, q := range a.data {
		if in(q.T, q.P) {
			pl.markRect(dataGlyph.Rectangle().Add(vg.Point{X: tx(q.T), Y: ty(math.Log10(q.P))}), cellBlock)
		}
	}
	var draws []func()
	place := func(txt string, sty text.Style, r vg.Rectangle) {
		pl.markRect(r, cellBlock)
		draws = append(draws, func() { drawLabel(&c, txt, sty, r) })
	}
	// 1. Point labels, beside their markers.
	for _, m := range markers {
		if m.label == "" {
			continue
		}
		sty := newTextStyle(8.5, false, false, inkColor)
		w, h := sty.Width(m.label)+6, sty.Height(m.label)+4
		gap := vg.Points(6)
		cands := []vg.Point{
			{X: m.at.X + gap, Y: m.at.Y - h - gap/2}, // below right
			{X: m.at.X + gap, Y: m.at.Y + gap/2},     // above right
			{X: m.at.X - gap - w, Y: m.at.Y + gap/2}, // above left
			{X: m.at.X - gap - w, Y: m.at.Y - h - gap/2},
			{X: m.at.X + gap, Y: m.at.Y - h/2},
			{X: m.at.X - gap - w, Y: m.at.Y - h/2},
		}
		best, bestN := vg.Rectangle{}, math.MaxInt
		for _, o := range cands {
			r := vg.Rectangle{Min: o, Max: vg.Point{X: o.X + w, Y: o.Y + h}}
			if n := pl.conflicts(r, 0, -1, -1); n < bestN {
				best, bestN = r, n
			}
		}
		place(m.label, sty, best)
	}
	// 2. Curve labels: on the curve where it has room (the halo breaks the
	// line), else beside it with a leader line. Short branches choose
	// first, having the fewest places to go.
	order := make([]int, len(d.curves))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(i, j int) bool {
		return polylineLength(flatten(lines[order[i]])) < polylineLength(flatten(lines[order[j]]))
	})
	for _, ci := range order {
		cd := d.curves[ci]
		sty := newTextStyle(9, true, false, kindColor(cd.kind))
		w, h := sty.Width(cd.label)+6, sty.Height(cd.label)+3
		pts := flatten(lines[ci])
		if len(pts) < 2 {
			continue
		}
		type cand struct {
			r      vg.Rectangle
			anchor vg.Point
			leader bool
			cost   int
		}
		best := cand{cost: math.MaxInt}
		consider := func(c cand) {
			if c.cost < best.cost {
				best = c
			}
		}
		rectAt := func(ctr vg.Point) vg.Rectangle {
			return vg.Rectangle{Min: vg.Point{X: ctr.X - w/2, Y: ctr.Y - h/2}, Max: vg.Point{X: ctr.X + w/2, Y: ctr.Y + h/2}}
		}
		for _, f := range []float64{0.5, 0.4, 0.6, 0.3, 0.7, 0.2, 0.8, 0.12, 0.88} {
			at := alongPolyline(pts, f)
			consider(cand{r: rectAt(at), anchor: at, cost: 100 * pl.conflicts(rectAt(at), 0, ci, -1)})
		}
		if best.cost > 0 {
			dirs := [][2]float64{{1, 0}, {-1, 0}, {0, 1}, {0, -1}, {1, 1}, {-1, 1}, {1, -1}, {-1, -1}}
			for _, f := range []float64{0.5, 0.3, 0.7} {
				at := alongPolyline(pts, f)
				for k, dist := range []vg.Length{h, 2.5 * h, 4.5 * h} {
					for _, dv := range dirs {
						ctr := vg.Point{
							X: at.X + vg.Length(dv[0])*(w/2+dist),
							Y: at.Y + vg.Length(dv[1])*(h/2+dist),
						}
						r := rectAt(ctr)
						consider(cand{r: r, anchor: at, leader: true, cost: 100*pl.conflicts(r, 0, -1, -1) + 10 + 5*k})
					}
				}
			}
		}
		if best.leader {
			from := nearestOnRect(best.r, best.anchor)
			pl.markPolyline([]vg.Point{from, best.anchor}, cellBlock)
			clr := kindColor(cd.kind)
			a, b := from, best.anchor
			draws = append(draws, func() {
				c.StrokeLine2(draw.LineStyle{Color: clr, Width: vg.Points(0.7)}, a.X, a.Y, b.X, b.Y)
			})
		}
		place(cd.label, sty, best.r)
	}
	// 3. Region names, where each has the most room.
	if g := d.regions; g != nil {
		for ri, name := range g.names {
			for _, size := range []float64{13, 10, 8} {
				sty := newTextStyle(size, false, true, regionColor)
				w, h := sty.Width(name)+4, sty.Height(name)+2
				r, ok := pl.bestRegionSpot(ri, w, h)
				if ok {
					place(name, sty, r)
					break
				}
			}
		}
	}
	for _, f := range draws {
		f()
	}
	for _, m := range markers {
		c.DrawGlyph(m.sty, m.at)
	}
}

// bestRegionSpot finds where a w×h label fits inside region ri with the
// widest free margin, preferring the region's middle on ties.
func (pl *placer) bestRegionSpot(ri int, w, h vg.Length) (vg.Rectangle, bool) {
	g := pl.region
	cw := (pl.c.Max.X - pl.c.Min.X) / vg.Length(pl.nx)
	ch := (pl.c.Max.Y - pl.c.Min.Y) / vg.Length(pl.ny)
	var sx, sy, n float64
	for k, id := range g.id {
		if id == ri {
			sx += float64(k % g.nx)
			sy += float64(k / g.nx)
			n++
		}
	}
	if n == 0 {
		return vg.Rectangle{}, false
	}
	cx, cy := sx/n, sy/n
	bestGrow, bestD := -1, math.Inf(1)
	var best vg.Rectangle
	for k, id := range g.id {
		if id != ri {
			continue
		}
		i, j := k%g.nx, k/g.nx
		ctr := vg.Point{X: pl.c.Min.X + (vg.Length(i)+0.5)*cw, Y: pl.c.Min.Y + (vg.Length(j)+0.5)*ch}
		r := vg.Rectangle{Min: vg.Point{X: ctr.X - w/2, Y: ctr.Y - h/2}, Max: vg.Point{X: ctr.X + w/2, Y: ctr.Y + h/2}}
		if pl.conflicts(r, 0, -1, ri) > 0 {
			continue
		}
		grow := 0
		for grow < 6 && pl.conflicts(r, grow+1, -1, ri) == 0 {
			grow++
		}
		dist := math.Hypot(float64(i)-cx, (float64(j)-cy)*float64(ch/cw))
		if grow > bestGrow || grow == bestGrow && dist < bestD {
			bestGrow, bestD, best = grow, dist, r
		}
	}
	return best, bestGrow >= 0
}

// nearestOnRect returns the point of r's boundary nearest p.
func nearestOnRect(r vg.Rectangle, p vg.Point) vg.Point {
	q := vg.Point{X: vg.Length(math.Max(float64(r.Min.X), math.Min(float64(r.Max.X), float64(p.X)))),
		Y: vg.Length(math.Max(float64(r.Min.Y), math.Min(float64(r.Max.Y), float64(p.Y))))}
	return q
}

func hasVapourPhase(ph []string) bool {
	for _, p := range ph {
		if p == "vapor" || p == "vapour" || p == "gas" {
			return true
		}
	}
	return false
}

func flatten(segs [][]vg.Point) []vg.Point {
	// The longest clipped piece carries the label.
	var best []vg.Point
	bestL := -1.0
	for _, s := range segs {
		if l := polylineLength(s); l > bestL {
			best, bestL = s, l
		}
	}
	return best
}

func polylineLength(pts []vg.Point) float64 {
	l := 0.0
	for k := 1; k < len(pts); k++ {
		l += math.Hypot(float64(pts[k].X-pts[k-1].X), float64(pts[k].Y-pts[k-1].Y))
	}
	return l
}

// alongPolyline returns the point at fraction f of the polyline's length.
func alongPolyline(pts []vg.Point, f float64) vg.Point {
	target := f * polylineLength(pts)
	acc := 0.0
	for k := 1; k < len(pts); k++ {
		seg := math.Hypot(float64(pts[k].X-pts[k-1].X), float64(pts[k].Y-pts[k-1].Y))
		if acc+seg >= target && seg > 0 {
			u := vg.Length((target - acc) / seg)
			return vg.Point{X: pts[k-1].X + (pts[k].X-pts[k-1].X)*u, Y: pts[k-1].Y + (pts[k].Y-pts[k-1].Y)*u}
		}
		acc += seg
	}
	return pts[len(pts)-1]
}
