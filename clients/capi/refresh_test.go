package main

import (
	"context"
	"net"
	"sync"
	"testing"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"
	"google.golang.org/grpc/test/bufconn"

	"github.com/phasebound/phasebound/clients/goclient"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/thermo"
)

// fakeServer serves ExportTables and DescribeSubstance from a response
// the test can replace (a catalog reload), or refuses them.
type fakeServer struct {
	phaseboundpb.UnimplementedBoundaryServiceServer
	mu      sync.Mutex
	export  *phaseboundpb.ExportTablesResponse
	exports int
	down    bool
}

func (f *fakeServer) ExportTables(_ context.Context, req *phaseboundpb.ExportTablesRequest) (*phaseboundpb.ExportTablesResponse, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	if f.down {
		return nil, status.Error(codes.Unavailable, "restarting")
	}
	if req.GetSubstance() != "water" {
		return nil, status.Errorf(codes.InvalidArgument, "unknown substance %q (valid: water)", req.GetSubstance())
	}
	f.exports++
	return f.export, nil
}

func (f *fakeServer) DescribeSubstance(_ context.Context, _ *phaseboundpb.DescribeSubstanceRequest) (*phaseboundpb.DescribeSubstanceResponse, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	if f.down {
		return nil, status.Error(codes.Unavailable, "restarting")
	}
	return &phaseboundpb.DescribeSubstanceResponse{CatalogVersion: f.export.GetCatalogVersion()}, nil
}

func fakeClient(t *testing.T, f *fakeServer) *goclient.Client {
	t.Helper()
	lis := bufconn.Listen(1 << 20)
	g := grpc.NewServer()
	phaseboundpb.RegisterBoundaryServiceServer(g, f)
	go g.Serve(lis)
	cc, err := grpc.NewClient("passthrough:///fake",
		grpc.WithContextDialer(func(ctx context.Context, _ string) (net.Conn, error) { return lis.DialContext(ctx) }),
		grpc.WithTransportCredentials(insecure.NewCredentials()))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { cc.Close(); g.Stop() })
	return goclient.New(cc)
}

// TestFetchAndRefresh fetches tables, refreshes without a change (no new
// download), after a catalog change (new tables swapped in) and while the
// server is unavailable (error, old tables kept).
func TestFetchAndRefresh(t *testing.T) {
	f := &fakeServer{export: testExport(t)}
	c := fakeClient(t, f)
	ts, err := fetch(c, "water")
	if err != nil {
		t.Fatal(err)
	}
	th := &tablesHandle{client: c, substance: "water"}
	th.cur.Store(ts)
	if changed, err := th.refreshNow(); err != nil || changed || f.exports != 1 {
		t.Fatalf("unchanged catalog: changed %v, err %v, %d downloads (want 1)", changed, err, f.exports)
	}

	// A reload that drops the melting curve.
	next := testExport(t)
	next.CatalogVersion = "v2"
	next.Tables = next.Tables[:1]
	f.mu.Lock()
	f.export = next
	f.mu.Unlock()
	if changed, err := th.refreshNow(); err != nil || !changed {
		t.Fatalf("changed catalog: changed %v, err %v", changed, err)
	}
	cur := th.cur.Load()
	if cur.version != "v2" || cur.curves[thermo.Melting] != nil {
		t.Errorf("after refresh: version %q, melting curve present %v", cur.version, cur.curves[thermo.Melting] != nil)
	}

	f.mu.Lock()
	f.down = true
	f.mu.Unlock()
	changed, err := th.refreshNow()
	var ae *apiError
	if changed || err == nil || !asAPIError(err, &ae) || ae.code != codeServer {
		t.Errorf("server down: changed %v, err %v; want a server error", changed, err)
	}
	if th.cur.Load() != cur {
		t.Error("a failed refresh replaced the tables")
	}

	f.mu.Lock()
	f.down = false
	f.mu.Unlock()
	if _, err := fetch(c, "unobtainium"); err == nil || !asAPIError(err, &ae) || ae.code != codeInvalid {
		t.Errorf("unknown substance: %v; want an invalid-argument error naming the valid substances", err)
	}
}

func asAPIError(err error, ae **apiError) bool {
	e, ok := err.(*apiError)
	if ok {
		*ae = e
	}
	return ok
}
