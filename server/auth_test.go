package server

import (
	"context"
	"crypto/tls"
	"crypto/x509"
	"net"
	"os"
	"strings"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/credentials/insecure"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	"google.golang.org/grpc/metadata"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

const testToken = "s3cret-token-for-tests"

func bearer(ctx context.Context, tok string) context.Context {
	return metadata.AppendToOutgoingContext(ctx, "authorization", "Bearer "+tok)
}

func TestAuthToken(t *testing.T) {
	t.Parallel()
	// Trailing newline and spaces in the file are trimmed.
	tf := writeTokenFile(t, t.TempDir(), "token", "  "+testToken+"\n")
	opts, err := SecurityOptions(SecurityConfig{TokenFile: tf})
	if err != nil {
		t.Fatal(err)
	}
	addr := startSecServer(t, &secService{}, opts...)
	cc := secDial(t, addr, grpc.WithTransportCredentials(insecure.NewCredentials()))
	client := phaseboundpb.NewBoundaryServiceClient(cc)

	tests := []struct {
		name    string
		md      []string // authorization metadata; nil for none
		code    codes.Code
		message string
	}{
		{"no token", nil, codes.Unauthenticated, "missing bearer token: pass --token-file"},
		{"empty header", []string{""}, codes.Unauthenticated, "missing bearer token: pass --token-file"},
		{"wrong token", []string{"Bearer wrong"}, codes.Unauthenticated, "invalid bearer token"},
		{"token prefix only", []string{"Bearer " + testToken[:5]}, codes.Unauthenticated, "invalid bearer token"},
		{"token with suffix", []string{"Bearer " + testToken + "x"}, codes.Unauthenticated, "invalid bearer token"},
		{"basic scheme", []string{"Basic " + testToken}, codes.Unauthenticated, "invalid bearer token"},
		{"right token", []string{"Bearer " + testToken}, codes.OK, ""},
		{"scheme case-insensitive", []string{"bearer " + testToken}, codes.OK, ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ctx := context.Background()
			if tc.md != nil {
				ctx = metadata.AppendToOutgoingContext(ctx, "authorization", tc.md[0])
			}
			_, err := client.Echo(ctx, &phaseboundpb.EchoRequest{Values: []float64{1}})
			st := status.Convert(err)
			if st.Code() != tc.code {
				t.Fatalf("code = %v (%v), want %v", st.Code(), err, tc.code)
			}
			if !strings.Contains(st.Message(), tc.message) {
				t.Errorf("message %q does not contain %q", st.Message(), tc.message)
			}
			// Streams are guarded the same way.
			s, err := client.EvaluateStream(ctx)
			if err == nil {
				if err = s.Send(&phaseboundpb.EvaluateStreamRequest{Request: &phaseboundpb.EvaluateRequest{Values: []float64{300}}}); err == nil || err.Error() == "EOF" {
					_, err = s.Recv()
				}
			}
			if got := status.Code(err); got != tc.code {
				t.Errorf("stream code = %v (%v), want %v", got, err, tc.code)
			}
		})
	}

	t.Run("health exempt", func(t *testing.T) {
		resp, err := healthpb.NewHealthClient(cc).Check(context.Background(), &healthpb.HealthCheckRequest{})
		if err != nil {
			t.Fatalf("health check without token: %v", err)
		}
		if resp.GetStatus() != healthpb.HealthCheckResponse_SERVING {
			t.Errorf("health status = %v, want SERVING", resp.GetStatus())
		}
	})
}

func TestTokenFileErrors(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	tests := []struct {
		name, content, want string
	}{
		{"empty", "", "is empty"},
		{"white space only", " \n\t\n", "is empty"},
		{"two lines", "a\nb\n", "more than one line"},
	}
	for _, tc := range tests {
		_, err := NewSecurity(SecurityConfig{TokenFile: writeTokenFile(t, dir, tc.name, tc.content)})
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
	if _, err := NewSecurity(SecurityConfig{TokenFile: dir + "/missing"}); err == nil || !strings.Contains(err.Error(), "token file") {
		t.Errorf("missing token file: err = %v", err)
	}
}

func TestSecurityConfigErrors(t *testing.T) {
	t.Parallel()
	p := newTestPKI(t, "cfg")
	tests := []struct {
		name string
		cfg  SecurityConfig
		want string
	}{
		{"cert without key", SecurityConfig{TLSCert: p.ServerCert}, "must be given together"},
		{"key without cert", SecurityConfig{TLSKey: p.ServerKey}, "must be given together"},
		{"client CA without cert", SecurityConfig{TLSClientCA: p.CAFile}, "needs --tls-cert"},
		{"key does not match", SecurityConfig{TLSCert: p.ServerCert, TLSKey: p.ClientKey}, "TLS certificate"},
		{"CA file not PEM", SecurityConfig{TLSCert: p.ServerCert, TLSKey: p.ServerKey, TLSClientCA: p.ServerKey}, "no PEM certificate"},
		{"TLS 1.0", SecurityConfig{TLSCert: p.ServerCert, TLSKey: p.ServerKey, MinTLSVersion: tls.VersionTLS10}, "not supported"},
	}
	for _, tc := range tests {
		_, err := NewSecurity(tc.cfg)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
}

// clientTLS returns client transport credentials trusting caFile, with a
// client certificate when certFile is set.
func clientTLS(t *testing.T, caFile, certFile, keyFile string) credentials.TransportCredentials {
	t.Helper()
	pem, err := os.ReadFile(caFile)
	if err != nil {
		t.Fatal(err)
	}
	pool := x509.NewCertPool()
	pool.AppendCertsFromPEM(pem)
	tc := &tls.Config{RootCAs: pool, MinVersion: tls.VersionTLS12}
	if certFile != "" {
		c, err := tls.LoadX509KeyPair(certFile, keyFile)
		if err != nil {
			t.Fatal(err)
		}
		tc.Certificates = []tls.Certificate{c}
	}
	return credentials.NewTLS(tc)
}

func echoCode(t *testing.T, cc *grpc.ClientConn, ctx context.Context) (codes.Code, error) {
	t.Helper()
	ctx, cancel := context.WithTimeout(ctx, time.Minute) // bounds a broken run only
	defer cancel()
	_, err := phaseboundpb.NewBoundaryServiceClient(cc).Echo(ctx, &phaseboundpb.EchoRequest{Values: []float64{1, 2}})
	return status.Code(err), err
}

func TestTLS(t *testing.T) {
	t.Parallel()
	p, other := newTestPKI(t, "tls"), newTestPKI(t, "other")
	for _, v := range []uint16{tls.VersionTLS12, tls.VersionTLS13} {
		opts, err := SecurityOptions(SecurityConfig{TLSCert: p.ServerCert, TLSKey: p.ServerKey, MinTLSVersion: v})
		if err != nil {
			t.Fatal(err)
		}
		addr := startSecServer(t, &secService{}, opts...)
		if code, err := echoCode(t, secDial(t, addr, grpc.WithTransportCredentials(clientTLS(t, p.CAFile, "", ""))), context.Background()); code != codes.OK {
			t.Errorf("TLS client trusting the CA: %v", err)
		}
		if code, err := echoCode(t, secDial(t, addr, grpc.WithTransportCredentials(clientTLS(t, other.CAFile, "", ""))), context.Background()); code != codes.Unavailable {
			t.Errorf("TLS client trusting another CA: code %v (%v), want Unavailable", code, err)
		}
		if code, err := echoCode(t, secDial(t, addr, grpc.WithTransportCredentials(insecure.NewCredentials())), context.Background()); code != codes.Unavailable {
			t.Errorf("plain-text client on a TLS server: code %v (%v), want Unavailable", code, err)
		}
	}
}

func TestMutualTLSWithToken(t *testing.T) {
	t.Parallel()
	p, other := newTestPKI(t, "mtls"), newTestPKI(t, "intruder")
	tf := writeTokenFile(t, t.TempDir(), "token", testToken)
	sec, err := NewSecurity(SecurityConfig{TokenFile: tf, TLSCert: p.ServerCert, TLSKey: p.ServerKey, TLSClientCA: p.CAFile})
	if err != nil {
		t.Fatal(err)
	}
	if !sec.TLS() || !sec.MutualTLS() || !sec.TokenRequired() {
		t.Fatalf("TLS %v, mutual %v, token %v; want all true", sec.TLS(), sec.MutualTLS(), sec.TokenRequired())
	}
	addr := startSecServer(t, &secService{}, sec.ServerOptions()...)
	ok := bearer(context.Background(), testToken)
	tests := []struct {
		name  string
		creds credentials.TransportCredentials
		ctx   context.Context
		want  codes.Code
	}{
		{"client cert and token", clientTLS(t, p.CAFile, p.ClientCert, p.ClientKey), ok, codes.OK},
		{"client cert, no token", clientTLS(t, p.CAFile, p.ClientCert, p.ClientKey), context.Background(), codes.Unauthenticated},
		{"no client cert", clientTLS(t, p.CAFile, "", ""), ok, codes.Unavailable},
		{"client cert of another CA", clientTLS(t, p.CAFile, other.ClientCert, other.ClientKey), ok, codes.Unavailable},
		// A server certificate lacks the client-auth key usage.
		{"server cert used as client cert", clientTLS(t, p.CAFile, p.ServerCert, p.ServerKey), ok, codes.Unavailable},
	}
	for _, tc := range tests {
		code, err := echoCode(t, secDial(t, addr, grpc.WithTransportCredentials(tc.creds)), tc.ctx)
		if code != tc.want {
			t.Errorf("%s: code %v (%v), want %v", tc.name, code, err, tc.want)
		}
	}
}

func TestSecurityReload(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	tf := writeTokenFile(t, dir, "token", "old-token")
	sec, err := NewSecurity(SecurityConfig{TokenFile: tf})
	if err != nil {
		t.Fatal(err)
	}
	addr := startSecServer(t, &secService{}, sec.ServerOptions()...)
	cc := secDial(t, addr, grpc.WithTransportCredentials(insecure.NewCredentials()))

	// A bad reload keeps the old token.
	writeTokenFile(t, dir, "token", "\n")
	if err := sec.Reload(); err == nil || !strings.Contains(err.Error(), "empty") {
		t.Fatalf("reload of an empty token file: err = %v", err)
	}
	if code, err := echoCode(t, cc, bearer(context.Background(), "old-token")); code != codes.OK {
		t.Fatalf("old token after failed reload: %v", err)
	}
	// A good reload replaces it.
	writeTokenFile(t, dir, "token", "new-token\n")
	if err := sec.Reload(); err != nil {
		t.Fatal(err)
	}
	if code, _ := echoCode(t, cc, bearer(context.Background(), "old-token")); code != codes.Unauthenticated {
		t.Errorf("old token after reload: code %v, want Unauthenticated", code)
	}
	if code, err := echoCode(t, cc, bearer(context.Background(), "new-token")); code != codes.OK {
		t.Errorf("new token after reload: %v", err)
	}
}

func TestNoSecurityIsPlain(t *testing.T) {
	t.Parallel()
	sec, err := NewSecurity(SecurityConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if sec.TLS() || sec.TokenRequired() || len(sec.ServerOptions()) != 0 {
		t.Errorf("zero config: TLS %v, token %v, %d options; want none", sec.TLS(), sec.TokenRequired(), len(sec.ServerOptions()))
	}
}

// TestRegisterHealth serves only the health service of a real Server on a
// second, plain-text listener (what --health-listen does) and checks that
// it reports the server's own status.
func TestRegisterHealth(t *testing.T) {
	s, _, _ := testServer(t)
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	g := grpc.NewServer()
	s.RegisterHealth(g)
	go g.Serve(lis)
	defer g.Stop()
	cc := secDial(t, lis.Addr().String(), grpc.WithTransportCredentials(insecure.NewCredentials()))
	for _, svc := range []string{"", ServiceName} {
		resp, err := healthpb.NewHealthClient(cc).Check(context.Background(), &healthpb.HealthCheckRequest{Service: svc})
		if err != nil || resp.GetStatus() != healthpb.HealthCheckResponse_SERVING {
			t.Errorf("health of %q on the health-only listener: %v %v, want SERVING", svc, resp.GetStatus(), err)
		}
	}
	// Nothing else is served there.
	_, err = phaseboundpb.NewBoundaryServiceClient(cc).ListSubstances(context.Background(), &phaseboundpb.ListSubstancesRequest{})
	if status.Code(err) != codes.Unimplemented {
		t.Errorf("ListSubstances on the health-only listener: %v, want Unimplemented", err)
	}
}
