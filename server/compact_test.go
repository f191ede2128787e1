package server

import (
	"context"
	"io"
	"math"
	"slices"
	"testing"

	"google.golang.org/protobuf/proto"

	"github.com/phasebound/phasebound/clients/goclient"
	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// expand turns a compact Evaluate response into the per-point form (as the
// Go client does) so that a test can index status and branch_index.
func expand(t testing.TB, r *pb.EvaluateResponse) *pb.EvaluateResponse {
	t.Helper()
	if err := goclient.Expand(r); err != nil {
		t.Fatal(err)
	}
	return r
}

// compactCase is one batch and the form its answer must take.
type compactCase struct {
	name    string
	req     *pb.EvaluateRequest
	compact bool
	// branch is the branch each point must be answered on ("" where the
	// point fails; a single-branch unnamed curve is "" too).
	branch []string
	status []pb.PointStatus // nil: all OK
}

const (
	stOK     = pb.PointStatus_POINT_STATUS_OK
	stOOR    = pb.PointStatus_POINT_STATUS_OUT_OF_RANGE
	stInval  = pb.PointStatus_POINT_STATUS_INVALID
	stExtrap = pb.PointStatus_POINT_STATUS_EXTRAPOLATED
)

// repeat returns n copies of s.
func repeat[T any](s T, n int) []T {
	out := make([]T, n)
	for i := range out {
		out[i] = s
	}
	return out
}

// ramp returns n values from lo to hi.
func ramp(lo, hi float64, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = lo + (hi-lo)*float64(i)/float64(n-1)
	}
	return v
}

func compactCases() []compactCase {
	big := 3*parallelMin + 11 // split over workers and over several fast-loop runs
	bigBad := ramp(280, 640, big)
	bigBad[2*parallelMin+5] = 900 // above the critical point: out of range
	bigStatus := repeat(stOK, big)
	bigStatus[2*parallelMin+5] = stOOR
	bigBranch := repeat("", big)
	return []compactCase{
		{name: "named branch by T", compact: true, branch: repeat("ice-Ih", 3),
			req: &pb.EvaluateRequest{Substance: "water", Curve: melt, Branch: "ice-Ih", Given: byT, Values: []float64{255, 260, 273}}},
		{name: "named branch by P", compact: true, branch: repeat("ice-III", 2),
			req: &pb.EvaluateRequest{Substance: "water", Curve: melt, Branch: "ice-III", Given: byP, Values: []float64{220e6, 300e6}}},
		{name: "single-branch curve", compact: true, branch: repeat("", 4),
			req: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: []float64{300, 373.124, 500, 640}, IncludeLatentHeat: true}},
		{name: "single-branch curve exact", compact: true, branch: repeat("", 3),
			req: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byP, Values: []float64{1e3, 1e5, 1e7}, Exact: true}},
		{name: "single named branch of a sublimation curve", compact: true, branch: repeat("ice-Ih", 2),
			req: &pb.EvaluateRequest{Substance: "water", Curve: subl, Given: byT, Values: []float64{200, 250}}},
		{name: "unnamed two-branch curve, one branch used", compact: true, branch: repeat("ice-Ih", 2),
			req: &pb.EvaluateRequest{Substance: "water", Curve: melt, Given: byT, Values: []float64{260, 270}}},
		{name: "allow_extrapolation, all in range", compact: true, branch: repeat("ice-Ih", 2),
			req: &pb.EvaluateRequest{Substance: "water", Curve: subl, Given: byT, Values: []float64{100, 230}, AllowExtrapolation: true}},
		{name: "large batch", compact: true, branch: repeat("", big),
			req: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: ramp(280, 640, big)}},

		{name: "one bad point", branch: []string{"", "", ""}, status: []pb.PointStatus{stOK, stOOR, stOK},
			req: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: []float64{300, 700, 400}}},
		{name: "one bad point on a named branch", branch: []string{"ice-Ih", "", "ice-Ih"}, status: []pb.PointStatus{stOK, stInval, stOK},
			req: &pb.EvaluateRequest{Substance: "water", Curve: melt, Branch: "ice-Ih", Given: byT, Values: []float64{260, math.NaN(), 270}, IncludeLatentHeat: true}},
		{name: "one bad point exact", branch: []string{"", ""}, status: []pb.PointStatus{stInval, stOK},
			req: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: []float64{-1, 450}, Exact: true}},
		{name: "two branches of the melting curve", branch: []string{"ice-Ih", "ice-III", "ice-Ih"},
			req: &pb.EvaluateRequest{Substance: "water", Curve: melt, Given: byP, Values: []float64{100e6, 250e6, 10e6}}},
		{name: "extrapolated point", branch: []string{"ice-Ih", "ice-Ih"}, status: []pb.PointStatus{stExtrap, stOK},
			req: &pb.EvaluateRequest{Substance: "water", Curve: subl, Given: byT, Values: []float64{40, 230}, AllowExtrapolation: true}},
		{name: "large batch with one bad point", branch: bigBranch, status: bigStatus,
			req: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: bigBad}},
	}
}

// checkForm checks that r answers tc in the form tc calls for, with the
// branches and statuses it names; it returns r expanded.
func checkForm(t *testing.T, what string, tc compactCase, r *pb.EvaluateResponse) *pb.EvaluateResponse {
	t.Helper()
	n := len(tc.req.GetValues())
	if len(r.GetTemperatureK()) != n || len(r.GetPressurePa()) != n || len(r.GetDpdtPaPerK()) != n {
		t.Fatalf("%s: %d points answered with %d temperatures, %d pressures, %d slopes",
			what, n, len(r.GetTemperatureK()), len(r.GetPressurePa()), len(r.GetDpdtPaPerK()))
	}
	if tc.compact {
		if len(r.GetStatus()) != 0 || len(r.GetBranchIndex()) != 0 || len(r.GetBranchNames()) != 1 {
			t.Fatalf("%s: want the compact form, got %d statuses, %d branch indices, branch names %q",
				what, len(r.GetStatus()), len(r.GetBranchIndex()), r.GetBranchNames())
		}
		if r.GetBranchNames()[0] != tc.branch[0] {
			t.Errorf("%s: compact form on branch %q, want %q", what, r.GetBranchNames()[0], tc.branch[0])
		}
		if len(r.GetErrors()) != 0 {
			t.Errorf("%s: compact form with errors %v", what, r.GetErrors())
		}
	} else {
		if len(r.GetStatus()) != n || len(r.GetBranchIndex()) != n {
			t.Fatalf("%s: want the per-point form, got %d statuses and %d branch indices for %d points",
				what, len(r.GetStatus()), len(r.GetBranchIndex()), n)
		}
		for i, st := range r.GetStatus() {
			if st == pb.PointStatus_POINT_STATUS_UNSPECIFIED {
				t.Fatalf("%s: point %d (%g) has no status", what, i, tc.req.GetValues()[i])
			}
		}
	}
	r = expand(t, r)
	bad := 0
	for i := range n {
		want := stOK
		if tc.status != nil {
			want = tc.status[i]
		}
		st, br := r.Status[i], r.BranchNames[r.BranchIndex[i]]
		if st != want || br != tc.branch[i] {
			if bad < 5 {
				t.Errorf("%s: point %d (%g): status %v on branch %q, want %v on %q", what, i, tc.req.GetValues()[i], st, br, want, tc.branch[i])
			}
			bad++
		}
		failed := st != stOK && st != stExtrap
		if p := r.PressurePa[i]; tc.req.GetGiven() == byT && failed != math.IsNaN(p) {
			t.Errorf("%s: point %d (%g): status %v with P = %g", what, i, tc.req.GetValues()[i], st, p)
		}
	}
	failed := 0
	for _, st := range r.Status {
		if st != stOK && st != stExtrap {
			failed++
		}
	}
	if len(r.GetErrors()) != failed {
		t.Errorf("%s: %d point errors for %d failed points", what, len(r.GetErrors()), failed)
	}
	return r
}

// sameValues reports whether a and b carry bit-identical values (NaN equal
// to NaN) for the points idx of a and 0.. of b.
func sameValues(a, b *pb.EvaluateResponse, idx []int) (int, bool) {
	eq := func(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) || (x != x && y != y) }
	pairs := func(r *pb.EvaluateResponse) [][]float64 {
		return [][]float64{r.TemperatureK, r.PressurePa, r.DpdtPaPerK, r.LatentHeatJPerMol, r.LatentHeatJPerKg,
			r.VolumeLowTPhaseM3PerMol, r.VolumeHighTPhaseM3PerMol}
	}
	pa, pbb := pairs(a), pairs(b)
	for k := range pa {
		if len(pa[k]) == 0 && len(pbb[k]) == 0 {
			continue
		}
		for j, i := range idx {
			if i >= len(pa[k]) || j >= len(pbb[k]) || !eq(pa[k][i], pbb[k][j]) {
				return i, false
			}
		}
	}
	for j, i := range idx {
		if len(a.LatentHeatSource) > 0 && a.LatentHeatSource[i] != b.LatentHeatSource[j] {
			return i, false
		}
	}
	return 0, true
}

// TestEvaluateCompactForm checks the two forms of EvaluateResponse: a batch
// entirely OK on one branch comes back compact (status and branch_index
// empty, one branch name); anything else (a failed point, two branches, an
// extrapolated point) per point with every status set. The values do not
// depend on the form.
func TestEvaluateCompactForm(t *testing.T) {
	_, c, _ := testServer(t)
	ctx := context.Background()
	for _, tc := range compactCases() {
		r, err := c.Evaluate(ctx, tc.req)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		r = checkForm(t, tc.name, tc, r)

		// The same points in the other form: a compact batch with a NaN
		// appended comes back per point; the OK points of a per-point
		// batch that used one branch come back compact.
		other := proto.Clone(tc.req).(*pb.EvaluateRequest)
		var idx []int
		if tc.compact {
			other.Values = append(slices.Clone(tc.req.Values), math.NaN())
			for i := range tc.req.Values {
				idx = append(idx, i)
			}
		} else {
			other.Values = nil
			for i, st := range r.Status {
				if st == stOK {
					other.Values = append(other.Values, tc.req.Values[i])
					idx = append(idx, i)
				}
			}
		}
		o, err := c.Evaluate(ctx, other)
		if err != nil {
			t.Fatalf("%s, other form: %v", tc.name, err)
		}
		wantCompact := !tc.compact
		if !tc.compact {
			first := tc.branch[idx[0]]
			for _, i := range idx {
				if tc.branch[i] != first {
					wantCompact = false
				}
			}
		}
		if gotCompact := len(o.GetStatus()) == 0; gotCompact != wantCompact {
			t.Errorf("%s, other form: compact %v, want %v (%d statuses)", tc.name, gotCompact, wantCompact, len(o.GetStatus()))
		}
		o = expand(t, o)
		if i, same := sameValues(r, o, idx); !same {
			t.Errorf("%s: point %d (%g) differs between the compact and the per-point form", tc.name, i, tc.req.Values[i])
		}
		for j, i := range idx {
			if o.Status[j] != stOK || o.BranchNames[o.BranchIndex[j]] != tc.branch[i] {
				t.Errorf("%s, other form: point %d: %v on %q, want OK on %q", tc.name, i, o.Status[j], o.BranchNames[o.BranchIndex[j]], tc.branch[i])
			}
		}
	}
}

// TestEvaluateStreamCompactForm checks that each EvaluateStream chunk takes
// the form its own points call for, with the values of a unary Evaluate.
func TestEvaluateStreamCompactForm(t *testing.T) {
	_, c, _ := testServer(t)
	ctx := context.Background()
	cases := compactCases()
	stream, err := c.EvaluateStream(ctx)
	if err != nil {
		t.Fatal(err)
	}
	go func() {
		for _, tc := range cases {
			if stream.Send(&pb.EvaluateStreamRequest{Request: tc.req}) != nil {
				return
			}
		}
		stream.CloseSend()
	}()
	var off uint64
	for k := 0; ; k++ {
		m, err := stream.Recv()
		if err == io.EOF {
			if k != len(cases) {
				t.Fatalf("%d chunks answered of %d", k, len(cases))
			}
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		tc := cases[k]
		if m.GetOffset() != off {
			t.Errorf("chunk %d: offset %d, want %d", k, m.GetOffset(), off)
		}
		off += uint64(len(tc.req.GetValues()))
		got := checkForm(t, "stream chunk "+tc.name, tc, m.GetResponse())
		want, err := c.Evaluate(ctx, tc.req)
		if err != nil {
			t.Fatal(err)
		}
		want = expand(t, want)
		idx := make([]int, len(tc.req.GetValues()))
		for i := range idx {
			idx[i] = i
		}
		if i, same := sameValues(got, want, idx); !same {
			t.Errorf("stream chunk %s: point %d differs from the unary answer", tc.name, i)
		}
	}
}
