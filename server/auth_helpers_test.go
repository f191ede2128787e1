package server

import (
	"context"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"io"
	"math/big"
	"net"
	"os"
	"path/filepath"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/health"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// secService is a stand-in BoundaryService for the security and limits
// tests: Echo returns its payload, Evaluate echoes the values as pressures
// (after waiting on block when set), EvaluateStream answers each chunk.
type secService struct {
	phaseboundpb.UnimplementedBoundaryServiceServer
	block   chan struct{} // when non-nil, Evaluate waits for it to close
	entered chan struct{} // when non-nil, Evaluate signals it on entry
}

func (s *secService) Echo(_ context.Context, r *phaseboundpb.EchoRequest) (*phaseboundpb.EchoResponse, error) {
	return &phaseboundpb.EchoResponse{Values: r.GetValues()}, nil
}

func (s *secService) Evaluate(ctx context.Context, r *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	if s.entered != nil {
		s.entered <- struct{}{}
	}
	if s.block != nil {
		select {
		case <-s.block:
		case <-ctx.Done():
			return nil, ctx.Err()
		}
	}
	return &phaseboundpb.EvaluateResponse{PressurePa: r.GetValues()}, nil
}

func (s *secService) EvaluateStream(st phaseboundpb.BoundaryService_EvaluateStreamServer) error {
	var off uint64
	for {
		m, err := st.Recv()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return err
		}
		vals := m.GetRequest().GetValues()
		if err := st.Send(&phaseboundpb.EvaluateStreamResponse{Offset: off, Response: &phaseboundpb.EvaluateResponse{PressurePa: vals}}); err != nil {
			return err
		}
		off += uint64(len(vals))
	}
}

// startSecServer serves svc and the health service with opts on a loopback
// port and returns the address.
func startSecServer(t *testing.T, svc phaseboundpb.BoundaryServiceServer, opts ...grpc.ServerOption) string {
	t.Helper()
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	g := grpc.NewServer(opts...)
	phaseboundpb.RegisterBoundaryServiceServer(g, svc)
	healthpb.RegisterHealthServer(g, health.NewServer())
	go g.Serve(lis)
	t.Cleanup(g.Stop)
	return lis.Addr().String()
}

// secDial connects to addr with opts and fails the test on error.
func secDial(t *testing.T, addr string, opts ...grpc.DialOption) *grpc.ClientConn {
	t.Helper()
	cc, err := grpc.NewClient(addr, opts...)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { cc.Close() })
	return cc
}

// testPKI is a throw-away certificate authority with a server certificate
// for the loopback names and a client certificate, all ECDSA P-256, written
// as PEM files in a temporary folder.
type testPKI struct {
	CAFile, ServerCert, ServerKey, ClientCert, ClientKey string
}

// newTestPKI creates a fresh CA and its leaf certificates in t.TempDir().
func newTestPKI(t *testing.T, name string) testPKI {
	t.Helper()
	dir := t.TempDir()
	caKey := newKey(t)
	now := time.Now()
	caTmpl := &x509.Certificate{
		SerialNumber:          big.NewInt(1),
		Subject:               pkix.Name{CommonName: name + " test CA"},
		NotBefore:             now.Add(-time.Hour),
		NotAfter:              now.Add(24 * time.Hour),
		IsCA:                  true,
		BasicConstraintsValid: true,
		KeyUsage:              x509.KeyUsageCertSign | x509.KeyUsageDigitalSignature,
	}
	caDER, err := x509.CreateCertificate(rand.Reader, caTmpl, caTmpl, &caKey.PublicKey, caKey)
	if err != nil {
		t.Fatal(err)
	}
	ca, err := x509.ParseCertificate(caDER)
	if err != nil {
		t.Fatal(err)
	}
	p := testPKI{CAFile: filepath.Join(dir, "ca.pem")}
	writePEM(t, p.CAFile, "CERTIFICATE", caDER)
	leaf := func(serial int64, cn string, usage x509.ExtKeyUsage, server bool) (certFile, keyFile string) {
		key := newKey(t)
		tmpl := &x509.Certificate{
			SerialNumber: big.NewInt(serial),
			Subject:      pkix.Name{CommonName: cn},
			NotBefore:    now.Add(-time.Hour),
			NotAfter:     now.Add(24 * time.Hour),
			KeyUsage:     x509.KeyUsageDigitalSignature,
			ExtKeyUsage:  []x509.ExtKeyUsage{usage},
		}
		if server {
			tmpl.DNSNames = []string{"localhost"}
			tmpl.IPAddresses = []net.IP{net.ParseIP("127.0.0.1"), net.IPv6loopback}
		}
		der, err := x509.CreateCertificate(rand.Reader, tmpl, ca, &key.PublicKey, caKey)
		if err != nil {
			t.Fatal(err)
		}
		kder, err := x509.MarshalECPrivateKey(key)
		if err != nil {
			t.Fatal(err)
		}
		certFile, keyFile = filepath.Join(dir, cn+".pem"), filepath.Join(dir, cn+"-key.pem")
		writePEM(t, certFile, "CERTIFICATE", der)
		writePEM(t, keyFile, "EC PRIVATE KEY", kder)
		return certFile, keyFile
	}
	p.ServerCert, p.ServerKey = leaf(2, "server", x509.ExtKeyUsageServerAuth, true)
	p.ClientCert, p.ClientKey = leaf(3, "client", x509.ExtKeyUsageClientAuth, false)
	return p
}

func newKey(t *testing.T) *ecdsa.PrivateKey {
	t.Helper()
	k, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	return k
}

func writePEM(t *testing.T, path, typ string, der []byte) {
	t.Helper()
	if err := os.WriteFile(path, pem.EncodeToMemory(&pem.Block{Type: typ, Bytes: der}), 0o600); err != nil {
		t.Fatal(err)
	}
}

// writeTokenFile writes a token file in dir and returns its path.
func writeTokenFile(t *testing.T, dir, name, content string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(content), 0o600); err != nil {
		t.Fatal(err)
	}
	return p
}
