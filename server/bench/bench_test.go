package bench

import (
	"context"
	"io"
	"log/slog"
	"net"
	"os"
	"strconv"
	"sync"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/test/bufconn"

	"github.com/phasebound/phasebound/plugins/sdk"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// TestMain lets the test binary serve as the standard backends.
func TestMain(m *testing.M) {
	if len(os.Args) == 3 && os.Args[1] == "backend" {
		sdk.Serve(sdk.MustStandard(os.Args[2]))
		return
	}
	code := m.Run()
	if loop != nil {
		loop.Close() // stops the server, its backends and their socket folder
	}
	os.Exit(code)
}

var (
	loopOnce sync.Once
	loop     *Loopback
	loopCat  *catalog.Catalog
	loopErr  error
)

// loopback starts one loopback server on the default catalog for the
// whole test binary (compiling the tables takes a few seconds).
func loopback(tb testing.TB) (*Loopback, *catalog.Catalog, phaseboundpb.BoundaryServiceClient) {
	tb.Helper()
	loopOnce.Do(func() {
		loopCat, loopErr = catalog.Default()
		if loopErr != nil {
			return
		}
		log := slog.New(slog.NewTextHandler(io.Discard, nil))
		loop, loopErr = StartLoopback(context.Background(), loopCat, server.Options{Logger: log, HostConfig: sdk.HostConfig{Logger: log}})
	})
	if loopErr != nil {
		tb.Fatal(loopErr)
	}
	cc, err := grpc.NewClient(loop.Addr, grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(256<<20), grpc.MaxCallSendMsgSize(256<<20)))
	if err != nil {
		tb.Fatal(err)
	}
	tb.Cleanup(func() { cc.Close() })
	return loop, loopCat, phaseboundpb.NewBoundaryServiceClient(cc)
}

// TestRunShort runs the whole bench on a little data and checks what the
// report must hold whatever the timings: every figure present, the
// measured table error within the tolerance, the served values equal to
// the exported tables, goals computed from the figures.
func TestRunShort(t *testing.T) {
	_, cat, client := loopback(t)
	rep, err := Run(context.Background(), Config{Client: client, Catalog: cat, Points: 5000, Repeat: 2, Batch: 2000,
		Callers: 2, UnaryDuration: 50 * time.Millisecond})
	if err != nil {
		t.Fatal(err)
	}
	for name, v := range map[string]float64{
		"direct": rep.DirectNs, "table": rep.TableNs, "rpc": rep.RPCBatchNs, "echo": rep.EchoFloorNs,
		"exact": rep.ExactNs, "unary": rep.UnaryCPS, "echo unary": rep.EchoUnaryCPS,
		"latent table": rep.Latent.LatentTableNs, "latent rpc": rep.Latent.LatentRPCBatchNs,
	} {
		if !(v > 0) {
			t.Errorf("%s figure %g, want > 0", name, v)
		}
	}
	if !(rep.TableMaxRelError <= GoalTableError) || !rep.Goals.TableError.Met {
		t.Errorf("measured table error %g above %g", rep.TableMaxRelError, GoalTableError)
	}
	if !rep.RPCMatchesTable {
		t.Error("the server's table path differs from its exported tables")
	}
	if len(rep.Families) != len(DefaultCases()) || rep.Points != 5*5000 {
		t.Errorf("%d families, %d points", len(rep.Families), rep.Points)
	}
	for _, f := range rep.Families {
		// The exact path is the correlation in another process: the same
		// code, so it agrees with the in-process correlation closely.
		if !(f.ExactMaxRelDiff <= 1e-13) {
			t.Errorf("%s %s: exact path differs from the direct correlation by %g", f.Substance, f.Curve, f.ExactMaxRelDiff)
		}
	}
	if rep.Goals.RPCOverEcho.Value != rep.Ratios.RPCOverEcho || rep.Goals.RPCOverEcho.Met != (rep.Ratios.RPCOverEcho <= 1.3) {
		t.Errorf("goal rpc/echo inconsistent: %+v vs %g", rep.Goals.RPCOverEcho, rep.Ratios.RPCOverEcho)
	}
	if rep.Latent.Cases != 4 {
		t.Errorf("latent-heat cases %d, want 4 (water saturation, ice-Ih melting and sublimation, carbon-dioxide saturation)", rep.Latent.Cases)
	}
}

func TestRunRefusesBadCases(t *testing.T) {
	_, cat, client := loopback(t)
	for _, c := range []Case{
		{Substance: "unobtainium", Curve: thermo.Saturation},
		{Substance: "water", Curve: thermo.Melting, Branch: "ice-XX"},
	} {
		if _, err := Run(context.Background(), Config{Client: client, Catalog: cat, Cases: []Case{c}, Points: 1000, Repeat: 1}); err == nil {
			t.Errorf("%+v accepted", c)
		}
	}
	if _, err := Run(context.Background(), Config{}); err == nil {
		t.Error("empty config accepted")
	}
}

func TestSoakShort(t *testing.T) {
	_, _, client := loopback(t)
	rep, err := Soak(context.Background(), SoakConfig{Client: client, Duration: 500 * time.Millisecond, Callers: 2, Batch: 100, InProcess: true})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Calls < 6 || rep.Errors != 0 || rep.PointMismatches != 0 {
		t.Errorf("calls %d, errors %d (%s), mismatches %d", rep.Calls, rep.Errors, rep.FirstError, rep.PointMismatches)
	}
	for _, k := range []string{"batch", "latent_batch", "single", "exact_batch", "bad_point_batch", "echo"} {
		if rep.CallsByKind[k] == 0 {
			t.Errorf("no %s call", k)
		}
	}
	if rep.Start.Goroutines == 0 || rep.End.HeapBytes == 0 {
		t.Errorf("samples %+v %+v", rep.Start, rep.End)
	}
	if _, err := Soak(context.Background(), SoakConfig{Client: client, Duration: 2 * MaxSoak}); err == nil {
		t.Error("a soak beyond MaxSoak accepted")
	}
}

var (
	benchResp *phaseboundpb.EvaluateResponse
	benchEcho *phaseboundpb.EchoResponse
)

// bufconnClient serves the loopback server's service again over an
// in-memory connection (no kernel, no TCP).
func bufconnClient(b *testing.B) phaseboundpb.BoundaryServiceClient {
	lb, _, _ := loopback(b)
	lis := bufconn.Listen(4 << 20)
	g := grpc.NewServer(server.LimitOptions(server.LimitsConfig{})...)
	lb.Server.Register(g)
	go g.Serve(lis)
	cc, err := grpc.NewClient("passthrough:///bufconn",
		grpc.WithContextDialer(func(ctx context.Context, _ string) (net.Conn, error) { return lis.DialContext(ctx) }),
		grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(256<<20), grpc.MaxCallSendMsgSize(256<<20)))
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { cc.Close(); g.Stop() })
	return phaseboundpb.NewBoundaryServiceClient(cc)
}

// BenchmarkTransportBufconn is BenchmarkTransport's Evaluate against Echo
// over bufconn: the gRPC and protobuf costs without the kernel's.
func BenchmarkTransportBufconn(b *testing.B) {
	client := bufconnClient(b)
	ctx := context.Background()
	const n = 65536
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = 274 + 370*float64((i*389)%n)/float64(n)
	}
	req := &phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
		Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: xs}
	b.Run("evaluate/n=65536", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			r, err := client.Evaluate(ctx, req)
			if err != nil {
				b.Fatal(err)
			}
			benchResp = r
		}
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
	})
	b.Run("echo/n=65536", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			r, err := client.Echo(ctx, &phaseboundpb.EchoRequest{Values: xs, Copies: 3})
			if err != nil {
				b.Fatal(err)
			}
			benchEcho = r
		}
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
	})
}

// BenchmarkTransport measures one Evaluate batch (table path) and the Echo
// of the same payload, sized like Evaluate's response (three copies of the
// values: T, P and dP/dT), over a real loopback TCP connection: ns/point
// of the two is the rpc_batch / echo_floor ratio of 'phasebound bench'.
func BenchmarkTransport(b *testing.B) {
	_, _, client := loopback(b)
	ctx := context.Background()
	for _, n := range []int{1, 1024, 65536} {
		xs := make([]float64, n)
		for i := range xs {
			xs[i] = 274 + 370*float64((i*389)%n)/float64(n)
		}
		req := &phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
			Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: xs}
		lreq := &phaseboundpb.EvaluateRequest{Substance: "water", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
			Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: xs, IncludeLatentHeat: true}
		perPoint := func(b *testing.B) {
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/point")
		}
		b.Run("evaluate/n="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				r, err := client.Evaluate(ctx, req)
				if err != nil {
					b.Fatal(err)
				}
				benchResp = r
			}
			perPoint(b)
		})
		b.Run("echo/n="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				r, err := client.Echo(ctx, &phaseboundpb.EchoRequest{Values: xs, Copies: 3})
				if err != nil {
					b.Fatal(err)
				}
				benchEcho = r
			}
			perPoint(b)
		})
		b.Run("evaluate-latent/n="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				r, err := client.Evaluate(ctx, lreq)
				if err != nil {
					b.Fatal(err)
				}
				benchResp = r
			}
			perPoint(b)
		})
	}
}
