package main

import (
	"errors"
	"fmt"
	"math"
	"strings"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/thermo"
)

// Point status codes of the C API: phasebound.v1.PointStatus values, and
// statusNeedsServer for points the local tables cannot answer.
const (
	statusOK          = int32(phaseboundpb.PointStatus_POINT_STATUS_OK)
	statusInvalid     = int32(phaseboundpb.PointStatus_POINT_STATUS_INVALID)
	statusOutOfRange  = int32(phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE)
	statusAmbiguous   = int32(phaseboundpb.PointStatus_POINT_STATUS_AMBIGUOUS_BRANCH)
	statusExtrapolate = int32(phaseboundpb.PointStatus_POINT_STATUS_EXTRAPOLATED)
	statusNeedsServer = int32(7)
)

// tableSet is one substance's compiled tables, rebuilt from an
// ExportTables response. It is immutable once built, so any number of
// threads may evaluate it at once.
type tableSet struct {
	substance string
	version   string
	molarMass float64 // kg/mol; 0 when unknown
	curves    map[thermo.CurveKind]*localCurve
	maxErr    float64
}

// localCurve mirrors the server's compiled curve: a thermo.Curve of
// table-backed branches in the server's order, so branch choice (by range,
// ties to the first, seams between branches, ambiguity) is the server's.
type localCurve struct {
	kind     thermo.CurveKind
	vapour   bool
	curve    *thermo.Curve
	branches []localBranch
}

type localBranch struct {
	name        string
	pOfT, tOfP  *thermo.Table // tOfP nil when P(T) is not monotonic
	rng         thermo.Range  // the table correlation's range
	vLow, vHigh *thermo.Table // nil when unknown
	// vTmin and vTmax bound both volume tables (they may stop a hair
	// inside the branch's range, at a critical point).
	vTmin, vTmax float64
}

// outputs are the caller's arrays; a nil slice is not wanted.
type outputs struct {
	T, P, D []float64
	Status  []int32
	Latent  []float64 // J/kg; non-nil requests latent heats
}

// kindFromProto converts a proto curve kind (the C API's curve numbers).
func kindFromProto(k int) (thermo.CurveKind, error) {
	switch phaseboundpb.CurveKind(k) {
	case phaseboundpb.CurveKind_CURVE_KIND_SATURATION:
		return thermo.Saturation, nil
	case phaseboundpb.CurveKind_CURVE_KIND_MELTING:
		return thermo.Melting, nil
	case phaseboundpb.CurveKind_CURVE_KIND_SUBLIMATION:
		return thermo.Sublimation, nil
	case phaseboundpb.CurveKind_CURVE_KIND_TRANSITION:
		return thermo.Transition, nil
	}
	return 0, fmt.Errorf("curve kind %d (valid: 1 saturation, 2 melting, 3 sublimation, 4 transition)", k)
}

func loadProtoTable(t *phaseboundpb.ChebyshevTable, quantity, unit string) (*thermo.Table, error) {
	if t == nil {
		return nil, nil
	}
	return thermo.LoadTable(thermo.TableData{
		XTransform: thermo.Transform(t.GetXTransform()), YTransform: thermo.Transform(t.GetYTransform()),
		Breaks: t.GetBreaks(), Offsets: t.GetOffsets(), Coeffs: t.GetCoefficients(),
		XMin: t.GetXMin(), XMax: t.GetXMax(), MaxRelError: t.GetMaxRelError(), XReference: t.GetXReference(),
	}, quantity, unit)
}

// newTableSet validates and rebuilds the tables of an ExportTables
// response. Bad data gives an error, never a panic.
func newTableSet(substance string, r *phaseboundpb.ExportTablesResponse) (*tableSet, error) {
	ts := &tableSet{substance: substance, version: r.GetCatalogVersion(), molarMass: r.GetMolarMassKgPerMol(),
		curves: map[thermo.CurveKind]*localCurve{}}
	var order []thermo.CurveKind
	branches := map[thermo.CurveKind][]thermo.Branch{}
	for i, bt := range r.GetTables() {
		kind, err := kindFromProto(int(bt.GetCurve()))
		if err != nil {
			return nil, fmt.Errorf("table %d: %w", i, err)
		}
		where := fmt.Sprintf("%s %v branch %q", substance, kind, bt.GetBranch())
		pt, err := loadProtoTable(bt.GetPressure(), "temperature", "K")
		if err != nil {
			return nil, fmt.Errorf("%s: P(T) table: %w", where, err)
		}
		if pt == nil {
			return nil, fmt.Errorf("%s: no P(T) table", where)
		}
		tp, err := loadProtoTable(bt.GetTemperature(), "pressure", "Pa")
		if err != nil {
			return nil, fmt.Errorf("%s: T(P) table: %w", where, err)
		}
		corr, err := thermo.NewTableCorrelation(pt, tp)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", where, err)
		}
		lb := localBranch{name: bt.GetBranch(), pOfT: pt, tOfP: tp, rng: corr.Range()}
		if lb.vLow, err = loadProtoTable(bt.GetVolumeLowTPhase(), "temperature", "K"); err != nil {
			return nil, fmt.Errorf("%s: low-T phase volume table: %w", where, err)
		}
		if lb.vHigh, err = loadProtoTable(bt.GetVolumeHighTPhase(), "temperature", "K"); err != nil {
			return nil, fmt.Errorf("%s: high-T phase volume table: %w", where, err)
		}
		if lb.vLow != nil && lb.vHigh != nil {
			lo1, hi1 := lb.vLow.Domain()
			lo2, hi2 := lb.vHigh.Domain()
			lb.vTmin, lb.vTmax = math.Max(lo1, lo2), math.Min(hi1, hi2)
		} else {
			lb.vLow, lb.vHigh = nil, nil
		}
		ts.maxErr = math.Max(ts.maxErr, pt.MaxRelError())
		if tp != nil {
			ts.maxErr = math.Max(ts.maxErr, tp.MaxRelError())
		}
		lc := ts.curves[kind]
		if lc == nil {
			lc = &localCurve{kind: kind, vapour: kind == thermo.Saturation || kind == thermo.Sublimation}
			ts.curves[kind] = lc
			order = append(order, kind)
		}
		lc.branches = append(lc.branches, lb)
		branches[kind] = append(branches[kind], thermo.Branch{Name: bt.GetBranch(), Corr: corr})
	}
	for _, kind := range order {
		c, err := thermo.NewCurve(kind, branches[kind]...)
		if err != nil {
			return nil, fmt.Errorf("%s %v curve: %w", substance, kind, err)
		}
		ts.curves[kind].curve = c
	}
	return ts, nil
}

// curveOf returns the curve of kind k or an error naming the curves there are.
func (ts *tableSet) curveOf(k thermo.CurveKind) (*localCurve, error) {
	if c := ts.curves[k]; c != nil {
		return c, nil
	}
	var have []string
	for _, kk := range []thermo.CurveKind{thermo.Saturation, thermo.Melting, thermo.Sublimation, thermo.Transition} {
		if ts.curves[kk] != nil {
			have = append(have, kk.String())
		}
	}
	return nil, fmt.Errorf("substance %q has no %v curve (valid: %s)", ts.substance, k, strings.Join(have, ", "))
}

// evaluate fills out for the values xs on curve kind, as the server's
// table path does. It returns the number of failed points and the first
// failure's message; err reports a whole-call problem (unknown curve or
// branch).
func (ts *tableSet) evaluate(kind thermo.CurveKind, branch string, byT bool, xs []float64, out outputs) (failed int, first string, err error) {
	lc, err := ts.curveOf(kind)
	if err != nil {
		return 0, "", err
	}
	opts := thermo.CurveOptions{Branch: branch}
	if branch != "" {
		if _, err := lc.curve.BranchIndex(branch); err != nil {
			return 0, "", errors.New(strings.TrimPrefix(err.Error(), "thermo: "))
		}
	}
	// With one branch to use (named, or the curve's only one), points
	// inside its range go straight to its tables, as on the server.
	fi := -1
	if branch != "" {
		fi, _ = lc.curve.BranchIndex(branch)
	} else if len(lc.branches) == 1 {
		fi = 0
	}
	nan := math.NaN()
	var scratch [3][runPoints]float64
	for i := 0; i < len(xs); i++ {
		if fi >= 0 {
			if k := ts.fastRun(lc, fi, byT, xs, i, out, &scratch); k > 0 {
				i += k - 1
				continue
			}
		}
		x := xs[i]
		var pt thermo.CurvePoint
		var err error
		ok := false
		if fi >= 0 {
			pt, ok = lc.branches[fi].fastPoint(x, byT, fi)
		}
		switch {
		case ok:
		case byT:
			pt, err = lc.curve.Pressure(x, opts)
		default:
			pt, err = lc.curve.Temperature(x, opts)
		}
		if err != nil {
			st := pointStatus(err)
			if failed == 0 {
				first = fmt.Sprintf("point %d: %s", i, strings.TrimPrefix(err.Error(), "thermo: "))
				if st == statusNeedsServer {
					first += " (the local tables cannot answer it; evaluate it through the server)"
				}
			}
			failed++
			setAt(out.T, i, nan)
			setAt(out.P, i, nan)
			if byT {
				setAt(out.T, i, x)
			} else {
				setAt(out.P, i, x)
			}
			setAt(out.D, i, nan)
			setAt(out.Latent, i, nan)
			if out.Status != nil {
				out.Status[i] = st
			}
			continue
		}
		setAt(out.T, i, pt.Temperature)
		setAt(out.P, i, pt.Pressure)
		setAt(out.D, i, pt.Slope)
		if out.Status != nil {
			out.Status[i] = statusOK
		}
		if out.Latent != nil {
			out.Latent[i] = ts.latentPerKg(lc, pt)
		}
	}
	return failed, first, nil
}

// runPoints is the most points fastRun takes at once.
const runPoints = 256

// fastRun evaluates a run of points from xs[i] on branch fi's tables in one
// batch (thermo.TablePoints, the server's fast loop, with the same values
// as fastPoint) and fills out and the latent heats; it stops at a point
// the tables cannot take there, which the caller evaluates one by one, and
// returns the number of points it filled. Outputs the caller did not ask
// for go to scratch.
func (ts *tableSet) fastRun(lc *localCurve, fi int, byT bool, xs []float64, i int, out outputs, scratch *[3][runPoints]float64) int {
	end := min(len(xs), i+runPoints)
	pick := func(dst []float64, k int) []float64 {
		if dst != nil {
			return dst[i:end]
		}
		return scratch[k][:end-i]
	}
	t, p, d := pick(out.T, 0), pick(out.P, 1), pick(out.D, 2)
	b := &lc.branches[fi]
	k := thermo.TablePoints(b.pOfT, b.tOfP, b.rng, xs[i:end], byT, t, p, d)
	for j := 0; j < k; j++ {
		if out.Status != nil {
			out.Status[i+j] = statusOK
		}
		if out.Latent != nil {
			out.Latent[i+j] = ts.latentPerKg(lc, thermo.CurvePoint{Temperature: t[j], Pressure: p[j], Slope: d[j], Branch: fi})
		}
	}
	return k
}

// fastPoint evaluates x on the branch's tables when x lies inside its
// range and the tables can answer (see thermo.TablePoint); ok is false
// otherwise.
func (b *localBranch) fastPoint(x float64, byT bool, bi int) (pt thermo.CurvePoint, ok bool) {
	return thermo.TablePoint(b.pOfT, b.tOfP, b.rng, x, byT, bi)
}

func setAt(s []float64, i int, v float64) {
	if s != nil {
		s[i] = v
	}
}

// pointStatus maps a thermo error to a point status as the server does.
func pointStatus(err error) int32 {
	var re *thermo.RangeError
	switch {
	case errors.Is(err, thermo.ErrNotImplemented):
		return statusNeedsServer
	case errors.As(err, &re):
		return statusOutOfRange
	case errors.Is(err, thermo.ErrAmbiguousBranch):
		return statusAmbiguous
	}
	return statusInvalid
}

// latentPerKg is the latent heat in J/kg at pt, as the server's table path
// computes it: the Clapeyron equation ΔH = T·(v_high − v_low)·dP/dT with
// the phase volumes from their tables (at T clamped into the tables'
// common range); where the branch has no volume tables, on a vapour curve
// the ideal-gas Clausius–Clapeyron estimate R·T²·dP/dT / P; otherwise NaN.
func (ts *tableSet) latentPerKg(lc *localCurve, pt thermo.CurvePoint) float64 {
	if !(ts.molarMass > 0) {
		return math.NaN()
	}
	b := &lc.branches[pt.Branch]
	t, p, d := pt.Temperature, pt.Pressure, pt.Slope
	if b.vLow != nil && b.vHigh != nil {
		tc := math.Min(math.Max(t, b.vTmin), b.vTmax)
		vl, errL := b.vLow.Value(tc)
		vh, errH := b.vHigh.Value(tc)
		if errL != nil || errH != nil || math.IsNaN(vl) || math.IsNaN(vh) {
			return math.NaN() // no estimate that would contradict the volumes
		}
		return t * (vh - vl) * d / ts.molarMass
	}
	if lc.vapour {
		return thermo.R * t * t * d / p / ts.molarMass
	}
	return math.NaN()
}
