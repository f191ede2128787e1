package main

import (
	"bytes"
	"context"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"io"
	"log/slog"
	"math/big"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/spf13/cobra"
	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/metadata"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server"
)

func TestIsLoopbackListen(t *testing.T) {
	t.Parallel()
	tests := []struct {
		listen string
		want   bool
	}{
		{"127.0.0.1:50051", true},
		{"127.1.2.3:1", true},
		{"localhost:50051", true},
		{"[::1]:50051", true},
		{":50051", false},
		{"0.0.0.0:50051", false},
		{"[::]:50051", false},
		{"10.1.2.3:50051", false},
		{"phasebound.example:50051", false},
		{"no-port", false},
	}
	for _, tc := range tests {
		if got := isLoopbackListen(tc.listen); got != tc.want {
			t.Errorf("isLoopbackListen(%q) = %v, want %v", tc.listen, got, tc.want)
		}
	}
}

// selfSigned writes a self-signed ECDSA certificate for 127.0.0.1 and its
// key in dir.
func selfSigned(t *testing.T, dir string) (certFile, keyFile string) {
	t.Helper()
	k, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	tmpl := &x509.Certificate{SerialNumber: big.NewInt(1), Subject: pkix.Name{CommonName: "serve test"},
		NotBefore: time.Now().Add(-time.Hour), NotAfter: time.Now().Add(time.Hour),
		IPAddresses: []net.IP{net.ParseIP("127.0.0.1")}, ExtKeyUsage: []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth}}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, tmpl, &k.PublicKey, k)
	if err != nil {
		t.Fatal(err)
	}
	kder, _ := x509.MarshalECPrivateKey(k)
	certFile, keyFile = filepath.Join(dir, "cert.pem"), filepath.Join(dir, "key.pem")
	os.WriteFile(certFile, pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der}), 0o600)
	os.WriteFile(keyFile, pem.EncodeToMemory(&pem.Block{Type: "EC PRIVATE KEY", Bytes: kder}), 0o600)
	return certFile, keyFile
}

func TestWarnExposure(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	tok := filepath.Join(dir, "token")
	os.WriteFile(tok, []byte("t0ken\n"), 0o600)
	cert, key := selfSigned(t, dir)
	mk := func(cfg server.SecurityConfig) *server.Security {
		s, err := server.NewSecurity(cfg)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	token, both := mk(server.SecurityConfig{TokenFile: tok}), mk(server.SecurityConfig{TokenFile: tok, TLSCert: cert, TLSKey: key})
	tests := []struct {
		name   string
		listen string
		sec    *server.Security
		warn   bool
	}{
		{"token on loopback", "127.0.0.1:50051", token, false},
		{"token beyond loopback without TLS", "0.0.0.0:50051", token, true},
		{"token and TLS beyond loopback", "0.0.0.0:50051", both, false},
	}
	for _, tc := range tests {
		var logs bytes.Buffer
		warnExposure(tc.listen, tc.sec, slog.New(slog.NewTextHandler(&logs, nil)))
		if got := strings.Contains(logs.String(), "clear text"); got != tc.warn {
			t.Errorf("%s: warned %v, want %v (log %q)", tc.name, got, tc.warn, logs.String())
		}
	}
}

// TestServeRefusesOpenNonLoopback runs the serve command: beyond loopback
// without TLS or a token it must refuse before loading anything.
func TestServeRefusesOpenNonLoopback(t *testing.T) {
	var stdout, stderr bytes.Buffer
	code := run([]string{"serve", "--listen", "0.0.0.0:0"}, strings.NewReader(""), &stdout, &stderr)
	if code == 0 || !strings.Contains(stderr.String(), "refusing to listen on 0.0.0.0:0") {
		t.Errorf("exit %d, stderr %q; want non-zero and a refusal", code, stderr.String())
	}
	// The same with a client CA but no certificate: a clear flag error.
	stderr.Reset()
	code = run([]string{"serve", "--tls-client-ca", "ca.pem"}, strings.NewReader(""), &stdout, &stderr)
	if code == 0 || !strings.Contains(stderr.String(), "needs --tls-cert") {
		t.Errorf("--tls-client-ca alone: exit %d, stderr %q", code, stderr.String())
	}
}

// serveEcho is a stand-in BoundaryService for the wiring test.
type serveEcho struct {
	phaseboundpb.UnimplementedBoundaryServiceServer
}

func (serveEcho) Echo(_ context.Context, r *phaseboundpb.EchoRequest) (*phaseboundpb.EchoResponse, error) {
	return &phaseboundpb.EchoResponse{Values: r.GetValues()}, nil
}

func (serveEcho) Evaluate(_ context.Context, r *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	return &phaseboundpb.EvaluateResponse{PressurePa: r.GetValues()}, nil
}

// TestServeOptionsWiring parses the serve flags as the command line would,
// builds the gRPC options and checks that the token, the point limit and the
// metrics listener all take effect.
func TestServeOptionsWiring(t *testing.T) {
	dir := t.TempDir()
	tok := filepath.Join(dir, "token")
	os.WriteFile(tok, []byte("wired-token\n"), 0o600)
	cmd := &cobra.Command{Use: "serve"}
	f := &serveSecurity{}
	f.addFlags(cmd.Flags())
	if err := cmd.ParseFlags([]string{"--max-points", "50", "--max-concurrency", "2", "--metrics-listen", "127.0.0.1:0"}); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var logs bytes.Buffer
	log := slog.New(slog.NewTextHandler(&logs, nil))
	var opts server.Options
	gopts, err := f.grpcOptions(ctx, &app{tokenFile: tok}, "127.0.0.1:0", log, &opts)
	if err != nil {
		t.Fatal(err)
	}
	if opts.MaxPointsPerRequest != 50 || opts.HostConfig.OnRestart == nil {
		t.Errorf("server options: max points %d, OnRestart set %v; want 50, true", opts.MaxPointsPerRequest, opts.HostConfig.OnRestart != nil)
	}
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	g := grpc.NewServer(gopts...)
	phaseboundpb.RegisterBoundaryServiceServer(g, serveEcho{})
	go g.Serve(lis)
	defer g.Stop()
	cc, err := grpc.NewClient(lis.Addr().String(), grpc.WithTransportCredentials(insecure.NewCredentials()))
	if err != nil {
		t.Fatal(err)
	}
	defer cc.Close()
	c := phaseboundpb.NewBoundaryServiceClient(cc)
	authed := metadata.AppendToOutgoingContext(ctx, "authorization", "Bearer wired-token")

	if _, err := c.Evaluate(ctx, &phaseboundpb.EvaluateRequest{Substance: "wired", Values: []float64{1}}); status.Code(err) != codes.Unauthenticated {
		t.Errorf("no token: %v, want Unauthenticated", err)
	}
	if _, err := c.Evaluate(authed, &phaseboundpb.EvaluateRequest{Substance: "wired", Values: make([]float64, 51)}); status.Code(err) != codes.ResourceExhausted {
		t.Errorf("51 points over --max-points 50: %v, want ResourceExhausted", err)
	}
	if _, err := c.Evaluate(authed, &phaseboundpb.EvaluateRequest{Substance: "wired", Values: make([]float64, 50)}); err != nil {
		t.Errorf("50 points: %v", err)
	}

	// The metrics listener's address is in the log.
	_, url, ok := strings.Cut(logs.String(), "url=")
	if !ok {
		t.Fatalf("no metrics url in the log: %s", logs.String())
	}
	url = strings.Fields(url)[0]
	resp, err := http.Get(url)
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	for _, want := range []string{
		`phasebound_requests_total{code="Unauthenticated",method="Evaluate",substance="wired"} 1`,
		`phasebound_requests_total{code="ResourceExhausted",method="Evaluate",substance="wired"} 1`,
		`phasebound_requests_total{code="OK",method="Evaluate",substance="wired"} 1`,
		`phasebound_points_total{method="Evaluate",substance="wired"} 102`,
	} {
		if !strings.Contains(string(body), want) {
			t.Errorf("scrape lacks %q", want)
		}
	}
}

func TestServeFlagErrors(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	cert, key := selfSigned(t, dir)
	tests := []struct {
		name string
		args []string
		a    app
		want string
	}{
		{"negative points", []string{"--max-points=-1"}, app{}, "--max-points"},
		{"negative concurrency", []string{"--max-concurrency=-3"}, app{}, "--max-concurrency"},
		{"client CA without cert", []string{"--tls-client-ca", cert}, app{}, "needs --tls-cert"},
		{"cert without key", nil, app{tlsCert: cert}, "must be given together"},
		{"bad metrics address", []string{"--metrics-listen", "127.0.0.1:-1"}, app{tlsCert: cert, tlsKey: key}, "--metrics-listen"},
	}
	for _, tc := range tests {
		cmd := &cobra.Command{Use: "serve"}
		f := &serveSecurity{}
		f.addFlags(cmd.Flags())
		if err := cmd.ParseFlags(tc.args); err != nil {
			t.Fatal(err)
		}
		_, err := f.grpcOptions(context.Background(), &tc.a, "127.0.0.1:0", slog.New(slog.NewTextHandler(io.Discard, nil)), nil)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want %q", tc.name, err, tc.want)
		}
	}
}
