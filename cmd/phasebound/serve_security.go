package main

// Security, limits, metrics, a health-only listener and SIGHUP reload for
// 'phasebound serve', plugged into cmd_serve.go through a serveHook:
//
//   - Flags adds --tls-client-ca, --metrics-listen, --max-points,
//     --max-concurrency and --health-listen (--token-file, --tls-cert and
//     --tls-key are the global flags of type app; --insecure is serve's own);
//   - Options builds the credentials and interceptors (metrics, then
//     authentication, then limits), sets the point limit and the
//     plugin-restart counter in the server options, and starts the metrics
//     listener;
//   - Started names the catalog's substances in the metrics, serves the
//     health-only listener and reloads on SIGHUP.

import (
	"context"
	"fmt"
	"log/slog"
	"net"
	"net/netip"
	"os"
	"os/signal"
	"sync"
	"syscall"

	"github.com/spf13/pflag"
	"google.golang.org/grpc"

	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/server/metrics"
)

// serveSecurity holds the serve command's security, limit and metrics
// flags, and the credentials built from them.
type serveSecurity struct {
	clientCA       string // --tls-client-ca
	metricsListen  string // --metrics-listen; "" is off
	maxPoints      int    // --max-points
	maxConcurrency int    // --max-concurrency
	healthListen   string // --health-listen; "" is off

	sec       *server.Security
	healthLis net.Listener // bound by grpcOptions, served by afterStart
}

func init() {
	registerServeHook(serveHook{
		Flags: func(fs *pflag.FlagSet) {
			// Every run builds a fresh serve command (even runs of other
			// commands do); each gets its own flag storage, so concurrent
			// runs in tests never share it.
			f := &serveSecurity{}
			f.addFlags(fs)
			serveSecurityMu.Lock()
			serveSecurityLast = f
			serveSecurityMu.Unlock()
		},
		Options: func(ctx context.Context, env *serveEnv) ([]grpc.ServerOption, bool, error) {
			f := currentServeSecurity()
			opts, err := f.grpcOptions(ctx, env.App, env.Listen, env.Log, env.ServerOptions)
			if err != nil {
				return nil, false, err
			}
			return opts, f.sec.TLS() || f.sec.TokenRequired(), nil
		},
		Started: func(ctx context.Context, env *serveEnv) (func(), error) {
			return currentServeSecurity().afterStart(ctx, env.Server, env.LoadCatalog, env.Log), nil
		},
	})
}

// serveSecurityLast is the flag storage of the serve command built last:
// the one being run, since a process runs one command at a time.
var (
	serveSecurityMu   sync.Mutex
	serveSecurityLast *serveSecurity
)

func currentServeSecurity() *serveSecurity {
	serveSecurityMu.Lock()
	defer serveSecurityMu.Unlock()
	return serveSecurityLast
}

// addFlags adds the security, limit and metrics flags to the serve command.
func (f *serveSecurity) addFlags(fl *pflag.FlagSet) {
	fl.StringVar(&f.clientCA, "tls-client-ca", "", "CA bundle (PEM) that signs client certificates: require mutual TLS (needs --tls-cert and --tls-key)")
	fl.StringVar(&f.metricsListen, "metrics-listen", "", "serve Prometheus metrics at http://HOST:PORT/metrics (e.g. 127.0.0.1:9464); default: off")
	fl.IntVar(&f.maxPoints, "max-points", server.DefaultMaxPointsPerRequest, "maximum points in one request; larger requests get ResourceExhausted (use a stream)")
	fl.IntVar(&f.maxConcurrency, "max-concurrency", 0, "calls served at once, beyond which calls queue briefly and then get ResourceExhausted; 0: 4 per CPU")
	fl.StringVar(&f.healthListen, "health-listen", "", "also serve only the gRPC health service, plain-text and without token, on HOST:PORT (for probes that cannot do TLS, such as Kubernetes grpc probes); default: off")
}

// grpcOptions builds the gRPC server options (metrics, then
// authentication, then limits, so refused calls are counted and strangers
// never reach the limits), sets the point limit and the plugin-restart
// counter in opts, binds the health-only listener and starts the metrics
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
	warnExposure(listen, sec, log)
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

// warnExposure warns when the bearer token would travel in clear text
// beyond loopback. (cmd_serve.go itself refuses a non-loopback address
// with neither TLS nor a token unless --insecure is given.)
func warnExposure(listen string, sec *server.Security, log *slog.Logger) {
	if !isLoopbackListen(listen) && sec.TokenRequired() && !sec.TLS() {
		log.Warn("the bearer token travels in clear text beyond loopback; add --tls-cert and --tls-key (phasebound clients send the token without TLS only to loopback)", "listen", listen)
	}
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
// health-only listener when --health-listen is set and reloads on SIGHUP:
// the catalog through srv.ReloadFrom (a bad catalog keeps the served one,
// and the log says why), then the token file and the TLS certificate (a
// bad one keeps those in use). The returned function stops both.
func (f *serveSecurity) afterStart(ctx context.Context, srv *server.Server, load func() (*catalog.Catalog, error), log *slog.Logger) (stop func()) {
	srv.RecordMetrics(ctx, metrics.Default())
	var hg *grpc.Server
	if f.healthLis != nil {
		hg = grpc.NewServer()
		srv.RegisterHealth(hg)
		go hg.Serve(f.healthLis)
		log.Info("health listening (plain-text, health service only)", "addr", f.healthLis.Addr().String())
	}
	hup := make(chan os.Signal, 1)
	signal.Notify(hup, syscall.SIGHUP)
	done := make(chan struct{})
	go func() {
		for {
			select {
			case <-ctx.Done():
				return
			case <-done:
				return
			case <-hup:
				f.reload(ctx, srv, load, log)
			}
		}
	}()
	return func() {
		signal.Stop(hup)
		close(done)
		if hg != nil {
			hg.Stop()
		}
	}
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
