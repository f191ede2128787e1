package goclient_test

import (
	"context"
	"fmt"
	"log/slog"
	"net"
	"os"
	"sync"
	"testing"

	"google.golang.org/grpc"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/test/bufconn"

	"github.com/phasebound/phasebound/clients/goclient"
	"github.com/phasebound/phasebound/plugins/sdk"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
)

// TestMain lets the test binary serve as the standard backends, which the
// in-process server's plugin host starts by re-executing it.
func TestMain(m *testing.M) {
	if len(os.Args) == 3 && os.Args[1] == "backend" {
		sdk.Serve(sdk.MustStandard(os.Args[2]))
		return
	}
	code := m.Run()
	if srv != nil {
		srv.Close()
	}
	os.Exit(code)
}

var (
	once sync.Once
	srv  *server.Server
	g    *grpc.Server
	lis  *bufconn.Listener
)

// startServer starts one server on the embedded default catalog for all
// tests and examples of this package, reachable over bufconn (in memory)
// and, when tcp is set, on a loopback port whose address it returns.
func startServer() {
	once.Do(func() {
		cat, err := catalog.Default()
		if err != nil {
			panic(err)
		}
		log := slog.New(slog.NewTextHandler(os.Stderr, &slog.HandlerOptions{Level: slog.LevelWarn}))
		srv, err = server.New(context.Background(), cat, server.Options{Logger: log, HostConfig: sdk.HostConfig{Logger: log}})
		if err != nil {
			panic(err)
		}
		lis = bufconn.Listen(1 << 20)
		g = grpc.NewServer(grpc.MaxRecvMsgSize(goclient.MaxMessageBytes), grpc.MaxSendMsgSize(goclient.MaxMessageBytes))
		srv.Register(g)
		go g.Serve(lis)
	})
}

// inMemoryClient returns a client of the shared server over bufconn.
func inMemoryClient() *goclient.Client {
	startServer()
	cc, err := grpc.NewClient("passthrough:///bufnet",
		grpc.WithContextDialer(func(ctx context.Context, _ string) (net.Conn, error) { return lis.DialContext(ctx) }),
		grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(goclient.MaxMessageBytes), grpc.MaxCallSendMsgSize(goclient.MaxMessageBytes)))
	if err != nil {
		panic(err)
	}
	return goclient.New(cc)
}

// tcpAddress serves the shared server on a fresh loopback port as well and
// returns its address.
func tcpAddress() string {
	startServer()
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		panic(fmt.Sprint("listen: ", err))
	}
	go g.Serve(l)
	return l.Addr().String()
}

func dial(target string) (*goclient.Client, error) {
	return goclient.Dial(context.Background(), target, goclient.Options{})
}
