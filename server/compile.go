package server

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sort"
	"strings"
	"sync"
	"time"

	"github.com/phasebound/phasebound/plugins/sdk"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// snapshot is one compiled catalog. It is immutable: handlers load it once
// per call, and Reload replaces it as a whole.
type snapshot struct {
	cat     *catalog.Catalog
	version string
	byID    map[string]*substance
	ids     []string // catalog order, for error messages
	list    *phaseboundpb.ListSubstancesResponse
}

// substance is a catalog substance with its compiled curves.
type substance struct {
	cat    *catalog.Substance
	pb     *phaseboundpb.Substance
	curves []*curve
	export *phaseboundpb.ExportTablesResponse
	phases *phaseLocator
}

// curve is a compiled coexistence curve.
type curve struct {
	kind   thermo.CurveKind
	vapour bool // saturation or sublimation: the high-T phase is a vapour
	thermo *thermo.Curve
	branch []*branch
	names  []string
}

// branch is one compiled branch: tables for P(T), T(P) and, when the
// catalog gives them, the two coexisting-phase volumes along the curve.
type branch struct {
	cat     *catalog.Branch
	name    string
	backend string // resolved backend of the curve correlation
	rng     thermo.Range
	corr    *thermo.TableCorrelation
	pOfT    *thermo.Table
	tOfP    *thermo.Table // nil when P(T) is not monotonic: T(P) goes to the backend
	vLow    *thermo.Table // nil when unknown
	vHigh   *thermo.Table
	vLowBE  string // backends of the volume correlations
	vHighBE string
	// vTmin and vTmax bound the volume tables (the branch range; a hair
	// inside it when a volume could not be evaluated at an end); lookups
	// are clamped.
	vTmin, vTmax float64
	maxErr       float64 // largest measured error of pOfT and tOfP
	buildS       float64 // seconds spent building this branch's tables (metrics)
}

func (b *branch) hasVolumes() bool { return b.vLow != nil && b.vHigh != nil }

// compile builds a snapshot of cat: it starts every backend the catalog
// uses and compiles every branch, several at a time.
func (s *Server) compile(ctx context.Context, cat *catalog.Catalog) (*snapshot, error) {
	t0 := time.Now()
	snap := &snapshot{cat: cat, version: cat.Version, byID: map[string]*substance{}}
	third := map[string]catalog.Backend{}
	for _, b := range cat.Backends {
		third[b.Name] = b
	}
	// Every branch of every curve is compiled in its own goroutine, at most
	// `workers` at once; the results land in index order.
	type job struct {
		sub   *catalog.Substance
		cv    *curve
		cb    *catalog.Branch
		out   *branch
		n     int
		err   error
		where string
	}
	var jobs []*job
	var subs []*substance
	for _, cs := range cat.Substances {
		sub := &substance{cat: cs}
		for _, cc := range cs.Curves {
			cv := &curve{kind: cc.Kind, vapour: cc.Kind == thermo.Saturation || cc.Kind == thermo.Sublimation}
			sub.curves = append(sub.curves, cv)
			for _, cb := range cc.Branches {
				jobs = append(jobs, &job{sub: cs, cv: cv, cb: cb,
					where: fmt.Sprintf("substance %q, %v curve, branch %q", cs.ID, cc.Kind, cb.Name)})
			}
		}
		subs = append(subs, sub)
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	workers := max(4, runtime.GOMAXPROCS(0))
	sem := make(chan struct{}, workers)
	var wg sync.WaitGroup
	for _, j := range jobs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			if ctx.Err() != nil {
				j.err = ctx.Err()
				return
			}
			j.out, j.n, j.err = s.compileBranch(ctx, j.cv, j.cb, criticalEnd(j.cv.kind, j.cb, j.sub.Critical), third)
			if j.err != nil {
				cancel()
			}
		}()
	}
	wg.Wait()
	var ntables int
	var firstErr error
	for _, j := range jobs {
		if j.err != nil && (firstErr == nil || errors.Is(firstErr, context.Canceled)) {
			firstErr = fmt.Errorf("server: %s: %w", j.where, j.err)
		}
		if j.err == nil {
			ntables += j.n
			j.cv.branch = append(j.cv.branch, j.out)
			j.cv.names = append(j.cv.names, j.out.name)
		}
	}
	if firstErr != nil {
		return nil, firstErr
	}
	for _, sub := range subs {
		cs := sub.cat
		for _, cv := range sub.curves {
			var tb []thermo.Branch
			for _, b := range cv.branch {
				tb = append(tb, thermo.Branch{Name: b.name, SolidForm: b.cat.SolidForm, Corr: b.corr})
				s.log.Debug("branch compiled", "substance", cs.ID, "curve", cv.kind.String(), "branch", b.name,
					"backend", b.backend, "p_of_t_segments", b.pOfT.Segments(), "max_rel_error", b.maxErr)
			}
			c, err := thermo.NewCurve(cv.kind, tb...)
			if err != nil {
				return nil, fmt.Errorf("server: substance %q, %v curve: %w", cs.ID, cv.kind, err)
			}
			cv.thermo = c
		}
		sub.pb = substanceProto(sub)
		sub.export = exportProto(sub, cat.Version)
		loc, err := newPhaseLocator(sub)
		if err != nil {
			return nil, fmt.Errorf("server: substance %q: phase location: %w", cs.ID, err)
		}
		sub.phases = loc
		snap.byID[cs.ID] = sub
		snap.ids = append(snap.ids, cs.ID)
	}
	snap.list = &phaseboundpb.ListSubstancesResponse{CatalogVersion: cat.Version}
	for _, id := range snap.ids {
		snap.list.Substances = append(snap.list.Substances, snap.byID[id].pb)
	}
	s.log.Info("catalog compiled", "source", cat.Source, "version", cat.Version,
		"substances", len(snap.ids), "tables", ntables, "elapsed", time.Since(t0).Round(time.Millisecond))
	return snap, nil
}

// backendFor resolves and starts the backend serving a correlation.
func (s *Server) backendFor(ctx context.Context, c catalog.Correlation, third map[string]catalog.Backend) (string, error) {
	name := c.Backend
	spec := sdk.BackendSpec{Name: name}
	if name == "" {
		std, err := sdk.StandardFor(c.Family)
		if err != nil {
			return "", err
		}
		name, spec.Name = std, std
	} else if b, ok := third[name]; ok {
		spec.Path, spec.SHA256 = b.Path, b.SHA256
	}
	if err := s.startBackend(ctx, spec); err != nil {
		return "", err
	}
	return name, nil
}

// sampler evaluates one correlation through its backend, a batch per call.
type sampler struct {
	s       *Server
	ctx     context.Context
	backend string
	corr    catalog.Correlation
	tmin    float64
	tmax    float64
}

func (sp sampler) eval(op sdk.Op, x, pressures []float64) (sdk.EvalResult, error) {
	res, err := sp.s.host.Evaluate(sp.ctx, sp.backend, sdk.EvalRequest{
		Family: sp.corr.Family, Params: sp.corr.Params, Tmin: sp.tmin, Tmax: sp.tmax,
		Op: op, Values: x, Pressures: pressures,
		// Table nodes lie inside the range up to rounding; allowing
		// extrapolation keeps a node an ulp outside from failing.
		AllowExtrapolation: true,
	})
	if err != nil {
		return res, err
	}
	if len(res.Failures) > 0 {
		f := res.Failures[0]
		return res, fmt.Errorf("backend %q, family %q: %s at %g (%d failed points)", sp.backend, sp.corr.Family, f.Message, x[f.Index], len(res.Failures))
	}
	if len(res.Results) != len(x) {
		return res, fmt.Errorf("backend %q returned %d results for %d points", sp.backend, len(res.Results), len(x))
	}
	return res, nil
}

func (sp sampler) fill(op sdk.Op) thermo.SampleFunc {
	return func(x, y []float64) error {
		res, err := sp.eval(op, x, nil)
		if err != nil {
			return err
		}
		copy(y, res.Results)
		return nil
	}
}

// buildTable builds a table to the server's tolerance. A table that only
// reaches MaxTableError is accepted with a warning; worse fails, except for
// volume tables (lenient), whose best table is kept and its measured error
// reported. (Saturated densities have an infinite slope at the critical
// point that no polynomial in T follows; volumeTable tabulates them against
// the critical-root transform of T, in which they reach the tolerance.)
func (s *Server) buildTable(f thermo.SampleFunc, xmin, xmax float64, o thermo.TableOptions, what string, lenient bool) (*thermo.Table, error) {
	o.Tolerance = s.opts.TableTolerance
	if lenient {
		o.MaxSegments = 512
	}
	t, err := thermo.BuildTable(f, xmin, xmax, o)
	var te *thermo.ToleranceError
	if lenient && errors.As(err, &te) && te.Best != nil {
		s.log.Warn("volume table tolerance not met; its measured error is reported",
			"table", what, "tolerance", o.Tolerance, "max_rel_error", te.Achieved)
		return te.Best, nil
	}
	if errors.As(err, &te) {
		// A second try with more nodes per segment and more segments.
		o2 := o
		o2.Nodes, o2.MaxSegments = 24, 8192
		if t2, err2 := thermo.BuildTable(f, xmin, xmax, o2); err2 == nil {
			return t2, nil
		} else if errors.As(err2, &te) && te.Best != nil {
			t, err = te.Best, nil
		}
		if err == nil && t.MaxRelError() > MaxTableError && !lenient {
			return nil, fmt.Errorf("%s table: %w", what, te)
		}
		if err == nil {
			s.log.Warn("table tolerance not met", "table", what, "tolerance", o.Tolerance, "max_rel_error", t.MaxRelError())
		}
	}
	if err != nil {
		return nil, fmt.Errorf("%s table: %w", what, err)
	}
	return t, nil
}

// criticalEnd returns the critical temperature Tc when cb is a saturation
// branch that ends at the substance's critical point (t_max within 1e-9
// relative of Tc), else 0. Its phase volumes are tabulated against the
// critical-root transform of T (see volumeTable).
func criticalEnd(kind thermo.CurveKind, cb *catalog.Branch, crit *catalog.Point) float64 {
	if kind != thermo.Saturation || crit == nil {
		return 0
	}
	tc := crit.Temperature
	if !(tc > cb.Tmin) || math.IsInf(tc, 0) || math.Abs(cb.Tmax-tc) > 1e-9*tc {
		return 0
	}
	return tc
}

// compileBranch starts the branch's backends and compiles its tables. tc
// is the critical temperature where the branch ends at the critical point
// (criticalEnd), else 0.
func (s *Server) compileBranch(ctx context.Context, cv *curve, cb *catalog.Branch, tc float64, third map[string]catalog.Backend) (*branch, int, error) {
	be, err := s.backendFor(ctx, cb.Correlation, third)
	if err != nil {
		return nil, 0, err
	}
	t0 := time.Now()
	b := &branch{cat: cb, name: cb.Name, backend: be}
	sp := sampler{s: s, ctx: ctx, backend: be, corr: cb.Correlation, tmin: cb.Tmin, tmax: cb.Tmax}
	pOpt, tOpt := thermo.DefaultTransforms(cv.kind)
	pOpt.Quantity, pOpt.Unit = "temperature", "K"
	tOpt.Quantity, tOpt.Unit = "pressure", "Pa"

	if cv.kind == thermo.Sublimation {
		// Identity P(T) (no exp per point) unless the curve spans too
		// many decades of pressure for it; see thermo.DefaultTransforms.
		o := pOpt
		o.Tolerance, o.MaxSegments = s.opts.TableTolerance, thermo.SublimationIdentityMaxSegments
		b.pOfT, err = thermo.BuildTable(sp.fill(sdk.OpPressure), cb.Tmin, cb.Tmax, o)
		var te *thermo.ToleranceError
		if errors.As(err, &te) {
			fb := thermo.SublimationFallback()
			pOpt.XTransform, pOpt.YTransform = fb.XTransform, fb.YTransform
			b.pOfT, err = s.buildTable(sp.fill(sdk.OpPressure), cb.Tmin, cb.Tmax, pOpt, "P(T)", false)
		} else if err != nil {
			err = fmt.Errorf("P(T) table: %w", err)
		}
	} else {
		b.pOfT, err = s.buildTable(sp.fill(sdk.OpPressure), cb.Tmin, cb.Tmax, pOpt, "P(T)", false)
	}
	if err != nil {
		return nil, 0, err
	}
	ntables := 1
	// Pressure range and monotonicity from the backend's own slopes on a
	// grid: T(P) is tabulated only where it is single-valued.
	const grid = 512
	ts := make([]float64, grid+1)
	for i := range ts {
		ts[i] = cb.Tmin + (cb.Tmax-cb.Tmin)*float64(i)/grid
	}
	ts[grid] = cb.Tmax
	res, err := sp.eval(sdk.OpPressure, ts, nil)
	if err != nil {
		return nil, 0, err
	}
	pmin, pmax := math.Inf(1), math.Inf(-1)
	var pos, neg bool
	for i, p := range res.Results {
		pmin, pmax = math.Min(pmin, p), math.Max(pmax, p)
		d := res.Derivatives[i]
		pos = pos || d > 0
		neg = neg || d < 0
	}
	monotonic := !(pos && neg)
	if monotonic {
		lo, hi := res.Results[0], res.Results[grid]
		if lo > hi {
			lo, hi = hi, lo
		}
		b.tOfP, err = s.buildTable(sp.fill(sdk.OpTemperature), lo, hi, tOpt, "T(P)", false)
		if err != nil {
			return nil, 0, err
		}
		ntables++
	}
	b.corr, err = thermo.NewTableCorrelation(b.pOfT, b.tOfP)
	if err != nil {
		return nil, 0, err
	}
	b.rng = b.corr.Range()
	if !monotonic {
		b.rng.Pmin, b.rng.Pmax = pmin, pmax
	}
	b.maxErr = b.pOfT.MaxRelError()
	if b.tOfP != nil {
		b.maxErr = math.Max(b.maxErr, b.tOfP.MaxRelError())
	}

	if cb.VolumeLow != nil && cb.VolumeHigh != nil {
		vl, vlBE, errL := s.volumeTable(ctx, sp, *cb.VolumeLow, false, tc, third, "low-T phase volume")
		vh, vhBE, errH := s.volumeTable(ctx, sp, *cb.VolumeHigh, cv.vapour, tc, third, "high-T phase volume")
		switch {
		case ctx.Err() != nil:
			return nil, 0, ctx.Err()
		case errL != nil || errH != nil:
			// The curve itself is fine: serve it without volumes (latent
			// heats fall back to the ideal-gas estimate on vapour curves,
			// or none), and say why.
			s.log.Warn("phase volumes not served: their tables could not be built; latent heats fall back",
				"curve", cv.kind.String(), "branch", cb.Name, "error", errors.Join(errL, errH).Error())
		default:
			b.vLow, b.vLowBE, b.vHigh, b.vHighBE = vl, vlBE, vh, vhBE
			lo1, hi1 := vl.Domain()
			lo2, hi2 := vh.Domain()
			b.vTmin, b.vTmax = math.Max(lo1, lo2), math.Min(hi1, hi2)
			ntables += 2
		}
	}
	b.buildS = time.Since(t0).Seconds()
	return b, ntables, nil
}

// volumeTable tabulates a phase volume along the curve: v(T, P(T)).
//
// On a saturation branch that ends at the critical point (tc > 0) the
// table runs against u = (1 − T/Tc)^(1/6) (thermo.TransformCriticalRoot)
// over the whole range up to Tc: saturated densities are series in
// (1 − T/Tc)^(1/3) or ^(1/6), with an infinite slope at Tc in T but
// smooth in u, and so reach the table tolerance (about 1e-4 against T).
func (s *Server) volumeTable(ctx context.Context, curveSampler sampler, vc catalog.Correlation, vapour bool, tc float64, third map[string]catalog.Backend, what string) (*thermo.Table, string, error) {
	be, err := s.backendFor(ctx, vc, third)
	if err != nil {
		return nil, "", err
	}
	vs := sampler{s: s, ctx: ctx, backend: be, corr: vc, tmin: curveSampler.tmin, tmax: curveSampler.tmax}
	f := func(x, y []float64) error {
		pr, err := curveSampler.eval(sdk.OpPressure, x, nil)
		if err != nil {
			return err
		}
		res, err := vs.eval(sdk.OpVolume, x, pr.Results)
		if err != nil {
			return err
		}
		copy(y, res.Results)
		return nil
	}
	o := thermo.TableOptions{XTransform: thermo.TransformIdentity, YTransform: thermo.TransformIdentity, Quantity: "temperature", Unit: "K"}
	if vapour {
		o.XTransform, o.YTransform = thermo.TransformReciprocal, thermo.TransformLog
	}
	lo, hi := curveSampler.tmin, curveSampler.tmax
	if tc > 0 {
		o.XTransform, o.XReference = thermo.TransformCriticalRoot, tc
		hi = math.Min(hi, tc)
	}
	t, err := s.buildTable(f, lo, hi, o, what, true)
	var te *thermo.ToleranceError
	if err != nil && !errors.As(err, &te) && ctx.Err() == nil {
		// A volume with an infinite slope at an end of the range (a
		// saturated density at the critical point) may fail to evaluate
		// exactly there: tabulate up to a hair inside, where lookups are
		// clamped.
		eps := 1e-12 * (hi - lo)
		t, err = s.buildTable(f, lo+eps, hi-eps, o, what, true)
	}
	return t, be, err
}

// kindChoices lists the curve kinds of a substance, for error messages.
func (sub *substance) kindChoices() string {
	names := make([]string, len(sub.curves))
	for i, c := range sub.curves {
		names[i] = c.kind.String()
	}
	return strings.Join(names, ", ")
}

// curveOf returns the substance's curve of kind k, or nil.
func (sub *substance) curveOf(k thermo.CurveKind) *curve {
	for _, c := range sub.curves {
		if c.kind == k {
			return c
		}
	}
	return nil
}

// branchIndex returns the index of the branch named name, or -1.
func (cv *curve) branchIndex(name string) int {
	for i, n := range cv.names {
		if n == name {
			return i
		}
	}
	return -1
}

// sortedIDs returns the substance ids sorted, for error messages.
func (snap *snapshot) sortedIDs() []string {
	ids := append([]string(nil), snap.ids...)
	sort.Strings(ids)
	return ids
}
