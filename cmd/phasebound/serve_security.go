package main

// Security, limits, metrics and SIGHUP reload for 'phasebound serve'.
//
// How cmd_serve.go uses this file:
//
//	sec := addServeSecurityFlags(cmd)             // when building the command
//	...
//	gopts, err := sec.grpcOptions(ctx, a, listen, log, &opts) // before server.New and grpc.NewServer
//	srv, err := server.New(ctx, cat, opts)
//	g := grpc.NewServer(gopts...)
//	srv.Register(g)
//	sec.afterStart(ctx, srv, a.loadCatalog, log)  // metrics labels, SIGHUP reloads
//
// --token-file, --tls-cert and --tls-key are the global flags (type app);
// this file adds --tls-client-ca, --insecure, --metrics-listen, --max-points
// --max-concurrency and --health-listen to serve.

import (
	"context"
	"fmt"
	"log/slog"
	"net"
	"net/netip"
	"os"
	"os/signal"
	"syscall"

	"github.com/spf13/cobra"
	"google.golang.org/grpc"

	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/server/metrics"
)

// serveSecurity holds the serve command's security, limit and metrics
// flags, and the credentials built from them.
type serveSecurity struct {
	clientCA       string // --tls-client-ca
	insecure       bool   // --insecure
	metricsListen  string // --metrics-listen; "" is off
	maxPoints      int    // --max-points
	maxConcurrency int    // --max-concurrency
	healthListen   string // --health-listen; "" is off

	sec       *server.Security
	healthLis net.Listener // bound by grpcOptions, served by afterStart
}

// addServeSecurityFlags adds the security, limit and metrics flags to the
// serve command.
func addServeSecurityFlags(cmd *cobra.Command) *serveSecurity {
	f := &serveSecurity{}
	fl := cmd.Flags()
	fl.StringVar(&f.clientCA, "tls-client-ca", "", "CA bundle (PEM) that signs client certificates: require mutual TLS (needs --tls-cert and --tls-key)")
	fl.BoolVar(&f.insecure, "insecure", false, "allow listening on a non-loopback address without TLS and without a token (prints a warning)")
	fl.StringVar(&f.metricsListen, "metrics-listen", "", "serve Prometheus metrics at http://HOST:PORT/metrics (e.g. 127.0.0.1:9464); default: off")
	fl.IntVar(&f.maxPoints, "max-points", server.DefaultMaxPointsPerRequest, "maximum points in one request; larger requests get ResourceExhausted (use a stream)")
	fl.IntVar(&f.maxConcurrency, "max-concurrency", 0, "calls served at once, beyond which calls queue briefly and then get ResourceExhausted; 0: 4 per CPU")
	fl.StringVar(&f.healthListen, "health-listen", "", "also serve only the gRPC health service, plain-text and without token, on HOST:PORT (for probes that cannot do TLS, such as Kubernetes grpc probes); default: off")
	return f
}

// grpcOptions checks the flags against the listen address, builds the gRPC
// server options (metrics, then authentication, then limits, so refused
// calls are counted and strangers never reach the limits), sets the point
// limit and the plugin-restart counter in opts, and starts the metrics
// listener, which stops when ctx ends.
func (f *serveSecurity) grpcOptions(ctx context.Context, a *app, listen string, log *slog.Logger, opts *server.Options) ([]grpc.ServerOption, error) {
	if f.maxPoints < 0 {
		return nil, fmt.Errorf("--max-points %d: must be positive (0: the default %d)", f.maxPoints, server.DefaultMaxPointsPerRequest)
	}
	if f.maxConcurrency < 0 {
		return nil, fmt.Errorf("--max-concurrency %d: must be positive (0: 4 per CPU)", f.maxConcurrency)
	}
	sec, err := server.NewSecurity(server.SecurityConfig{
		TokenFile: a.tokenFile, TLSCert: a.tlsCert, TLSKey: a.tlsKey, TLSClientCA: f.clientCA, Logger: log,
	})
	if err != nil {
		return nil, err
	}
	if err := checkExposure(listen, sec, f.insecure, log); err != nil {
		return nil, err
	}
	f.sec = sec

	maxPoints := f.maxPoints
	if maxPoints == 0 {
		maxPoints = server.DefaultMaxPointsPerRequest
	}
	lim := server.NewLimiter(server.LimitsConfig{
		MaxConcurrency:      f.maxConcurrency,
		MaxPointsPerRequest: maxPoints,
		MaxPointsPerMessage: min(maxPoints, server.DefaultMaxPointsPerMessage),
	})
	if opts != nil {
		opts.MaxPointsPerRequest = maxPoints
		if prev := opts.HostConfig.OnRestart; prev != nil {
			opts.HostConfig.OnRestart = func(b string) { prev(b); metrics.PluginRestarted(b) }
		} else {
			opts.HostConfig.OnRestart = metrics.PluginRestarted
		}
	}

	m := metrics.Default()
	gopts := m.ServerOptions()
	gopts = append(gopts, sec.ServerOptions()...)
	gopts = append(gopts, lim.ServerOptions()...)

	if f.metricsListen != "" {
		addr, err := m.Serve(ctx, f.metricsListen, log)
		if err != nil {
			return nil, fmt.Errorf("--metrics-listen %s: %w", f.metricsListen, err)
		}
		log.Info("metrics listening", "url", "http://"+addr.String()+"/metrics")
	}
	if f.healthListen != "" {
		lis, err := net.Listen("tcp", f.healthListen)
		if err != nil {
			return nil, fmt.Errorf("--health-listen %s: %w", f.healthListen, err)
		}
		f.healthLis = lis
	}
	log.Info("security", "tls", sec.TLS(), "mutual_tls", sec.MutualTLS(), "token", sec.TokenRequired(),
		"max_points", maxPoints, "max_concurrency", lim.Config().MaxConcurrency)
	return gopts, nil
}

// checkExposure refuses to listen beyond loopback with neither TLS nor a
// token unless insecure is set, and warns about what is still exposed.
func checkExposure(listen string, sec *server.Security, insecure bool, log *slog.Logger) error {
	if isLoopbackListen(listen) {
		return nil
	}
	switch {
	case !sec.TLS() && !sec.TokenRequired() && !insecure:
		return fmt.Errorf("refusing to listen on %s (not loopback) without TLS or a bearer token: "+
			"pass --tls-cert and --tls-key, and/or --token-file, or --insecure to serve anyone who can reach the port", listen)
	case !sec.TLS() && !sec.TokenRequired():
		log.Warn("INSECURE: serving plain-text, unauthenticated gRPC beyond loopback (--insecure); anyone who can reach the port can call it", "listen", listen)
	case !sec.TLS():
		log.Warn("the bearer token travels in clear text beyond loopback; add --tls-cert and --tls-key (phasebound clients send the token without TLS only to loopback)", "listen", listen)
	}
	return nil
}

// isLoopbackListen reports whether a listen address binds loopback only:
// "localhost:P", "127.x.y.z:P" or "[::1]:P". An empty host binds every
// interface; other host names count as not loopback.
func isLoopbackListen(listen string) bool {
	host, _, err := net.SplitHostPort(listen)
	if err != nil {
		return false
	}
	if host == "localhost" {
		return true
	}
	ip, err := netip.ParseAddr(host)
	return err == nil && ip.Unmap().IsLoopback()
}

// afterStart names the catalog's substances in the metrics, serves the
// health-only listener when --health-listen is set and, until ctx ends,
// reloads on SIGHUP: the catalog through srv.ReloadFrom (a bad
// catalog keeps the served one, and the log says why), then the token file
// and the TLS certificate (a bad one keeps those in use).
func (f *serveSecurity) afterStart(ctx context.Context, srv *server.Server, load func() (*catalog.Catalog, error), log *slog.Logger) {
	srv.RecordMetrics(ctx, metrics.Default())
	if f.healthLis != nil {
		hg := grpc.NewServer()
		srv.RegisterHealth(hg)
		go hg.Serve(f.healthLis)
		context.AfterFunc(ctx, hg.Stop)
		log.Info("health listening (plain-text, health service only)", "addr", f.healthLis.Addr().String())
	}
	hup := make(chan os.Signal, 1)
	signal.Notify(hup, syscall.SIGHUP)
	go func() {
		defer signal.Stop(hup)
		for {
			select {
			case <-ctx.Done():
				return
			case <-hup:
				f.reload(ctx, srv, load, log)
			}
		}
	}()
}

// reload is what one SIGHUP does.
func (f *serveSecurity) reload(ctx context.Context, srv *server.Server, load func() (*catalog.Catalog, error), log *slog.Logger) {
	log.Info("SIGHUP: reloading the catalog and credentials")
	changed, err := srv.ReloadFrom(ctx, load)
	switch {
	case err != nil:
		log.Error("catalog reload refused; the served catalog is unchanged", "err", err)
	case !changed:
		log.Info("catalog unchanged", "version", srv.CatalogVersion())
	}
	if f.sec != nil {
		if err := f.sec.Reload(); err != nil {
			log.Error("credential reload refused; the token and certificate in use are unchanged", "err", err)
		} else if f.sec.TLS() || f.sec.TokenRequired() {
			log.Info("credentials reloaded", "tls", f.sec.TLS(), "token", f.sec.TokenRequired())
		}
	}
}
