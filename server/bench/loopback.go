package bench

import (
	"context"
	"fmt"
	"net"

	"google.golang.org/grpc"

	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
)

// Loopback is a server running in this process on a real TCP listener on
// 127.0.0.1, with the same message limits and interceptors as
// 'phasebound serve', so that the benchmark measures a real transport.
type Loopback struct {
	// Addr is the address listened on (127.0.0.1:port).
	Addr string
	// Server is the service behind the listener (for Reload in tests).
	Server *server.Server
	g      *grpc.Server
	lis    net.Listener
}

// StartLoopback compiles cat (starting its backends) and serves it on a
// free port of 127.0.0.1. Close releases everything.
func StartLoopback(ctx context.Context, cat *catalog.Catalog, opts server.Options) (*Loopback, error) {
	srv, err := server.New(ctx, cat, opts)
	if err != nil {
		return nil, err
	}
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		srv.Close()
		return nil, fmt.Errorf("bench: listen on loopback: %w", err)
	}
	g := grpc.NewServer(server.LimitOptions(server.LimitsConfig{MaxPointsPerRequest: opts.MaxPointsPerRequest})...)
	srv.Register(g)
	go g.Serve(lis) //nolint:errcheck // Serve returns when Close stops g
	return &Loopback{Addr: lis.Addr().String(), Server: srv, g: g, lis: lis}, nil
}

// Close stops the gRPC server and the backends.
func (l *Loopback) Close() {
	l.g.Stop()
	l.Server.Close()
}
