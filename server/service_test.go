package server

import (
	"context"
	"io"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"google.golang.org/grpc/codes"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	reflectionpb "google.golang.org/grpc/reflection/grpc_reflection_v1"
	"google.golang.org/grpc/status"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

func TestListAndDescribe(t *testing.T) {
	_, c, _ := testServer(t)
	list, err := c.ListSubstances(context.Background(), &pb.ListSubstancesRequest{})
	if err != nil {
		t.Fatal(err)
	}
	if len(list.Substances) != 1 || list.Substances[0].Id != "water" || list.CatalogVersion == "" {
		t.Fatalf("list: %v", list)
	}
	d, err := c.DescribeSubstance(context.Background(), &pb.DescribeSubstanceRequest{Substance: "water"})
	if err != nil {
		t.Fatal(err)
	}
	w := d.Substance
	if w.CriticalPoint.TemperatureK != 647.096 || len(w.TriplePoints) != 1 || len(w.Curves) != 3 {
		t.Fatalf("water: %v", w)
	}
	melting := w.Curves[1]
	if melting.Kind != melt || len(melting.Branches) != 2 || melting.Branches[1].Name != "ice-III" || melting.Branches[1].SolidForm != "ice-III" {
		t.Fatalf("melting curve: %v", melting)
	}
	ih := melting.Branches[0].Validity
	// Ice Ih melting range in pressure: 611.657 Pa to 208.566 MPa (IAPWS R14-08(2011)).
	if !scalar.EqualWithinAbsOrRel(ih.MinPressurePa, 611.657, 0, 1e-9) || !scalar.EqualWithinAbsOrRel(ih.MaxPressurePa, 208.566e6, 0, 1e-5) {
		t.Errorf("ice Ih validity %v", ih)
	}
	for _, cv := range w.Curves {
		for _, b := range cv.Branches {
			if !(b.TableMaxRelError > 0 && b.TableMaxRelError <= MaxTableError) || b.Backend == "" {
				t.Errorf("%v %q: table error %g, backend %q", cv.Kind, b.Name, b.TableMaxRelError, b.Backend)
			}
		}
	}
	if !w.Curves[0].Branches[0].HasVolumes || w.Curves[1].Branches[0].HasVolumes {
		t.Errorf("has_volumes wrong")
	}
	_, err = c.DescribeSubstance(context.Background(), &pb.DescribeSubstanceRequest{Substance: "steam"})
	if status.Code(err) != codes.InvalidArgument || !strings.Contains(err.Error(), "water") {
		t.Errorf("unknown substance: %v", err)
	}
}

func TestLocatePhase(t *testing.T) {
	_, c, _ := testServer(t)
	states := []struct {
		t, p  float64
		phase pb.Phase
		form  string
	}{
		{298.15, 101325, pb.Phase_PHASE_LIQUID, ""},      // water at room conditions, common practice
		{263.15, 101325, pb.Phase_PHASE_SOLID, "ice-Ih"}, // ice at -10 °C, common practice
		{263.15, 200e6, pb.Phase_PHASE_LIQUID, ""},       // pressure melting: Ih melts near 251-253 K at 200 MPa (IAPWS R14-08(2011))
		{253.15, 250e6, pb.Phase_PHASE_SOLID, "ice-III"}, // ice III melts at about 256 K near 300 MPa (IAPWS R14-08(2011))
		{400, 101325, pb.Phase_PHASE_VAPOR, ""},          // steam above the normal boiling point, common practice
		{700, 30e6, pb.Phase_PHASE_SUPERCRITICAL, ""},    // above 647.096 K and 22.064 MPa (IAPWS-IF97 critical point)
		{200, 1, pb.Phase_PHASE_SOLID, "ice-Ih"},         // above the sublimation pressure, about 0.16 Pa at 200 K (IAPWS R14-08(2011), from memory)
	}
	req := &pb.LocatePhaseRequest{Substance: "water"}
	for _, s := range states {
		req.TemperatureK = append(req.TemperatureK, s.t)
		req.PressurePa = append(req.PressurePa, s.p)
	}
	req.TemperatureK = append(req.TemperatureK, math.NaN())
	req.PressurePa = append(req.PressurePa, 1e5)
	resp, err := c.LocatePhase(context.Background(), req)
	if err != nil {
		t.Fatal(err)
	}
	for i, s := range states {
		if resp.Status[i] != pb.PointStatus_POINT_STATUS_OK {
			t.Errorf("(%g K, %g Pa): status %v %v", s.t, s.p, resp.Status[i], resp.Errors)
			continue
		}
		if resp.Phase[i] != s.phase || resp.FormNames[resp.FormIndex[i]] != s.form {
			t.Errorf("(%g K, %g Pa): %v %q, want %v %q", s.t, s.p, resp.Phase[i], resp.FormNames[resp.FormIndex[i]], s.phase, s.form)
		}
		if !(resp.MarginTemperatureK[i] >= 0) || !(resp.MarginPressurePa[i] >= 0) {
			t.Errorf("(%g K, %g Pa): margins %g K, %g Pa", s.t, s.p, resp.MarginTemperatureK[i], resp.MarginPressurePa[i])
		}
	}
	// Room-temperature water at 1 atm is 25 K above the ice point, 273.1525 K (common practice),
	// nearer than boiling at 373.124 K (IAPWS-IF97).
	if m := resp.MarginTemperatureK[0]; !scalar.EqualWithinAbsOrRel(m, 298.15-273.1525, 0.001, 0) {
		t.Errorf("margin at 298.15 K, 1 atm: %g K", m)
	}
	if name := resp.BoundaryNames[resp.NearestBoundaryIndex[0]]; !strings.Contains(name, "melting") {
		t.Errorf("nearest boundary at 298.15 K, 1 atm: %q", name)
	}
	last := len(states)
	if resp.Status[last] != pb.PointStatus_POINT_STATUS_INVALID || len(resp.Errors) != 1 || resp.Errors[0].Index != uint32(last) {
		t.Errorf("NaN state: %v %v", resp.Status[last], resp.Errors)
	}
	req.Strict = true
	_, err = c.LocatePhase(context.Background(), req)
	code, _, fv := badRequestOf(t, err)
	if code != codes.InvalidArgument || fv[0].Field != "temperature_k[7]" {
		t.Errorf("strict: %v %v", code, fv)
	}
	_, err = c.LocatePhase(context.Background(), &pb.LocatePhaseRequest{Substance: "water", TemperatureK: []float64{300}})
	if status.Code(err) != codes.InvalidArgument {
		t.Errorf("unpaired states: %v", err)
	}
}

func TestExportTables(t *testing.T) {
	_, c, _ := testServer(t)
	exp, err := c.ExportTables(context.Background(), &pb.ExportTablesRequest{Substance: "water"})
	if err != nil {
		t.Fatal(err)
	}
	if len(exp.Tables) != 4 || exp.MolarMassKgPerMol != 0.018015268 {
		t.Fatalf("%d branch tables, molar mass %g", len(exp.Tables), exp.MolarMassKgPerMol)
	}
	bt := exp.Tables[0]
	if bt.Curve != sat || bt.Pressure == nil || bt.Temperature == nil || bt.VolumeLowTPhase == nil || bt.VolumeHighTPhase == nil {
		t.Fatalf("saturation tables: %v", bt.Curve)
	}
	pt := bt.Pressure
	tab, err := thermo.LoadTable(thermo.TableData{
		XTransform: thermo.Transform(pt.XTransform), YTransform: thermo.Transform(pt.YTransform),
		Breaks: pt.Breaks, Offsets: pt.Offsets, Coeffs: pt.Coefficients, XMin: pt.XMin, XMax: pt.XMax, MaxRelError: pt.MaxRelError,
	}, "temperature", "K")
	if err != nil {
		t.Fatal(err)
	}
	p, err := tab.Value(300)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbsOrRel(p, 3.53658941e3, 0, 1e-8) { // IAPWS-IF97, Table 35 check value
		t.Errorf("exported table P(300 K) = %.9g", p)
	}
}

func TestEcho(t *testing.T) {
	_, c, _ := testServer(t)
	resp, err := c.Echo(context.Background(), &pb.EchoRequest{Values: []float64{1, 2}, Copies: 3})
	if err != nil {
		t.Fatal(err)
	}
	if len(resp.Values) != 6 || resp.Values[4] != 1 || resp.Values[5] != 2 {
		t.Errorf("echo %v", resp.Values)
	}
}

func TestEvaluateStream(t *testing.T) {
	_, c, _ := testServer(t)
	stream, err := c.EvaluateStream(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	chunks := [][]float64{{300, 400}, {500}, {600, 700, 350}}
	for _, ch := range chunks {
		if err := stream.Send(&pb.EvaluateStreamRequest{Request: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: ch}}); err != nil {
			t.Fatal(err)
		}
	}
	stream.CloseSend()
	var off uint64
	for i := 0; ; i++ {
		m, err := stream.Recv()
		if err == io.EOF {
			if i != len(chunks) {
				t.Fatalf("%d responses for %d chunks", i, len(chunks))
			}
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		if m.Offset != off || len(m.Response.PressurePa) != len(chunks[i]) {
			t.Fatalf("chunk %d: offset %d, %d points", i, m.Offset, len(m.Response.PressurePa))
		}
		off += uint64(len(chunks[i]))
	}
	// Strict chunks name the point by its index in the whole stream.
	stream, err = c.EvaluateStream(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	stream.Send(&pb.EvaluateStreamRequest{Request: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: []float64{300, 310}, Strict: true}})
	stream.Send(&pb.EvaluateStreamRequest{Request: &pb.EvaluateRequest{Substance: "water", Curve: sat, Given: byT, Values: []float64{320, 900}, Strict: true}})
	stream.CloseSend()
	if _, err := stream.Recv(); err != nil {
		t.Fatal(err)
	}
	_, err = stream.Recv()
	_, _, fv := badRequestOf(t, err)
	if fv[0].Field != "values[3]" {
		t.Errorf("strict stream violation %v", fv)
	}
}

func TestHealthAndReflection(t *testing.T) {
	_, _, cc := testServer(t)
	h := healthpb.NewHealthClient(cc)
	for _, svc := range []string{"", ServiceName} {
		r, err := h.Check(context.Background(), &healthpb.HealthCheckRequest{Service: svc})
		if err != nil || r.Status != healthpb.HealthCheckResponse_SERVING {
			t.Errorf("health %q: %v %v", svc, r, err)
		}
	}
	rc, err := reflectionpb.NewServerReflectionClient(cc).ServerReflectionInfo(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	rc.Send(&reflectionpb.ServerReflectionRequest{MessageRequest: &reflectionpb.ServerReflectionRequest_ListServices{}})
	r, err := rc.Recv()
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, s := range r.GetListServicesResponse().GetService() {
		found = found || s.Name == ServiceName
	}
	if !found {
		t.Errorf("reflection lists %v", r.GetListServicesResponse().GetService())
	}
	rc.CloseSend()
}

func TestReload(t *testing.T) {
	srv, c, _ := testServer(t)
	old := srv.CatalogVersion()
	// A catalog with a melting curve only through one branch.
	text := strings.Replace(testCatalog, `name = "Water"`, `name = "Water (reloaded)"`, 1)
	cat, err := catalog.Parse("reload.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if err := srv.Reload(context.Background(), cat); err != nil {
		t.Fatal(err)
	}
	defer func() {
		back, _ := catalog.Parse("test.toml", []byte(testCatalog))
		if err := srv.Reload(context.Background(), back); err != nil {
			t.Fatal(err)
		}
	}()
	d, err := c.DescribeSubstance(context.Background(), &pb.DescribeSubstanceRequest{Substance: "water"})
	if err != nil {
		t.Fatal(err)
	}
	if d.Substance.Name != "Water (reloaded)" || d.CatalogVersion == old || d.CatalogVersion != cat.Version {
		t.Errorf("after reload: %q version %s (old %s)", d.Substance.Name, d.CatalogVersion, old)
	}
	// A broken catalog leaves the served one in place.
	bad := strings.Replace(testCatalog, `t_max = 256.164`, `t_max = 256.164
    backend = "no-such-backend"`, 1)
	if cat2, err := catalog.Parse("bad.toml", []byte(bad)); err == nil {
		if err := srv.Reload(context.Background(), cat2); err == nil {
			t.Errorf("reload with an unknown backend succeeded")
		}
	}
	if srv.CatalogVersion() != cat.Version {
		t.Errorf("failed reload changed the version")
	}
}
