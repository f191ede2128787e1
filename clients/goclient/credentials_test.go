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
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	grpccreds "google.golang.org/grpc/credentials"
	"google.golang.org/grpc/metadata"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// authEcho answers Echo and passes on the authorization metadata it
// received, so tests can see what was sent.
type authEcho struct {
	phaseboundpb.UnimplementedBoundaryServiceServer
	got chan string
}

func (a authEcho) Echo(ctx context.Context, r *phaseboundpb.EchoRequest) (*phaseboundpb.EchoResponse, error) {
	md, _ := metadata.FromIncomingContext(ctx)
	a.got <- strings.Join(md.Get("authorization"), ",")
	return &phaseboundpb.EchoResponse{Values: r.GetValues()}, nil
}

// credServer serves authEcho on loopback with opts.
func credServer(t *testing.T, opts ...grpc.ServerOption) (string, chan string) {
	t.Helper()
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	got := make(chan string, 1)
	g := grpc.NewServer(opts...)
	phaseboundpb.RegisterBoundaryServiceServer(g, authEcho{got: got})
	go g.Serve(lis)
	t.Cleanup(g.Stop)
	return lis.Addr().String(), got
}

// farConn pretends a loopback connection comes from a TEST-NET-1 address
// (RFC 5737), to check what the client sends to a remote host.
type farConn struct{ net.Conn }

func (farConn) RemoteAddr() net.Addr { return &net.TCPAddr{IP: net.IPv4(192, 0, 2, 7), Port: 50051} }

func farDialer(ctx context.Context, addr string) (net.Conn, error) {
	c, err := (&net.Dialer{}).DialContext(ctx, "tcp", addr)
	if err != nil {
		return nil, err
	}
	return farConn{c}, nil
}

func echo(t *testing.T, target string, opts Options) error {
	t.Helper()
	c, err := Dial(context.Background(), target, opts)
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	_, err = c.Echo(ctx, &phaseboundpb.EchoRequest{Values: []float64{1}})
	return err
}

func TestBearerTokenPlainText(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	tf := filepath.Join(dir, "token")
	os.WriteFile(tf, []byte("tok-123\n"), 0o600)
	addr, got := credServer(t)

	if err := echo(t, addr, Options{TokenFile: tf}); err != nil {
		t.Fatalf("loopback without TLS: %v", err)
	}
	if h := <-got; h != "Bearer tok-123" {
		t.Errorf("server saw authorization %q, want %q", h, "Bearer tok-123")
	}

	// The same server seen as a remote address: the token stays home.
	err := echo(t, addr, Options{TokenFile: tf, DialOptions: []grpc.DialOption{grpc.WithContextDialer(farDialer)}})
	if st := status.Convert(err); st.Code() != codes.Unauthenticated || !strings.Contains(st.Message(), "clear text to 192.0.2.7:50051") {
		t.Errorf("remote without TLS: %v, want Unauthenticated refusing clear text", err)
	}
	select {
	case h := <-got:
		t.Errorf("the call reached the server with authorization %q", h)
	default:
	}
}

func TestBearerTokenOverMutualTLS(t *testing.T) {
	t.Parallel()
	p := newCredPKI(t)
	tf := filepath.Join(t.TempDir(), "token")
	os.WriteFile(tf, []byte("tok-tls"), 0o600)
	cert, err := tls.LoadX509KeyPair(p.serverCert, p.serverKey)
	if err != nil {
		t.Fatal(err)
	}
	pool := x509.NewCertPool()
	caPEM, _ := os.ReadFile(p.ca)
	pool.AppendCertsFromPEM(caPEM)
	addr, got := credServer(t, grpc.Creds(grpccreds.NewTLS(&tls.Config{
		Certificates: []tls.Certificate{cert}, ClientCAs: pool, ClientAuth: tls.RequireAndVerifyClientCert, MinVersion: tls.VersionTLS12,
	})))

	// Over TLS the token may go to a remote address.
	opts := Options{TokenFile: tf, TLSCA: p.ca, TLSCert: p.clientCert, TLSKey: p.clientKey,
		DialOptions: []grpc.DialOption{grpc.WithContextDialer(farDialer)}}
	if err := echo(t, addr, opts); err != nil {
		t.Fatalf("mutual TLS: %v", err)
	}
	if h := <-got; h != "Bearer tok-tls" {
		t.Errorf("server saw authorization %q", h)
	}
	// A dns:/// target is checked against its host name.
	_, port, _ := net.SplitHostPort(addr)
	if err := echo(t, "dns:///localhost:"+port, Options{TLSCA: p.ca, TLSCert: p.clientCert, TLSKey: p.clientKey}); err != nil {
		t.Errorf("mutual TLS to dns:///localhost: %v", err)
	} else {
		<-got
	}
	// Without the client certificate the handshake fails.
	if err := echo(t, addr, Options{TLSCA: p.ca}); status.Code(err) != codes.Unavailable {
		t.Errorf("TLS without client certificate: %v, want Unavailable", err)
	}
}

func TestCredentialErrors(t *testing.T) {
	t.Parallel()
	p := newCredPKI(t)
	dir := t.TempDir()
	empty := filepath.Join(dir, "empty")
	os.WriteFile(empty, []byte(" \n"), 0o600)
	tests := []struct {
		name string
		opts Options
		want string
	}{
		{"cert without key", Options{TLSCert: p.clientCert}, "must be given together"},
		{"missing CA", Options{TLSCA: filepath.Join(dir, "nope.pem")}, "TLS CA"},
		{"CA not PEM", Options{TLSCA: empty}, "no PEM certificate"},
		{"key of another cert", Options{TLSCert: p.clientCert, TLSKey: p.serverKey}, "TLS client certificate"},
		{"empty token", Options{TokenFile: empty}, "is empty"},
		{"missing token", Options{TokenFile: filepath.Join(dir, "nope")}, "token file"},
	}
	for _, tc := range tests {
		_, err := Dial(context.Background(), "127.0.0.1:1", tc.opts)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
}

func TestIsLoopback(t *testing.T) {
	t.Parallel()
	tests := []struct {
		addr net.Addr
		want bool
	}{
		{&net.TCPAddr{IP: net.IPv4(127, 0, 0, 1), Port: 1}, true},
		{&net.TCPAddr{IP: net.IPv4(127, 8, 9, 10), Port: 1}, true},
		{&net.TCPAddr{IP: net.IPv6loopback, Port: 1}, true},
		{&net.TCPAddr{IP: net.ParseIP("::ffff:127.0.0.1"), Port: 1}, true},
		{&net.TCPAddr{IP: net.IPv4(10, 0, 0, 1), Port: 1}, false},
		{&net.TCPAddr{IP: net.IPv4zero, Port: 1}, false},
		{&net.UnixAddr{Name: "/tmp/x", Net: "unix"}, false},
		{nil, false},
	}
	for _, tc := range tests {
		if got := isLoopback(tc.addr); got != tc.want {
			t.Errorf("isLoopback(%v) = %v, want %v", tc.addr, got, tc.want)
		}
	}
}

type credPKI struct{ ca, serverCert, serverKey, clientCert, clientKey string }

// newCredPKI makes a throw-away ECDSA CA with a loopback server certificate
// and a client certificate in t.TempDir().
func newCredPKI(t *testing.T) credPKI {
	t.Helper()
	dir := t.TempDir()
	key := func() *ecdsa.PrivateKey {
		k, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
		if err != nil {
			t.Fatal(err)
		}
		return k
	}
	write := func(name, typ string, der []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, pem.EncodeToMemory(&pem.Block{Type: typ, Bytes: der}), 0o600); err != nil {
			t.Fatal(err)
		}
		return p
	}
	now := time.Now()
	caKey := key()
	caTmpl := &x509.Certificate{SerialNumber: big.NewInt(1), Subject: pkix.Name{CommonName: "goclient test CA"},
		NotBefore: now.Add(-time.Hour), NotAfter: now.Add(time.Hour), IsCA: true, BasicConstraintsValid: true,
		KeyUsage: x509.KeyUsageCertSign}
	caDER, err := x509.CreateCertificate(rand.Reader, caTmpl, caTmpl, &caKey.PublicKey, caKey)
	if err != nil {
		t.Fatal(err)
	}
	ca, _ := x509.ParseCertificate(caDER)
	p := credPKI{ca: write("ca.pem", "CERTIFICATE", caDER)}
	leaf := func(n int64, usage x509.ExtKeyUsage) (string, string) {
		k := key()
		tmpl := &x509.Certificate{SerialNumber: big.NewInt(n), Subject: pkix.Name{CommonName: "leaf"},
			NotBefore: now.Add(-time.Hour), NotAfter: now.Add(time.Hour), KeyUsage: x509.KeyUsageDigitalSignature,
			ExtKeyUsage: []x509.ExtKeyUsage{usage}, IPAddresses: []net.IP{net.ParseIP("127.0.0.1")}, DNSNames: []string{"localhost"}}
		der, err := x509.CreateCertificate(rand.Reader, tmpl, ca, &k.PublicKey, caKey)
		if err != nil {
			t.Fatal(err)
		}
		kder, _ := x509.MarshalECPrivateKey(k)
		return write(tmpl.SerialNumber.String()+".pem", "CERTIFICATE", der), write(tmpl.SerialNumber.String()+"-key.pem", "EC PRIVATE KEY", kder)
	}
	p.serverCert, p.serverKey = leaf(2, x509.ExtKeyUsageServerAuth)
	p.clientCert, p.clientKey = leaf(3, x509.ExtKeyUsageClientAuth)
	return p
}
