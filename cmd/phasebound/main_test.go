package main

import (
	"context"
	"log/slog"
	"net"
	"os"
	"sync"
	"testing"

	"google.golang.org/grpc"

	"github.com/phasebound/phasebound/clients/goclient"
	"github.com/phasebound/phasebound/plugins/sdk"
	"github.com/phasebound/phasebound/server"
	"github.com/phasebound/phasebound/server/catalog"
)

// TestMain lets the test binary stand in for the phasebound binary when the
// in-process server's plugin host re-executes it as a backend
// ("backend NAME").
func TestMain(m *testing.M) {
	if len(os.Args) > 1 && os.Args[1] == "backend" {
		os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
	}
	code := m.Run()
	if sharedSrv != nil {
		sharedSrv.Close() // stops the backends and removes their socket folder
	}
	os.Exit(code)
}

var (
	sharedOnce sync.Once
	sharedAddr string
	sharedErr  error
	sharedSrv  *server.Server
)

// sharedServer serves the embedded default catalog on a loopback port for
// the tests that query through --server, so that they need not start
// their own backends; the in-process path of connect is covered by the
// tests that run without --server.
func sharedServer(t *testing.T) string {
	t.Helper()
	sharedOnce.Do(func() {
		cat, err := catalog.Default()
		if err != nil {
			sharedErr = err
			return
		}
		log := slog.New(slog.NewTextHandler(os.Stderr, &slog.HandlerOptions{Level: slog.LevelWarn}))
		srv, err := server.New(context.Background(), cat, server.Options{Logger: log, HostConfig: sdk.HostConfig{Logger: log}})
		if err != nil {
			sharedErr = err
			return
		}
		sharedSrv = srv
		lis, err := net.Listen("tcp", "127.0.0.1:0")
		if err != nil {
			sharedErr = err
			return
		}
		g := grpc.NewServer(grpc.MaxRecvMsgSize(goclient.MaxMessageBytes), grpc.MaxSendMsgSize(goclient.MaxMessageBytes))
		srv.Register(g)
		go g.Serve(lis)
		sharedAddr = lis.Addr().String()
	})
	if sharedErr != nil {
		t.Fatalf("shared server: %v", sharedErr)
	}
	return sharedAddr
}
