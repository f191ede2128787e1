package sdk

import (
	"context"
	"os"

	"github.com/hashicorp/go-plugin"
	"google.golang.org/grpc"

	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
)

// ProtocolVersion is the version of the plugin protocol
// (proto/phasebound/plugin/v1). Host and backend negotiate the highest
// version both support; a backend built for another version is refused at
// start with a message saying so.
const ProtocolVersion = 1

// The magic cookie is not a secret: it only tells a backend executable that
// the phasebound host started it, so that one run by hand can say what it is.
const (
	cookieKey   = "PHASEBOUND_BACKEND_COOKIE"
	cookieValue = "7f3c2a91-phase-boundary-backend"
)

// pluginName is the single plugin each backend process dispenses.
const pluginName = "backend"

// maxMessageBytes bounds one plugin-protocol message in either direction.
// gRPC's default of 4 MiB would cap a batch at about 500,000 doubles; the
// host splits batches into chunks of maxChunkPoints so a message stays far
// below this limit.
const maxMessageBytes = 256 << 20

// maxChunkPoints is the largest batch sent in one message: 32 MiB of input,
// about 64 MiB of results and slopes back.
const maxChunkPoints = 1 << 22

var handshake = plugin.HandshakeConfig{
	ProtocolVersion:  ProtocolVersion,
	MagicCookieKey:   cookieKey,
	MagicCookieValue: cookieValue,
}

// pluginSets maps each protocol version this build speaks to its plugin set;
// server is nil on the host side.
func pluginSets(server pluginpb.BackendServiceServer) map[int]plugin.PluginSet {
	return map[int]plugin.PluginSet{
		ProtocolVersion: {pluginName: &grpcPlugin{server: server}},
	}
}

// grpcPlugin binds the backend service to go-plugin, gRPC only.
type grpcPlugin struct {
	plugin.NetRPCUnsupportedPlugin
	server pluginpb.BackendServiceServer
}

var _ plugin.GRPCPlugin = (*grpcPlugin)(nil)

// GRPCServer registers the backend service on the plugin's gRPC server.
func (p *grpcPlugin) GRPCServer(_ *plugin.GRPCBroker, s *grpc.Server) error {
	pluginpb.RegisterBackendServiceServer(s, p.server)
	return nil
}

// GRPCClient returns the host's stub for the backend service.
func (p *grpcPlugin) GRPCClient(_ context.Context, _ *plugin.GRPCBroker, cc *grpc.ClientConn) (any, error) {
	return pluginpb.NewBackendServiceClient(cc), nil
}

// Batches are megabytes and the link is a local socket: a flow-control
// window that holds a whole chunk and large socket buffers save round trips
// and system calls (about a quarter of the time per point in
// BenchmarkHostEvaluate).
const (
	windowBytes = 16 << 20
	bufferBytes = 1 << 20
)

// newGRPCServer builds the backend's gRPC server with message limits raised
// to maxMessageBytes (go-plugin's own default keeps gRPC's 4 MiB).
func newGRPCServer(opts []grpc.ServerOption) *grpc.Server {
	opts = append(opts,
		grpc.MaxRecvMsgSize(maxMessageBytes), grpc.MaxSendMsgSize(maxMessageBytes),
		grpc.InitialWindowSize(windowBytes), grpc.InitialConnWindowSize(windowBytes),
		grpc.ReadBufferSize(bufferBytes), grpc.WriteBufferSize(bufferBytes))
	return grpc.NewServer(opts...)
}

// hostDialOptions raise the host side's call limits and windows to match.
func hostDialOptions() []grpc.DialOption {
	return []grpc.DialOption{
		grpc.WithDefaultCallOptions(grpc.MaxCallRecvMsgSize(maxMessageBytes), grpc.MaxCallSendMsgSize(maxMessageBytes)),
		grpc.WithInitialWindowSize(windowBytes), grpc.WithInitialConnWindowSize(windowBytes),
		grpc.WithReadBufferSize(bufferBytes), grpc.WithWriteBufferSize(bufferBytes),
	}
}

// CheckLaunched returns ErrNotLaunched unless this process was started by
// a phasebound host. Serve calls it; a command that serves a backend may
// call it first to refuse with its own error path.
func CheckLaunched() error {
	if os.Getenv(cookieKey) != cookieValue {
		return ErrNotLaunched
	}
	return nil
}
