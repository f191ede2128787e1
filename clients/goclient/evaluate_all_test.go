package goclient_test

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// TestEvaluateAllMatchesEvaluate checks that a chunked batch answers exactly
// as one unary call: values, branches (merged across chunks), statuses and
// error indices counted from the start of the batch.
func TestEvaluateAllMatchesEvaluate(t *testing.T) {
	c := inMemoryClient()
	defer c.Close()
	var vals []float64
	for i := 0; i < 3000; i++ {
		vals = append(vals, 0.2e6+float64(i)*0.2e6) // 0.2 MPa to 600 MPa: ice Ih, III and V branches
	}
	vals[17], vals[1500], vals[2999] = math.NaN(), -3, 1e12
	req := &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_MELTING,
		Given: pb.Variable_VARIABLE_PRESSURE, Values: vals, IncludeLatentHeat: true}
	one, err := c.Evaluate(context.Background(), req)
	if err != nil {
		t.Fatal(err)
	}
	c.ChunkPoints = 128
	all, err := c.EvaluateAll(context.Background(), req)
	if err != nil {
		t.Fatal(err)
	}
	for i := range vals {
		if one.Status[i] != all.Status[i] || one.BranchNames[one.BranchIndex[i]] != all.BranchNames[all.BranchIndex[i]] {
			t.Fatalf("point %d: %v %q vs %v %q", i, one.Status[i], one.BranchNames[one.BranchIndex[i]], all.Status[i], all.BranchNames[all.BranchIndex[i]])
		}
		if one.Status[i] == pb.PointStatus_POINT_STATUS_OK && (!scalar.EqualWithinAbsOrRel(one.TemperatureK[i], all.TemperatureK[i], 0, 0) ||
			!scalar.EqualWithinAbsOrRel(one.LatentHeatJPerMol[i], all.LatentHeatJPerMol[i], 0, 0) && !math.IsNaN(one.LatentHeatJPerMol[i])) {
			t.Fatalf("point %d differs", i)
		}
	}
	if len(one.Errors) != 3 || len(all.Errors) != 3 {
		t.Fatalf("errors: %d unary, %d chunked", len(one.Errors), len(all.Errors))
	}
	for k := range one.Errors {
		if one.Errors[k].Index != all.Errors[k].Index || one.Errors[k].Status != all.Errors[k].Status {
			t.Errorf("error %d: %v vs %v", k, one.Errors[k], all.Errors[k])
		}
	}
	if all.CatalogVersion != one.CatalogVersion || all.TableMaxRelError != one.TableMaxRelError {
		t.Errorf("version %q/%q, table error %g/%g", all.CatalogVersion, one.CatalogVersion, all.TableMaxRelError, one.TableMaxRelError)
	}
	req.Strict = true
	if _, err := c.EvaluateAll(context.Background(), req); err == nil {
		t.Errorf("strict chunked batch with bad points succeeded")
	}
}

func TestDialRejectsBadTargets(t *testing.T) {
	for _, target := range []string{"", "localhost", "a:1,,b:2", ":80"} {
		if _, err := dial(target); err == nil {
			t.Errorf("Dial(%q) succeeded", target)
		}
	}
}

// TestDialTargets dials a list of addresses (round-robin) and a dns:///
// target, and evaluates through each.
func TestDialTargets(t *testing.T) {
	a, b := tcpAddress(), tcpAddress()
	for _, target := range []string{a + "," + b, "dns:///" + a} {
		c, err := dial(target)
		if err != nil {
			t.Fatalf("Dial(%q): %v", target, err)
		}
		for i := 0; i < 4; i++ {
			r, err := c.Evaluate(context.Background(), &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
				Given: pb.Variable_VARIABLE_TEMPERATURE, Values: []float64{300}})
			if err != nil {
				t.Fatalf("%q call %d: %v", target, i, err)
			}
			if !scalar.EqualWithinAbsOrRel(r.PressurePa[0], 3.53658941e3, 0, 1e-8) { // IAPWS-IF97 Psat(300 K) = 3.53658941 kPa
				t.Errorf("%q: P(300 K) = %g", target, r.PressurePa[0])
			}
		}
		c.Close()
	}
}
