package sdk

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/hashicorp/go-plugin"

	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
)

// supervisor keeps one backend running: it launches the process, watches
// for its exit and launches a new one with backoff. go-plugin clients
// cannot be restarted, so each launch builds a new client (with a fresh
// checksum config) and swaps it in atomically.
type supervisor struct {
	h       *Host
	spec    BackendSpec
	command func() (*exec.Cmd, error)
	sha     string // pinned lower-case hex SHA-256; "" for a standard backend pinned at first launch

	cur      atomic.Pointer[instance]
	info     atomic.Pointer[BackendInfo]
	stopOnce sync.Once
	stop     chan struct{} // closed by shutdown
	done     chan struct{} // closed when run returns
	ctx      context.Context
	cancel   context.CancelFunc // cancels ctx, so a restart in progress gives up on shutdown
}

// instance is one running backend process.
type instance struct {
	client  *plugin.Client
	rpc     pluginpb.BackendServiceClient
	info    BackendInfo
	path    string
	pid     int
	socket  string // the backend's unix socket, left behind when it is killed
	started time.Time
	dead    chan struct{} // closed once the process has exited
}

func (in *instance) isDead() bool {
	select {
	case <-in.dead:
		return true
	default:
		return false
	}
}

func (h *Host) newSupervisor(spec BackendSpec) (*supervisor, error) {
	s := &supervisor{h: h, spec: spec, stop: make(chan struct{}), done: make(chan struct{})}
	s.ctx, s.cancel = context.WithCancel(context.Background())
	if spec.Path != "" {
		if spec.SHA256 == "" {
			return nil, fmt.Errorf("sdk: backend %q (%s) has no sha256; a third-party backend must be pinned by its SHA-256", spec.Name, spec.Path)
		}
		path, err := filepath.Abs(spec.Path)
		if err != nil {
			return nil, fmt.Errorf("sdk: backend %q: %w", spec.Name, err)
		}
		// Built by hand, not by exec.Command: a bare name must never be
		// looked up on PATH.
		s.command = func() (*exec.Cmd, error) { return &exec.Cmd{Path: path, Args: []string{path}}, nil }
	} else {
		name := spec.Name
		if _, ok := standardCurves[name]; !ok && h.cfg.Command == nil {
			return nil, fmt.Errorf("sdk: %q is not a standard backend (standard: %s); a third-party backend needs a path and a sha256",
				name, strings.Join(StandardNames(), ", "))
		}
		s.command = func() (*exec.Cmd, error) {
			if h.cfg.Command != nil {
				return h.cfg.Command(name)
			}
			return defaultCommand(name)
		}
	}
	if spec.SHA256 != "" {
		sum, _, err := parseSHA256(spec.Name, spec.SHA256)
		if err != nil {
			return nil, err
		}
		s.sha = sum
	}
	return s, nil
}

// launch starts one backend process, verifies it and asks what it serves.
func (s *supervisor) launch(ctx context.Context) (*instance, error) {
	h, name := s.h, s.spec.Name
	cmd, err := s.command()
	if err != nil {
		return nil, err
	}
	expected := s.sha
	if expected == "" {
		if expected, err = h.pin(cmd.Path); err != nil {
			return nil, fmt.Errorf("sdk: backend %q: %w", name, err)
		}
	}
	// Check before go-plugin does, for an error that names both hashes;
	// go-plugin checks again, with a hash state of its own, right before
	// it executes the file.
	actual, err := FileSHA256(cmd.Path)
	if err != nil {
		return nil, fmt.Errorf("sdk: backend %q: %w", name, err)
	}
	if actual != expected {
		return nil, &ChecksumError{Backend: name, Path: cmd.Path, Expected: expected, Actual: actual}
	}
	sum, _ := hex.DecodeString(expected)

	cmd.Env = append(cmd.Env, plugin.EnvUnixSocketDir+"="+h.socketDir)
	setParentDeathSignal(cmd)
	stderr := &tailBuffer{}
	client := plugin.NewClient(&plugin.ClientConfig{
		HandshakeConfig:  handshake,
		VersionedPlugins: pluginSets(nil),
		Cmd:              cmd,
		SecureConfig:     &plugin.SecureConfig{Checksum: sum, Hash: sha256.New()},
		// Not Managed: go-plugin would keep every managed client in a
		// global list for CleanupClients, one more per restart, for the
		// life of the process. The supervisor kills its own clients.
		Managed:          false,
		AllowedProtocols: []plugin.Protocol{plugin.ProtocolGRPC},
		StartTimeout:     h.cfg.StartTimeout,
		Logger:           h.hclog.Named(name),
		GRPCDialOptions:  hostDialOptions(),
		Stderr:           stderr,
	})
	fail := func(err error) (*instance, error) {
		client.Kill()
		// go-plugin's messages run over several lines; errors here are one.
		msg := strings.Join(strings.Fields(err.Error()), " ")
		if tail := stderr.String(); tail != "" {
			// A backend that dies at start-up usually said why: lead with it.
			return nil, fmt.Errorf("sdk: starting backend %q (%s) failed; it said: %s [%s]", name, cmd.Path, tail, msg)
		}
		return nil, fmt.Errorf("sdk: starting backend %q (%s): %s", name, cmd.Path, msg)
	}
	proto, err := client.Client()
	if err != nil {
		return fail(err)
	}
	raw, err := proto.Dispense(pluginName)
	if err != nil {
		return fail(err)
	}
	rpc, ok := raw.(pluginpb.BackendServiceClient)
	if !ok {
		return fail(fmt.Errorf("unexpected plugin client type %T", raw))
	}
	dctx, cancel := context.WithTimeout(ctx, h.cfg.StartTimeout)
	defer cancel()
	d, err := rpc.Describe(dctx, &pluginpb.DescribeRequest{})
	if err != nil {
		return fail(fmt.Errorf("describe: %w", err))
	}
	inst := &instance{
		client: client,
		rpc:    rpc,
		info: BackendInfo{
			Name: d.GetBackend(), Version: d.GetVersion(),
			Families: d.GetCurveFamilies(), Volumes: d.GetVolumeFamilies(),
		},
		path:    cmd.Path,
		started: time.Now(),
		dead:    make(chan struct{}),
	}
	if rc := client.ReattachConfig(); rc != nil {
		inst.pid = rc.Pid
		if rc.Addr != nil && rc.Addr.Network() == "unix" {
			inst.socket = rc.Addr.String()
		}
	}
	if inst.info.Name != name {
		h.log.Warn("backend calls itself by another name", "backend", name, "reported", inst.info.Name)
	}
	info := inst.info
	s.info.Store(&info)
	return inst, nil
}

// run supervises inst and its successors until shutdown.
func (s *supervisor) run(inst *instance) {
	defer close(s.done)
	h, name := s.h, s.spec.Name
	backoff := h.cfg.MinBackoff
	for {
		if !s.waitExit(inst) {
			close(inst.dead) // calls in flight now report ErrBackendUnavailable
			inst.client.Kill()
			return
		}
		if !inst.isDead() {
			close(inst.dead)
		}
		uptime := time.Since(inst.started)
		inst.client.Kill() // reap, end go-plugin's goroutines
		if inst.socket != "" {
			_ = os.Remove(inst.socket) // a killed backend cannot remove its own
		}
		if uptime >= stableAfter {
			backoff = h.cfg.MinBackoff
		}
		h.log.Warn("backend exited; restarting", "backend", name, "pid", inst.pid, "uptime", uptime.Round(time.Millisecond), "backoff", backoff)
		for {
			select {
			case <-s.stop:
				return
			case <-time.After(backoff):
			}
			backoff = min(2*backoff, h.cfg.MaxBackoff)
			next, err := s.launch(s.ctx)
			if err != nil {
				h.log.Error("backend restart failed", "backend", name, "error", err, "next_backoff", backoff)
				continue
			}
			select {
			case <-s.stop:
				next.client.Kill()
				return
			default:
			}
			s.cur.Store(next)
			inst = next
			h.restarts.Add(1)
			h.log.Info("backend restarted", "backend", name, "pid", inst.pid)
			if h.cfg.OnRestart != nil {
				h.cfg.OnRestart(name)
			}
			break
		}
	}
}

// waitExit returns true when inst's process has exited (or was killed for
// not answering), false on shutdown.
func (s *supervisor) waitExit(inst *instance) bool {
	t := time.NewTicker(exitPollInterval)
	defer t.Stop()
	cfg := s.h.cfg
	var ping <-chan time.Time
	if cfg.PingInterval > 0 {
		pt := time.NewTicker(cfg.PingInterval)
		defer pt.Stop()
		ping = pt.C
	}
	missed := 0
	for {
		if inst.client.Exited() {
			return true
		}
		select {
		case <-s.stop:
			return false
		case <-t.C:
		case <-ping:
			if s.answers(inst) {
				missed = 0
				continue
			}
			missed++
			if missed < cfg.PingFailures {
				continue
			}
			s.h.log.Error("backend does not answer; killing it", "backend", s.spec.Name, "pid", inst.pid,
				"unanswered", missed, "timeout", cfg.PingTimeout)
			s.h.hung.Add(1)
			close(inst.dead) // calls in flight report ErrBackendUnavailable now
			// Kill the process first: go-plugin's Kill asks the backend to
			// shut down over RPC before it signals, and a hung backend
			// never answers that. run reaps it through Kill afterwards.
			if inst.pid > 0 {
				if p, err := os.FindProcess(inst.pid); err == nil {
					_ = p.Kill()
				}
			}
			return true
		}
	}
}

// answers reports whether inst describes itself within the ping timeout.
func (s *supervisor) answers(inst *instance) bool {
	ctx, cancel := context.WithTimeout(s.ctx, s.h.cfg.PingTimeout)
	defer cancel()
	_, err := inst.rpc.Describe(ctx, &pluginpb.DescribeRequest{})
	return err == nil || s.ctx.Err() != nil
}

// shutdown stops supervision and kills the running process.
func (s *supervisor) shutdown() {
	s.stopOnce.Do(func() {
		close(s.stop)
		s.cancel()
	})
	<-s.done
}

// tailBufferSize is how much of a backend's stderr a start-up error quotes.
const tailBufferSize = 1024

// tailBuffer keeps the last tailBufferSize bytes written to it.
type tailBuffer struct {
	mu  sync.Mutex
	buf []byte
}

func (b *tailBuffer) Write(p []byte) (int, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.buf = append(b.buf, p...)
	if over := len(b.buf) - tailBufferSize; over > 0 {
		b.buf = append(b.buf[:0], b.buf[over:]...)
	}
	return len(p), nil
}

// String returns the kept output on one line.
func (b *tailBuffer) String() string {
	b.mu.Lock()
	defer b.mu.Unlock()
	return strings.Join(strings.Fields(string(b.buf)), " ")
}
