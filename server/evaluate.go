package server

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/bits"
	"runtime"
	"slices"
	"strings"
	"sync"

	"google.golang.org/grpc/codes"

	"github.com/phasebound/phasebound/plugins/sdk"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/thermo"
)

// backendChunk bounds the points of one backend call on the exact path.
const backendChunk = 1 << 20

// Evaluate implements phasebound.v1.BoundaryService: P(T) or T(P) with
// slopes (and, on request, phase volumes and latent heats) for a batch of
// points on one curve, from the compiled tables unless the request asks
// for the exact path.
func (s *Server) Evaluate(ctx context.Context, req *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	if n := len(req.GetValues()); n > s.opts.MaxPointsPerRequest {
		return nil, tooManyPoints(n, s.opts.MaxPointsPerRequest)
	}
	return s.evaluate(ctx, s.snap.Load(), req, 0)
}

// EvaluateStream implements phasebound.v1.BoundaryService: every request
// message is one chunk, answered in order by one response that carries the
// chunk's offset in the stream. All chunks are served by the catalog that
// was current when the stream opened.
func (s *Server) EvaluateStream(stream phaseboundpb.BoundaryService_EvaluateStreamServer) error {
	snap := s.snap.Load()
	ctx := stream.Context()
	var offset uint64
	for {
		msg, err := stream.Recv()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		req := msg.GetRequest()
		if req == nil {
			return invalidField("request", "stream message %d carries no request", offset)
		}
		n := len(req.GetValues())
		if n > s.opts.MaxPointsPerRequest {
			return tooManyPoints(n, s.opts.MaxPointsPerRequest)
		}
		resp, err := s.evaluate(ctx, snap, req, offset)
		if err != nil {
			return err
		}
		if err := stream.Send(&phaseboundpb.EvaluateStreamResponse{Response: resp, Offset: offset}); err != nil {
			return err
		}
		offset += uint64(n)
	}
}

// query is one validated Evaluate request.
type query struct {
	snap     *snapshot
	sub      *substance
	cv       *curve
	byT      bool
	branch   int // -1: chosen per point
	req      *phaseboundpb.EvaluateRequest
	offset   uint64
	latent   bool
	resp     *phaseboundpb.EvaluateResponse
	noBranch uint32 // branch_names index used by failed points
	// route[i] is the branch whose backend evaluates point i (exact path
	// or extrapolation), or -1; nil when no point can need a backend.
	route  []int32
	failed int
	// fast is the branch of the fast table loop (see tablePass), or -1.
	fast int
	// perPointOnce allocates resp.Status and resp.BranchIndex (perPoint).
	perPointOnce sync.Once
}

// perPoint allocates the response's status and branch_index arrays on
// first use. The fast table loop never writes them, so a batch that is all
// OK on one branch (answered in the compact form) never allocates them;
// every other writer calls perPoint first. Safe from the parallel parts.
func (q *query) perPoint() {
	q.perPointOnce.Do(func() {
		n := len(q.req.GetValues())
		q.resp.Status = make([]phaseboundpb.PointStatus, n)
		q.resp.BranchIndex = make([]uint32, n)
	})
}

// part is the state of one worker of a batch: the workers share the
// response arrays (each writes its own index range) and keep their own
// error lists, merged in index order afterwards.
type part struct {
	errs   []*phaseboundpb.PointError
	failed int
	routed bool
	used   uint64 // bit set of the branches used
	extrap int    // points evaluated by extrapolation
}

// parallelMin is the batch size from which the table pass is split over
// several goroutines, and the smallest share of one.
const parallelMin = 1 << 14

// resolve validates the request fields that apply to the whole batch.
func (s *Server) resolve(snap *snapshot, req *phaseboundpb.EvaluateRequest) (*query, error) {
	sub, err := snap.substance(req.GetSubstance())
	if err != nil {
		return nil, err
	}
	kind, ok := KindFromProto(req.GetCurve())
	if !ok {
		return nil, invalidField("curve", "no curve kind given for %q (valid: %s)", sub.cat.ID, sub.kindChoices())
	}
	cv := sub.curveOf(kind)
	if cv == nil {
		return nil, invalidField("curve", "substance %q has no %v curve (valid: %s)", sub.cat.ID, kind, sub.kindChoices())
	}
	q := &query{snap: snap, sub: sub, cv: cv, branch: -1, req: req}
	switch req.GetGiven() {
	case phaseboundpb.Variable_VARIABLE_TEMPERATURE:
		q.byT = true
	case phaseboundpb.Variable_VARIABLE_PRESSURE:
	default:
		return nil, invalidField("given", "say whether values are temperatures or pressures (valid: VARIABLE_TEMPERATURE, VARIABLE_PRESSURE)")
	}
	if name := req.GetBranch(); name != "" {
		q.branch = cv.branchIndex(name)
		if q.branch < 0 {
			return nil, invalidField("branch", "%s %v curve has no branch %q (valid: %s)", sub.cat.ID, kind, name, branchChoices(cv))
		}
	}
	return q, nil
}

func branchChoices(cv *curve) string {
	if len(cv.names) == 1 && cv.names[0] == "" {
		return "the curve has a single unnamed branch; omit --branch"
	}
	return strings.Join(cv.names, ", ")
}

// evaluate answers one request (or one stream chunk at offset).
func (s *Server) evaluate(ctx context.Context, snap *snapshot, req *phaseboundpb.EvaluateRequest, offset uint64) (*phaseboundpb.EvaluateResponse, error) {
	q, err := s.resolve(snap, req)
	if err != nil {
		return nil, err
	}
	q.offset = offset
	q.latent = req.GetIncludeLatentHeat()
	q.fast = q.fastBranch()
	n := len(req.GetValues())
	r := &phaseboundpb.EvaluateResponse{
		TemperatureK:   make([]float64, n),
		PressurePa:     make([]float64, n),
		DpdtPaPerK:     make([]float64, n),
		BranchNames:    q.cv.names[:len(q.cv.names):len(q.cv.names)],
		Exact:          req.GetExact(),
		CatalogVersion: snap.version,
	}
	if q.latent {
		r.LatentHeatJPerMol = make([]float64, n)
		r.LatentHeatJPerKg = make([]float64, n)
		r.VolumeLowTPhaseM3PerMol = make([]float64, n)
		r.VolumeHighTPhaseM3PerMol = make([]float64, n)
		r.LatentHeatSource = make([]phaseboundpb.LatentHeatSource, n)
	}
	q.resp = r
	q.noBranch = uint32(len(q.cv.names))
	for i, name := range q.cv.names {
		if name == "" {
			q.noBranch = uint32(i)
		}
	}

	if req.GetExact() || req.GetAllowExtrapolation() || (!q.byT && q.cv.turnsBack()) {
		q.route = make([]int32, n)
		for j := range q.route {
			q.route[j] = -1
		}
	}
	parts := make([]part, max(1, min(runtime.GOMAXPROCS(0), n/parallelMin)))
	if len(parts) == 1 {
		s.tablePass(ctx, q, 0, n, &parts[0])
	} else {
		var wg sync.WaitGroup
		for k := range parts {
			lo, hi := k*n/len(parts), (k+1)*n/len(parts)
			wg.Add(1)
			go func() {
				defer wg.Done()
				s.tablePass(ctx, q, lo, hi, &parts[k])
			}()
		}
		wg.Wait()
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	var used uint64
	extrap := 0
	routed := false
	for k := range parts {
		p := &parts[k]
		used |= p.used
		routed = routed || p.routed
		q.failed += p.failed
		r.Errors = append(r.Errors, p.errs...) // parts cover ascending ranges: index order holds
	}
	if req.GetStrict() && q.failed > 0 {
		return nil, q.strictError()
	}
	if routed {
		var bp part
		if err := s.backendPass(ctx, q, &bp); err != nil {
			return nil, err
		}
		q.failed += bp.failed
		used |= bp.used
		extrap += bp.extrap
		r.Errors = append(r.Errors, bp.errs...)
		q.sortErrors()
		if req.GetStrict() && q.failed > 0 {
			return nil, q.strictError()
		}
	}
	if !req.GetExact() {
		for i, b := range q.cv.branch {
			if used&(1<<min(i, 63)) != 0 {
				r.TableMaxRelError = math.Max(r.TableMaxRelError, b.maxErr)
			}
		}
	}
	q.finish(used, extrap)
	return r, nil
}

// finish settles the per-point status and branch_index arrays. When every
// point is OK on one branch (the usual case), the response is compact: both
// arrays are empty and branch_names holds that branch alone, which spares
// every batch a size, encode, count and decode pass over two integer arrays
// (docs/performance.md). Otherwise both hold one entry per point; the
// points the fast table loop wrote (status still unset) are OK on the
// branch it used.
func (q *query) finish(used uint64, extrap int) {
	r := q.resp
	nb := len(q.cv.names)
	if q.failed == 0 && extrap == 0 && nb <= 64 && bits.OnesCount64(used) == 1 {
		r.Status, r.BranchIndex = nil, nil
		b := bits.TrailingZeros64(used)
		r.BranchNames = q.cv.names[b : b+1 : b+1] // no spare capacity: callers may append
		return
	}
	q.perPoint()
	for i, st := range r.Status {
		if st == phaseboundpb.PointStatus_POINT_STATUS_UNSPECIFIED {
			r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OK
			r.BranchIndex[i] = uint32(q.fast)
		}
	}
	if q.noBranch == uint32(nb) && q.failed > 0 {
		r.BranchNames = append(append([]string(nil), q.cv.names...), "")
	}
}

// tablePass evaluates points lo to hi-1 from the tables, choosing branches
// and refusing bad points; points that need a backend (the exact path,
// extrapolation, T(P) on a branch that turns back) are marked in q.route.
// Failures and the branches used go to p.
func (s *Server) tablePass(ctx context.Context, q *query, lo, hi int, p *part) {
	r := q.resp
	vals := q.req.GetValues()
	exact := q.req.GetExact()
	extrap := q.req.GetAllowExtrapolation()
	opts := thermo.CurveOptions{}
	if q.branch >= 0 {
		opts.Branch = q.cv.names[q.branch]
	}
	curve := q.cv.thermo
	// Fast path (bench findings, docs/performance.md): with one branch to
	// use (named, or the curve's only one), points inside that branch's
	// range are evaluated on its tables directly, skipping the per-point
	// branch search of thermo.Curve; the values are the ones Curve returns.
	fi := q.fast
	var fb *branch
	var fr thermo.Range
	// used is kept in a local and stored once: the parts of a parallel
	// pass sit side by side in memory, and a store per point to p.used
	// would bounce their shared cache line between the cores.
	var used uint64
	defer func() { p.used |= used }()
	if fi >= 0 {
		fb = q.cv.branch[fi]
		fr = fb.corr.Range()
	}
	for i := lo; i < hi; i++ {
		if i&0xffff == 0 && ctx.Err() != nil {
			return
		}
		if fb != nil && !exact {
			// The fast loop: a run of points inside the branch's range,
			// evaluated in one call that writes T, P and dP/dT straight
			// into the response and leaves status and branch_index to
			// finish. It stops at a point it cannot take (out of range,
			// invalid) or at the next cancellation check.
			end := min(hi, (i|0xffff)+1)
			k := thermo.TablePoints(fb.pOfT, fb.tOfP, fr, vals[i:end], q.byT,
				r.TemperatureK[i:end], r.PressurePa[i:end], r.DpdtPaPerK[i:end])
			if k > 0 {
				used |= 1 << min(fi, 63)
				if q.latent {
					for j := i; j < i+k; j++ {
						q.pointLatent(j, fb)
					}
				}
				i += k - 1
				continue
			}
		}
		x := vals[i]
		var pt thermo.CurvePoint
		var err error
		ok := false
		if fb != nil && exact {
			// (Without exact, the fast loop has just refused this point,
			// and TablePoint would too.)
			pt, ok = thermo.TablePoint(fb.pOfT, fb.tOfP, fr, x, q.byT, fi)
		}
		switch {
		case ok:
		case q.byT:
			pt, err = curve.Pressure(x, opts)
		default:
			pt, err = curve.Temperature(x, opts)
		}
		if err != nil {
			var re *thermo.RangeError
			switch {
			case errors.As(err, &re) && extrap:
				q.routeTo(p, i, q.nearestBranch(x))
			case errors.Is(err, thermo.ErrNotImplemented):
				b := q.branch
				if b < 0 {
					b = q.branchHolding(x)
				}
				q.routeTo(p, i, b)
			default:
				q.fail(p, i, err)
			}
			continue
		}
		used |= 1 << min(pt.Branch, 63)
		r.TemperatureK[i] = pt.Temperature
		r.PressurePa[i] = pt.Pressure
		r.DpdtPaPerK[i] = pt.Slope
		q.perPoint()
		r.BranchIndex[i] = uint32(pt.Branch)
		r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OK
		if exact {
			q.routeTo(p, i, pt.Branch)
			continue
		}
		if q.latent {
			q.pointLatent(i, q.cv.branch[pt.Branch])
		}
	}
}

// fastBranch returns the branch whose points the fast table loop may
// evaluate, or -1: the branch the request names, or the curve's only one.
// Points it takes have the values Curve would give (thermo.TablePoints);
// everything else (seams, overlaps, extrapolation, errors) takes the
// general path.
func (q *query) fastBranch() int {
	if q.branch >= 0 {
		return q.branch
	}
	if len(q.cv.branch) == 1 {
		return 0
	}
	return -1
}

// pointLatent fills the latent heat of table-evaluated point i on branch b
// from the branch's phase-volume tables.
func (q *query) pointLatent(i int, b *branch) {
	vl, vh := math.NaN(), math.NaN()
	if b.hasVolumes() {
		t := clamp(q.resp.TemperatureK[i], b.vTmin, b.vTmax)
		vl, _ = b.vLow.Value(t)
		vh, _ = b.vHigh.Value(t)
	}
	q.setLatent(i, b, vl, vh)
}

func clamp(x, lo, hi float64) float64 { return math.Min(math.Max(x, lo), hi) }

// routeTo sends point i to branch b's backend; evaluate allocated
// q.route for every request that can route.
func (q *query) routeTo(p *part, i, b int) {
	q.route[i] = int32(b)
	p.routed = true
}

// turnsBack reports whether a branch has no T(P) table (its P(T) is not
// monotonic), so that T(P) there goes to the backend.
func (cv *curve) turnsBack() bool {
	for _, b := range cv.branch {
		if b.tOfP == nil {
			return true
		}
	}
	return false
}

// nearestBranch returns the branch to extrapolate with: the one named, or
// the one whose range lies nearest x.
func (q *query) nearestBranch(x float64) int {
	if q.branch >= 0 {
		return q.branch
	}
	best, dist := 0, math.Inf(1)
	for i, b := range q.cv.branch {
		lo, hi := b.rng.Pmin, b.rng.Pmax
		if q.byT {
			lo, hi = b.rng.Tmin, b.rng.Tmax
		}
		if d := math.Max(lo-x, x-hi); d < dist {
			best, dist = i, d
		}
	}
	return best
}

// branchHolding returns the first branch whose pressure range holds p.
func (q *query) branchHolding(p float64) int {
	for i, b := range q.cv.branch {
		if b.rng.ContainsP(p) {
			return i
		}
	}
	return q.nearestBranch(p)
}

// fail marks point i failed with the status err calls for.
func (q *query) fail(p *part, i int, err error) {
	st := phaseboundpb.PointStatus_POINT_STATUS_INVALID
	pe := &phaseboundpb.PointError{Index: uint32(i), Message: strings.TrimPrefix(err.Error(), "thermo: ")}
	var re *thermo.RangeError
	switch {
	case errors.As(err, &re):
		st = phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE
		pe.ValidMin, pe.ValidMax = re.Min, re.Max
	case errors.Is(err, thermo.ErrAmbiguousBranch):
		st = phaseboundpb.PointStatus_POINT_STATUS_AMBIGUOUS_BRANCH
	}
	q.failStatus(p, i, st, pe)
}

func (q *query) failStatus(p *part, i int, st phaseboundpb.PointStatus, pe *phaseboundpb.PointError) {
	r := q.resp
	nan := math.NaN()
	pe.Status = st
	q.perPoint()
	r.Status[i] = st
	r.TemperatureK[i], r.PressurePa[i], r.DpdtPaPerK[i] = nan, nan, nan
	if q.byT {
		r.TemperatureK[i] = q.req.Values[i]
	} else {
		r.PressurePa[i] = q.req.Values[i]
	}
	r.BranchIndex[i] = q.noBranch
	if q.latent {
		r.LatentHeatJPerMol[i], r.LatentHeatJPerKg[i] = nan, nan
		r.VolumeLowTPhaseM3PerMol[i], r.VolumeHighTPhaseM3PerMol[i] = nan, nan
		r.LatentHeatSource[i] = phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_POINT_FAILED
	}
	p.errs = append(p.errs, pe)
	p.failed++
}

// setLatent fills the latent heat of point i from the phase volumes (NaN
// when unknown) and the point's T, P and slope.
func (q *query) setLatent(i int, b *branch, vl, vh float64) {
	r := q.resp
	t, p, d := r.TemperatureK[i], r.PressurePa[i], r.DpdtPaPerK[i]
	h := math.NaN()
	src := phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_NO_VOLUMES
	switch {
	case !math.IsNaN(vl) && !math.IsNaN(vh):
		// Clapeyron equation: ΔH = T·(v_high − v_low)·dP/dT.
		h = t * (vh - vl) * d
		src = phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON
	case b.hasVolumes():
		// The curve has phase volumes but they could not be evaluated
		// here (e.g. exactly at a critical point): no estimate that
		// would contradict them.
	case q.cv.vapour:
		// Clausius–Clapeyron: ideal vapour, condensed volume neglected,
		// ΔH ≈ R·T²·d(ln P)/dT; the vapour volume reported is R·T/P.
		h = thermo.R * t * t * d / p
		vh = thermo.R * t / p
		src = phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_IDEAL_GAS_ESTIMATE
	}
	r.LatentHeatJPerMol[i] = h
	r.LatentHeatJPerKg[i] = h / q.sub.cat.MolarMass
	if q.sub.cat.MolarMass <= 0 {
		r.LatentHeatJPerKg[i] = math.NaN()
	}
	r.VolumeLowTPhaseM3PerMol[i] = vl
	r.VolumeHighTPhaseM3PerMol[i] = vh
	r.LatentHeatSource[i] = src
}

// strictError is the whole-call error of a strict request: OutOfRange when
// every bad point is out of range, else InvalidArgument, with one field
// violation per bad point naming values[i] (i counted from the start of
// the stream) and the valid range.
func (q *query) strictError() error {
	code := codes.OutOfRange
	q.sortErrors()
	vs := make([]violation, 0, min(len(q.resp.Errors), maxViolations))
	for k, e := range q.resp.Errors {
		if e.Status != phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE {
			code = codes.InvalidArgument
		}
		if k < maxViolations {
			vs = append(vs, violation{fmt.Sprintf("values[%d]", q.offset+uint64(e.Index)), e.Message})
		}
	}
	return badRequestN(code, len(q.resp.Errors), vs)
}

// sortErrors puts the point errors in index order (the backend pass
// appends after the table pass).
func (q *query) sortErrors() {
	slices.SortStableFunc(q.resp.Errors, func(a, b *phaseboundpb.PointError) int { return cmp.Compare(a.Index, b.Index) })
}

// backendPass evaluates the routed points through their branches'
// backends, a batch per branch.
func (s *Server) backendPass(ctx context.Context, q *query, p *part) error {
	r := q.resp
	vals := q.req.GetValues()
	extrap := q.req.GetAllowExtrapolation()
	op := sdk.OpTemperature
	if q.byT {
		op = sdk.OpPressure
	}
	for bi, b := range q.cv.branch {
		var idx []int
		for i, rb := range q.route {
			if int(rb) == bi {
				idx = append(idx, i)
			}
		}
		for lo := 0; lo < len(idx); lo += backendChunk {
			part := idx[lo:min(lo+backendChunk, len(idx))]
			x := make([]float64, len(part))
			for k, i := range part {
				x[k] = vals[i]
			}
			res, err := s.host.Evaluate(ctx, b.backend, sdk.EvalRequest{
				Family: b.cat.Family, Params: b.cat.Params, Tmin: b.cat.Tmin, Tmax: b.cat.Tmax,
				Op: op, Values: x, AllowExtrapolation: extrap,
			})
			if err != nil {
				return backendStatus(err)
			}
			failed := make(map[int]sdk.Failure, len(res.Failures))
			for _, f := range res.Failures {
				failed[f.Index] = f
			}
			outside := make(map[int]bool, len(res.Extrapolated))
			for _, k := range res.Extrapolated {
				outside[k] = true
			}
			var ok []int // indices into part that succeeded
			for k, i := range part {
				if f, bad := failed[k]; bad {
					q.failBackend(p, i, f)
					continue
				}
				if q.byT {
					r.TemperatureK[i], r.PressurePa[i] = vals[i], res.Results[k]
				} else {
					r.TemperatureK[i], r.PressurePa[i] = res.Results[k], vals[i]
				}
				r.DpdtPaPerK[i] = res.Derivatives[k]
				q.perPoint()
				r.BranchIndex[i] = uint32(bi)
				r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OK
				p.used |= 1 << min(bi, 63)
				if outside[k] {
					r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_EXTRAPOLATED
					p.extrap++
				}
				ok = append(ok, k)
			}
			if q.latent && len(ok) > 0 {
				if err := s.backendLatent(ctx, q, b, part, ok); err != nil {
					return err
				}
			}
		}
	}
	return nil
}

// backendLatent fills latent heats of backend-evaluated points, with the
// phase volumes from their backends.
func (s *Server) backendLatent(ctx context.Context, q *query, b *branch, part, ok []int) error {
	r := q.resp
	nan := math.NaN()
	vl := make([]float64, len(ok))
	vh := make([]float64, len(ok))
	for k := range ok {
		vl[k], vh[k] = nan, nan
	}
	if b.hasVolumes() {
		ts := make([]float64, len(ok))
		ps := make([]float64, len(ok))
		for k, j := range ok {
			i := part[j]
			ts[k], ps[k] = r.TemperatureK[i], r.PressurePa[i]
		}
		for side, vc := range [2]struct {
			be  string
			out []float64
		}{{b.vLowBE, vl}, {b.vHighBE, vh}} {
			c := b.cat.VolumeLow
			if side == 1 {
				c = b.cat.VolumeHigh
			}
			res, err := s.host.Evaluate(ctx, vc.be, sdk.EvalRequest{
				Family: c.Family, Params: c.Params, Tmin: b.cat.Tmin, Tmax: b.cat.Tmax,
				Op: sdk.OpVolume, Values: ts, Pressures: ps, AllowExtrapolation: q.req.GetAllowExtrapolation(),
			})
			if err != nil {
				return backendStatus(err)
			}
			copy(vc.out, res.Results)
			for _, f := range res.Failures {
				vc.out[f.Index] = nan
			}
		}
	}
	for k, j := range ok {
		q.setLatent(part[j], b, vl[k], vh[k])
	}
	return nil
}

// failBackend marks point i failed as the backend reported.
func (q *query) failBackend(p *part, i int, f sdk.Failure) {
	pe := &phaseboundpb.PointError{Index: uint32(i), Message: f.Message}
	st := phaseboundpb.PointStatus_POINT_STATUS_INVALID
	if f.Kind == sdk.FailOutOfRange {
		st = phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE
		pe.ValidMin, pe.ValidMax = f.Min, f.Max
	}
	q.failStatus(p, i, st, pe)
}
