package server

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats/scalar"
	"google.golang.org/grpc"

	"github.com/phasebound/phasebound/clients/goclient"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// Scale-out: three stateless replicas on loopback, one goclient over the
// address list (round-robin, retry on UNAVAILABLE), one replica stopped in
// the middle of a large batch. No point may be lost or wrong.

// scaleT0, scaleP0 and scaleDH are the invented Clausius–Clapeyron curve the
// replicas serve (see reloadCatalog).
const (
	scaleT0  = 200.0
	scaleP0  = 1000.0
	scaleDH  = 20000.0
	scaleTol = 1e-9 // relative; the tables are built to 1e-11
)

// scaleWant is the exact curve: ln(P/P0) = −(ΔH/R)(1/T − 1/T0).
func scaleWant(t float64) float64 {
	return scaleP0 * math.Exp(-scaleDH/thermo.R*(1/t-1/scaleT0))
}

// replica is one server process stand-in: its own Server (own backend
// processes and tables), gRPC server and loopback listener.
type replica struct {
	srv    *Server
	g      *grpc.Server
	addr   string
	chunks atomic.Int64 // EvaluateStream messages received
	unary  atomic.Int64 // Evaluate calls handled
	onRecv func(r *replica, n int64)
}

func startReplicas(t *testing.T, n int) []*replica {
	t.Helper()
	cat, err := catalog.Parse("scale.toml", []byte(reloadCatalog("scaleium", scaleDH, "")))
	if err != nil {
		t.Fatal(err)
	}
	log := slog.New(slog.NewTextHandler(io.Discard, nil))
	reps := make([]*replica, n)
	for i := range reps {
		s, err := New(context.Background(), cat, Options{Logger: log})
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(s.Close)
		r := &replica{srv: s}
		lis, err := net.Listen("tcp", "127.0.0.1:0")
		if err != nil {
			t.Fatal(err)
		}
		r.addr = lis.Addr().String()
		r.g = grpc.NewServer(
			grpc.MaxRecvMsgSize(DefaultMaxMessageBytes), grpc.MaxSendMsgSize(DefaultMaxMessageBytes),
			grpc.ChainUnaryInterceptor(func(ctx context.Context, req any, info *grpc.UnaryServerInfo, h grpc.UnaryHandler) (any, error) {
				if strings.HasSuffix(info.FullMethod, "/Evaluate") {
					r.unary.Add(1)
				}
				return h(ctx, req)
			}),
			grpc.ChainStreamInterceptor(func(srv any, ss grpc.ServerStream, info *grpc.StreamServerInfo, h grpc.StreamHandler) error {
				return h(srv, &countingRecv{ServerStream: ss, r: r})
			}))
		s.Register(r.g)
		go r.g.Serve(lis)
		t.Cleanup(r.g.Stop)
		reps[i] = r
	}
	return reps
}

// countingRecv counts the messages a replica receives on its streams and
// calls the replica's onRecv hook after each.
type countingRecv struct {
	grpc.ServerStream
	r *replica
}

func (c *countingRecv) RecvMsg(m any) error {
	err := c.ServerStream.RecvMsg(m)
	if err == nil {
		n := c.r.chunks.Add(1)
		if c.r.onRecv != nil {
			c.r.onRecv(c.r, n)
		}
	}
	return err
}

func addrList(reps []*replica) string {
	var a []string
	for _, r := range reps {
		a = append(a, r.addr)
	}
	return strings.Join(a, ",")
}

// checkBatch checks that resp answers every temperature of ts, in order,
// with the exact curve's pressure.
func checkBatch(t *testing.T, what string, ts []float64, resp *phaseboundpb.EvaluateResponse) {
	t.Helper()
	if len(resp.GetPressurePa()) != len(ts) || len(resp.GetStatus()) != len(ts) {
		t.Fatalf("%s: %d pressures and %d statuses for %d points", what, len(resp.GetPressurePa()), len(resp.GetStatus()), len(ts))
	}
	bad := 0
	for i, tk := range ts {
		p, want := resp.GetPressurePa()[i], scaleWant(tk)
		if resp.GetStatus()[i] != phaseboundpb.PointStatus_POINT_STATUS_OK || !scalar.EqualWithinAbsOrRel(p, want, 0, scaleTol) {
			if bad < 5 {
				t.Errorf("%s: point %d (T = %g K): status %v, P = %g Pa, want %g Pa", what, i, tk, resp.GetStatus()[i], p, want)
			}
			bad++
		}
	}
	if bad > 0 {
		t.Errorf("%s: %d of %d points missing or wrong", what, bad, len(ts))
	}
}

func scaleTemperatures(n int) []float64 {
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = 200 + 200*float64(i)/float64(n-1) // the curve's whole range, 200–400 K
	}
	return ts
}

// TestScaleOutStreamSurvivesReplicaStop stops the replica serving a
// streamed batch (EvaluateAll in chunks) after a tenth of its chunks.
func TestScaleOutStreamSurvivesReplicaStop(t *testing.T) {
	if testing.Short() {
		t.Skip("starts three servers with their backends")
	}
	reps := startReplicas(t, 3)
	const points, chunk = 400_000, 4_000 // 100 chunks
	var stopped atomic.Pointer[replica]
	for _, r := range reps {
		r.onRecv = func(r *replica, n int64) {
			if n == points/chunk/10 && stopped.CompareAndSwap(nil, r) {
				go r.g.Stop() // as a crashed or killed replica: connections close, in-flight calls fail
			}
		}
	}
	c, err := goclient.Dial(context.Background(), addrList(reps), goclient.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	c.ChunkPoints = chunk
	ts := scaleTemperatures(points)
	ctx, cancel := context.WithTimeout(context.Background(), 50*time.Second)
	defer cancel()
	resp, err := c.EvaluateAll(ctx, &phaseboundpb.EvaluateRequest{Substance: "scaleium", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
		Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: ts})
	if stopped.Load() == nil {
		t.Fatal("no replica was stopped: the test did not test anything")
	}
	if err != nil {
		t.Fatalf("batch across a replica stop: %v", err)
	}
	checkBatch(t, "streamed batch", ts, resp)
	var served []string
	for i, r := range reps {
		served = append(served, fmt.Sprintf("replica %d: %d chunks", i, r.chunks.Load()))
	}
	t.Logf("%s (replica stopped after %d chunks)", strings.Join(served, ", "), points/chunk/10)
}

// TestScaleOutUnarySurvivesReplicaStop sends a large batch as many unary
// chunks from several goroutines and stops one replica half-way; the retry
// policy must move the failed calls to the others.
func TestScaleOutUnarySurvivesReplicaStop(t *testing.T) {
	if testing.Short() {
		t.Skip("starts three servers with their backends")
	}
	reps := startReplicas(t, 3)
	c, err := goclient.Dial(context.Background(), addrList(reps), goclient.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	const calls, per, workers = 400, 1000, 4
	ts := scaleTemperatures(calls * per)
	results := make([]*phaseboundpb.EvaluateResponse, calls)
	errs := make([]error, calls)
	next := atomic.Int64{}
	var done atomic.Int64
	var wg sync.WaitGroup
	ctx, cancel := context.WithTimeout(context.Background(), 50*time.Second)
	defer cancel()
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1) - 1)
				if i >= calls {
					return
				}
				if i == calls/2 {
					reps[1].g.Stop()
				}
				results[i], errs[i] = c.Evaluate(ctx, &phaseboundpb.EvaluateRequest{Substance: "scaleium",
					Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION, Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE,
					Values: ts[i*per : (i+1)*per]})
				done.Add(1)
			}
		}()
	}
	wg.Wait()
	failed := 0
	for i, err := range errs {
		if err != nil {
			if failed < 5 {
				t.Errorf("call %d: %v", i, err)
			}
			failed++
			continue
		}
		checkBatch(t, fmt.Sprintf("call %d", i), ts[i*per:(i+1)*per], results[i])
	}
	if failed > 0 {
		t.Errorf("%d of %d calls failed across the replica stop", failed, calls)
	}
	var served []string
	for i, r := range reps {
		served = append(served, fmt.Sprintf("replica %d: %d calls", i, r.unary.Load()))
	}
	if reps[0].unary.Load() == 0 || reps[2].unary.Load() == 0 {
		t.Errorf("calls were not balanced over the surviving replicas: %s", strings.Join(served, ", "))
	}
	t.Log(strings.Join(served, ", "))
}
