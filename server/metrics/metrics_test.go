package metrics

import (
	"context"
	"io"
	"net"
	"net/http"
	"strings"
	"testing"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// fakeService answers Evaluate with one failed point per call and refuses
// substance "bad" with InvalidArgument.
type fakeService struct {
	phaseboundpb.UnimplementedBoundaryServiceServer
}

func (fakeService) Evaluate(_ context.Context, r *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	if r.GetSubstance() == "bad" {
		return nil, status.Error(codes.InvalidArgument, "unknown substance")
	}
	return &phaseboundpb.EvaluateResponse{
		PressurePa: r.GetValues(),
		Errors:     []*phaseboundpb.PointError{{Index: 0, Status: phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE}},
	}, nil
}

func (fakeService) EvaluateStream(st phaseboundpb.BoundaryService_EvaluateStreamServer) error {
	for {
		m, err := st.Recv()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		if err := st.Send(&phaseboundpb.EvaluateStreamResponse{Response: &phaseboundpb.EvaluateResponse{PressurePa: m.GetRequest().GetValues()}}); err != nil {
			return err
		}
	}
}

func TestScrapeAfterCalls(t *testing.T) {
	m := New()
	m.SetSubstances([]string{"water"})
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	g := grpc.NewServer(m.ServerOptions()...)
	phaseboundpb.RegisterBoundaryServiceServer(g, fakeService{})
	go g.Serve(lis)
	defer g.Stop()
	cc, err := grpc.NewClient(lis.Addr().String(), grpc.WithTransportCredentials(insecure.NewCredentials()))
	if err != nil {
		t.Fatal(err)
	}
	defer cc.Close()
	client := phaseboundpb.NewBoundaryServiceClient(cc)
	ctx := context.Background()
	for i := 0; i < 3; i++ {
		if _, err := client.Evaluate(ctx, &phaseboundpb.EvaluateRequest{Substance: "water", Values: []float64{300, 310}}); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := client.Evaluate(ctx, &phaseboundpb.EvaluateRequest{Substance: "bad", Values: []float64{1}}); status.Code(err) != codes.InvalidArgument {
		t.Fatalf("bad substance: %v", err)
	}
	st, err := client.EvaluateStream(ctx)
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 4; i++ {
		if err := st.Send(&phaseboundpb.EvaluateStreamRequest{Request: &phaseboundpb.EvaluateRequest{Substance: "water", Values: make([]float64, 5)}}); err != nil {
			t.Fatal(err)
		}
		if _, err := st.Recv(); err != nil {
			t.Fatal(err)
		}
	}
	st.CloseSend()
	if _, err := st.Recv(); err != io.EOF {
		t.Fatalf("end of stream: %v", err)
	}
	m.ObserveTable("water", "melting", "ice-III", 0.25, 3e-12)
	m.PluginRestarted("vapor")
	m.CatalogReloaded(nil)

	sctx, cancel := context.WithCancel(ctx)
	defer cancel()
	addr, err := m.Serve(sctx, "127.0.0.1:0", nil)
	if err != nil {
		t.Fatal(err)
	}
	resp, err := http.Get("http://" + addr.String() + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	text := string(body)
	for _, want := range []string{
		`phasebound_requests_total{code="OK",method="Evaluate",substance="water"} 3`,
		`phasebound_requests_total{code="InvalidArgument",method="Evaluate",substance="other"} 1`,
		`phasebound_requests_total{code="OK",method="EvaluateStream",substance="water"} 1`,
		`phasebound_points_total{method="Evaluate",substance="water"} 6`,
		`phasebound_points_total{method="EvaluateStream",substance="water"} 20`,
		`phasebound_point_failures_total{method="Evaluate",status="OUT_OF_RANGE"} 3`,
		`phasebound_errors_total{code="InvalidArgument",method="Evaluate"} 1`,
		`phasebound_request_duration_seconds_count{method="Evaluate"} 4`,
		`phasebound_plugin_restarts_total{backend="vapor"} 1`,
		`phasebound_table_build_seconds{branch="ice-III",curve="melting",substance="water"} 0.25`,
		`phasebound_table_max_rel_error{branch="ice-III",curve="melting",substance="water"} 3e-12`,
		`phasebound_catalog_reloads_total{result="ok"} 1`,
		`phasebound_requests_in_flight 0`,
		"go_goroutines ",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("scrape lacks %q", want)
		}
	}
	if t.Failed() {
		t.Logf("scrape:\n%s", text)
	}
	if r, err := http.Get("http://" + addr.String() + "/"); err != nil || r.StatusCode != http.StatusNotFound {
		t.Errorf("GET /: %v %v, want 404", r, err)
	}
}

func TestSubstanceLabelBounded(t *testing.T) {
	m := New()
	for i := 0; i < 3*maxUnlistedSubstances; i++ {
		m.substanceLabel(strings.Repeat("x", i+1))
	}
	if got := m.substanceLabel("never-seen"); got != "other" {
		t.Errorf("label after %d distinct ids = %q, want other", 3*maxUnlistedSubstances, got)
	}
	m.SetSubstances([]string{"water"})
	if got := m.substanceLabel("water"); got != "water" {
		t.Errorf("listed id label = %q", got)
	}
	if got := m.substanceLabel("x"); got != "other" {
		t.Errorf("unlisted id label after SetSubstances = %q, want other", got)
	}
}
