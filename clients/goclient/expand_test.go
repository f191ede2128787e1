package goclient_test

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"google.golang.org/protobuf/proto"

	"github.com/phasebound/phasebound/clients/goclient"
	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

const (
	stOK  = pb.PointStatus_POINT_STATUS_OK
	stBad = pb.PointStatus_POINT_STATUS_INVALID
)

func TestExpand(t *testing.T) {
	three := func() *pb.EvaluateResponse {
		return &pb.EvaluateResponse{TemperatureK: []float64{1, 2, 3}, PressurePa: []float64{4, 5, 6}, DpdtPaPerK: []float64{7, 8, 9}}
	}
	with := func(f func(r *pb.EvaluateResponse)) *pb.EvaluateResponse {
		r := three()
		f(r)
		return r
	}
	tests := []struct {
		name   string
		in     *pb.EvaluateResponse
		status []pb.PointStatus // nil: an error is wanted
		branch []uint32
		errHas string
	}{
		{name: "compact", in: with(func(r *pb.EvaluateResponse) { r.BranchNames = []string{"ice-Ih"} }),
			status: []pb.PointStatus{stOK, stOK, stOK}, branch: []uint32{0, 0, 0}},
		{name: "compact, unnamed branch", in: with(func(r *pb.EvaluateResponse) { r.BranchNames = []string{""} }),
			status: []pb.PointStatus{stOK, stOK, stOK}, branch: []uint32{0, 0, 0}},
		{name: "per point, left as it is", in: with(func(r *pb.EvaluateResponse) {
			r.BranchNames = []string{"ice-Ih", "ice-III", ""}
			r.Status = []pb.PointStatus{stOK, stBad, stOK}
			r.BranchIndex = []uint32{1, 2, 0}
		}), status: []pb.PointStatus{stOK, stBad, stOK}, branch: []uint32{1, 2, 0}},
		{name: "no points", in: &pb.EvaluateResponse{}, status: []pb.PointStatus{}, branch: []uint32{}},
		{name: "compact with two branch names", errHas: "2 branch names",
			in: with(func(r *pb.EvaluateResponse) { r.BranchNames = []string{"a", "b"} })},
		{name: "compact with no branch name", errHas: "0 branch names", in: three()},
		{name: "statuses without branch indices", errHas: "3 statuses, 0 branch indices",
			in: with(func(r *pb.EvaluateResponse) {
				r.BranchNames = []string{""}
				r.Status = []pb.PointStatus{stOK, stOK, stOK}
			})},
		{name: "too few statuses", errHas: "2 statuses",
			in: with(func(r *pb.EvaluateResponse) {
				r.BranchNames = []string{""}
				r.Status = []pb.PointStatus{stOK, stOK}
				r.BranchIndex = []uint32{0, 0}
			})},
		{name: "branch index past the names", errHas: "point 1 names branch 5 of 1",
			in: with(func(r *pb.EvaluateResponse) {
				r.BranchNames = []string{""}
				r.Status = []pb.PointStatus{stOK, stOK, stOK}
				r.BranchIndex = []uint32{0, 5, 0}
			})},
		{name: "values of unequal length", errHas: "3 temperatures, 2 pressures",
			in: with(func(r *pb.EvaluateResponse) { r.BranchNames = []string{""}; r.PressurePa = r.PressurePa[:2] })},
	}
	for _, tt := range tests {
		before := proto.Clone(tt.in).(*pb.EvaluateResponse)
		err := goclient.Expand(tt.in)
		if tt.status == nil {
			if err == nil || !strings.Contains(err.Error(), tt.errHas) {
				t.Errorf("%s: error %v, want one saying %q", tt.name, err, tt.errHas)
			}
			continue
		}
		if err != nil {
			t.Errorf("%s: %v", tt.name, err)
			continue
		}
		if !slices.Equal(tt.in.Status, tt.status) || !slices.Equal(tt.in.BranchIndex, tt.branch) {
			t.Errorf("%s: statuses %v, branch indices %v; want %v, %v", tt.name, tt.in.Status, tt.in.BranchIndex, tt.status, tt.branch)
		}
		// Expanding again changes nothing.
		again := proto.Clone(tt.in).(*pb.EvaluateResponse)
		if err := goclient.Expand(again); err != nil || !proto.Equal(again, tt.in) {
			t.Errorf("%s: a second Expand: %v", tt.name, err)
		}
		// Nothing but the two arrays changes.
		again.Status, again.BranchIndex = before.Status, before.BranchIndex
		if !proto.Equal(again, before) {
			t.Errorf("%s: Expand changed more than status and branch_index", tt.name)
		}
	}
}

// TestRawIsCompact checks the two forms against a live server: the raw
// generated client gets a batch of OK points on one branch in the compact
// form, and Client.Evaluate the same answer expanded; a batch with a bad
// point arrives per point either way.
func TestRawIsCompact(t *testing.T) {
	c := inMemoryClient()
	defer c.Close()
	ctx := context.Background()
	for _, tc := range []struct {
		vals    []float64
		compact bool
	}{
		{[]float64{255, 260, 270}, true},
		{[]float64{255, math.NaN(), 270}, false},
	} {
		req := &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_MELTING, Branch: "ice-Ih",
			Given: pb.Variable_VARIABLE_TEMPERATURE, Values: tc.vals}
		raw, err := c.Raw().Evaluate(ctx, req)
		if err != nil {
			t.Fatal(err)
		}
		if got := len(raw.GetStatus()) == 0 && len(raw.GetBranchIndex()) == 0; got != tc.compact {
			t.Fatalf("%v: raw answer compact %v, want %v (%d statuses)", tc.vals, got, tc.compact, len(raw.GetStatus()))
		}
		exp, err := c.Evaluate(ctx, req)
		if err != nil {
			t.Fatal(err)
		}
		if len(exp.Status) != len(tc.vals) || len(exp.BranchIndex) != len(tc.vals) {
			t.Fatalf("%v: Client.Evaluate gave %d statuses and %d branch indices", tc.vals, len(exp.Status), len(exp.BranchIndex))
		}
		for i, st := range exp.Status {
			if st == stOK && exp.BranchNames[exp.BranchIndex[i]] != "ice-Ih" {
				t.Errorf("%v: point %d on %q", tc.vals, i, exp.BranchNames[exp.BranchIndex[i]])
			}
			if want := !math.IsNaN(tc.vals[i]); (st == stOK) != want {
				t.Errorf("%v: point %d status %v", tc.vals, i, st)
			}
		}
		if err := goclient.Expand(raw); err != nil {
			t.Fatal(err)
		}
		if !proto.Equal(raw, exp) {
			t.Errorf("%v: the raw answer expanded differs from Client.Evaluate's", tc.vals)
		}
	}
}

// A response in the compact form (every point OK on one branch) expanded
// to one status and branch index per point.
func ExampleExpand() {
	r := &pb.EvaluateResponse{
		TemperatureK: []float64{260, 270}, PressurePa: []float64{138.268e6, 25.4e6}, DpdtPaPerK: []float64{-13e6, -14e6},
		BranchNames: []string{"ice-Ih"}, // no status, no branch_index: the compact form
	}
	if err := goclient.Expand(r); err != nil {
		fmt.Println(err)
		return
	}
	for i := range r.Status {
		fmt.Printf("%g K: %v on %s\n", r.TemperatureK[i], r.Status[i], r.BranchNames[r.BranchIndex[i]])
	}
	// Output:
	// 260 K: POINT_STATUS_OK on ice-Ih
	// 270 K: POINT_STATUS_OK on ice-Ih
}
