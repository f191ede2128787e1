package thermo

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// DefaultTableTolerance is the maximum relative error a table is built to
// when TableOptions.Tolerance is zero.
const DefaultTableTolerance = 1e-11

// Table building limits and defaults.
const (
	// DefaultTableNodes is the number of interpolation nodes per segment
	// (polynomial degree + 1) when TableOptions.Nodes is zero.
	DefaultTableNodes = 8
	// DefaultTableMaxSegments caps the segments of one table when
	// TableOptions.MaxSegments is zero.
	DefaultTableMaxSegments = 2048
	// TableCheckDensity is the number of check intervals per interpolation
	// node: a segment with n nodes is checked at 4n+1 points (see BuildTable).
	TableCheckDensity = 4

	maxTableNodes        = 64
	maxTableCoeffs       = 1 << 22 // a loaded table may hold at most this many coefficients
	maxTableBins         = 4096    // size cap of the uniform segment index
	tableTruncateShare   = 0.1     // share of the tolerance spent on dropping trailing coefficients
	tableBreakTolerance  = 1e-9    // relative mismatch allowed between Breaks ends and the transformed XMin/XMax
	tableMinRelSegWidth  = 1e-13   // a segment narrower than this (relative to |u|) is not split further
	tableMaxSampleRounds = 200
)

// Transform maps a raw variable before interpolation. The values are those
// of proto enum phasebound.v1.Transform, so a conversion is a type cast.
type Transform int32

// Transforms of a table's variables.
const (
	TransformIdentity   Transform = 1 // u = x
	TransformLog        Transform = 2 // u = ln x; x > 0
	TransformReciprocal Transform = 3 // u = 1/x; x ≠ 0
	// TransformCriticalRoot is u = (1 − x/x_ref)^(1/6) for x ≤ x_ref, with
	// x_ref > 0 the table's reference abscissa (TableData.XReference, a
	// critical temperature). It applies to x only.
	//
	// Saturated densities are series in τ = 1 − T/Tc with exponents that
	// are multiples of 1/3 (IAPWS SR1-86 liquid: τ^(1/3), τ^(2/3), …) or of
	// 1/6 (its vapour: τ^(2/6), τ^(4/6), …; Span–Wagner carbon dioxide:
	// τ^0.5, τ^(7/3), …), so ρ(T) and v(T) have an infinite slope at Tc that
	// no polynomial in T follows. In u = τ^(1/6) every such term is a
	// power u^j with integer j, and v is an analytic function of u;
	// exponents off that grid (Span–Wagner's τ^0.34 = u^2.04) keep a
	// bounded slope and curvature in u, which the adaptive splitting
	// resolves with a few short segments at u = 0. The root index 6 is the
	// least common multiple of 3 and 6, fixed so that a table carries one
	// number (x_ref) for its transform.
	//
	// 1 − x/x_ref is computed in floating point exactly as written, the
	// way the density equations compute τ, so a table follows its source
	// down to the last ulps of T below x_ref. dy/dx is infinite at
	// x = x_ref: Eval returns ±Inf there (the sign of the slope just
	// below), or 0 when the table is flat at that end.
	TransformCriticalRoot Transform = 4
)

// criticalRootIndex is k in u = (1 − x/x_ref)^(1/k) of TransformCriticalRoot.
const criticalRootIndex = 6

// String returns "identity", "log", "reciprocal" or "critical-root".
func (f Transform) String() string {
	switch f {
	case TransformIdentity:
		return "identity"
	case TransformLog:
		return "log"
	case TransformReciprocal:
		return "reciprocal"
	case TransformCriticalRoot:
		return "critical-root"
	}
	return fmt.Sprintf("Transform(%d)", int32(f))
}

// valid reports whether f may transform y (and x).
func (f Transform) valid() bool {
	return f == TransformIdentity || f == TransformLog || f == TransformReciprocal
}

// validX reports whether f may transform x.
func (f Transform) validX() bool { return f.valid() || f == TransformCriticalRoot }

// forward maps x to u for the transforms without a reference (NaN for
// TransformCriticalRoot; see forwardRef).
func (f Transform) forward(x float64) float64 { return f.forwardRef(x, math.NaN()) }

// inverse maps u back to x for the transforms without a reference.
func (f Transform) inverse(u float64) float64 { return f.inverseRef(u, math.NaN()) }

// accepts reports whether x is in the domain of a transform without a
// reference.
func (f Transform) accepts(x float64) bool { return f.acceptsRef(x, math.NaN()) }

// forwardRef maps x to u; ref is x_ref of TransformCriticalRoot.
func (f Transform) forwardRef(x, ref float64) float64 {
	switch f {
	case TransformLog:
		return math.Log(x)
	case TransformReciprocal:
		return 1 / x
	case TransformCriticalRoot:
		return criticalRoot(1 - x/ref)
	}
	return x
}

// criticalRoot returns τ^(1/6) (0 for τ ≤ 0, NaN for NaN): the cube root
// of √τ by three Halley steps from a guess taken from the exponent bits
// (within about 2 ulps; a third of the time of math.Cbrt, which matters on
// the latent-heat path, two volume lookups per point). Eval and the table
// builder both use it, so a table is fitted at the positions Eval computes.
func criticalRoot(tau float64) float64 {
	if !(tau > 0) {
		if tau <= 0 {
			return 0
		}
		return tau // NaN
	}
	r := math.Sqrt(tau)
	g := math.Float64frombits(math.Float64bits(r)/3 + 0x3ff0000000000000/3*2)
	for range 3 {
		g3 := g * g * g
		g *= (g3 + 2*r) / (2*g3 + r)
	}
	return g
}

// inverseRef maps u back to x; ref is x_ref of TransformCriticalRoot.
func (f Transform) inverseRef(u, ref float64) float64 {
	switch f {
	case TransformLog:
		return math.Exp(u)
	case TransformReciprocal:
		return 1 / u
	case TransformCriticalRoot:
		u2 := u * u
		return ref * (1 - u2*u2*u2)
	}
	return u
}

// acceptsRef reports whether x is in the transform's domain; ref is x_ref
// of TransformCriticalRoot.
func (f Transform) acceptsRef(x, ref float64) bool {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return false
	}
	switch f {
	case TransformLog:
		return x > 0
	case TransformReciprocal:
		return x != 0
	case TransformCriticalRoot:
		return ref > 0 && !math.IsInf(ref, 0) && x <= ref
	}
	return true
}

// TableData is the exported representation of a Table. It maps field for
// field onto proto message phasebound.v1.ChebyshevTable:
//
//	XTransform, YTransform ↔ x_transform, y_transform
//	Breaks                 ↔ breaks
//	Offsets                ↔ offsets
//	Coeffs                 ↔ coefficients
//	XMin, XMax             ↔ x_min, x_max
//	MaxRelError            ↔ max_rel_error
//	XReference             ↔ x_reference
//
// With u = XTransform(x) and Y = YTransform(y), segment i covers
// Breaks[i] ≤ u ≤ Breaks[i+1] and there
//
//	Y(u) = Σ_{k=0}^{m-1} c_k·T_k(s),   s = (2u − Breaks[i] − Breaks[i+1]) / (Breaks[i+1] − Breaks[i])
//
// where c = Coeffs[Offsets[i]:Offsets[i+1]] (c_0 is not halved) and T_k are
// the Chebyshev polynomials of the first kind. len(Offsets) = len(Breaks),
// Offsets[0] = 0 and the last offset is len(Coeffs).
type TableData struct {
	XTransform, YTransform Transform
	Breaks                 []float64
	Offsets                []uint32
	Coeffs                 []float64
	XMin, XMax             float64 // raw domain of x (K or Pa)
	MaxRelError            float64 // measured maximum relative error against the source
	// XReference is x_ref of TransformCriticalRoot, with XMax ≤ XReference;
	// 0 there means XMax (the usual case: a table that ends at the critical
	// point). It must be 0 with every other x transform.
	XReference float64
}

// TableOptions controls BuildTable. The zero value builds an
// identity/identity table to DefaultTableTolerance.
type TableOptions struct {
	// XTransform and YTransform; zero means TransformIdentity for
	// BuildTable (BuildPressureTable and BuildTemperatureTable choose
	// their own defaults, see there).
	XTransform, YTransform Transform
	// Tolerance is the maximum relative error allowed on the check grid;
	// zero means DefaultTableTolerance. Must lie in [1e-15, 0.1].
	Tolerance float64
	// Nodes is the number of Chebyshev nodes per segment (degree + 1);
	// zero means DefaultTableNodes. Must lie in [4, 64].
	Nodes int
	// MaxSegments caps the number of segments; zero means
	// DefaultTableMaxSegments.
	MaxSegments int
	// Quantity and Unit name x in errors ("temperature", "K"); zero means
	// "x" and no unit.
	Quantity, Unit string
	// XReference is x_ref of TransformCriticalRoot (a critical temperature),
	// at least xmax; zero means xmax. It must be zero with the other x
	// transforms.
	XReference float64
}

// SampleFunc evaluates the source of a table at a batch of raw abscissae:
// it must fill y[i] = f(x[i]) for every i (len(y) = len(x)), or return an
// error. Batches let a source behind a process boundary (a backend plugin)
// answer many points per call.
type SampleFunc func(x, y []float64) error

// ToleranceError reports that a table could not meet its tolerance within
// the segment cap (or the segment width reached floating-point
// resolution). Best is the best table that was built; it is usable, with
// Best.MaxRelError the measured error.
type ToleranceError struct {
	Tolerance float64 // requested
	Achieved  float64 // best measured maximum relative error
	Segments  int     // segments of Best
	Best      *Table
}

// Error implements error.
func (e *ToleranceError) Error() string {
	return fmt.Sprintf("thermo: table tolerance %g not met: best measured relative error %g with %d segments",
		e.Tolerance, e.Achieved, e.Segments)
}

// Table is a compiled piecewise Chebyshev interpolant y(x) in transformed
// variables. It is immutable and safe for concurrent use; Eval allocates
// nothing.
type Table struct {
	xt, yt   Transform
	breaks   []float64
	offsets  []uint32
	coeffs   []float64
	invWidth []float64 // 1/(breaks[i+1]−breaks[i])
	// cd holds each segment's evaluation coefficients interleaved with
	// those of its derivative in u (segmentCoefficients): the monomial
	// form for segments of up to monoTerms terms, else the Chebyshev form
	// (chebInterleave), every segment padded with zeros to one even count
	// of terms, so that segment i is cd[i·stride : (i+1)·stride]. Equal
	// lengths keep Eval's loop the same for every segment (with truncated
	// lengths, points on random segments mispredicted its exit); the zero
	// terms add exact zeros. stride is 16 when every segment is monomial.
	cd         []float64
	stride     int
	xmin, xmax float64
	maxRel     float64
	// xref is x_ref of TransformCriticalRoot (NaN for the others) and
	// refSlope the dy/dx Eval returns at x = xref: ±Inf, or 0 where the
	// table is flat at that end.
	xref, refSlope float64

	// Uniform index over [breaks[0], breaks[n]]: bins[j] is the segment
	// holding u0 + j/binScale, for j = 0…nb (one entry past the last bin).
	// A bin usually lies within one or two segments; where refinement
	// went deeper than the index resolves, the segments of a bin are
	// binary-searched, so a lookup never scans more than log2 of them.
	u0, binScale float64
	bins         []int32

	quantity, unit string
}

// BuildTable compiles the source y(x), sampled through sample, over
// [xmin, xmax] into a piecewise Chebyshev table.
//
// Each segment interpolates Y(u) at n Chebyshev nodes of the first kind
// (n = opts.Nodes), drops trailing coefficients whose summed magnitude is
// below a tenth of the tolerance, and is then checked against the source
// on a grid of 4n+1 points s_j = cos(π·j/(4n)), j = 0…4n: both segment ends
// and three points between each pair of neighbouring nodes. A segment whose
// maximum relative error in raw y, |ŷ − y|/|y| (absolute where y = 0),
// exceeds the tolerance is split in half in u, and the halves are tried
// again. Every segment of a round is sampled in one call of sample.
//
// The nodes are interpolated where Eval will place them: the abscissae
// handed to sample are rounded to float64, and on a steep curve that alone
// moves y by more than the tolerance (water's ice Ih melting pressure
// changes by about 1e-9 relative per ulp of T near 273.16 K), so the
// coefficients are refined against the rounded positions.
//
// The returned table's MaxRelError is the maximum measured over all
// check grids; independent checks at thousands of random points on the
// published water and carbon dioxide curves stay within it. The slope
// dy/dx that Eval returns is the derivative of the interpolant: within
// about 1e-8 relative of the analytic slope on the published melting and
// sublimation branches at the default settings, but it converges slowly
// toward an end where the source is not analytic (a Wagner equation at
// its critical point: 5e-5 within a few mK of it). A source with an
// infinite slope at an end, such as a saturated volume at its critical
// point, needs XTransform TransformCriticalRoot to meet a tight tolerance
// (it stops near 1e-4 against T). When the tolerance
// cannot be met within opts.MaxSegments (or the segments reach the
// resolution of float64) the error is a *ToleranceError carrying the best
// table. Building costs (5n+1) source evaluations per segment tried, in
// one batch per round of splitting.
func BuildTable(sample SampleFunc, xmin, xmax float64, opts TableOptions) (*Table, error) {
	if sample == nil {
		return nil, fmt.Errorf("%w: table source is nil", ErrBadParam)
	}
	o, err := tableDefaults(opts)
	if err != nil {
		return nil, err
	}
	if !(xmin < xmax) || math.IsInf(xmin, 0) || math.IsInf(xmax, 0) {
		return nil, fmt.Errorf("%w: table domain [%g, %g] must be finite with min < max", ErrBadParam, xmin, xmax)
	}
	ref, err := tableReference(o.XTransform, o.XReference, xmax)
	if err != nil {
		return nil, err
	}
	if !o.XTransform.acceptsRef(xmin, ref) || !o.XTransform.acceptsRef(xmax, ref) || (o.XTransform == TransformReciprocal && xmin < 0 && xmax > 0) {
		return nil, fmt.Errorf("%w: table domain [%g, %g] is outside the domain of the %v transform", ErrBadParam, xmin, xmax, o.XTransform)
	}
	b := tableBuilder{sample: sample, o: o, xmin: xmin, xmax: xmax, ref: ref}
	return b.build()
}

// tableReference returns x_ref of a TransformCriticalRoot table (ref, or
// xmax when ref is 0), checking that it is finite, positive and at least
// xmax; for the other transforms ref must be 0 and the result is NaN.
func tableReference(xt Transform, ref, xmax float64) (float64, error) {
	if xt != TransformCriticalRoot {
		if ref != 0 {
			return 0, fmt.Errorf("%w: table x reference %g given for the %v transform, which takes none (only critical-root does)", ErrBadParam, ref, xt)
		}
		return math.NaN(), nil
	}
	if ref == 0 {
		ref = xmax
	}
	if !(ref > 0) || math.IsInf(ref, 0) || !(xmax <= ref) {
		return 0, fmt.Errorf("%w: table x reference %g of the critical-root transform must be finite, > 0 and ≥ x_max = %g", ErrBadParam, ref, xmax)
	}
	return ref, nil
}

func tableDefaults(o TableOptions) (TableOptions, error) {
	if o.XTransform == 0 {
		o.XTransform = TransformIdentity
	}
	if o.YTransform == 0 {
		o.YTransform = TransformIdentity
	}
	if !o.XTransform.validX() || !o.YTransform.valid() {
		return o, fmt.Errorf("%w: table transforms %v/%v (valid: identity, log, reciprocal; critical-root for x only)", ErrBadParam, o.XTransform, o.YTransform)
	}
	if o.Tolerance == 0 {
		o.Tolerance = DefaultTableTolerance
	}
	if !(o.Tolerance >= 1e-15 && o.Tolerance <= 0.1) {
		return o, fmt.Errorf("%w: table tolerance %g outside [1e-15, 0.1]", ErrBadParam, o.Tolerance)
	}
	if o.Nodes == 0 {
		o.Nodes = DefaultTableNodes
	}
	if o.Nodes < 4 || o.Nodes > maxTableNodes {
		return o, fmt.Errorf("%w: table nodes per segment %d outside [4, %d]", ErrBadParam, o.Nodes, maxTableNodes)
	}
	if o.MaxSegments == 0 {
		o.MaxSegments = DefaultTableMaxSegments
	}
	if o.MaxSegments < 1 || o.MaxSegments > 1<<16 {
		return o, fmt.Errorf("%w: table segment cap %d outside [1, 65536]", ErrBadParam, o.MaxSegments)
	}
	if o.Quantity == "" {
		o.Quantity = "x"
	}
	return o, nil
}

// tableSegment is one segment under construction.
type tableSegment struct {
	a, b   float64 // transformed interval
	coeffs []float64
	err    float64 // measured maximum relative error
}

type tableBuilder struct {
	sample     SampleFunc
	o          TableOptions
	xmin, xmax float64
	ref        float64 // x_ref of TransformCriticalRoot, else NaN
}

// u maps a raw abscissa through the x transform.
func (b *tableBuilder) u(x float64) float64 { return b.o.XTransform.forwardRef(x, b.ref) }

// rawX maps a transformed abscissa back to x, kept inside [xmin, xmax] so
// that rounding never asks the source outside its range.
func (b *tableBuilder) rawX(u float64) float64 {
	x := b.o.XTransform.inverseRef(u, b.ref)
	return math.Min(math.Max(x, b.xmin), b.xmax)
}

func (b *tableBuilder) build() (*Table, error) {
	n := b.o.Nodes
	nc := TableCheckDensity*n + 1
	ua, ub := b.u(b.xmin), b.u(b.xmax)
	if ua > ub {
		ua, ub = ub, ua
	}
	// Node positions and the cosine matrix of the discrete Chebyshev transform.
	nodes := make([]float64, n)
	for k := range nodes {
		nodes[k] = math.Cos(math.Pi * (float64(k) + 0.5) / float64(n))
	}
	checks := make([]float64, nc)
	for j := range checks {
		checks[j] = math.Cos(math.Pi * float64(j) / float64(nc-1))
	}
	cosm := make([]float64, n*n)
	for j := 0; j < n; j++ {
		for k := 0; k < n; k++ {
			cosm[j*n+k] = math.Cos(math.Pi * float64(j) * (float64(k) + 0.5) / float64(n))
		}
	}

	pending := []tableSegment{{a: ua, b: ub}}
	var done []tableSegment
	var failed []tableSegment // segments that could not be split further
	per := n + nc
	var xs, ys []float64
	for round := 0; len(pending) > 0; round++ {
		if round >= tableMaxSampleRounds {
			failed = append(failed, pending...)
			break
		}
		xs = xs[:0]
		for _, s := range pending {
			for _, v := range nodes {
				xs = append(xs, b.rawX(tableUAt(s.a, s.b, v)))
			}
			for j, v := range checks {
				switch {
				case j == 0 && s.b == ub:
					xs = append(xs, b.endX(ub))
				case j == nc-1 && s.a == ua:
					xs = append(xs, b.endX(ua))
				default:
					xs = append(xs, b.rawX(tableUAt(s.a, s.b, v)))
				}
			}
		}
		if cap(ys) < len(xs) {
			ys = make([]float64, len(xs))
		}
		ys = ys[:len(xs)]
		if err := b.sample(xs, ys); err != nil {
			return nil, fmt.Errorf("thermo: sampling table source: %w", err)
		}
		for i, y := range ys {
			if !b.o.YTransform.accepts(y) {
				return nil, fmt.Errorf("%w: table source gave y = %g at %s = %g, outside the domain of the %v transform",
					ErrBadParam, y, b.o.Quantity, xs[i], b.o.YTransform)
			}
		}
		var next []tableSegment
		for si := range pending {
			s := &pending[si]
			xv := xs[si*per : (si+1)*per]
			yv := ys[si*per : (si+1)*per]
			b.fit(s, xv[:n], yv[:n], cosm)
			s.err = b.measure(s, xv[n:], yv[n:])
			if s.err <= b.o.Tolerance {
				done = append(done, *s)
				continue
			}
			mid := 0.5 * (s.a + s.b)
			tooNarrow := !(mid > s.a && mid < s.b) || (s.b-s.a) <= tableMinRelSegWidth*math.Max(math.Abs(s.a), math.Abs(s.b))
			if tooNarrow || len(done)+len(failed)+len(next)+len(pending)-si+1 > b.o.MaxSegments {
				failed = append(failed, *s)
				continue
			}
			next = append(next, tableSegment{a: s.a, b: mid}, tableSegment{a: mid, b: s.b})
		}
		pending = next
	}
	all := append(done, failed...)
	sort.Slice(all, func(i, j int) bool { return all[i].a < all[j].a })
	d := TableData{XTransform: b.o.XTransform, YTransform: b.o.YTransform, XMin: b.xmin, XMax: b.xmax}
	if b.o.XTransform == TransformCriticalRoot {
		d.XReference = b.ref
	}
	d.Breaks = make([]float64, 0, len(all)+1)
	d.Offsets = make([]uint32, 0, len(all)+1)
	d.Breaks = append(d.Breaks, all[0].a)
	d.Offsets = append(d.Offsets, 0)
	for _, s := range all {
		d.MaxRelError = math.Max(d.MaxRelError, s.err)
		d.Coeffs = append(d.Coeffs, s.coeffs...)
		d.Breaks = append(d.Breaks, s.b)
		d.Offsets = append(d.Offsets, uint32(len(d.Coeffs)))
	}
	t, err := newTable(d, b.o.Quantity, b.o.Unit)
	if err != nil {
		return nil, fmt.Errorf("thermo: internal error assembling table: %w", err)
	}
	if len(failed) > 0 {
		return nil, &ToleranceError{Tolerance: b.o.Tolerance, Achieved: d.MaxRelError, Segments: len(all), Best: t}
	}
	return t, nil
}

// endX returns the raw x at a global end of the transformed domain exactly.
func (b *tableBuilder) endX(u float64) float64 {
	if u == b.u(b.xmin) {
		return b.xmin
	}
	return b.xmax
}

// tableUAt maps s ∈ [−1, 1] onto [a, b].
func tableUAt(a, b, s float64) float64 {
	return 0.5*(a+b) + 0.5*(b-a)*s
}

// fit computes the Chebyshev coefficients of segment s from the source
// values y at the abscissae x and drops negligible trailing coefficients.
//
// The abscissae are the Chebyshev nodes rounded to float64 (and passed
// through the x transform and its inverse); on a steep curve the rounding
// alone moves y by more than the tolerance (near water's triple point the
// ice-Ih melting pressure changes by ~1e-9 relative per ulp of T). So the
// discrete Chebyshev transform gives a first guess, and two steps of
// iterative refinement make the polynomial interpolate the samples at the
// positions s_k that Eval will compute for those x, not at the ideal nodes.
func (b *tableBuilder) fit(s *tableSegment, x, y []float64, cosm []float64) {
	n := len(y)
	yt := make([]float64, n)
	sk := make([]float64, n)
	inv := 1 / (s.b - s.a)
	scale := math.Inf(1)
	for k, v := range y {
		yt[k] = b.o.YTransform.forward(v)
		scale = math.Min(scale, math.Abs(yt[k]))
		u := b.u(x[k])
		sk[k] = ((u - s.a) - (s.b - u)) * inv
	}
	if b.o.YTransform == TransformLog {
		scale = 1 // an absolute error in ln y is a relative error in y
	}
	if b.o.XTransform == TransformCriticalRoot {
		// Next to x_ref the float64 grid of x is coarse in u (u = τ^(1/6):
		// one ulp of T near 647 K moves u by several per cent where
		// u < 0.005), so nodes land far from their ideal positions or on
		// top of each other, and the refinement below would not
		// converge: interpolate the distinct positions directly.
		b.truncate(s, chebSolve(sk, yt), scale)
		return
	}
	c := make([]float64, n)
	r := append([]float64(nil), yt...)
	for iter := 0; iter < 3; iter++ {
		for j := 0; j < n; j++ {
			var sum float64
			for k := 0; k < n; k++ {
				sum += r[k] * cosm[j*n+k]
			}
			if j == 0 {
				c[j] += sum / float64(n)
			} else {
				c[j] += 2 * sum / float64(n)
			}
		}
		for k := range r {
			r[k] = yt[k] - chebValue(c, sk[k])
		}
	}
	b.truncate(s, c, scale)
}

// truncate stores the coefficients c in s without the trailing ones whose
// summed magnitude stays below a tenth of the tolerance (relative to
// scale, the smallest |Y| of the segment).
func (b *tableBuilder) truncate(s *tableSegment, c []float64, scale float64) {
	budget := tableTruncateShare * b.o.Tolerance * scale
	m := len(c)
	var dropped float64
	for m > 2 && dropped+math.Abs(c[m-1]) <= budget {
		dropped += math.Abs(c[m-1])
		m--
	}
	s.coeffs = c[:m:m]
}

// chebMinGap is the smallest distance in s ∈ [−1, 1] between two
// positions that chebSolve interpolates separately; closer positions are
// merged (the first is kept), since a difference quotient over a shorter
// distance would amplify the rounding of y beyond a table tolerance.
// Chebyshev nodes of a segment (at most 64) are ten times farther apart.
const chebMinGap = 1e-4

// chebSolve returns the coefficients of the polynomial Σ c_k T_k(s) that
// interpolates y at the positions s (Gaussian elimination with partial
// pivoting on the Chebyshev–Vandermonde matrix). Positions closer than
// chebMinGap count once, so the degree is the number of distinct
// positions less one.
func chebSolve(s, y []float64) []float64 {
	idx := make([]int, len(s))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return s[idx[a]] < s[idx[b]] })
	var ps, py []float64
	for _, i := range idx {
		if len(ps) > 0 && s[i]-ps[len(ps)-1] < chebMinGap {
			continue
		}
		ps = append(ps, s[i])
		py = append(py, y[i])
	}
	m := len(ps)
	if m == 0 {
		return []float64{0}
	}
	a := make([]float64, m*m) // row j: T_0(s_j) … T_{m−1}(s_j)
	for j, v := range ps {
		row := a[j*m : (j+1)*m]
		row[0] = 1
		if m > 1 {
			row[1] = v
		}
		for k := 2; k < m; k++ {
			row[k] = 2*v*row[k-1] - row[k-2]
		}
	}
	for col := 0; col < m; col++ {
		p := col
		for r := col + 1; r < m; r++ {
			if math.Abs(a[r*m+col]) > math.Abs(a[p*m+col]) {
				p = r
			}
		}
		if p != col {
			for k := 0; k < m; k++ {
				a[p*m+k], a[col*m+k] = a[col*m+k], a[p*m+k]
			}
			py[p], py[col] = py[col], py[p]
		}
		piv := a[col*m+col]
		for r := col + 1; r < m; r++ {
			f := a[r*m+col] / piv
			if f == 0 {
				continue
			}
			for k := col; k < m; k++ {
				a[r*m+k] -= f * a[col*m+k]
			}
			py[r] -= f * py[col]
		}
	}
	c := make([]float64, m)
	for j := m - 1; j >= 0; j-- {
		sum := py[j]
		for k := j + 1; k < m; k++ {
			sum -= a[j*m+k] * c[k]
		}
		c[j] = sum / a[j*m+j]
	}
	return c
}

// measure returns the maximum relative error of segment s on its check grid.
func (b *tableBuilder) measure(s *tableSegment, x, y []float64) float64 {
	inv := 1 / (s.b - s.a)
	// Evaluate as the Table will (segmentEval), so that the measured
	// error is the error of the values Eval returns.
	cd := segmentCoefficients(nil, s.coeffs, 2*inv)
	var worst float64
	for i, xv := range x {
		u := b.u(xv)
		yy, _ := segmentEval(cd, len(s.coeffs), ((u-s.a)-(s.b-u))*inv)
		got := b.o.YTransform.inverse(yy)
		e := math.Abs(got - y[i])
		if y[i] != 0 {
			e /= math.Abs(y[i])
		}
		if !(e <= worst) { // also propagates NaN
			worst = e
			if math.IsNaN(e) {
				return math.Inf(1)
			}
		}
	}
	return worst
}

// chebValue returns Σ c_k T_k(s) by Clenshaw's recurrence.
func chebValue(c []float64, s float64) float64 {
	var b1, b2 float64
	s2 := 2 * s
	for k := len(c) - 1; k >= 1; k-- {
		b1, b2 = c[k]+s2*b1-b2, b1
	}
	if len(c) == 0 {
		return 0
	}
	return c[0] + s*b1 - b2
}

// monoTerms is the largest number of Chebyshev terms a segment may have
// to be evaluated in the monomial form (see segmentCoefficients).
const monoTerms = 8

// chebMono[j][k] is the coefficient of s^k in T_j(s) (exact integers).
var chebMono = [monoTerms][monoTerms]float64{
	{1},
	{0, 1},
	{-1, 0, 2},
	{0, -3, 0, 4},
	{1, 0, -8, 0, 8},
	{0, 5, 0, -20, 0, 16},
	{-1, 0, 18, 0, -48, 0, 32},
	{0, -7, 0, 56, 0, -112, 0, 64},
}

// segmentCoefficients appends to dst the evaluation coefficients of one
// segment with Chebyshev coefficients c and derivative scale (2/width in
// u). A segment of up to monoTerms terms is converted to the monomial
// basis in s, a_k with Σ a_k s^k = Σ c_k T_k(s), interleaved with the
// derivative's b_k = (k+1)·a_{k+1}·scale and padded with zeros to 2·monoTerms
// values: its evaluation (monoEval, Estrin's scheme) needs a third of the
// operations of the Chebyshev recurrence and has a short dependency chain.
// On [−1, 1] the conversion costs at most a few units in the last place for
// the smooth, fast-decaying series tables hold (the monomial coefficients
// of T_7 reach 112). Longer segments keep the Chebyshev form
// (chebInterleave), whose monomial coefficients would grow as 2^k. The
// conversion is a fixed sequence of operations, so every process that loads
// the same table gets the same bits.
func segmentCoefficients(dst, c []float64, scale float64) []float64 {
	if len(c) > monoTerms {
		return chebInterleave(dst, c, scale)
	}
	var a [monoTerms]float64
	for k := range a {
		for j := k; j < len(c); j++ {
			if m := chebMono[j][k]; m != 0 {
				a[k] += c[j] * m
			}
		}
	}
	for k := range a {
		b := 0.0
		if k+1 < monoTerms {
			b = float64(k+1) * a[k+1] * scale
		}
		dst = append(dst, a[k], b)
	}
	return dst
}

// segmentEval evaluates at s the coefficients cd that
// segmentCoefficients made of a segment of the given number of terms.
func segmentEval(cd []float64, terms int, s float64) (y, dy float64) {
	if terms <= monoTerms {
		return monoEval((*[2 * monoTerms]float64)(cd), s)
	}
	return chebEval(cd, s)
}

// monoEval returns Σ a_k s^k and Σ b_k s^k for the interleaved monomial
// coefficients c of segmentCoefficients (c[2k] = a_k, c[2k+1] = b_k), by
// Estrin's scheme: pairs, then pairs of pairs in s², then s⁴.
func monoEval(c *[2 * monoTerms]float64, s float64) (y, dy float64) {
	s2 := s * s
	s4 := s2 * s2
	y01 := c[0] + c[2]*s
	d01 := c[1] + c[3]*s
	y23 := c[4] + c[6]*s
	d23 := c[5] + c[7]*s
	y45 := c[8] + c[10]*s
	d45 := c[9] + c[11]*s
	y67 := c[12] + c[14]*s
	d67 := c[13] + c[15]*s
	y = (y01 + y23*s2) + (y45+y67*s2)*s4
	dy = (d01 + d23*s2) + (d45+d67*s2)*s4
	return y, dy
}

// chebInterleave appends to dst the coefficients c interleaved with those
// of the derivative series times scale: dst[2k] = c_k, dst[2k+1] = d_k with
// Σ d_k T_k(s) = scale · d/ds Σ c_k T_k(s). The derivative coefficients
// follow d_{k−1} = d_{k+1} + 2k·c_k from the top, with d_0 halved.
func chebInterleave(dst, c []float64, scale float64) []float64 {
	m := len(c)
	d := make([]float64, m+2)
	for k := m - 1; k >= 1; k-- {
		d[k-1] = d[k+1] + 2*float64(k)*c[k]
	}
	d[0] /= 2
	for k := 0; k < m; k++ {
		dst = append(dst, c[k], d[k]*scale)
	}
	return dst
}

// chebEval returns Σ c_k T_k(s) and Σ d_k T_k(s) for the interleaved
// coefficients cd of chebInterleave: the value and the (scaled)
// derivative, sharing one evaluation of the T_k.
//
// The even and odd T_k run as two independent recurrences in
// w = T_2(s) = 2s² − 1, T_{k+2} = 2w·T_k − T_{k−2}: two short dependency
// chains instead of one long one. The forward recurrence is stable for
// |s| ≤ 1.
func chebEval(cd []float64, s float64) (y, dy float64) {
	m := len(cd) / 2
	switch m {
	case 0:
		return 0, 0
	case 1:
		return cd[0], cd[1]
	case 2:
		return cd[0] + cd[2]*s, cd[1] + cd[3]*s
	}
	w := 2*s*s - 1
	w2 := 2 * w
	e0, e1 := 1.0, w      // T_0, T_2
	o0, o1 := s, s*(w2-1) // T_1, T_3
	ye, de := cd[0]+cd[4]*e1, cd[1]+cd[5]*e1
	yo, do := cd[2]*o0, cd[3]*o0
	if m > 3 {
		yo += cd[6] * o1
		do += cd[7] * o1
	}
	k := 4
	for ; k+1 < m; k += 2 {
		p := cd[2*k : 2*k+4]
		e2 := w2*e1 - e0
		o2 := w2*o1 - o0
		ye += p[0] * e2
		de += p[1] * e2
		yo += p[2] * o2
		do += p[3] * o2
		e0, e1 = e1, e2
		o0, o1 = o1, o2
	}
	if k < m {
		e2 := w2*e1 - e0
		ye += cd[2*k] * e2
		de += cd[2*k+1] * e2
	}
	return ye + yo, de + do
}

// LoadTable rebuilds a table from its exported representation (as received
// from a server), validating every field: bad data gives an error wrapping
// ErrBadParam, never a panic. quantity and unit name x in range errors
// ("temperature", "K"); empty means "x".
func LoadTable(d TableData, quantity, unit string) (*Table, error) {
	if quantity == "" {
		quantity = "x"
	}
	return newTable(d, quantity, unit)
}

func newTable(d TableData, quantity, unit string) (*Table, error) {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%w: table: %s", ErrBadParam, fmt.Sprintf(format, a...))
	}
	if !d.XTransform.validX() || !d.YTransform.valid() {
		return nil, bad("transforms %v/%v (valid: identity, log, reciprocal; critical-root for x only)", d.XTransform, d.YTransform)
	}
	if !(d.XMin < d.XMax) || math.IsInf(d.XMin, 0) || math.IsInf(d.XMax, 0) {
		return nil, bad("domain [%g, %g] must be finite with x_min < x_max", d.XMin, d.XMax)
	}
	ref, err := tableReference(d.XTransform, d.XReference, d.XMax)
	if err != nil {
		if d.XTransform == TransformCriticalRoot {
			return nil, bad("x_reference %g of the critical-root transform must be finite, > 0 and ≥ x_max = %g (0 means x_max)", d.XReference, d.XMax)
		}
		return nil, bad("x_reference %g given for the %v transform, which takes none (only critical-root does)", d.XReference, d.XTransform)
	}
	if !d.XTransform.acceptsRef(d.XMin, ref) || !d.XTransform.acceptsRef(d.XMax, ref) || (d.XTransform == TransformReciprocal && d.XMin < 0 && d.XMax > 0) {
		return nil, bad("domain [%g, %g] outside the %v transform's domain", d.XMin, d.XMax, d.XTransform)
	}
	nseg := len(d.Breaks) - 1
	if nseg < 1 {
		return nil, bad("%d breaks, need at least 2", len(d.Breaks))
	}
	if len(d.Offsets) != len(d.Breaks) {
		return nil, bad("%d offsets for %d breaks, need as many offsets as breaks", len(d.Offsets), len(d.Breaks))
	}
	if len(d.Coeffs) > maxTableCoeffs {
		return nil, bad("%d coefficients, more than the limit %d", len(d.Coeffs), maxTableCoeffs)
	}
	for i, v := range d.Breaks {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, bad("break %d is %v", i, v)
		}
		if i > 0 && !(v > d.Breaks[i-1]) {
			return nil, bad("breaks must increase strictly, break %d = %g after %g", i, v, d.Breaks[i-1])
		}
	}
	if d.Offsets[0] != 0 {
		return nil, bad("first offset is %d, must be 0", d.Offsets[0])
	}
	for i := 1; i < len(d.Offsets); i++ {
		if d.Offsets[i] <= d.Offsets[i-1] {
			return nil, bad("offsets must increase strictly, offset %d = %d after %d", i, d.Offsets[i], d.Offsets[i-1])
		}
	}
	if int64(d.Offsets[nseg]) != int64(len(d.Coeffs)) {
		return nil, bad("last offset %d does not match %d coefficients", d.Offsets[nseg], len(d.Coeffs))
	}
	for i, v := range d.Coeffs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, bad("coefficient %d is %v", i, v)
		}
	}
	if math.IsNaN(d.MaxRelError) || math.IsInf(d.MaxRelError, 0) || d.MaxRelError < 0 {
		return nil, bad("max_rel_error %v must be finite and ≥ 0", d.MaxRelError)
	}
	ua, ub := d.XTransform.forwardRef(d.XMin, ref), d.XTransform.forwardRef(d.XMax, ref)
	if ua > ub {
		ua, ub = ub, ua
	}
	span := ub - ua
	if math.IsInf(span, 0) || math.IsNaN(span) {
		return nil, bad("transformed domain [%g, %g] is not finite", ua, ub)
	}
	tolU := tableBreakTolerance * math.Max(span, math.Max(math.Abs(ua), math.Abs(ub)))
	if math.Abs(d.Breaks[0]-ua) > tolU || math.Abs(d.Breaks[nseg]-ub) > tolU {
		return nil, bad("breaks span [%g, %g] but the transformed domain is [%g, %g]", d.Breaks[0], d.Breaks[nseg], ua, ub)
	}
	t := &Table{
		xt: d.XTransform, yt: d.YTransform,
		breaks:   append([]float64(nil), d.Breaks...),
		offsets:  append([]uint32(nil), d.Offsets...),
		coeffs:   append([]float64(nil), d.Coeffs...),
		invWidth: make([]float64, nseg),
		xmin:     d.XMin, xmax: d.XMax,
		xref:     ref,
		maxRel:   d.MaxRelError,
		quantity: quantity, unit: unit,
	}
	terms := monoTerms // every segment's slot holds at least the monomial form
	for i := 0; i < nseg; i++ {
		terms = max(terms, int(t.offsets[i+1]-t.offsets[i]))
	}
	terms += terms & 1
	t.stride = 2 * terms
	t.cd = make([]float64, 0, nseg*t.stride)
	minW := math.Inf(1)
	for i := 0; i < nseg; i++ {
		w := t.breaks[i+1] - t.breaks[i]
		if math.IsInf(w, 0) || w == 0 {
			return nil, bad("segment %d has width %g", i, w)
		}
		t.invWidth[i] = 1 / w
		minW = math.Min(minW, w)
		t.cd = segmentCoefficients(t.cd, t.coeffs[t.offsets[i]:t.offsets[i+1]], 2*t.invWidth[i])
		t.cd = append(t.cd, make([]float64, (i+1)*t.stride-len(t.cd))...)
	}
	full := t.breaks[nseg] - t.breaks[0]
	// Sixteen bins per segment on average, and at least two per narrowest
	// segment, so few bins straddle a break (each straddle costs a search
	// step); at most maxTableBins.
	nb := int(math.Min(maxTableBins, math.Max(16*float64(nseg), math.Ceil(2*full/minW))))
	if nb < 1 {
		nb = 1
	}
	if t.xt == TransformCriticalRoot && t.xmax == t.xref {
		t.refSlope = t.slopeAtReference()
	}
	t.u0 = t.breaks[0]
	t.binScale = float64(nb) / full
	t.bins = make([]int32, nb+1)
	seg := 0
	for j := range t.bins {
		u := t.u0 + float64(j)/t.binScale
		for seg+1 < nseg && u >= t.breaks[seg+1] {
			seg++
		}
		t.bins[j] = int32(seg)
	}
	return t, nil
}

// slopeAtReference returns dy/dx at x = x_ref of a TransformCriticalRoot
// table that reaches x_ref (u = 0): du/dx is −∞ there, so the slope is
// −∞ where y rises with u away from u = 0 (falls with x), +∞ where it
// falls, and 0 where the table is flat. The first segment whose far end
// differs from y(0) decides: segments shorter than the float64 grid of x
// near x_ref (u < 0.002 or so) hold a constant.
func (t *Table) slopeAtReference() float64 {
	c := t.coeffs[t.offsets[0]:t.offsets[1]]
	s0 := -(t.breaks[0] + t.breaks[1]) * t.invWidth[0] // s at u = 0
	y0 := t.yt.inverse(chebValue(c, s0))
	for i := 0; i+1 < len(t.breaks); i++ {
		y1 := t.yt.inverse(chebValue(t.coeffs[t.offsets[i]:t.offsets[i+1]], 1))
		switch {
		case y1 > y0:
			return math.Inf(-1)
		case y1 < y0:
			return math.Inf(1)
		}
	}
	return 0
}

// Data returns the exported representation (a deep copy).
func (t *Table) Data() TableData {
	ref := 0.0
	if t.xt == TransformCriticalRoot {
		ref = t.xref
	}
	return TableData{
		XReference: ref,
		XTransform: t.xt, YTransform: t.yt,
		Breaks:      append([]float64(nil), t.breaks...),
		Offsets:     append([]uint32(nil), t.offsets...),
		Coeffs:      append([]float64(nil), t.coeffs...),
		XMin:        t.xmin,
		XMax:        t.xmax,
		MaxRelError: t.maxRel,
	}
}

// Domain returns the raw interval of x the table covers.
func (t *Table) Domain() (xmin, xmax float64) { return t.xmin, t.xmax }

// MaxRelError returns the maximum relative error measured against the
// source when the table was built.
func (t *Table) MaxRelError() float64 { return t.maxRel }

// Segments returns the number of segments.
func (t *Table) Segments() int { return len(t.breaks) - 1 }

// Coefficients returns the total number of stored coefficients.
func (t *Table) Coefficients() int { return len(t.coeffs) }

// Eval returns y(x) and dy/dx in raw units (for a P(T) table, P in Pa
// and the slope dP/dT in Pa/K; see BuildTable on the slope's accuracy).
// It allocates nothing on success. x outside the table's domain gives a *RangeError; NaN, ±Inf
// (and x ≤ 0 when x is a temperature or pressure, or is log- or
// reciprocal-transformed) give an *InputError.
func (t *Table) Eval(x float64) (y, dydx float64, err error) {
	if !(x >= t.xmin && x <= t.xmax) {
		return 0, 0, t.domainError(x)
	}
	y, dydx = t.eval(x)
	return y, dydx, nil
}

// eval is Eval for x inside the domain: the one evaluation shared by Eval
// and TablePoints, so both give the same bits.
func (t *Table) eval(x float64) (y, dydx float64) {
	var u, dudx float64
	switch t.xt {
	case TransformLog:
		u, dudx = math.Log(x), 1/x
	case TransformReciprocal:
		u = 1 / x
		dudx = -u * u
	case TransformCriticalRoot:
		// u = τ^(1/6), du/dx = −u/(6·x_ref·τ); −∞ at τ = 0 (x = x_ref),
		// where the slope is t.refSlope.
		tau := 1 - x/t.xref
		if tau > 0 {
			u = criticalRoot(tau)
			dudx = -u / (criticalRootIndex * t.xref * tau)
		} else {
			dudx = math.Inf(-1)
		}
	default:
		u, dudx = x, 1
	}
	// Segment: the uniform index answers directly unless the bin
	// straddles a break (or rounding put u in a neighbouring bin).
	j := int((u - t.u0) * t.binScale)
	if j < 0 {
		j = 0
	} else if j >= len(t.bins)-1 {
		j = len(t.bins) - 2
	}
	i := int(t.bins[j])
	if i != int(t.bins[j+1]) || u < t.breaks[i] || u > t.breaks[i+1] {
		i = t.segment(u)
	}
	s := ((u - t.breaks[i]) - (t.breaks[i+1] - u)) * t.invWidth[i]
	var yy, dyu float64
	if t.stride == 2*monoTerms {
		yy, dyu = monoEval((*[2 * monoTerms]float64)(t.cd[i*(2*monoTerms):i*(2*monoTerms)+2*monoTerms]), s)
	} else {
		cd := t.cd[i*t.stride : (i+1)*t.stride]
		yy, dyu = segmentEval(cd[:2*max(monoTerms, int(t.offsets[i+1]-t.offsets[i]))], int(t.offsets[i+1]-t.offsets[i]), s)
	}
	if math.IsInf(dudx, 0) {
		// x = x_ref of a critical-root table: the slope is infinite (or 0
		// on a flat table), never the NaN of 0·∞.
		return t.yt.inverse(yy), t.refSlope
	}
	switch t.yt {
	case TransformLog:
		y = math.Exp(yy)
		return y, y * dyu * dudx
	case TransformReciprocal:
		y = 1 / yy
		return y, -y * y * dyu * dudx
	}
	return yy, dyu * dudx
}

// Value returns y(x) alone.
func (t *Table) Value(x float64) (float64, error) {
	y, _, err := t.Eval(x)
	return y, err
}

// segment returns the index of the segment holding transformed u.
func (t *Table) segment(u float64) int {
	j := int((u - t.u0) * t.binScale)
	if j < 0 {
		j = 0
	} else if j >= len(t.bins)-1 {
		j = len(t.bins) - 2
	}
	i, hi := int(t.bins[j]), int(t.bins[j+1])
	for i < hi {
		mid := int(uint(i+hi+1) >> 1)
		if u >= t.breaks[mid] {
			i = mid
		} else {
			hi = mid - 1
		}
	}
	// Rounding in j may land one segment off.
	last := len(t.breaks) - 2
	for i < last && u >= t.breaks[i+1] {
		i++
	}
	for i > 0 && u < t.breaks[i] {
		i--
	}
	return i
}

func (t *Table) domainError(x float64) error {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return &InputError{Quantity: t.quantity, Value: x, Reason: "must be a finite number"}
	}
	if x <= 0 && (t.unit == "K" || t.unit == "Pa" || t.xt == TransformLog || t.xt == TransformReciprocal) {
		return &InputError{Quantity: t.quantity, Value: x, Reason: "must be > 0" + tableUnitSuffix(t.unit)}
	}
	return &RangeError{Quantity: t.quantity, Value: x, Min: t.xmin, Max: t.xmax, Unit: t.unit}
}

func tableUnitSuffix(unit string) string {
	if unit == "" {
		return ""
	}
	return " " + unit
}

// BuildPressureTable compiles P(T) of c over its temperature range. Zero
// transforms default to the vapour-curve choice, ln P against 1/T
// (XTransform reciprocal, YTransform log); pass TransformIdentity for both
// on melting curves, where P(T) is close to linear in T and ln P is ill
// suited near a triple point at low pressure. Quantity and Unit default to
// "temperature" and "K".
func BuildPressureTable(c Correlation, opts TableOptions) (*Table, error) {
	if c == nil {
		return nil, fmt.Errorf("%w: correlation is nil", ErrBadParam)
	}
	r := c.Range()
	return buildCorrelationTable(c.Pressure, r.Tmin, r.Tmax, opts, TransformReciprocal, TransformLog, "temperature", "K")
}

// BuildTemperatureTable compiles T(P) of c over its pressure range
// [Pmin, Pmax]. Zero transforms default to 1/T against ln P (XTransform
// log, YTransform reciprocal), the vapour-curve choice; identity suits
// melting curves as well. Quantity and Unit default to "pressure" and "Pa".
func BuildTemperatureTable(c Correlation, opts TableOptions) (*Table, error) {
	if c == nil {
		return nil, fmt.Errorf("%w: correlation is nil", ErrBadParam)
	}
	r := c.Range()
	return buildCorrelationTable(c.Temperature, r.Pmin, r.Pmax, opts, TransformLog, TransformReciprocal, "pressure", "Pa")
}

// buildCorrelationTable is BuildPressureTable and BuildTemperatureTable:
// it fills the zero transforms and the empty quantity of opts with the
// defaults given, and compiles f over [lo, hi] one point at a time.
func buildCorrelationTable(f func(float64) (float64, error), lo, hi float64, opts TableOptions,
	xt, yt Transform, quantity, unit string) (*Table, error) {
	if opts.XTransform == 0 {
		opts.XTransform = xt
	}
	if opts.YTransform == 0 {
		opts.YTransform = yt
	}
	if opts.Quantity == "" {
		opts.Quantity, opts.Unit = quantity, unit
	}
	return BuildTable(func(x, y []float64) error {
		for i, v := range x {
			w, err := f(v)
			if err != nil {
				return err
			}
			y[i] = w
		}
		return nil
	}, lo, hi, opts)
}

// TablePoint evaluates one branch of a curve (index branch, range r) at x,
// a temperature (byT) or a pressure, from its compiled tables pOfT (P(T))
// and tOfP (T(P), may be nil) when x lies inside the range and the tables
// can answer. The point is the one Curve returns there: P(T) and its slope
// from pOfT; T(P) from tOfP, with the slope from pOfT at T clamped into
// [Tmin, Tmax]. ok is false otherwise, and the caller takes the general
// path. It allocates nothing.
func TablePoint(pOfT, tOfP *Table, r Range, x float64, byT bool, branch int) (pt CurvePoint, ok bool) {
	if byT {
		if !(x > 0 && x >= r.Tmin && x <= r.Tmax) {
			return pt, false
		}
		p, d, err := pOfT.Eval(x)
		if err != nil {
			return pt, false
		}
		return CurvePoint{Temperature: x, Pressure: p, Slope: d, Branch: branch}, true
	}
	if tOfP == nil || !(x > 0 && x >= r.Pmin && x <= r.Pmax) {
		return pt, false
	}
	t, _, err := tOfP.Eval(x)
	if err != nil {
		return pt, false
	}
	_, d, err := pOfT.Eval(math.Min(math.Max(t, r.Tmin), r.Tmax))
	if err != nil {
		return pt, false
	}
	return CurvePoint{Temperature: t, Pressure: x, Slope: d, Branch: branch}, true
}

// TablePoints evaluates a run of points like TablePoint, for xs[0],
// xs[1], … in turn, writing point k's temperature, pressure and slope to
// ts[k], ps[k] and ds[k] (each at least len(xs) long). It stops at the
// first point TablePoint would refuse, which the caller then takes through
// the general path, and returns the number of points written. The values
// are TablePoint's bit for bit; the loop only saves the per-point call,
// range set-up and result copies, which in a batch server cost as much as
// the polynomial itself. It allocates nothing.
func TablePoints(pOfT, tOfP *Table, r Range, xs []float64, byT bool, ts, ps, ds []float64) int {
	n := len(xs)
	ts, ps, ds = ts[:n], ps[:n], ds[:n]
	// TablePoint accepts x > 0 inside r, and the table's Eval inside its
	// domain; both at once is the intersection.
	if byT {
		lo, hi := math.Max(r.Tmin, pOfT.xmin), math.Min(r.Tmax, pOfT.xmax)
		k := 0
		if pOfT.pairable() {
			for ; k+1 < n; k += 2 {
				x0, x1 := xs[k], xs[k+1]
				if !(x0 > 0 && x0 >= lo && x0 <= hi && x1 > 0 && x1 >= lo && x1 <= hi) {
					break
				}
				ts[k], ts[k+1] = x0, x1
				ps[k], ds[k], ps[k+1], ds[k+1] = pOfT.evalPair(x0, x1)
			}
		}
		for ; k < n; k++ {
			x := xs[k]
			if !(x > 0 && x >= lo && x <= hi) {
				return k
			}
			ts[k] = x
			ps[k], ds[k] = pOfT.eval(x)
		}
		return n
	}
	if tOfP == nil {
		return 0
	}
	lo, hi := math.Max(r.Pmin, tOfP.xmin), math.Min(r.Pmax, tOfP.xmax)
	k := 0
	if tOfP.pairable() && pOfT.pairable() {
		for ; k+1 < n; k += 2 {
			x0, x1 := xs[k], xs[k+1]
			if !(x0 > 0 && x0 >= lo && x0 <= hi && x1 > 0 && x1 >= lo && x1 <= hi) {
				break
			}
			t0, _, t1, _ := tOfP.evalPair(x0, x1)
			tc0 := math.Min(math.Max(t0, r.Tmin), r.Tmax)
			tc1 := math.Min(math.Max(t1, r.Tmin), r.Tmax)
			if !(tc0 >= pOfT.xmin && tc0 <= pOfT.xmax && tc1 >= pOfT.xmin && tc1 <= pOfT.xmax) {
				break
			}
			ts[k], ps[k], ts[k+1], ps[k+1] = t0, x0, t1, x1
			_, ds[k], _, ds[k+1] = pOfT.evalPair(tc0, tc1)
		}
	}
	for ; k < n; k++ {
		x := xs[k]
		if !(x > 0 && x >= lo && x <= hi) {
			return k
		}
		t, _ := tOfP.eval(x)
		tc := math.Min(math.Max(t, r.Tmin), r.Tmax)
		if !(tc >= pOfT.xmin && tc <= pOfT.xmax) {
			return k
		}
		ts[k], ps[k] = t, x
		_, ds[k] = pOfT.eval(tc)
	}
	return n
}

// DefaultTransforms returns the recommended (x, y) transforms of the P(T)
// and T(P) tables of a curve kind.
//
// P(T) tables use identity transforms on every kind: evaluation then needs
// no exp or log, which matters against cheap closed-form sources such as
// IAPWS-IF97 region 4 (an exp costs about as much as the whole polynomial).
// Saturation, melting and transition pressures span a few decades at most,
// and the adaptive splitting reaches the tolerance with a handful more
// segments. Sublimation curves span many decades (water's falls to 1e-40 Pa
// at 50 K); identity P(T) tables still reach the tolerance, with about four
// segments per unit of ln P (218 segments for water's, 18 for carbon
// dioxide's, 30 against 60 ns per point), and SublimationFallback gives the
// ln P against 1/T choice for a curve that would need too many. T(P) tables
// of sublimation curves interpolate 1/T against ln P, which is nearly
// linear there; the others use identity transforms.
func DefaultTransforms(k CurveKind) (pOfT, tOfP TableOptions) {
	if k == Sublimation {
		return TableOptions{XTransform: TransformIdentity, YTransform: TransformIdentity},
			TableOptions{XTransform: TransformLog, YTransform: TransformReciprocal}
	}
	return TableOptions{XTransform: TransformIdentity, YTransform: TransformIdentity},
		TableOptions{XTransform: TransformIdentity, YTransform: TransformIdentity}
}

// SublimationFallback returns the P(T) transforms of a sublimation curve
// whose identity table would exceed SublimationIdentityMaxSegments: ln P
// against 1/T, nearly linear over any number of decades, at the cost of an
// exp per point.
func SublimationFallback() TableOptions {
	return TableOptions{XTransform: TransformReciprocal, YTransform: TransformLog}
}

// SublimationIdentityMaxSegments caps the identity P(T) table of a
// sublimation curve (see DefaultTransforms): about 250 units of ln P.
const SublimationIdentityMaxSegments = 1024

// TableCorrelation is a Correlation served by compiled tables: P(T) and
// dP/dT from a pressure table, T(P) from a temperature table. Its slope is
// the derivative of the interpolant, not the source's analytic slope.
//
// As an Extrapolator it reaches only a hair beyond its tables: up to
// BranchMeetTolerance relative to the value, linearly from the nearest
// end, which is what a Curve needs to close the seams where published
// branches meet only to rounding. Farther out it gives a *RangeError that
// also wraps ErrNotImplemented: tables do not extrapolate; evaluate the
// source correlation instead.
type TableCorrelation struct {
	pt, tp *Table
	r      Range
}

var (
	_ Correlation  = (*TableCorrelation)(nil)
	_ Extrapolator = (*TableCorrelation)(nil)
)

// NewTableCorrelation pairs a P(T) table with a T(P) table of the same
// branch. tOfP may be nil, in which case Temperature reports
// ErrNotImplemented. The range is the P(T) table's temperature domain and
// the T(P) table's pressure domain (or the extremes of P over the P(T)
// table's nodes when tOfP is nil).
func NewTableCorrelation(pOfT, tOfP *Table) (*TableCorrelation, error) {
	if pOfT == nil {
		return nil, fmt.Errorf("%w: pressure table is nil", ErrBadParam)
	}
	c := &TableCorrelation{pt: pOfT, tp: tOfP}
	c.r.Tmin, c.r.Tmax = pOfT.Domain()
	if tOfP != nil {
		c.r.Pmin, c.r.Pmax = tOfP.Domain()
	} else {
		c.r.Pmin, c.r.Pmax = math.Inf(1), math.Inf(-1)
		for i := 0; i <= 64; i++ {
			p, err := pOfT.Value(c.r.Tmin + (c.r.Tmax-c.r.Tmin)*float64(i)/64)
			if err != nil {
				return nil, err
			}
			c.r.Pmin, c.r.Pmax = math.Min(c.r.Pmin, p), math.Max(c.r.Pmax, p)
		}
	}
	return c, nil
}

// Pressure implements Correlation.
func (c *TableCorrelation) Pressure(t float64) (float64, error) {
	p, _, err := c.PressureSlope(t)
	return p, err
}

// Slope implements Correlation.
func (c *TableCorrelation) Slope(t float64) (float64, error) {
	_, d, err := c.PressureSlope(t)
	return d, err
}

// PressureSlope implements Correlation.
func (c *TableCorrelation) PressureSlope(t float64) (p, dpdt float64, err error) {
	if !(t > 0) || math.IsInf(t, 0) {
		return 0, 0, CheckTemperature(t, c.r)
	}
	p, dpdt, err = c.pt.Eval(t)
	if err != nil {
		var re *RangeError
		if errors.As(err, &re) {
			return 0, 0, &RangeError{Quantity: "temperature", Value: t, Min: c.r.Tmin, Max: c.r.Tmax, Unit: "K"}
		}
	}
	return p, dpdt, err
}

// Temperature implements Correlation.
func (c *TableCorrelation) Temperature(p float64) (float64, error) {
	if !(p > 0) || math.IsInf(p, 0) {
		return 0, CheckPressure(p, c.r)
	}
	if c.tp == nil {
		return 0, fmt.Errorf("%w: no T(P) table", ErrNotImplemented)
	}
	t, _, err := c.tp.Eval(p)
	if err != nil {
		var re *RangeError
		if errors.As(err, &re) {
			return 0, &RangeError{Quantity: "pressure", Value: p, Min: c.r.Pmin, Max: c.r.Pmax, Unit: "Pa"}
		}
	}
	return t, err
}

// Range implements Correlation.
func (c *TableCorrelation) Range() Range { return c.r }

// PressureSlopeBeyond implements Extrapolator within BranchMeetTolerance
// of the temperature range (see TableCorrelation).
func (c *TableCorrelation) PressureSlopeBeyond(t float64) (p, dpdt float64, err error) {
	if c.r.ContainsT(t) || !(t > 0) || math.IsInf(t, 0) {
		return c.PressureSlope(t)
	}
	tc := math.Min(math.Max(t, c.r.Tmin), c.r.Tmax)
	if math.Abs(t-tc) > BranchMeetTolerance*t {
		return 0, 0, fmt.Errorf("%w; compiled tables do not extrapolate: %w", CheckTemperature(t, c.r), ErrNotImplemented)
	}
	p, dpdt, err = c.pt.Eval(tc)
	return p + dpdt*(t-tc), dpdt, err
}

// TemperatureBeyond implements Extrapolator within BranchMeetTolerance of
// the pressure range (see TableCorrelation).
func (c *TableCorrelation) TemperatureBeyond(p float64) (float64, error) {
	if c.r.ContainsP(p) || !(p > 0) || math.IsInf(p, 0) || c.tp == nil {
		return c.Temperature(p)
	}
	pc := math.Min(math.Max(p, c.r.Pmin), c.r.Pmax)
	if math.Abs(p-pc) > BranchMeetTolerance*p {
		return 0, fmt.Errorf("%w; compiled tables do not extrapolate: %w", CheckPressure(p, c.r), ErrNotImplemented)
	}
	t, dtdp, err := c.tp.Eval(pc)
	return t + dtdp*(p-pc), err
}
