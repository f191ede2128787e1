package server

import (
	"context"
	"runtime"
	"sync/atomic"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// Default limits; each applies when its LimitsConfig field is zero.
const (
	// DefaultMaxMessageBytes bounds one received or sent gRPC message
	// (256 MiB): room for a 10-million-point Evaluate response, far above
	// gRPC's 4 MiB default that large batches would otherwise hit.
	DefaultMaxMessageBytes = 256 << 20
	// DefaultMaxPointsPerMessage bounds the points of one EvaluateStream
	// chunk (and of a LocatePhase or Echo request).
	DefaultMaxPointsPerMessage = 1_000_000
	// DefaultMaxPointsPerRequest bounds the points of one unary request.
	DefaultMaxPointsPerRequest = 10_000_000
	// DefaultQueueWait bounds how long a call waits for a free slot when it
	// has no deadline of its own.
	DefaultQueueWait = 5 * time.Second
)

// LimitsConfig bounds what one caller can make the server do. Its zero
// value gives the documented defaults.
type LimitsConfig struct {
	// MaxConcurrency is the number of calls served at once (a stream holds
	// one slot for its whole life); 0 means 4 × GOMAXPROCS.
	MaxConcurrency int
	// MaxQueue is the number of calls that may wait for a slot; beyond it
	// calls are refused at once with ResourceExhausted. 0 means
	// 4 × MaxConcurrency; negative means no waiting at all.
	MaxQueue int
	// QueueWait bounds the wait for a slot; the call's own deadline bounds
	// it too. 0 means DefaultQueueWait.
	QueueWait time.Duration
	// MaxMessageBytes bounds one received or sent message; 0 means
	// DefaultMaxMessageBytes.
	MaxMessageBytes int
	// MaxPointsPerRequest bounds the points of one unary Evaluate or
	// LocatePhase request; 0 means DefaultMaxPointsPerRequest. Keep it equal
	// to the server's Options.MaxPointsPerRequest.
	MaxPointsPerRequest int
	// MaxPointsPerMessage bounds the points of one EvaluateStream chunk;
	// 0 means DefaultMaxPointsPerMessage.
	MaxPointsPerMessage int
}

func (c LimitsConfig) withDefaults() LimitsConfig {
	if c.MaxConcurrency <= 0 {
		c.MaxConcurrency = 4 * runtime.GOMAXPROCS(0)
	}
	switch {
	case c.MaxQueue == 0:
		c.MaxQueue = 4 * c.MaxConcurrency
	case c.MaxQueue < 0:
		c.MaxQueue = 0
	}
	if c.QueueWait <= 0 {
		c.QueueWait = DefaultQueueWait
	}
	if c.MaxMessageBytes <= 0 {
		c.MaxMessageBytes = DefaultMaxMessageBytes
	}
	if c.MaxPointsPerRequest <= 0 {
		c.MaxPointsPerRequest = DefaultMaxPointsPerRequest
	}
	if c.MaxPointsPerMessage <= 0 {
		c.MaxPointsPerMessage = DefaultMaxPointsPerMessage
	}
	return c
}

// Limiter enforces a LimitsConfig through gRPC interceptors: it refuses
// calls whose deadline has already passed (DeadlineExceeded), requests with
// too many points (ResourceExhausted, naming the limit), and calls beyond
// the concurrency bound once the wait queue is full or the wait would
// outlast the deadline (ResourceExhausted). The gRPC health service is
// exempt so that probes still answer on a busy server.
type Limiter struct {
	cfg     LimitsConfig
	slots   chan struct{}
	waiting atomic.Int64
}

// NewLimiter returns a Limiter for cfg (zero fields take their defaults).
func NewLimiter(cfg LimitsConfig) *Limiter {
	cfg = cfg.withDefaults()
	return &Limiter{cfg: cfg, slots: make(chan struct{}, cfg.MaxConcurrency)}
}

// Config returns the limits in force, defaults filled in.
func (l *Limiter) Config() LimitsConfig { return l.cfg }

// LimitOptions returns the gRPC server options that enforce cfg: message
// size bounds and the interceptors of NewLimiter(cfg).
func LimitOptions(cfg LimitsConfig) []grpc.ServerOption { return NewLimiter(cfg).ServerOptions() }

// ServerOptions returns the message size bounds and the limiting
// interceptors.
func (l *Limiter) ServerOptions() []grpc.ServerOption {
	return []grpc.ServerOption{
		grpc.MaxRecvMsgSize(l.cfg.MaxMessageBytes),
		grpc.MaxSendMsgSize(l.cfg.MaxMessageBytes),
		grpc.ChainUnaryInterceptor(l.UnaryInterceptor()),
		grpc.ChainStreamInterceptor(l.StreamInterceptor()),
	}
}

// UnaryInterceptor enforces deadlines, point counts and concurrency on
// unary calls.
func (l *Limiter) UnaryInterceptor() grpc.UnaryServerInterceptor {
	return func(ctx context.Context, req any, info *grpc.UnaryServerInfo, handler grpc.UnaryHandler) (any, error) {
		if authExempt(info.FullMethod) {
			return handler(ctx, req)
		}
		if err := deadlinePassed(ctx); err != nil {
			return nil, err
		}
		limit := l.cfg.MaxPointsPerRequest
		if _, ok := req.(*phaseboundpb.EchoRequest); ok {
			// An echo returns bare doubles; an Evaluate response carries
			// about eight numbers per point. Same bytes, same bound.
			limit *= 8
		}
		if n := requestPoints(req); n > limit {
			return nil, status.Errorf(codes.ResourceExhausted,
				"request has %d points, more than the server's limit of %d per request (--max-points): split it, or use EvaluateStream in chunks of at most %d points",
				n, limit, l.cfg.MaxPointsPerMessage)
		}
		release, err := l.acquire(ctx)
		if err != nil {
			return nil, err
		}
		defer release()
		return handler(ctx, req)
	}
}

// StreamInterceptor enforces deadlines and concurrency on streams, and the
// per-message point bound on each received message.
func (l *Limiter) StreamInterceptor() grpc.StreamServerInterceptor {
	return func(srv any, ss grpc.ServerStream, info *grpc.StreamServerInfo, handler grpc.StreamHandler) error {
		if authExempt(info.FullMethod) {
			return handler(srv, ss)
		}
		if err := deadlinePassed(ss.Context()); err != nil {
			return err
		}
		release, err := l.acquire(ss.Context())
		if err != nil {
			return err
		}
		defer release()
		return handler(srv, &limitedStream{ServerStream: ss, max: l.cfg.MaxPointsPerMessage})
	}
}

// acquire takes a concurrency slot, waiting in a bounded queue for at most
// QueueWait or until the call's deadline.
func (l *Limiter) acquire(ctx context.Context) (func(), error) {
	release := func() { <-l.slots }
	select {
	case l.slots <- struct{}{}:
		return release, nil
	default:
	}
	if n := l.waiting.Add(1); n > int64(l.cfg.MaxQueue) {
		l.waiting.Add(-1)
		return nil, status.Errorf(codes.ResourceExhausted,
			"server busy: all %d call slots taken and %d callers waiting (--max-concurrency %d); retry later or on another replica",
			l.cfg.MaxConcurrency, l.cfg.MaxQueue, l.cfg.MaxConcurrency)
	}
	defer l.waiting.Add(-1)
	wait := l.cfg.QueueWait
	if d, ok := ctx.Deadline(); ok && time.Until(d) < wait {
		wait = time.Until(d)
	}
	t := time.NewTimer(wait)
	defer t.Stop()
	select {
	case l.slots <- struct{}{}:
		return release, nil
	case <-t.C:
		return nil, status.Errorf(codes.ResourceExhausted,
			"server busy: no free call slot within %v (all %d taken, --max-concurrency %d); retry later or on another replica",
			wait.Round(time.Millisecond), l.cfg.MaxConcurrency, l.cfg.MaxConcurrency)
	case <-ctx.Done():
		if ctx.Err() == context.DeadlineExceeded {
			return nil, status.Errorf(codes.ResourceExhausted,
				"server busy: the call's deadline passed while waiting for a free slot (--max-concurrency %d)", l.cfg.MaxConcurrency)
		}
		return nil, status.FromContextError(ctx.Err()).Err()
	}
}

// deadlinePassed refuses a call whose deadline is already over, so no work
// is started for a caller that has given up.
func deadlinePassed(ctx context.Context) error {
	if d, ok := ctx.Deadline(); ok && !time.Now().Before(d) {
		return status.Errorf(codes.DeadlineExceeded, "deadline passed %v before the call started", time.Since(d).Round(time.Microsecond))
	}
	if ctx.Err() == context.Canceled {
		return status.Error(codes.Canceled, "call canceled before it started")
	}
	return nil
}

// limitedStream checks the point count of every received message.
type limitedStream struct {
	grpc.ServerStream
	max int
	seq int
}

// RecvMsg implements grpc.ServerStream.
func (s *limitedStream) RecvMsg(m any) error {
	if err := s.ServerStream.RecvMsg(m); err != nil {
		return err
	}
	if n := requestPoints(m); n > s.max {
		return status.Errorf(codes.ResourceExhausted,
			"stream message %d has %d points, more than the server's limit of %d per message: send smaller chunks",
			s.seq, n, s.max)
	}
	s.seq++
	return nil
}

// requestPoints counts the points a request asks for (0 for requests
// without points).
func requestPoints(req any) int {
	switch r := req.(type) {
	case *phaseboundpb.EvaluateRequest:
		return len(r.GetValues())
	case *phaseboundpb.EvaluateStreamRequest:
		return len(r.GetRequest().GetValues())
	case *phaseboundpb.LocatePhaseRequest:
		return max(len(r.GetTemperatureK()), len(r.GetPressurePa()))
	case *phaseboundpb.EchoRequest:
		// An echo answers copies × len(values) doubles.
		return len(r.GetValues()) * max(1, int(r.GetCopies()))
	}
	return 0
}
