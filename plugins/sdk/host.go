package sdk

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"sync"
	"sync/atomic"
	"time"

	"github.com/hashicorp/go-hclog"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	"github.com/phasebound/phasebound/plugins/sdk/internal/fromproto"
	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
	"github.com/phasebound/phasebound/plugins/sdk/internal/toproto"
)

// Defaults for the zero HostConfig.
const (
	DefaultMinBackoff   = 200 * time.Millisecond
	DefaultMaxBackoff   = 30 * time.Second
	DefaultStartTimeout = 30 * time.Second
	// A running backend is asked every DefaultPingInterval to describe
	// itself; one that has not answered DefaultPingFailures times in a row
	// within DefaultPingTimeout each is hung: it is killed and restarted.
	DefaultPingInterval = 10 * time.Second
	DefaultPingTimeout  = 5 * time.Second
	DefaultPingFailures = 3
)

// stableAfter is how long a backend must have run for its next crash to
// restart it after MinBackoff again rather than after a growing delay.
const stableAfter = time.Minute

// exitPollInterval is how often a supervisor checks its backend process.
const exitPollInterval = 50 * time.Millisecond

// deathGrace is how long Evaluate waits, after a call failed in a way that
// is not plainly a lost connection, to see whether the process died.
const deathGrace = 500 * time.Millisecond

// maxSocketDirLen leaves room in a 104-byte socket path for the name a
// backend gives its socket.
const maxSocketDirLen = 80

// HostConfig configures a Host. The zero value is usable: standard
// backends re-execute the running binary, sockets live in a fresh temporary
// directory, restarts back off from 200 ms to 30 s.
type HostConfig struct {
	// Logger receives the host's and the backends' logs; nil is slog.Default().
	Logger *slog.Logger
	// Command returns the command that runs standard backend name. Nil
	// re-executes os.Executable() with the arguments "backend NAME". The
	// executable's SHA-256 is pinned at the first start and checked before
	// every start. Tests point this at their own binary.
	Command func(name string) (*exec.Cmd, error)
	// SocketDir is where backends create their unix sockets. A socket path
	// must stay under about 100 bytes, so keep it short. "" makes a fresh
	// private directory, removed by Close.
	SocketDir string
	// MinBackoff and MaxBackoff bound the delay before restarting a backend
	// that exited; it doubles per failed restart. Zero means the defaults.
	MinBackoff, MaxBackoff time.Duration
	// StartTimeout bounds a backend's start-up and first handshake; zero
	// means DefaultStartTimeout.
	StartTimeout time.Duration
	// OnRestart, if set, is called after each successful restart of a
	// backend that had exited (for metrics). It must not block.
	OnRestart func(backend string)
	// PingInterval, PingTimeout and PingFailures detect a backend that is
	// alive but no longer answers (deadlocked, stopped, starved): it is
	// asked to describe itself every PingInterval, and after PingFailures
	// unanswered asks in a row, each given PingTimeout, it is killed and
	// restarted like one that exited. A long evaluation does not count:
	// the backend answers the ask on another goroutine. Zero means the
	// defaults (10 s, 5 s, 3); a negative PingInterval turns the check off.
	PingInterval, PingTimeout time.Duration
	PingFailures              int
}

// BackendSpec names a backend to start.
type BackendSpec struct {
	Name string
	// Path is the executable of a third-party backend; "" starts the
	// standard backend Name through HostConfig.Command.
	Path string
	// SHA256 pins the executable (64 hex digits); required with Path. For a
	// standard backend "" pins the executable as found at the first start.
	SHA256 string
}

// Host starts, supervises and calls backend processes. Its methods are safe
// for concurrent use.
type Host struct {
	cfg      HostConfig
	log      *slog.Logger
	hclog    hclog.Logger
	restarts atomic.Uint64
	hung     atomic.Uint64

	mu        sync.Mutex
	closed    bool
	socketDir string
	ownDir    bool
	pins      map[string]string // executable path → pinned SHA-256 (standard backends)
	sups      map[string]*supervisor
}

// NewHost returns a Host with no backends running.
func NewHost(cfg HostConfig) *Host {
	if cfg.Logger == nil {
		cfg.Logger = slog.Default()
	}
	if cfg.MinBackoff <= 0 {
		cfg.MinBackoff = DefaultMinBackoff
	}
	if cfg.MaxBackoff <= 0 {
		cfg.MaxBackoff = DefaultMaxBackoff
	}
	if cfg.MaxBackoff < cfg.MinBackoff {
		cfg.MaxBackoff = cfg.MinBackoff
	}
	if cfg.StartTimeout <= 0 {
		cfg.StartTimeout = DefaultStartTimeout
	}
	if cfg.PingInterval == 0 {
		cfg.PingInterval = DefaultPingInterval
	}
	if cfg.PingTimeout <= 0 {
		cfg.PingTimeout = DefaultPingTimeout
	}
	if cfg.PingFailures <= 0 {
		cfg.PingFailures = DefaultPingFailures
	}
	return &Host{
		cfg:   cfg,
		log:   cfg.Logger,
		hclog: newHCLogger(cfg.Logger),
		pins:  map[string]string{},
		sups:  map[string]*supervisor{},
	}
}

// Restarts returns how many times backends that exited have been restarted.
func (h *Host) Restarts() uint64 { return h.restarts.Load() }

// Hung returns how many times a backend was killed for not answering (see
// HostConfig.PingInterval); each is then restarted and counted by Restarts.
func (h *Host) Hung() uint64 { return h.hung.Load() }

// Backends returns the names of the started backends, sorted.
func (h *Host) Backends() []string {
	h.mu.Lock()
	defer h.mu.Unlock()
	names := make([]string, 0, len(h.sups))
	for n := range h.sups {
		names = append(names, n)
	}
	slices.Sort(names)
	return names
}

// Info describes the started backend name as it reported itself at its
// last start.
func (h *Host) Info(name string) (BackendInfo, error) {
	s, err := h.supervisor(name)
	if err != nil {
		return BackendInfo{}, err
	}
	return *s.info.Load(), nil
}

// Start launches a backend and keeps it running until Close. It verifies
// the executable's SHA-256 first and refuses a mismatch with a
// *ChecksumError. Starting a name again with the same spec does nothing;
// with a different spec the new backend replaces the old one once it runs.
func (h *Host) Start(ctx context.Context, spec BackendSpec) error {
	if !backendNameRE.MatchString(spec.Name) {
		return fmt.Errorf("sdk: backend name %q must match [a-z0-9][a-z0-9-]*", spec.Name)
	}
	h.mu.Lock()
	if h.closed {
		h.mu.Unlock()
		return errors.New("sdk: host is closed")
	}
	if old := h.sups[spec.Name]; old != nil && old.spec == spec {
		h.mu.Unlock()
		return nil
	}
	err := h.ensureSocketDirLocked()
	h.mu.Unlock()
	if err != nil {
		return err
	}

	s, err := h.newSupervisor(spec)
	if err != nil {
		return err
	}
	inst, err := s.launch(ctx)
	if err != nil {
		return err
	}
	s.cur.Store(inst)
	go s.run(inst)

	h.mu.Lock()
	if h.closed {
		h.mu.Unlock()
		s.shutdown()
		return errors.New("sdk: host is closed")
	}
	old := h.sups[spec.Name]
	h.sups[spec.Name] = s
	h.mu.Unlock()
	if old != nil {
		old.shutdown()
	}
	h.log.Info("backend started", "backend", spec.Name, "path", inst.path, "pid", inst.pid,
		"version", inst.info.Version, "families", inst.info.Families, "volume_families", inst.info.Volumes)
	return nil
}

// Close stops every backend and waits for the processes to end. Calls in
// flight fail with ErrBackendUnavailable. Close may be called more than once.
func (h *Host) Close() {
	h.mu.Lock()
	if h.closed {
		h.mu.Unlock()
		return
	}
	h.closed = true
	sups := h.sups
	h.sups = nil
	h.mu.Unlock()

	var wg sync.WaitGroup
	for _, s := range sups {
		wg.Go(s.shutdown)
	}
	wg.Wait()
	if h.ownDir {
		_ = os.RemoveAll(h.socketDir)
	}
}

// Evaluate runs req on the backend named backend. Per-point problems are
// Failures in the result; the error is non-nil only when no point could be
// evaluated: a *SetupError (bad parameters or family), a malformed request,
// the context's error, or — when the process died or is restarting — an
// error wrapping ErrBackendUnavailable, which is safe to retry. Batches of
// any size are sent in chunks that fit the protocol's message limit.
func (h *Host) Evaluate(ctx context.Context, backend string, req EvalRequest) (EvalResult, error) {
	if err := req.check(); err != nil {
		return EvalResult{}, err
	}
	s, err := h.supervisor(backend)
	if err != nil {
		return EvalResult{}, err
	}
	inst := s.cur.Load()
	if inst == nil || inst.isDead() {
		return EvalResult{}, fmt.Errorf("%w: backend %q is restarting", ErrBackendUnavailable, backend)
	}
	return evaluate(ctx, backend, inst.rpc, inst.dead, req, maxChunkPoints)
}

func (r EvalRequest) check() error {
	if _, ok := opNames[r.Op]; !ok {
		return fmt.Errorf("sdk: unknown operation %v (valid: OpPressure, OpTemperature, OpVolume)", r.Op)
	}
	if r.Op == OpVolume && len(r.Pressures) != 0 && len(r.Pressures) != len(r.Values) {
		return fmt.Errorf("sdk: %d pressures given for %d temperatures; give one per temperature or none",
			len(r.Pressures), len(r.Values))
	}
	if len(r.Values) > math.MaxUint32 {
		return fmt.Errorf("sdk: %d points exceed the protocol's limit of %d", len(r.Values), uint64(math.MaxUint32))
	}
	return nil
}

// evaluate sends req to a backend in chunks of at most chunk points and
// assembles the result. dead, when closed, tells that the backend process
// has exited.
func evaluate(ctx context.Context, backend string, rpc pluginpb.BackendServiceClient, dead <-chan struct{}, req EvalRequest, chunk int) (EvalResult, error) {
	n := len(req.Values)
	params := toproto.Params(req.Params)
	var res EvalResult
	for off := 0; off == 0 || off < n; off += chunk {
		end := min(off+chunk, n)
		pbReq := &pluginpb.EvaluateRequest{
			Family:             req.Family,
			Params:             params,
			MinTemperatureK:    req.Tmin,
			MaxTemperatureK:    req.Tmax,
			Operation:          pluginpb.Operation(req.Op),
			Values:             req.Values[off:end],
			AllowExtrapolation: req.AllowExtrapolation,
		}
		if req.Op == OpVolume && len(req.Pressures) > 0 {
			pbReq.Pressures = req.Pressures[off:end]
		}
		resp, err := rpc.Evaluate(ctx, pbReq)
		if err != nil {
			return EvalResult{}, classifyCallError(ctx, backend, dead, err)
		}
		if resp.GetSetupError() != "" {
			return EvalResult{}, &SetupError{Backend: backend, Family: req.Family, Message: resp.GetSetupError()}
		}
		if err := appendChunk(&res, resp, off, end-off, n); err != nil {
			return EvalResult{}, fmt.Errorf("sdk: backend %q broke the protocol: %w", backend, err)
		}
	}
	return res, nil
}

// classifyCallError turns a failed call into the error Evaluate returns.
func classifyCallError(ctx context.Context, backend string, dead <-chan struct{}, err error) error {
	if ctx.Err() != nil {
		return fmt.Errorf("sdk: backend %q: %w", backend, ctx.Err())
	}
	switch status.Code(err) {
	case codes.DeadlineExceeded:
		// gRPC's own timer for the deadline may fire before the context's.
		return fmt.Errorf("sdk: backend %q: %w", backend, context.DeadlineExceeded)
	case codes.Unavailable:
		return fmt.Errorf("%w: backend %q: %v", ErrBackendUnavailable, backend, err)
	}
	select {
	case <-dead:
		return fmt.Errorf("%w: backend %q exited during the call: %v", ErrBackendUnavailable, backend, err)
	case <-time.After(deathGrace):
		return fmt.Errorf("sdk: backend %q: %w", backend, err)
	}
}

// appendChunk adds one response, covering points [off, off+m) of a batch of
// n, to res, checking that it is whole.
func appendChunk(res *EvalResult, resp *pluginpb.EvaluateResponse, off, m, n int) error {
	if len(resp.GetResults()) != m || len(resp.GetDerivatives()) != m {
		return fmt.Errorf("%d results and %d derivatives for %d points", len(resp.GetResults()), len(resp.GetDerivatives()), m)
	}
	if off == 0 && m == n {
		res.Results, res.Derivatives = resp.GetResults(), resp.GetDerivatives()
	} else {
		if res.Results == nil {
			res.Results, res.Derivatives = make([]float64, 0, n), make([]float64, 0, n)
		}
		res.Results = append(res.Results, resp.GetResults()...)
		res.Derivatives = append(res.Derivatives, resp.GetDerivatives()...)
	}
	for _, f := range resp.GetFailures() {
		i := int(f.GetIndex())
		if i >= m {
			return fmt.Errorf("failure index %d beyond %d points", i, m)
		}
		kind := FailureKind(f.GetKind())
		if _, ok := failNames[kind]; !ok {
			kind = FailOther
		}
		res.Failures = append(res.Failures, Failure{
			Index: i + off, Kind: kind, Message: f.GetMessage(), Min: f.GetValidMin(), Max: f.GetValidMax(),
		})
	}
	for _, i := range resp.GetExtrapolated() {
		if int(i) >= m {
			return fmt.Errorf("extrapolated index %d beyond %d points", i, m)
		}
	}
	res.Extrapolated = append(res.Extrapolated, fromproto.Indices(resp.GetExtrapolated(), off)...)
	return nil
}

func (h *Host) supervisor(name string) (*supervisor, error) {
	h.mu.Lock()
	defer h.mu.Unlock()
	if h.closed {
		return nil, fmt.Errorf("%w: host is closed", ErrBackendUnavailable)
	}
	s, ok := h.sups[name]
	if !ok {
		names := make([]string, 0, len(h.sups))
		for n := range h.sups {
			names = append(names, n)
		}
		slices.Sort(names)
		return nil, fmt.Errorf("sdk: backend %q is not started (started: %v)", name, names)
	}
	return s, nil
}

// ensureSocketDirLocked creates the socket directory on first use.
func (h *Host) ensureSocketDirLocked() error {
	if h.socketDir != "" {
		return nil
	}
	if dir := h.cfg.SocketDir; dir != "" {
		// A backend's socket is DIR/pluginNNNNNNNNNN; sun_path holds 104
		// bytes on some systems, 108 on Linux.
		if len(dir) > maxSocketDirLen {
			return fmt.Errorf("sdk: socket directory %s is %d bytes long; unix socket paths must stay under 104 bytes, so use one of at most %d",
				dir, len(dir), maxSocketDirLen)
		}
		if err := os.MkdirAll(dir, 0o700); err != nil {
			return fmt.Errorf("sdk: creating the backend socket directory: %w", err)
		}
		h.socketDir = dir
		return nil
	}
	base := os.TempDir()
	if len(base) > 60 {
		base = "/tmp" // some systems' temp dirs leave no room for a socket name
	}
	dir, err := os.MkdirTemp(base, "pb")
	if err != nil {
		return fmt.Errorf("sdk: creating the backend socket directory: %w", err)
	}
	h.socketDir, h.ownDir = dir, true
	return nil
}

// pin returns the pinned SHA-256 of a standard backend's executable,
// hashing it at first use.
func (h *Host) pin(path string) (string, error) {
	h.mu.Lock()
	defer h.mu.Unlock()
	if sum, ok := h.pins[path]; ok {
		return sum, nil
	}
	sum, err := FileSHA256(path)
	if err != nil {
		return "", err
	}
	h.pins[path] = sum
	return sum, nil
}

// defaultCommand re-executes the running binary as standard backend name.
func defaultCommand(name string) (*exec.Cmd, error) {
	exe, err := os.Executable()
	if err != nil {
		return nil, fmt.Errorf("sdk: finding the running executable for backend %q: %w", name, err)
	}
	if resolved, err := filepath.EvalSymlinks(exe); err == nil {
		exe = resolved
	}
	return exec.Command(exe, "backend", name), nil
}
