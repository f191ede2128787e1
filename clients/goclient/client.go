package goclient

import (
	"context"
	"errors"
	"fmt"
	"net"
	"strings"

	"google.golang.org/grpc"
	"google.golang.org/grpc/resolver"
	"google.golang.org/grpc/resolver/manual"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// MaxMessageBytes is the largest message the client sends or receives
// (256 MiB), far above gRPC's 4 MiB default so that batches of millions of
// points fit one call.
const MaxMessageBytes = 256 << 20

// DefaultChunkPoints is how many points EvaluateAll puts in one
// EvaluateStream message when Client.ChunkPoints is zero.
const DefaultChunkPoints = 64 << 10

// serviceConfig balances over every resolved address and retries calls
// that fail with UNAVAILABLE (a server restarting or draining) on another
// address, with exponential backoff.
const serviceConfig = `{
  "loadBalancingConfig": [{"round_robin": {}}],
  "methodConfig": [{
    "name": [{"service": "phasebound.v1.BoundaryService"}],
    "retryPolicy": {
      "maxAttempts": 4,
      "initialBackoff": "0.05s",
      "maxBackoff": "1s",
      "backoffMultiplier": 2,
      "retryableStatusCodes": ["UNAVAILABLE"]
    }
  }]
}`

// Options configure Dial. The zero value dials without transport security
// and without a token, which suits a server on the same host.
type Options struct {
	// TokenFile holds the bearer token sent with every call as
	// "authorization: Bearer <token>".
	TokenFile string
	// TLSCA is a PEM bundle of the CAs that sign the server's certificate;
	// setting it (or TLSCert) turns TLS on.
	TLSCA string
	// TLSCert and TLSKey are the client's certificate and key for mutual TLS.
	TLSCert, TLSKey string
	// DialOptions are appended to the options Dial builds.
	DialOptions []grpc.DialOption
}

// Client calls a phasebound server. It is safe for concurrent use.
type Client struct {
	rpc phaseboundpb.BoundaryServiceClient
	cc  *grpc.ClientConn // nil when built by New

	// ChunkPoints is the number of points per EvaluateStream message used
	// by EvaluateAll; 0 means DefaultChunkPoints. Set it before use.
	ChunkPoints int
}

// Dial connects to target: "host:port", a comma-separated list
// "host:port,host:port" (calls are spread round-robin over the list), or a
// gRPC target with a scheme such as "dns:///name:port" (every address the
// name resolves to, round-robin). Calls that fail with UNAVAILABLE are
// retried. Dial does not wait for a connection; the first call does.
//
// Over TLS each server's certificate is checked against the host it is
// dialled by: each HOST of a list against its own certificate (a DNS name
// against the DNS SANs, an IP address against the IP SANs), the NAME of
// "dns:///NAME:PORT" for every address it resolves to.
func Dial(ctx context.Context, target string, opts Options) (*Client, error) {
	_ = ctx // connections are established lazily by the first call
	target = strings.TrimSpace(target)
	if target == "" {
		return nil, errors.New("goclient: empty server address (want HOST:PORT[,HOST:PORT...] or dns:///NAME:PORT)")
	}
	dopts := []grpc.DialOption{
		grpc.WithDefaultServiceConfig(serviceConfig),
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(MaxMessageBytes), grpc.MaxCallSendMsgSize(MaxMessageBytes)),
	}
	if !strings.Contains(target, "://") {
		// Each address is its own server name, so every replica's
		// certificate is checked against the host it was dialled by (the
		// TLS credentials drop the port) and each call's :authority is the
		// address it goes to. No WithAuthority: it would override those
		// names with one for every address.
		var addrs []resolver.Address
		for _, a := range strings.Split(target, ",") {
			a = strings.TrimSpace(a)
			host, port, err := net.SplitHostPort(a)
			if err != nil || host == "" || port == "" {
				return nil, fmt.Errorf("goclient: server address %q is not HOST:PORT (want HOST:PORT[,HOST:PORT...] or dns:///NAME:PORT)", a)
			}
			addrs = append(addrs, resolver.Address{Addr: a, ServerName: a})
		}
		r := manual.NewBuilderWithScheme("phasebound")
		r.InitialState(resolver.State{Endpoints: endpoints(addrs)})
		dopts = append(dopts, grpc.WithResolvers(r))
		target = r.Scheme() + ":///" + addrs[0].Addr
	}
	creds, err := opts.credentials()
	if err != nil {
		return nil, err
	}
	dopts = append(dopts, creds...)
	dopts = append(dopts, opts.DialOptions...)
	cc, err := grpc.NewClient(target, dopts...)
	if err != nil {
		return nil, fmt.Errorf("goclient: dial %s: %w", target, err)
	}
	return &Client{rpc: phaseboundpb.NewBoundaryServiceClient(cc), cc: cc}, nil
}

func endpoints(addrs []resolver.Address) []resolver.Endpoint {
	eps := make([]resolver.Endpoint, len(addrs))
	for i, a := range addrs {
		eps[i] = resolver.Endpoint{Addresses: []resolver.Address{a}}
	}
	return eps
}

// New returns a client on an existing connection (for example one made
// with bufconn in tests). Close does not close cc.
func New(cc grpc.ClientConnInterface) *Client {
	return &Client{rpc: phaseboundpb.NewBoundaryServiceClient(cc)}
}

// Close closes the connection made by Dial.
func (c *Client) Close() error {
	if c.cc == nil {
		return nil
	}
	return c.cc.Close()
}

// Raw returns the generated gRPC client, for calls this package does not wrap.
func (c *Client) Raw() phaseboundpb.BoundaryServiceClient { return c.rpc }

// ListSubstances returns every substance the server serves.
func (c *Client) ListSubstances(ctx context.Context) (*phaseboundpb.ListSubstancesResponse, error) {
	return c.rpc.ListSubstances(ctx, &phaseboundpb.ListSubstancesRequest{})
}

// DescribeSubstance returns one substance by id.
func (c *Client) DescribeSubstance(ctx context.Context, id string) (*phaseboundpb.DescribeSubstanceResponse, error) {
	return c.rpc.DescribeSubstance(ctx, &phaseboundpb.DescribeSubstanceRequest{Substance: id})
}

// Evaluate evaluates one batch in one call. Batches above a few million
// points should go through EvaluateAll. The response is expanded (see
// Expand): status and branch_index hold one entry per point.
func (c *Client) Evaluate(ctx context.Context, req *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	r, err := c.rpc.Evaluate(ctx, req)
	if err != nil {
		return nil, err
	}
	if err := Expand(r); err != nil {
		return nil, err
	}
	return r, nil
}

// Expand turns a compact EvaluateResponse into the per-point form. The
// server sends status and branch_index empty when every point is
// POINT_STATUS_OK on one branch, whose name is then branch_names[0] (that
// spares every batch two integer arrays on the wire); Expand fills them
// with POINT_STATUS_OK and 0, one per point. It leaves a per-point
// response as it is, and reports a response whose arrays disagree in
// length, or whose branch_index points past branch_names, as malformed.
func Expand(r *phaseboundpb.EvaluateResponse) error {
	n := len(r.GetTemperatureK())
	if len(r.GetPressurePa()) != n || len(r.GetDpdtPaPerK()) != n {
		return fmt.Errorf("goclient: malformed response: %d temperatures, %d pressures, %d slopes",
			n, len(r.GetPressurePa()), len(r.GetDpdtPaPerK()))
	}
	if len(r.GetStatus()) == 0 && len(r.GetBranchIndex()) == 0 {
		if n > 0 && len(r.GetBranchNames()) != 1 {
			return fmt.Errorf("goclient: malformed compact response: %d branch names, want 1", len(r.GetBranchNames()))
		}
		r.Status = make([]phaseboundpb.PointStatus, n)
		for i := range r.Status {
			r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OK
		}
		r.BranchIndex = make([]uint32, n)
		return nil
	}
	if len(r.GetStatus()) != n || len(r.GetBranchIndex()) != n {
		return fmt.Errorf("goclient: malformed response: %d points, %d statuses, %d branch indices",
			n, len(r.GetStatus()), len(r.GetBranchIndex()))
	}
	for i, b := range r.GetBranchIndex() {
		if int(b) >= len(r.GetBranchNames()) {
			return fmt.Errorf("goclient: malformed response: point %d names branch %d of %d", i, b, len(r.GetBranchNames()))
		}
	}
	return nil
}

// LocatePhase tells the phase of each (T, P) state.
func (c *Client) LocatePhase(ctx context.Context, req *phaseboundpb.LocatePhaseRequest) (*phaseboundpb.LocatePhaseResponse, error) {
	return c.rpc.LocatePhase(ctx, req)
}

// ExportTables returns the compiled tables of a substance.
func (c *Client) ExportTables(ctx context.Context, id string) (*phaseboundpb.ExportTablesResponse, error) {
	return c.rpc.ExportTables(ctx, &phaseboundpb.ExportTablesRequest{Substance: id})
}

// Echo sends a payload through the server and back (a transport floor for
// benchmarks).
func (c *Client) Echo(ctx context.Context, req *phaseboundpb.EchoRequest) (*phaseboundpb.EchoResponse, error) {
	return c.rpc.Echo(ctx, req)
}
