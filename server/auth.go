package server

import (
	"context"
	"crypto/sha256"
	"crypto/subtle"
	"crypto/tls"
	"crypto/x509"
	"errors"
	"fmt"
	"log/slog"
	"os"
	"strings"
	"sync/atomic"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials"
	healthpb "google.golang.org/grpc/health/grpc_health_v1"
	"google.golang.org/grpc/metadata"
	"google.golang.org/grpc/status"
)

// SecurityConfig says how the server authenticates callers. Its zero value
// means no TLS and no token: plain-text gRPC, which the command line only
// allows on loopback unless --insecure is given.
type SecurityConfig struct {
	// TokenFile holds the bearer token every call must present in its
	// "authorization: Bearer <token>" metadata. Surrounding white space is
	// trimmed; an empty file is refused. "" disables token checks.
	TokenFile string
	// TLSCert and TLSKey are the server's PEM certificate chain and private
	// key. Both or neither.
	TLSCert, TLSKey string
	// TLSClientCA is a PEM bundle of the CAs that sign client certificates.
	// When set, every client must present a certificate signed by one of
	// them (mutual TLS). Needs TLSCert and TLSKey.
	TLSClientCA string
	// MinTLSVersion is tls.VersionTLS12 or tls.VersionTLS13; 0 means TLS 1.2.
	MinTLSVersion uint16
	// Logger receives warnings (e.g. a token file readable by others);
	// nil discards them.
	Logger *slog.Logger
}

// Security holds the server's credentials: the bearer token and the TLS
// certificate, both reloadable from their files (on SIGHUP, say) without
// restarting the listener. Calls that are already authenticated are not
// affected by a reload.
type Security struct {
	cfg   SecurityConfig
	token atomic.Pointer[[sha256.Size]byte] // SHA-256 of the token; nil when no token is required
	cert  atomic.Pointer[tls.Certificate]
	tls   *tls.Config
}

// SecurityOptions returns the gRPC server options for cfg: TLS transport
// credentials when a certificate is given, and unary and stream
// interceptors that check the bearer token when a token file is given.
// It is NewSecurity(cfg) followed by ServerOptions.
func SecurityOptions(cfg SecurityConfig) ([]grpc.ServerOption, error) {
	s, err := NewSecurity(cfg)
	if err != nil {
		return nil, err
	}
	return s.ServerOptions(), nil
}

// NewSecurity reads the token file and the TLS files of cfg and checks that
// they fit together.
func NewSecurity(cfg SecurityConfig) (*Security, error) {
	if (cfg.TLSCert == "") != (cfg.TLSKey == "") {
		return nil, errors.New("--tls-cert and --tls-key must be given together")
	}
	if cfg.TLSClientCA != "" && cfg.TLSCert == "" {
		return nil, errors.New("--tls-client-ca (mutual TLS) needs --tls-cert and --tls-key for the server's own certificate")
	}
	switch cfg.MinTLSVersion {
	case 0:
		cfg.MinTLSVersion = tls.VersionTLS12
	case tls.VersionTLS12, tls.VersionTLS13:
	default:
		return nil, fmt.Errorf("minimum TLS version %#04x not supported (valid: TLS 1.2 or TLS 1.3)", cfg.MinTLSVersion)
	}
	s := &Security{cfg: cfg}
	if err := s.Reload(); err != nil {
		return nil, err
	}
	if cfg.TLSCert != "" {
		tc := &tls.Config{
			MinVersion: cfg.MinTLSVersion,
			// Resolved at each handshake so that Reload takes effect for new connections.
			GetCertificate: func(*tls.ClientHelloInfo) (*tls.Certificate, error) { return s.cert.Load(), nil },
		}
		if cfg.TLSClientCA != "" {
			pool, err := loadCertPool(cfg.TLSClientCA)
			if err != nil {
				return nil, err
			}
			tc.ClientCAs = pool
			tc.ClientAuth = tls.RequireAndVerifyClientCert
		}
		s.tls = tc
	}
	return s, nil
}

// Reload re-reads the token file and the TLS certificate and key. On any
// error the credentials in use are kept and the error says why. The client
// CA bundle is read only at start.
func (s *Security) Reload() error {
	var digest *[sha256.Size]byte
	if s.cfg.TokenFile != "" {
		tok, err := readToken(s.cfg.TokenFile)
		if err != nil {
			return err
		}
		d := sha256.Sum256([]byte(tok))
		digest = &d
		if fi, err := os.Stat(s.cfg.TokenFile); err == nil && fi.Mode().Perm()&0o007 != 0 && s.cfg.Logger != nil {
			s.cfg.Logger.Warn("token file is readable by every user; chmod 600 it", "file", s.cfg.TokenFile, "mode", fi.Mode().Perm().String())
		}
	}
	var cert *tls.Certificate
	if s.cfg.TLSCert != "" {
		c, err := tls.LoadX509KeyPair(s.cfg.TLSCert, s.cfg.TLSKey)
		if err != nil {
			return fmt.Errorf("TLS certificate %s with key %s: %w", s.cfg.TLSCert, s.cfg.TLSKey, err)
		}
		cert = &c
	}
	if digest != nil {
		s.token.Store(digest)
	}
	if cert != nil {
		s.cert.Store(cert)
	}
	return nil
}

// TLS reports whether the server uses TLS.
func (s *Security) TLS() bool { return s.tls != nil }

// MutualTLS reports whether clients must present a certificate.
func (s *Security) MutualTLS() bool {
	return s.tls != nil && s.tls.ClientAuth == tls.RequireAndVerifyClientCert
}

// TokenRequired reports whether calls must carry the bearer token.
func (s *Security) TokenRequired() bool { return s.token.Load() != nil }

// ServerOptions returns the transport credentials (when TLS is configured)
// and the authentication interceptors (when a token is configured).
func (s *Security) ServerOptions() []grpc.ServerOption {
	var opts []grpc.ServerOption
	if s.tls != nil {
		opts = append(opts, grpc.Creds(credentials.NewTLS(s.tls)))
	}
	if s.TokenRequired() {
		opts = append(opts,
			grpc.ChainUnaryInterceptor(s.UnaryInterceptor()),
			grpc.ChainStreamInterceptor(s.StreamInterceptor()))
	}
	return opts
}

// authExempt reports whether a method may be called without a token. The
// gRPC health service (grpc.health.v1.Health) is exempt so that load
// balancers and Kubernetes probes, which cannot present a bearer token,
// can check the server; it reveals only whether the server is serving.
// Everything else, reflection included, needs the token.
func authExempt(fullMethod string) bool {
	return strings.HasPrefix(fullMethod, "/grpc.health.v1.Health/")
}

// UnaryInterceptor checks the bearer token of unary calls.
func (s *Security) UnaryInterceptor() grpc.UnaryServerInterceptor {
	return func(ctx context.Context, req any, info *grpc.UnaryServerInfo, handler grpc.UnaryHandler) (any, error) {
		if !authExempt(info.FullMethod) {
			if err := s.authenticate(ctx); err != nil {
				return nil, err
			}
		}
		return handler(ctx, req)
	}
}

// StreamInterceptor checks the bearer token of streaming calls.
func (s *Security) StreamInterceptor() grpc.StreamServerInterceptor {
	return func(srv any, ss grpc.ServerStream, info *grpc.StreamServerInfo, handler grpc.StreamHandler) error {
		if !authExempt(info.FullMethod) {
			if err := s.authenticate(ss.Context()); err != nil {
				return err
			}
		}
		return handler(srv, ss)
	}
}

// authenticate checks the "authorization" metadata against the token in
// constant time (both sides are hashed first, so neither the content nor
// the length of the token leaks through timing).
func (s *Security) authenticate(ctx context.Context) error {
	want := s.token.Load()
	if want == nil {
		return nil
	}
	md, _ := metadata.FromIncomingContext(ctx)
	vals := md.Get("authorization")
	if len(vals) == 0 || strings.TrimSpace(vals[0]) == "" {
		return status.Error(codes.Unauthenticated, "missing bearer token: pass --token-file")
	}
	scheme, tok, ok := strings.Cut(strings.TrimSpace(vals[0]), " ")
	if !ok || !strings.EqualFold(scheme, "Bearer") {
		return status.Error(codes.Unauthenticated, `invalid bearer token: authorization metadata must read "Bearer <token>"`)
	}
	got := sha256.Sum256([]byte(strings.TrimSpace(tok)))
	if subtle.ConstantTimeCompare(got[:], want[:]) != 1 {
		return status.Error(codes.Unauthenticated, "invalid bearer token")
	}
	return nil
}

// readToken reads a token file: trimmed of surrounding white space, and
// refused when empty or when it holds more than one line.
func readToken(path string) (string, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return "", fmt.Errorf("token file: %w", err)
	}
	tok := strings.TrimSpace(string(b))
	if tok == "" {
		return "", fmt.Errorf("token file %s is empty: put the bearer token in it (e.g. 32 random bytes, base64)", path)
	}
	if strings.ContainsAny(tok, "\r\n") {
		return "", fmt.Errorf("token file %s holds more than one line: it must hold only the bearer token", path)
	}
	return tok, nil
}

// loadCertPool reads a PEM bundle of CA certificates.
func loadCertPool(path string) (*x509.CertPool, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("client CA bundle: %w", err)
	}
	pool := x509.NewCertPool()
	if !pool.AppendCertsFromPEM(b) {
		return nil, fmt.Errorf("client CA bundle %s holds no PEM certificate", path)
	}
	return pool, nil
}

// RegisterHealth registers only the server's gRPC health service on g, for
// a separate plain-text listener that probes reach without credentials
// (the Kubernetes grpc probe speaks neither TLS nor bearer tokens). It
// reports the same status as the main listener: NOT_SERVING once Shutdown
// or Close is called.
func (s *Server) RegisterHealth(g *grpc.Server) {
	healthpb.RegisterHealthServer(g, s.health)
}
