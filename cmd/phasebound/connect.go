package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"strings"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"
	"google.golang.org/grpc/test/bufconn"

	"github.com/phasebound/phasebound/clients/goclient"
	"github.com/phasebound/phasebound/plugins/sdk"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
)

// loadCatalog reads --catalog, or the embedded default catalog.
func (a *app) loadCatalog() (*catalog.Catalog, error) {
	if a.catalogPath != "" {
		return catalog.Load(a.catalogPath)
	}
	return catalog.Default()
}

// connect returns a client of the service: dialled at --server when given
// (with --token-file and the --tls-* flags), otherwise a server started in
// this process on --catalog (or the embedded default), with real backend
// processes, reached over an in-memory connection. The returned function
// releases everything; call it when done.
func (a *app) connect(ctx context.Context) (*goclient.Client, func(), error) {
	if a.servers != "" {
		c, err := goclient.Dial(ctx, a.servers, goclient.Options{
			TokenFile: a.tokenFile, TLSCA: a.tlsCA, TLSCert: a.tlsCert, TLSKey: a.tlsKey,
		})
		if err != nil {
			return nil, nil, err
		}
		return c, func() { c.Close() }, nil
	}
	cat, err := a.loadCatalog()
	if err != nil {
		return nil, nil, err
	}
	// Only warnings and errors of the in-process server reach stderr.
	log := slog.New(slog.NewTextHandler(a.stderr, &slog.HandlerOptions{Level: slog.LevelWarn}))
	srv, err := server.New(ctx, cat, server.Options{Logger: log, HostConfig: sdk.HostConfig{Logger: log}})
	if err != nil {
		return nil, nil, err
	}
	lis := bufconn.Listen(1 << 20)
	g := grpc.NewServer(grpc.MaxRecvMsgSize(goclient.MaxMessageBytes), grpc.MaxSendMsgSize(goclient.MaxMessageBytes))
	srv.Register(g)
	go g.Serve(lis)
	cc, err := grpc.NewClient("passthrough:///in-process",
		grpc.WithContextDialer(func(ctx context.Context, _ string) (net.Conn, error) { return lis.DialContext(ctx) }),
		grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(goclient.MaxMessageBytes), grpc.MaxCallSendMsgSize(goclient.MaxMessageBytes)))
	if err != nil {
		g.Stop()
		srv.Close()
		return nil, nil, err
	}
	return goclient.New(cc), func() {
		cc.Close()
		g.Stop()
		srv.Close()
	}, nil
}

// rpcError turns a gRPC status into one readable line: the server's own
// message (which names the problem and the valid choices or range), with
// the code only where it adds something.
func (a *app) rpcError(err error) error {
	if err == nil {
		return nil
	}
	st, ok := status.FromError(err)
	if !ok {
		return err
	}
	msg := st.Message()
	switch st.Code() {
	case codes.InvalidArgument, codes.OutOfRange, codes.NotFound:
		return errors.New(msg)
	case codes.Unavailable:
		where := a.servers
		if where == "" {
			where = "the in-process server"
		}
		return fmt.Errorf("cannot reach %s: %s", where, msg)
	case codes.Unauthenticated, codes.PermissionDenied:
		return fmt.Errorf("%s (check --token-file and the --tls-* flags)", msg)
	case codes.ResourceExhausted:
		return fmt.Errorf("server refused the request: %s", msg)
	case codes.DeadlineExceeded, codes.Canceled:
		return fmt.Errorf("request %s: %s", strings.ToLower(st.Code().String()), msg)
	}
	return fmt.Errorf("server error (%s): %s", st.Code(), msg)
}
