package server

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"sync"
	"sync/atomic"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/health"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	"google.golang.org/grpc/reflection"

	"github.com/phasebound/phasebound/plugins/sdk"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
)

// ServiceName is the full name of the gRPC service, as health checks and
// reflection know it.
const ServiceName = "phasebound.v1.BoundaryService"

// Defaults applied when the corresponding Options field is zero.
const (
	// DefaultTableTolerance is the largest relative error a compiled table
	// may show against its backend on the dense check grid.
	DefaultTableTolerance = 1e-11
	// MaxTableError is the largest measured table error the server accepts
	// at all: a catalog whose tables cannot reach it fails to load.
	MaxTableError = 1e-10
	// DefaultMaxPoints bounds the points of one request.
	DefaultMaxPoints = 10_000_000
)

// Options configure a Server. The zero value of every field means the
// documented default.
type Options struct {
	// Logger receives structured logs; nil means slog.Default().
	Logger *slog.Logger
	// HostConfig configures the plugin host that runs the backends.
	HostConfig sdk.HostConfig
	// TableTolerance is the relative error compiled tables must reach
	// against their backend; 0 means DefaultTableTolerance. Values above
	// MaxTableError are refused.
	TableTolerance float64
	// MaxPointsPerRequest bounds the points of one Evaluate or LocatePhase
	// request (and of one EvaluateStream chunk); 0 means DefaultMaxPoints.
	// Larger requests fail with ResourceExhausted.
	MaxPointsPerRequest int
}

// Server serves the BoundaryService. Create it with New, attach it to a
// grpc.Server with Register, replace its catalog with Reload and release
// its backends with Close. Authentication, rate limits and metrics are not
// its business: they are grpc.ServerOptions (interceptors, credentials) of
// the grpc.Server the caller builds and passes to Register.
type Server struct {
	phaseboundpb.UnimplementedBoundaryServiceServer

	opts   Options
	log    *slog.Logger
	host   *sdk.Host
	health *health.Server

	snap atomic.Pointer[snapshot]

	mu      sync.Mutex // guards started and closed
	started map[string]*backendStart
	closed  bool
}

// New starts the backends the catalog names, compiles every branch of every
// curve into tables by sampling its backend, checks each table's measured
// error against the tolerance and returns a Server ready to Register. It
// fails, naming the substance, curve and branch, when a backend does not
// start or a table cannot reach the tolerance.
func New(ctx context.Context, cat *catalog.Catalog, opts Options) (*Server, error) {
	if cat == nil {
		return nil, errors.New("server: nil catalog")
	}
	if opts.Logger == nil {
		opts.Logger = slog.Default()
	}
	if opts.TableTolerance == 0 {
		opts.TableTolerance = DefaultTableTolerance
	}
	if opts.TableTolerance < 0 || opts.TableTolerance > MaxTableError {
		return nil, fmt.Errorf("server: table tolerance %g outside (0, %g]", opts.TableTolerance, MaxTableError)
	}
	if opts.MaxPointsPerRequest <= 0 {
		opts.MaxPointsPerRequest = DefaultMaxPoints
	}
	s := &Server{
		opts:    opts,
		log:     opts.Logger,
		host:    sdk.NewHost(opts.HostConfig),
		health:  health.NewServer(),
		started: map[string]*backendStart{},
	}
	s.health.SetServingStatus(ServiceName, healthpb.HealthCheckResponse_NOT_SERVING)
	snap, err := s.compile(ctx, cat)
	if err != nil {
		s.host.Close()
		return nil, err
	}
	s.snap.Store(snap)
	s.health.SetServingStatus("", healthpb.HealthCheckResponse_SERVING)
	s.health.SetServingStatus(ServiceName, healthpb.HealthCheckResponse_SERVING)
	return s, nil
}

// Register registers the BoundaryService, the gRPC health service
// (grpc.health.v1, with a status for "" and for ServiceName) and server
// reflection on g.
func (s *Server) Register(g *grpc.Server) {
	phaseboundpb.RegisterBoundaryServiceServer(g, s)
	healthpb.RegisterHealthServer(g, s.health)
	reflection.Register(g)
}

// Reload compiles cat and, when that succeeds, swaps it in atomically:
// calls already running finish on the catalog they started with, later
// calls see the new one. On error the served catalog is unchanged.
func (s *Server) Reload(ctx context.Context, cat *catalog.Catalog) error {
	if cat == nil {
		return errors.New("server: nil catalog")
	}
	snap, err := s.compile(ctx, cat)
	if err != nil {
		return err
	}
	old := s.snap.Swap(snap)
	s.log.Info("catalog reloaded", "source", cat.Source, "version", cat.Version, "previous", old.version)
	return nil
}

// CatalogVersion returns the version of the catalog being served.
func (s *Server) CatalogVersion() string { return s.snap.Load().version }

// Shutdown marks the server NOT_SERVING in the health service, so that
// load balancers stop sending new calls; call it before
// grpc.Server.GracefulStop.
func (s *Server) Shutdown() { s.health.Shutdown() }

// Close marks the server NOT_SERVING and stops the backends. Call it after
// the grpc.Server has stopped.
func (s *Server) Close() {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.closed {
		return
	}
	s.closed = true
	s.health.Shutdown()
	s.host.Close()
}

// backendStart records one backend start; done closes when it finished.
type backendStart struct {
	spec sdk.BackendSpec
	done chan struct{}
	err  error
}

// startBackend starts spec unless it runs already (or is starting: then it
// waits for that start). Different backends start concurrently.
func (s *Server) startBackend(ctx context.Context, spec sdk.BackendSpec) error {
	s.mu.Lock()
	if s.closed {
		s.mu.Unlock()
		return errors.New("server: closed")
	}
	if st, ok := s.started[spec.Name]; ok && st.spec == spec {
		s.mu.Unlock()
		select {
		case <-st.done:
		case <-ctx.Done():
			return ctx.Err()
		}
		return st.err
	}
	// New, or a changed executable (a reload that pins another build of a
	// third-party backend): the host replaces a running backend of the
	// same name once the new one runs.
	st := &backendStart{spec: spec, done: make(chan struct{})}
	s.started[spec.Name] = st
	s.mu.Unlock()

	t0 := time.Now()
	st.err = s.host.Start(ctx, spec)
	if st.err != nil {
		st.err = fmt.Errorf("server: start backend %q: %w", spec.Name, st.err)
		s.mu.Lock()
		delete(s.started, spec.Name) // a later reload may try again
		s.mu.Unlock()
	} else {
		s.log.Info("backend started", "backend", spec.Name, "path", spec.Path, "elapsed", time.Since(t0).Round(time.Millisecond))
	}
	close(st.done)
	return st.err
}
