package goclient

import (
	"context"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/tls"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"math/big"
	"net"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"google.golang.org/grpc"
	grpccreds "google.golang.org/grpc/credentials"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// testCA is a throw-away ECDSA P-256 certificate authority for TLS tests.
type testCA struct {
	t    *testing.T
	key  *ecdsa.PrivateKey
	cert *x509.Certificate
	file string // the CA certificate as PEM
}

func newTestCA(t *testing.T) *testCA {
	t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	now := time.Now()
	tmpl := &x509.Certificate{SerialNumber: big.NewInt(1), Subject: pkix.Name{CommonName: "goclient replicas test CA"},
		NotBefore: now.Add(-time.Hour), NotAfter: now.Add(time.Hour), IsCA: true, BasicConstraintsValid: true,
		KeyUsage: x509.KeyUsageCertSign}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, tmpl, &key.PublicKey, key)
	if err != nil {
		t.Fatal(err)
	}
	cert, err := x509.ParseCertificate(der)
	if err != nil {
		t.Fatal(err)
	}
	file := filepath.Join(t.TempDir(), "ca.pem")
	if err := os.WriteFile(file, pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der}), 0o600); err != nil {
		t.Fatal(err)
	}
	return &testCA{t: t, key: key, cert: cert, file: file}
}

// server returns a server certificate naming exactly the given DNS names
// and IP addresses.
func (ca *testCA) server(serial int64, dns []string, ips []net.IP) tls.Certificate {
	ca.t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		ca.t.Fatal(err)
	}
	now := time.Now()
	tmpl := &x509.Certificate{SerialNumber: big.NewInt(serial), Subject: pkix.Name{CommonName: "replica"},
		NotBefore: now.Add(-time.Hour), NotAfter: now.Add(time.Hour), KeyUsage: x509.KeyUsageDigitalSignature,
		ExtKeyUsage: []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth}, DNSNames: dns, IPAddresses: ips}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, ca.cert, &key.PublicKey, ca.key)
	if err != nil {
		ca.t.Fatal(err)
	}
	return tls.Certificate{Certificate: [][]byte{der}, PrivateKey: key}
}

// countingEcho answers Echo and counts the calls it served.
type countingEcho struct {
	phaseboundpb.UnimplementedBoundaryServiceServer
	calls atomic.Int64
}

func (c *countingEcho) Echo(_ context.Context, r *phaseboundpb.EchoRequest) (*phaseboundpb.EchoResponse, error) {
	c.calls.Add(1)
	return &phaseboundpb.EchoResponse{Values: r.GetValues()}, nil
}

// tlsReplica serves a countingEcho over TLS with cert on a loopback port
// and returns its port.
func tlsReplica(t *testing.T, cert tls.Certificate) (string, *countingEcho) {
	t.Helper()
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	svc := &countingEcho{}
	g := grpc.NewServer(grpc.Creds(grpccreds.NewTLS(&tls.Config{Certificates: []tls.Certificate{cert}, MinVersion: tls.VersionTLS12})))
	phaseboundpb.RegisterBoundaryServiceServer(g, svc)
	go g.Serve(lis)
	t.Cleanup(g.Stop)
	_, port, _ := net.SplitHostPort(lis.Addr().String())
	return port, svc
}

// TestDialTLSChecksEachReplica: two replicas whose certificates name
// different hosts ("localhost" only; 127.0.0.1 only), dialled as a list by
// those hosts, both serve calls over TLS, whichever comes first; a host
// its certificate does not name is refused; a dns:/// target still works.
func TestDialTLSChecksEachReplica(t *testing.T) {
	t.Parallel()
	ca := newTestCA(t)
	namePort, byName := tlsReplica(t, ca.server(2, []string{"localhost"}, nil))
	ipPort, byIP := tlsReplica(t, ca.server(3, nil, []net.IP{net.ParseIP("127.0.0.1")}))
	opts := Options{TLSCA: ca.file}

	// callBoth calls through target until both replicas have served a call
	// (round-robin uses only replicas whose handshake succeeded). The bound
	// only ends a broken run.
	callBoth := func(target string) {
		t.Helper()
		c, err := Dial(context.Background(), target, opts)
		if err != nil {
			t.Fatal(err)
		}
		defer c.Close()
		n1, n2 := byName.calls.Load(), byIP.calls.Load()
		ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
		defer cancel()
		for byName.calls.Load() == n1 || byIP.calls.Load() == n2 {
			if _, err := c.Echo(ctx, &phaseboundpb.EchoRequest{Values: []float64{1}}); err != nil {
				t.Fatalf("%s: %v (calls served: localhost replica %d, 127.0.0.1 replica %d)",
					target, err, byName.calls.Load()-n1, byIP.calls.Load()-n2)
			}
			time.Sleep(time.Millisecond)
		}
	}
	callBoth("localhost:" + namePort + ",127.0.0.1:" + ipPort)
	callBoth("127.0.0.1:" + ipPort + ",localhost:" + namePort)

	// Each replica is checked against its own host: dialled by a host its
	// certificate does not name, it is refused.
	for _, target := range []string{"127.0.0.1:" + namePort, "localhost:" + ipPort} {
		err := echo(t, target, opts)
		if err == nil || !strings.Contains(err.Error(), "certificate") {
			t.Errorf("%s: %v, want a certificate error", target, err)
		}
	}

	// A dns:/// target is checked against its name.
	if err := echo(t, "dns:///localhost:"+namePort, opts); err != nil {
		t.Errorf("dns:///localhost: %v", err)
	}
}
