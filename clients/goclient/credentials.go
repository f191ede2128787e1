package goclient

import (
	"context"
	"crypto/tls"
	"crypto/x509"
	"errors"
	"fmt"
	"net"
	"net/netip"
	"os"
	"strings"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/peer"
	"google.golang.org/grpc/status"
)

// credentials returns the dial options for transport security and the
// bearer token; Dial calls it.
//
// The server name is not set on the TLS configuration: gRPC checks each
// server's certificate against the name of the address it dials (each
// HOST of a HOST:PORT list, see Dial) or the channel's authority (the host
// of "dns:///HOST:PORT").
//
// TLS is on when TLSCA or TLSCert is set: TLSCA names the CAs that sign the
// server's certificate (the system roots when empty), TLSCert and TLSKey
// are the client's certificate for mutual TLS. Minimum version TLS 1.2.
//
// The bearer token from TokenFile is sent as "authorization: Bearer
// <token>" with every call. Over TLS it goes anywhere; without TLS it is
// sent only to loopback addresses (127.0.0.0/8, ::1), where nobody else can
// read it: a call to any other address without TLS fails with
// Unauthenticated before the token leaves the process.
func (o Options) credentials() ([]grpc.DialOption, error) {
	tlsOn, tlsCreds, err := o.transportCredentials()
	if err != nil {
		return nil, err
	}
	dopts := []grpc.DialOption{grpc.WithTransportCredentials(tlsCreds)}
	if o.TokenFile != "" {
		tok, err := readTokenFile(o.TokenFile)
		if err != nil {
			return nil, err
		}
		dopts = append(dopts, grpc.WithPerRPCCredentials(bearer{token: tok, tls: tlsOn}))
	}
	return dopts, nil
}

// transportCredentials builds TLS credentials from the options, or
// plain-text ones when neither TLSCA nor TLSCert is set.
func (o Options) transportCredentials() (bool, credentials.TransportCredentials, error) {
	if (o.TLSCert == "") != (o.TLSKey == "") {
		return false, nil, errors.New("goclient: --tls-cert and --tls-key must be given together")
	}
	if o.TLSCA == "" && o.TLSCert == "" {
		return false, insecure.NewCredentials(), nil
	}
	tc := &tls.Config{MinVersion: tls.VersionTLS12}
	if o.TLSCA != "" {
		pem, err := os.ReadFile(o.TLSCA)
		if err != nil {
			return false, nil, fmt.Errorf("goclient: TLS CA: %w", err)
		}
		pool := x509.NewCertPool()
		if !pool.AppendCertsFromPEM(pem) {
			return false, nil, fmt.Errorf("goclient: TLS CA %s holds no PEM certificate", o.TLSCA)
		}
		tc.RootCAs = pool
	}
	if o.TLSCert != "" {
		cert, err := tls.LoadX509KeyPair(o.TLSCert, o.TLSKey)
		if err != nil {
			return false, nil, fmt.Errorf("goclient: TLS client certificate %s with key %s: %w", o.TLSCert, o.TLSKey, err)
		}
		tc.Certificates = []tls.Certificate{cert}
	}
	return true, credentials.NewTLS(tc), nil
}

// readTokenFile reads a bearer token: one line, trimmed, not empty.
func readTokenFile(path string) (string, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return "", fmt.Errorf("goclient: token file: %w", err)
	}
	tok := strings.TrimSpace(string(b))
	if tok == "" {
		return "", fmt.Errorf("goclient: token file %s is empty: it must hold the bearer token", path)
	}
	if strings.ContainsAny(tok, "\r\n") {
		return "", fmt.Errorf("goclient: token file %s holds more than one line: it must hold only the bearer token", path)
	}
	return tok, nil
}

// bearer is the per-call credential "authorization: Bearer <token>".
type bearer struct {
	token string
	tls   bool // the connection uses TLS
}

// GetRequestMetadata implements credentials.PerRPCCredentials. Without TLS
// it refuses to send the token to an address that is not loopback.
func (b bearer) GetRequestMetadata(ctx context.Context, _ ...string) (map[string]string, error) {
	if !b.tls {
		p, ok := peer.FromContext(ctx)
		if !ok || !isLoopback(p.Addr) {
			addr := "an unknown address"
			if ok && p.Addr != nil {
				addr = p.Addr.String()
			}
			return nil, status.Errorf(codes.Unauthenticated,
				"refusing to send the bearer token in clear text to %s (not loopback): use TLS (--tls-ca)", addr)
		}
	}
	return map[string]string{"authorization": "Bearer " + b.token}, nil
}

// RequireTransportSecurity implements credentials.PerRPCCredentials. It is
// false without TLS so that loopback calls work; GetRequestMetadata then
// checks the address itself.
func (b bearer) RequireTransportSecurity() bool { return b.tls }

// isLoopback reports whether a is a loopback IP address.
func isLoopback(a net.Addr) bool {
	if a == nil {
		return false
	}
	host := a.String()
	if h, _, err := net.SplitHostPort(host); err == nil {
		host = h
	}
	ip, err := netip.ParseAddr(host)
	return err == nil && ip.Unmap().IsLoopback()
}
