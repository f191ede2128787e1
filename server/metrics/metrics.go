package metrics

import (
	"context"
	"errors"
	"log/slog"
	"net"
	"net/http"
	"strings"
	"sync"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"google.golang.org/grpc"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// maxUnlistedSubstances bounds how many distinct substance labels are kept
// before SetSubstances is called: a caller sending made-up ids must not
// grow the registry without bound.
const maxUnlistedSubstances = 64

// Metrics is a set of server metrics in its own registry (not the global
// Prometheus one, so tests and embedding programs stay independent).
// The zero value is not usable; call New.
type Metrics struct {
	reg *prometheus.Registry

	requests       *prometheus.CounterVec
	points         *prometheus.CounterVec
	pointFailures  *prometheus.CounterVec
	latency        *prometheus.HistogramVec
	errors         *prometheus.CounterVec
	inFlight       prometheus.Gauge
	pluginRestarts *prometheus.CounterVec
	tableBuild     *prometheus.GaugeVec
	tableError     *prometheus.GaugeVec
	reloads        *prometheus.CounterVec
	compile        prometheus.Gauge

	mu         sync.RWMutex
	substances map[string]bool // known ids; label values other than these become "other"
	listed     bool            // substances came from SetSubstances
}

// New returns a fresh set of metrics, with the Go runtime and process
// collectors registered beside them.
func New() *Metrics {
	m := &Metrics{
		reg:        prometheus.NewRegistry(),
		substances: map[string]bool{},
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "phasebound_requests_total",
			Help: "gRPC calls handled, by method, substance and status code.",
		}, []string{"method", "substance", "code"}),
		points: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "phasebound_points_total",
			Help: "Points requested (values of Evaluate, chunks of EvaluateStream, states of LocatePhase), by method and substance.",
		}, []string{"method", "substance"}),
		pointFailures: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "phasebound_point_failures_total",
			Help: "Points answered with a status other than OK or EXTRAPOLATED, by method and point status.",
		}, []string{"method", "status"}),
		latency: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name:    "phasebound_request_duration_seconds",
			Help:    "Time to handle a gRPC call (a stream: its whole life), by method.",
			Buckets: prometheus.ExponentialBuckets(25e-6, 4, 11), // 25 µs … 26 s
		}, []string{"method"}),
		errors: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "phasebound_errors_total",
			Help: "gRPC calls that ended with a status other than OK, by method and code.",
		}, []string{"method", "code"}),
		inFlight: prometheus.NewGauge(prometheus.GaugeOpts{
			Name: "phasebound_requests_in_flight",
			Help: "gRPC calls being handled now.",
		}),
		pluginRestarts: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "phasebound_plugin_restarts_total",
			Help: "Backend plugin processes restarted after they exited, failed or stopped answering, by backend.",
		}, []string{"backend"}),
		tableBuild: prometheus.NewGaugeVec(prometheus.GaugeOpts{
			Name: "phasebound_table_build_seconds",
			Help: "Time to compile the tables of one branch at the last catalog load.",
		}, []string{"substance", "curve", "branch"}),
		tableError: prometheus.NewGaugeVec(prometheus.GaugeOpts{
			Name: "phasebound_table_max_rel_error",
			Help: "Measured maximum relative error of a branch's tables against its backend on the dense check grid.",
		}, []string{"substance", "curve", "branch"}),
		compile: prometheus.NewGauge(prometheus.GaugeOpts{
			Name: "phasebound_catalog_compile_seconds",
			Help: "Time the last successful catalog load or reload took, backends and tables included.",
		}),
		reloads: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "phasebound_catalog_reloads_total",
			Help: "Catalog reloads (SIGHUP), by result (ok or failed).",
		}, []string{"result"}),
	}
	m.reg.MustRegister(m.requests, m.points, m.pointFailures, m.latency, m.errors, m.inFlight,
		m.pluginRestarts, m.tableBuild, m.tableError, m.reloads, m.compile,
		collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	return m
}

var defaultMetrics = New()

// Default returns the process-wide metrics that the package-level
// functions update and that phasebound serve exposes.
func Default() *Metrics { return defaultMetrics }

// Registry returns the registry holding m.
func (m *Metrics) Registry() *prometheus.Registry { return m.reg }

// Handler serves m in the Prometheus text format.
func (m *Metrics) Handler() http.Handler {
	return promhttp.HandlerFor(m.reg, promhttp.HandlerOpts{Registry: m.reg})
}

// SetSubstances names the catalog's substance ids; requests for any other
// id are counted under substance "other". Call it at every catalog load.
func (m *Metrics) SetSubstances(ids []string) {
	set := make(map[string]bool, len(ids))
	for _, id := range ids {
		set[id] = true
	}
	m.mu.Lock()
	m.substances, m.listed = set, true
	m.mu.Unlock()
}

// substanceLabel returns the label for a requested substance id.
func (m *Metrics) substanceLabel(id string) string {
	if id == "" {
		return ""
	}
	m.mu.RLock()
	known, listed, n := m.substances[id], m.listed, len(m.substances)
	m.mu.RUnlock()
	switch {
	case known:
		return id
	case listed || n >= maxUnlistedSubstances:
		return "other"
	}
	m.mu.Lock()
	if !m.listed && len(m.substances) < maxUnlistedSubstances {
		m.substances[id] = true
	}
	m.mu.Unlock()
	return id
}

// ObserveTable records the build time and measured error of one branch's
// tables.
func (m *Metrics) ObserveTable(substance, curve, branch string, seconds, maxRelErr float64) {
	m.tableBuild.WithLabelValues(substance, curve, branch).Set(seconds)
	m.tableError.WithLabelValues(substance, curve, branch).Set(maxRelErr)
}

// ObserveTableError records the measured error of one branch's tables
// (when the build time is not known).
func (m *Metrics) ObserveTableError(substance, curve, branch string, maxRelErr float64) {
	m.tableError.WithLabelValues(substance, curve, branch).Set(maxRelErr)
}

// ResetTables forgets the table gauges, before a reload records the new
// catalog's tables (so removed branches disappear).
func (m *Metrics) ResetTables() {
	m.tableBuild.Reset()
	m.tableError.Reset()
}

// ObserveCatalogCompile records how long the last successful catalog load
// or reload took, tables included.
func (m *Metrics) ObserveCatalogCompile(seconds float64) { m.compile.Set(seconds) }

// PluginRestarted counts one restart of the named backend.
func (m *Metrics) PluginRestarted(backend string) { m.pluginRestarts.WithLabelValues(backend).Inc() }

// CatalogReloaded counts one catalog reload; err nil counts it as ok.
func (m *Metrics) CatalogReloaded(err error) {
	if err != nil {
		m.reloads.WithLabelValues("failed").Inc()
		return
	}
	m.reloads.WithLabelValues("ok").Inc()
}

// ObserveTable records a branch's table build time and error in the
// default metrics.
func ObserveTable(substance, curve, branch string, seconds, maxRelErr float64) {
	defaultMetrics.ObserveTable(substance, curve, branch, seconds, maxRelErr)
}

// PluginRestarted counts one restart of the named backend in the default
// metrics; it fits a plugin host's restart callback.
func PluginRestarted(backend string) { defaultMetrics.PluginRestarted(backend) }

// SetSubstances names the catalog's substance ids in the default metrics.
func SetSubstances(ids []string) { defaultMetrics.SetSubstances(ids) }

// ServerOptions returns the interceptors that record calls in m. Put them
// first in the chain so refused calls (unauthenticated, over a limit) are
// counted too.
func (m *Metrics) ServerOptions() []grpc.ServerOption {
	return []grpc.ServerOption{
		grpc.ChainUnaryInterceptor(m.UnaryInterceptor()),
		grpc.ChainStreamInterceptor(m.StreamInterceptor()),
	}
}

// method shortens "/phasebound.v1.BoundaryService/Evaluate" to "Evaluate",
// and keeps the full name of other services' methods.
func method(full string) string {
	if rest, ok := strings.CutPrefix(full, "/phasebound.v1.BoundaryService/"); ok {
		return rest
	}
	return strings.TrimPrefix(full, "/")
}

// UnaryInterceptor records unary calls.
func (m *Metrics) UnaryInterceptor() grpc.UnaryServerInterceptor {
	return func(ctx context.Context, req any, info *grpc.UnaryServerInfo, handler grpc.UnaryHandler) (any, error) {
		start := time.Now()
		m.inFlight.Inc()
		resp, err := handler(ctx, req)
		m.inFlight.Dec()
		name := method(info.FullMethod)
		sub := m.substanceLabel(substanceOf(req))
		if n := pointsOf(req); n > 0 {
			m.points.WithLabelValues(name, sub).Add(float64(n))
		}
		m.countFailures(name, resp)
		m.finish(name, sub, start, err)
		return resp, err
	}
}

// StreamInterceptor records streams: one request per stream, the points of
// every received message.
func (m *Metrics) StreamInterceptor() grpc.StreamServerInterceptor {
	return func(srv any, ss grpc.ServerStream, info *grpc.StreamServerInfo, handler grpc.StreamHandler) error {
		start := time.Now()
		m.inFlight.Inc()
		w := &countingStream{ServerStream: ss, m: m, method: method(info.FullMethod)}
		err := handler(srv, w)
		m.inFlight.Dec()
		m.finish(w.method, w.substance, start, err)
		return err
	}
}

func (m *Metrics) finish(name, sub string, start time.Time, err error) {
	code := status.Code(err)
	m.latency.WithLabelValues(name).Observe(time.Since(start).Seconds())
	m.requests.WithLabelValues(name, sub, code.String()).Inc()
	if err != nil {
		m.errors.WithLabelValues(name, code.String()).Inc()
	}
}

// countFailures counts the failed points of a response.
func (m *Metrics) countFailures(name string, resp any) {
	var errs []*phaseboundpb.PointError
	switch r := resp.(type) {
	case *phaseboundpb.EvaluateResponse:
		errs = r.GetErrors()
	case *phaseboundpb.EvaluateStreamResponse:
		errs = r.GetResponse().GetErrors()
	case *phaseboundpb.LocatePhaseResponse:
		errs = r.GetErrors()
	}
	for _, e := range errs {
		if s := e.GetStatus(); s != phaseboundpb.PointStatus_POINT_STATUS_OK && s != phaseboundpb.PointStatus_POINT_STATUS_EXTRAPOLATED {
			m.pointFailures.WithLabelValues(name, strings.TrimPrefix(s.String(), "POINT_STATUS_")).Inc()
		}
	}
}

// countingStream counts the points of received messages and the failures
// of sent ones.
type countingStream struct {
	grpc.ServerStream
	m         *Metrics
	method    string
	substance string
}

// RecvMsg implements grpc.ServerStream.
func (s *countingStream) RecvMsg(msg any) error {
	err := s.ServerStream.RecvMsg(msg)
	if err == nil {
		if s.substance == "" {
			s.substance = s.m.substanceLabel(substanceOf(msg))
		}
		if n := pointsOf(msg); n > 0 {
			s.m.points.WithLabelValues(s.method, s.substance).Add(float64(n))
		}
	}
	return err
}

// SendMsg implements grpc.ServerStream.
func (s *countingStream) SendMsg(msg any) error {
	s.m.countFailures(s.method, msg)
	return s.ServerStream.SendMsg(msg)
}

func substanceOf(req any) string {
	switch r := req.(type) {
	case *phaseboundpb.EvaluateStreamRequest:
		return r.GetRequest().GetSubstance()
	case interface{ GetSubstance() string }:
		return r.GetSubstance()
	}
	return ""
}

func pointsOf(req any) int {
	switch r := req.(type) {
	case *phaseboundpb.EvaluateRequest:
		return len(r.GetValues())
	case *phaseboundpb.EvaluateStreamRequest:
		return len(r.GetRequest().GetValues())
	case *phaseboundpb.LocatePhaseRequest:
		return len(r.GetTemperatureK())
	case *phaseboundpb.EchoRequest:
		return len(r.GetValues())
	}
	return 0
}

// Serve serves m at http://addr/metrics until ctx ends, then shuts the
// listener down. It returns the bound address (useful with port 0) once
// listening, and reports a failure to listen at once. Serving errors after
// that are logged to logger (nil: discarded).
func (m *Metrics) Serve(ctx context.Context, addr string, logger *slog.Logger) (net.Addr, error) {
	lis, err := net.Listen("tcp", addr)
	if err != nil {
		return nil, err
	}
	mux := http.NewServeMux()
	mux.Handle("/metrics", m.Handler())
	mux.HandleFunc("/", func(w http.ResponseWriter, r *http.Request) {
		http.Error(w, "phasebound metrics are at /metrics", http.StatusNotFound)
	})
	hs := &http.Server{Handler: mux, ReadHeaderTimeout: 5 * time.Second, ReadTimeout: 10 * time.Second, WriteTimeout: 30 * time.Second}
	go func() {
		if err := hs.Serve(lis); err != nil && !errors.Is(err, http.ErrServerClosed) && logger != nil {
			logger.Error("metrics listener stopped", "addr", lis.Addr().String(), "err", err)
		}
	}()
	go func() {
		<-ctx.Done()
		sctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
		defer cancel()
		hs.Shutdown(sctx)
	}()
	return lis.Addr(), nil
}
