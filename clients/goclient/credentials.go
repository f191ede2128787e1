package goclient

import (
	"context"
	"crypto/tls"
	"crypto/x509"
	"errors"
	"fmt"
	"os"
	"strings"

	"google.golang.org/grpc"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/credentials/insecure"
)

// credentials returns the dial options for transport security and the
// bearer token. serverName is checked against the server's certificate.
func (o Options) credentials(serverName string) ([]grpc.DialOption, error) {
	var dopts []grpc.DialOption
	useTLS := o.TLSCA != "" || o.TLSCert != ""
	if (o.TLSCert == "") != (o.TLSKey == "") {
		return nil, errors.New("goclient: --tls-cert and --tls-key must be given together")
	}
	if useTLS {
		tc := &tls.Config{MinVersion: tls.VersionTLS12, ServerName: serverName}
		if o.TLSCA != "" {
			pem, err := os.ReadFile(o.TLSCA)
			if err != nil {
				return nil, fmt.Errorf("goclient: TLS CA: %w", err)
			}
			pool := x509.NewCertPool()
			if !pool.AppendCertsFromPEM(pem) {
				return nil, fmt.Errorf("goclient: TLS CA %s holds no PEM certificate", o.TLSCA)
			}
			tc.RootCAs = pool
		}
		if o.TLSCert != "" {
			cert, err := tls.LoadX509KeyPair(o.TLSCert, o.TLSKey)
			if err != nil {
				return nil, fmt.Errorf("goclient: TLS client certificate %s with key %s: %w", o.TLSCert, o.TLSKey, err)
			}
			tc.Certificates = []tls.Certificate{cert}
		}
		dopts = append(dopts, grpc.WithTransportCredentials(credentials.NewTLS(tc)))
	} else {
		dopts = append(dopts, grpc.WithTransportCredentials(insecure.NewCredentials()))
	}
	if o.TokenFile != "" {
		b, err := os.ReadFile(o.TokenFile)
		if err != nil {
			return nil, fmt.Errorf("goclient: token file: %w", err)
		}
		tok := strings.TrimSpace(string(b))
		if tok == "" || strings.ContainsAny(tok, "\r\n") {
			return nil, fmt.Errorf("goclient: token file %s must hold one non-empty line", o.TokenFile)
		}
		dopts = append(dopts, grpc.WithPerRPCCredentials(bearer{token: tok, secure: useTLS}))
	}
	return dopts, nil
}

// bearer sends "authorization: Bearer <token>" with every call. Without
// TLS the token travels in clear text, which is acceptable only on loopback
// or inside a trusted network.
type bearer struct {
	token  string
	secure bool
}

func (b bearer) GetRequestMetadata(context.Context, ...string) (map[string]string, error) {
	return map[string]string{"authorization": "Bearer " + b.token}, nil
}

func (b bearer) RequireTransportSecurity() bool { return b.secure }
