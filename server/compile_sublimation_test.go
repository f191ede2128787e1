package server

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// wideSublimation is a test substance (invented data, for this test only)
// whose Clausius-Clapeyron sublimation curve spans ln P from ln 1000 at
// 300 K down by 600 at 20 K (to about 1e-258 Pa): too many decades for an
// identity P(T) table within thermo.SublimationIdentityMaxSegments.
const wideSublimation = `
format = 1
[[substance]]
id = "test-wide-sublimation"
name = "Wide sublimation curve (invented test data)"
molar_mass = 0.1
provenance = { kind = "invented", note = "Invented for a test; never use for design." }

  [[substance.curve]]
  kind = "sublimation"
    [[substance.curve.branch]]
    family = "clausius-clapeyron"
    t_min = 20.0
    t_max = 300.0
    uncertainty = "none: invented test data"
    params = { t0 = 300.0, p0 = 1000.0, delta_h = 106886.0 }
    provenance = { kind = "invented", note = "Invented for a test; never use for design." }
`

// Sublimation P(T) tables are identity tables (no exp per point) where the
// curve allows it, as for water and carbon dioxide in the default catalog,
// and fall back to ln P against 1/T for a curve spanning too many decades;
// either way they meet the server's tolerance against the backend.
func TestSublimationPressureTables(t *testing.T) {
	ctx := context.Background()
	c, _ := criticalServer(t)
	for _, id := range []string{"water", "carbon-dioxide"} {
		ex, err := c.ExportTables(ctx, &pb.ExportTablesRequest{Substance: id})
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, bt := range ex.GetTables() {
			if bt.GetCurve() != pb.CurveKind_CURVE_KIND_SUBLIMATION {
				continue
			}
			found = true
			p := bt.GetPressure()
			if p.GetXTransform() != pb.Transform_TRANSFORM_IDENTITY || p.GetYTransform() != pb.Transform_TRANSFORM_IDENTITY {
				t.Errorf("%s sublimation P(T): transforms %v, %v, want identity", id, p.GetXTransform(), p.GetYTransform())
			}
			if p.GetMaxRelError() > thermo.DefaultTableTolerance {
				t.Errorf("%s sublimation P(T): error %g above %g", id, p.GetMaxRelError(), thermo.DefaultTableTolerance)
			}
		}
		if !found {
			t.Errorf("%s: no sublimation tables exported", id)
		}
	}

	cat, err := catalog.Parse("wide.toml", []byte(wideSublimation))
	if err != nil {
		t.Fatal(err)
	}
	wc, _ := serveCatalog(t, cat)
	ex, err := wc.ExportTables(ctx, &pb.ExportTablesRequest{Substance: "test-wide-sublimation"})
	if err != nil {
		t.Fatal(err)
	}
	p := ex.GetTables()[0].GetPressure()
	if p.GetXTransform() != pb.Transform_TRANSFORM_RECIPROCAL || p.GetYTransform() != pb.Transform_TRANSFORM_LOG {
		t.Errorf("wide sublimation P(T): transforms %v, %v, want reciprocal, log (the fallback)", p.GetXTransform(), p.GetYTransform())
	}
	// Table against exact path at points across the range, to the
	// server's tolerance; the curve is P0·exp(−ΔH/R·(1/T − 1/T0)).
	ts := []float64{20, 20.5, 35, 77, 150, 233.3, 299.9, 300}
	var got [2]*pb.EvaluateResponse
	for k, exact := range []bool{false, true} {
		got[k], err = wc.Evaluate(ctx, &pb.EvaluateRequest{Substance: "test-wide-sublimation", Curve: pb.CurveKind_CURVE_KIND_SUBLIMATION,
			Given: pb.Variable_VARIABLE_TEMPERATURE, Values: ts, Exact: exact, Strict: true})
		if err != nil {
			t.Fatal(err)
		}
	}
	for i, tk := range ts {
		want := 1000 * math.Exp(-106886.0/thermo.R*(1/tk-1/300.0)) // Clausius-Clapeyron, closed form
		if !scalar.EqualWithinAbsOrRel(got[1].PressurePa[i], want, 0, 1e-12) {
			t.Errorf("exact P(%g K) = %g, closed form %g", tk, got[1].PressurePa[i], want)
		}
		if !scalar.EqualWithinAbsOrRel(got[0].PressurePa[i], got[1].PressurePa[i], 0, 1e-11) {
			t.Errorf("table P(%g K) = %g, exact %g", tk, got[0].PressurePa[i], got[1].PressurePa[i])
		}
	}
}
