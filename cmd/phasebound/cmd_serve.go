package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"strings"
	"time"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"
	"google.golang.org/grpc"

	"github.com/phasebound/phasebound/clients/goclient"
	"github.com/phasebound/phasebound/plugins/sdk"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
)

func init() { register(newServeCmd) }

// serveEnv is what serve hands to its hooks.
type serveEnv struct {
	App    *app
	Log    *slog.Logger
	Listen string // the --listen address as given
	// ServerOptions are passed to server.New; Options hooks may change
	// them (point limit, plugin-restart callback).
	ServerOptions *server.Options
	// LoadCatalog reads the catalog serve was started with (again), for
	// reloads.
	LoadCatalog func() (*catalog.Catalog, error)
	// Server and GRPC are set once the server is built (for Started).
	Server *server.Server
	GRPC   *grpc.Server
	Addr   net.Addr // the address actually listened on
}

// serveHook extends serve from another file of this command, so that
// security (TLS, tokens), metrics and reload-on-signal live in their own
// files. Every field is optional.
type serveHook struct {
	// Flags adds flags to the serve command.
	Flags func(fs *pflag.FlagSet)
	// Options returns gRPC server options (credentials, interceptors). It
	// reports secure when they authenticate callers (TLS or a token),
	// which lets serve listen beyond loopback without --insecure.
	Options func(ctx context.Context, env *serveEnv) (opts []grpc.ServerOption, secure bool, err error)
	// Started runs once the server is serving; the function it returns
	// runs at shutdown, before the gRPC server stops.
	Started func(ctx context.Context, env *serveEnv) (stop func(), err error)
}

var serveHooks []serveHook

// registerServeHook adds a hook; call it from an init function.
func registerServeHook(h serveHook) { serveHooks = append(serveHooks, h) }

// DefaultListen is the address serve listens on by default: loopback only.
const DefaultListen = "127.0.0.1:50051"

func newServeCmd(a *app) *cobra.Command {
	var listen string
	var insecureOK bool
	var drain time.Duration
	var logLevel string
	cmd := &cobra.Command{
		Use:   "serve",
		Short: "Serve the BoundaryService over gRPC (health and reflection included)",
		Long: `serve loads the catalog (--catalog, or the embedded default), starts the
backends, compiles every curve into verified tables and serves
phasebound.v1.BoundaryService with gRPC health (grpc.health.v1) and server
reflection on --listen (default ` + DefaultListen + `, loopback only).

A listen address other than loopback needs TLS or a bearer token, or
--insecure to serve plain text anyway. SIGTERM or SIGINT mark the server
NOT_SERVING, drain calls in flight for up to --drain-timeout, and stop.

CAUTION: every curve is served within its catalog validity range and with
its stated uncertainty; results are not a substitute for design codes.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return a.serve(cmd.Context(), listen, insecureOK, drain, logLevel)
		},
	}
	f := cmd.Flags()
	f.StringVar(&listen, "listen", DefaultListen, "address HOST:PORT to listen on (port 0 picks a free port)")
	f.BoolVar(&insecureOK, "insecure", false, "allow a non-loopback listen address without TLS or a token")
	f.DurationVar(&drain, "drain-timeout", 10*time.Second, "how long SIGTERM waits for calls in flight before stopping")
	f.StringVar(&logLevel, "log-level", "info", "log level: debug, info, warn, error")
	for _, h := range serveHooks {
		if h.Flags != nil {
			h.Flags(f)
		}
	}
	return cmd
}

func parseLevel(s string) (slog.Level, error) {
	var l slog.Level
	if err := l.UnmarshalText([]byte(s)); err != nil {
		return 0, fmt.Errorf("--log-level %q (valid: debug, info, warn, error)", s)
	}
	return l, nil
}

// isLoopback reports whether a listen host only accepts local connections.
func isLoopback(host string) bool {
	if strings.EqualFold(host, "localhost") {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

func (a *app) serve(ctx context.Context, listen string, insecureOK bool, drain time.Duration, logLevel string) error {
	level, err := parseLevel(logLevel)
	if err != nil {
		return err
	}
	log := slog.New(slog.NewTextHandler(a.stderr, &slog.HandlerOptions{Level: level}))
	host, _, err := net.SplitHostPort(listen)
	if err != nil {
		return fmt.Errorf("--listen %q is not HOST:PORT (e.g. %s)", listen, DefaultListen)
	}
	if drain <= 0 {
		return fmt.Errorf("--drain-timeout %v must be positive", drain)
	}
	sopts := server.Options{Logger: log, HostConfig: sdk.HostConfig{Logger: log}}
	env := &serveEnv{App: a, Log: log, Listen: listen, LoadCatalog: a.loadCatalog, ServerOptions: &sopts}

	opts := []grpc.ServerOption{
		grpc.MaxRecvMsgSize(goclient.MaxMessageBytes),
		grpc.MaxSendMsgSize(goclient.MaxMessageBytes),
	}
	secure := false
	for _, h := range serveHooks {
		if h.Options == nil {
			continue
		}
		o, sec, err := h.Options(ctx, env)
		if err != nil {
			return err
		}
		opts = append(opts, o...)
		secure = secure || sec
	}
	if !isLoopback(host) && !secure {
		if !insecureOK {
			return fmt.Errorf("refusing to listen on %s without TLS or a token: any host that reaches it could query the server; "+
				"use a loopback address (%s), give --tls-cert/--tls-key or --token-file, or pass --insecure", listen, DefaultListen)
		}
		log.Warn("serving plain-text gRPC without authentication beyond loopback (--insecure)", "listen", listen)
	}

	cat, err := a.loadCatalog()
	if err != nil {
		return err
	}
	srv, err := server.New(ctx, cat, sopts)
	if err != nil {
		return err
	}
	defer srv.Close()
	env.Server = srv

	g := grpc.NewServer(opts...)
	srv.Register(g)
	env.GRPC = g
	lis, err := net.Listen("tcp", listen)
	if err != nil {
		return fmt.Errorf("listen on %s: %w", listen, err)
	}
	env.Addr = lis.Addr()

	var stops []func()
	defer func() {
		for i := len(stops) - 1; i >= 0; i-- {
			stops[i]()
		}
	}()
	for _, h := range serveHooks {
		if h.Started == nil {
			continue
		}
		stop, err := h.Started(ctx, env)
		if err != nil {
			lis.Close()
			return err
		}
		if stop != nil {
			stops = append(stops, stop)
		}
	}

	served := make(chan error, 1)
	go func() { served <- g.Serve(lis) }()
	log.Info("serving", "service", server.ServiceName, "addr", lis.Addr().String(),
		"catalog", cat.Source, "catalog_version", cat.Version, "substances", len(cat.Substances))
	fmt.Fprintf(a.stdout, "phasebound serving on %s\n", lis.Addr())

	select {
	case err := <-served:
		if err != nil && !errors.Is(err, grpc.ErrServerStopped) {
			return fmt.Errorf("serve: %w", err)
		}
		return nil
	case <-ctx.Done():
	}
	log.Info("shutting down: health NOT_SERVING, draining calls in flight", "drain_timeout", drain)
	srv.Shutdown()
	for i := len(stops) - 1; i >= 0; i-- {
		stops[i]()
	}
	stops = nil
	done := make(chan struct{})
	go func() {
		g.GracefulStop()
		close(done)
	}()
	select {
	case <-done:
		log.Info("stopped cleanly")
	case <-time.After(drain):
		log.Warn("drain timeout: stopping with calls still in flight", "drain_timeout", drain)
		g.Stop()
		<-done
	}
	return nil
}
