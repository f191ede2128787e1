package server

import (
	"bytes"
	"context"
	"log/slog"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// criticalServer serves the embedded default catalog (water and carbon
// dioxide with published saturated-density equations up to their critical
// points) and returns the warnings logged while compiling it.
func criticalServer(t *testing.T) (pb.BoundaryServiceClient, string) {
	t.Helper()
	cat, err := catalog.Default()
	if err != nil {
		t.Fatal(err)
	}
	return serveCatalog(t, cat)
}

// serveCatalog serves cat on loopback for the test and returns a client
// and the warnings logged while compiling it.
func serveCatalog(t *testing.T, cat *catalog.Catalog) (pb.BoundaryServiceClient, string) {
	t.Helper()
	var logs bytes.Buffer
	log := slog.New(slog.NewTextHandler(&logs, &slog.HandlerOptions{Level: slog.LevelWarn}))
	srv, err := New(context.Background(), cat, Options{Logger: log})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Close)
	conn, err := dialServer(srv)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { conn.Close() })
	return pb.NewBoundaryServiceClient(conn), logs.String()
}

// The saturated-volume tables of water and carbon dioxide run against the
// critical-root transform over the whole range up to Tc, meet the server's
// 1e-11 tolerance (they stopped at about 1e-4 against T), and agree with
// the backends' own volumes; the water latent heat on the table path
// agrees with the exact (backend) path near the critical point and
// vanishes at it.
func TestSaturatedVolumeTablesToCriticalPoint(t *testing.T) {
	c, logs := criticalServer(t)
	if strings.Contains(logs, "volume") {
		t.Errorf("compiling the default catalog warned about volumes:\n%s", logs)
	}
	ctx := context.Background()
	for _, sub := range []struct {
		id string
		tc float64 // K
	}{
		{"water", 647.096},           // IAPWS R6-95(2018) critical temperature
		{"carbon-dioxide", 304.1282}, // Span & Wagner (1996) critical temperature
	} {
		ex, err := c.ExportTables(ctx, &pb.ExportTablesRequest{Substance: sub.id})
		if err != nil {
			t.Fatal(err)
		}
		var tmin float64
		found := false
		for _, bt := range ex.GetTables() {
			if bt.GetCurve() != pb.CurveKind_CURVE_KIND_SATURATION {
				continue
			}
			found = true
			tmin = bt.GetValidity().GetMinTemperatureK()
			for side, vt := range map[string]*pb.ChebyshevTable{"low": bt.GetVolumeLowTPhase(), "high": bt.GetVolumeHighTPhase()} {
				if vt.GetXTransform() != pb.Transform_TRANSFORM_CRITICAL_ROOT || vt.GetXReference() != sub.tc || vt.GetXMax() != sub.tc {
					t.Errorf("%s %s volume table: transform %v, x_reference %g, x_max %g; want critical root up to Tc = %g",
						sub.id, side, vt.GetXTransform(), vt.GetXReference(), vt.GetXMax(), sub.tc)
				}
				t.Logf("%s %s-T phase volume table: %d segments, measured error %.3g", sub.id, side, len(vt.GetBreaks())-1, vt.GetMaxRelError())
				if e := vt.GetMaxRelError(); e > thermo.DefaultTableTolerance {
					t.Errorf("%s %s volume table: measured error %g above %g", sub.id, side, e, thermo.DefaultTableTolerance)
				}
				// A client rebuilds it with the exported reference, or
				// without it (x_reference unset means x_max = Tc).
				d := thermo.TableData{
					XTransform: thermo.Transform(vt.GetXTransform()), YTransform: thermo.Transform(vt.GetYTransform()),
					Breaks: vt.GetBreaks(), Offsets: vt.GetOffsets(), Coeffs: vt.GetCoefficients(),
					XMin: vt.GetXMin(), XMax: vt.GetXMax(), MaxRelError: vt.GetMaxRelError(), XReference: vt.GetXReference(),
				}
				tb, err := thermo.LoadTable(d, "temperature", "K")
				d.XReference = 0
				tb0, err0 := thermo.LoadTable(d, "temperature", "K")
				if err != nil || err0 != nil {
					t.Errorf("%s %s volume table does not load: %v; without x_reference: %v", sub.id, side, err, err0)
					continue
				}
				if _, d, _ := tb.Eval(sub.tc); !math.IsInf(d, 0) {
					t.Errorf("%s %s volume: dv/dT(Tc) = %g, want infinite", sub.id, side, d)
				}
				for _, temp := range []float64{vt.GetXMin(), 0.5 * (vt.GetXMin() + sub.tc), sub.tc - 1e-6, sub.tc} {
					v, _, _ := tb.Eval(temp)
					v0, _, _ := tb0.Eval(temp)
					if v != v0 {
						t.Errorf("%s %s volume at %g K: %g with x_reference, %g without", sub.id, side, temp, v, v0)
					}
				}
			}
		}
		if !found {
			t.Fatalf("%s: no saturation tables exported", sub.id)
		}

		// Table path against the backends, uniform and crowding toward Tc.
		var ts []float64
		for i := 0; i <= 400; i++ {
			ts = append(ts, tmin+(sub.tc-tmin)*float64(i)/400)
		}
		for k := 1.0; k <= 15; k += 0.25 {
			ts = append(ts, sub.tc-sub.tc*math.Pow(10, -k))
		}
		ts = append(ts, sub.tc)
		var resp [2]*pb.EvaluateResponse
		for i, exact := range []bool{false, true} {
			resp[i], err = c.Evaluate(ctx, &pb.EvaluateRequest{Substance: sub.id, Curve: pb.CurveKind_CURVE_KIND_SATURATION,
				Given: pb.Variable_VARIABLE_TEMPERATURE, Values: ts, IncludeLatentHeat: true, Exact: exact})
			if err != nil {
				t.Fatal(err)
			}
			expand(t, resp[i])
		}
		var worst, worstT float64
		for i, temp := range ts {
			if resp[0].Status[i] != pb.PointStatus_POINT_STATUS_OK || resp[1].Status[i] != pb.PointStatus_POINT_STATUS_OK {
				t.Fatalf("%s at %.17g K: statuses %v, %v", sub.id, temp, resp[0].Status[i], resp[1].Status[i])
			}
			for _, v := range [][2]float64{
				{resp[0].VolumeLowTPhaseM3PerMol[i], resp[1].VolumeLowTPhaseM3PerMol[i]},
				{resp[0].VolumeHighTPhaseM3PerMol[i], resp[1].VolumeHighTPhaseM3PerMol[i]},
			} {
				if e := math.Abs(v[0]-v[1]) / v[1]; !(e <= worst) {
					worst, worstT = e, temp
				}
			}
		}
		t.Logf("%s: largest volume deviation table vs backend %.3g at %.15g K", sub.id, worst, worstT)
		if worst > 1e-10 {
			t.Errorf("%s: table volumes deviate from the backend's by %g at %.17g K, above 1e-10", sub.id, worst, worstT)
		}
		last := len(ts) - 1
		if h := resp[0].LatentHeatJPerMol[last]; resp[0].LatentHeatSource[last] != pb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON || math.Abs(h) > 1e-9*resp[0].LatentHeatJPerMol[0] {
			t.Errorf("%s: latent heat at Tc on the table path %v %g J/mol, want Clapeyron ≈ 0 (common practice: it vanishes at the critical point)",
				sub.id, resp[0].LatentHeatSource[last], h)
		}
	}

	// Water: the table path's latent heat against the exact path.
	temps := []float64{600, 640, 646, 647, 647.096}
	var got [2]*pb.EvaluateResponse
	for i, exact := range []bool{false, true} {
		r, err := c.Evaluate(ctx, &pb.EvaluateRequest{Substance: "water", Curve: pb.CurveKind_CURVE_KIND_SATURATION,
			Given: pb.Variable_VARIABLE_TEMPERATURE, Values: temps, IncludeLatentHeat: true, Exact: exact})
		if err != nil {
			t.Fatal(err)
		}
		got[i] = r
	}
	for i, temp := range temps[:4] {
		h, want := got[0].LatentHeatJPerMol[i], got[1].LatentHeatJPerMol[i]
		t.Logf("water ΔH_vap(%g K): table path %.10g J/mol, exact path %.10g J/mol, rel %.2g", temp, h, want, (h-want)/want)
		if !scalar.EqualWithinRel(h, want, 1e-6) {
			t.Errorf("water ΔH_vap(%g K): table path %.10g J/mol, exact path %.10g", temp, h, want)
		}
	}
	if h := got[1].LatentHeatJPerMol[4]; h != 0 {
		t.Errorf("water ΔH_vap(Tc) on the exact path = %g J/mol, want 0", h)
	}
}
