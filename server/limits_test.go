package server

import (
	"context"
	"strings"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

func TestLimitsPoints(t *testing.T) {
	t.Parallel()
	addr := startSecServer(t, &secService{}, LimitOptions(LimitsConfig{MaxPointsPerRequest: 100, MaxPointsPerMessage: 10})...)
	client := phaseboundpb.NewBoundaryServiceClient(secDial(t, addr, grpc.WithTransportCredentials(insecure.NewCredentials())))
	ctx := context.Background()

	tests := []struct {
		name string
		n    int
		want codes.Code
	}{
		{"empty", 0, codes.OK},
		{"at the limit", 100, codes.OK},
		{"one over", 101, codes.ResourceExhausted},
		{"far over", 100_000, codes.ResourceExhausted},
	}
	for _, tc := range tests {
		_, err := client.Evaluate(ctx, &phaseboundpb.EvaluateRequest{Values: make([]float64, tc.n)})
		if got := status.Code(err); got != tc.want {
			t.Errorf("Evaluate %s (%d points): code %v (%v), want %v", tc.name, tc.n, got, err, tc.want)
		}
		if tc.want == codes.ResourceExhausted && !strings.Contains(status.Convert(err).Message(), "limit of 100 per request") {
			t.Errorf("message %q does not name the limit", status.Convert(err).Message())
		}
		_, err = client.LocatePhase(ctx, &phaseboundpb.LocatePhaseRequest{TemperatureK: make([]float64, tc.n), PressurePa: make([]float64, tc.n)})
		if got := status.Code(err); tc.want == codes.ResourceExhausted && got != tc.want {
			t.Errorf("LocatePhase %s: code %v, want %v", tc.name, got, tc.want)
		}
	}
	// Echo counts copies against 8 × the limit: 10 values × 80 copies pass,
	// × 81 do not.
	if _, err := client.Echo(ctx, &phaseboundpb.EchoRequest{Values: make([]float64, 10), Copies: 80}); err != nil {
		t.Errorf("Echo 10 × 80: %v", err)
	}
	if _, err := client.Echo(ctx, &phaseboundpb.EchoRequest{Values: make([]float64, 10), Copies: 81}); status.Code(err) != codes.ResourceExhausted {
		t.Errorf("Echo 10 × 81: %v, want ResourceExhausted", err)
	}

	// Streams: chunks up to 10 points pass, an 11-point chunk ends the stream.
	st, err := client.EvaluateStream(ctx)
	if err != nil {
		t.Fatal(err)
	}
	for i, n := range []int{10, 3, 11} {
		if err := st.Send(&phaseboundpb.EvaluateStreamRequest{Request: &phaseboundpb.EvaluateRequest{Values: make([]float64, n)}}); err != nil {
			t.Fatal(err)
		}
		_, err := st.Recv()
		want := codes.OK
		if n > 10 {
			want = codes.ResourceExhausted
		}
		if status.Code(err) != want {
			t.Fatalf("chunk %d (%d points): %v, want %v", i, n, err, want)
		}
		if want != codes.OK && !strings.Contains(err.Error(), "stream message 2 has 11 points") {
			t.Errorf("message %q does not name the chunk", err)
		}
	}
}

func TestLimitsConcurrency(t *testing.T) {
	t.Parallel()
	svc := &secService{block: make(chan struct{}), entered: make(chan struct{}, 4)}
	lim := NewLimiter(LimitsConfig{MaxConcurrency: 1, MaxQueue: 1, QueueWait: time.Minute})
	addr := startSecServer(t, svc, lim.ServerOptions()...)
	cc := secDial(t, addr, grpc.WithTransportCredentials(insecure.NewCredentials()))
	client := phaseboundpb.NewBoundaryServiceClient(cc)
	req := &phaseboundpb.EvaluateRequest{Values: []float64{1}}

	// The first call takes the only slot and blocks in the handler.
	first := make(chan error, 1)
	go func() { _, err := client.Evaluate(context.Background(), req); first <- err }()
	<-svc.entered

	// The second waits in the queue until its deadline passes. The deadline
	// is generous so that the call reaches the queue even on a loaded
	// machine; the test then waits for the server to drop the waiter, so
	// the next steps never see a stale queue entry.
	second := make(chan error, 1)
	reached := false
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	go func() { _, err := client.Evaluate(ctx, req); second <- err }()
	var err error
	waitFor(t, func() bool {
		if lim.waiting.Load() == 1 {
			reached = true
		}
		select {
		case err = <-second:
			return true
		default:
			return false
		}
	})
	cancel()
	if st := status.Convert(err); st.Code() != codes.ResourceExhausted && st.Code() != codes.DeadlineExceeded {
		t.Errorf("queued call past its deadline: %v, want ResourceExhausted or DeadlineExceeded", err)
	}
	if !reached {
		t.Logf("the deadline passed before the second call was seen in the queue (loaded machine)")
	}
	waitFor(t, func() bool { return lim.waiting.Load() == 0 })

	// With one caller queued, a third is refused at once.
	queued := make(chan error, 1)
	go func() { _, err := client.Evaluate(context.Background(), req); queued <- err }()
	waitFor(t, func() bool { return lim.waiting.Load() == 1 })
	_, err = client.Evaluate(context.Background(), req)
	if st := status.Convert(err); st.Code() != codes.ResourceExhausted || !strings.Contains(st.Message(), "server busy") {
		t.Errorf("call beyond the queue: %v, want ResourceExhausted server busy", err)
	}

	// Health answers on a busy server.
	if _, err := healthpb.NewHealthClient(cc).Check(context.Background(), &healthpb.HealthCheckRequest{}); err != nil {
		t.Errorf("health on a busy server: %v", err)
	}

	// Releasing the handler lets both the first and the queued call finish.
	close(svc.block)
	if err := <-first; err != nil {
		t.Errorf("first call: %v", err)
	}
	if err := <-queued; err != nil {
		t.Errorf("queued call: %v", err)
	}
	if n := len(lim.slots); n != 0 {
		t.Errorf("%d slots still held after all calls returned", n)
	}
}

// waitFor polls cond for state set by another goroutine. The bound (60 s)
// only ends a broken run; a loaded machine merely makes the wait longer.
func waitFor(t *testing.T, cond func() bool) {
	t.Helper()
	for end := time.Now().Add(time.Minute); time.Now().Before(end); time.Sleep(5 * time.Millisecond) {
		if cond() {
			return
		}
	}
	if !cond() {
		t.Fatal("condition not reached within 60 s")
	}
}

func TestLimitsDeadlinePassed(t *testing.T) {
	t.Parallel()
	lim := NewLimiter(LimitsConfig{})
	called := false
	handler := func(context.Context, any) (any, error) { called = true; return nil, nil }
	ctx, cancel := context.WithDeadline(context.Background(), time.Now().Add(-time.Second))
	defer cancel()
	_, err := lim.UnaryInterceptor()(ctx, &phaseboundpb.EvaluateRequest{}, &grpc.UnaryServerInfo{FullMethod: "/phasebound.v1.BoundaryService/Evaluate"}, handler)
	if status.Code(err) != codes.DeadlineExceeded || called {
		t.Errorf("expired deadline: err %v, handler called %v; want DeadlineExceeded and no call", err, called)
	}
	ctx, cancel2 := context.WithCancel(context.Background())
	cancel2()
	_, err = lim.UnaryInterceptor()(ctx, &phaseboundpb.EvaluateRequest{}, &grpc.UnaryServerInfo{FullMethod: "/phasebound.v1.BoundaryService/Evaluate"}, handler)
	if status.Code(err) != codes.Canceled || called {
		t.Errorf("canceled call: err %v, handler called %v; want Canceled and no call", err, called)
	}
}

func TestLimitsDefaults(t *testing.T) {
	t.Parallel()
	c := NewLimiter(LimitsConfig{MaxConcurrency: 3}).Config()
	if c.MaxQueue != 12 || c.QueueWait != DefaultQueueWait || c.MaxMessageBytes != DefaultMaxMessageBytes ||
		c.MaxPointsPerRequest != DefaultMaxPointsPerRequest || c.MaxPointsPerMessage != DefaultMaxPointsPerMessage {
		t.Errorf("defaults not filled in: %+v", c)
	}
	if c := NewLimiter(LimitsConfig{MaxQueue: -1}).Config(); c.MaxQueue != 0 || c.MaxConcurrency <= 0 {
		t.Errorf("negative queue: %+v, want MaxQueue 0 and a positive concurrency", c)
	}
}

func TestLimitsMessageSize(t *testing.T) {
	t.Parallel()
	// 1 KiB messages: 200 points (≈1.6 KiB on the wire) are refused by gRPC
	// itself before any handler or allocation for the payload.
	addr := startSecServer(t, &secService{}, LimitOptions(LimitsConfig{MaxMessageBytes: 1024})...)
	client := phaseboundpb.NewBoundaryServiceClient(secDial(t, addr, grpc.WithTransportCredentials(insecure.NewCredentials())))
	if _, err := client.Evaluate(context.Background(), &phaseboundpb.EvaluateRequest{Values: make([]float64, 100)}); err != nil {
		t.Errorf("800-byte request: %v", err)
	}
	_, err := client.Evaluate(context.Background(), &phaseboundpb.EvaluateRequest{Values: make([]float64, 200)})
	if st := status.Convert(err); st.Code() != codes.ResourceExhausted || !strings.Contains(st.Message(), "larger than max") {
		t.Errorf("1.6 KiB request over a 1 KiB limit: %v, want ResourceExhausted", err)
	}
}
