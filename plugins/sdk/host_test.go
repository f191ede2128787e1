package sdk

import (
	"bufio"
	"context"
	"errors"
	"log/slog"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/phasebound/phasebound/thermo"
)

// These tests start real backend processes (this test binary, see
// TestMain) over real unix sockets.

func currentPID(t *testing.T, h *Host, name string) int {
	t.Helper()
	s, err := h.supervisor(name)
	if err != nil {
		t.Fatal(err)
	}
	inst := s.cur.Load()
	if inst == nil || inst.pid == 0 {
		t.Fatalf("backend %q has no process", name)
	}
	return inst.pid
}

// processGone reports whether pid no longer runs (reaped, or a zombie).
func processGone(pid int) bool {
	if err := syscall.Kill(pid, 0); errors.Is(err, syscall.ESRCH) {
		return true
	}
	stat, err := os.ReadFile("/proc/" + strconv.Itoa(pid) + "/stat")
	if err != nil {
		return errors.Is(err, os.ErrNotExist)
	}
	// The state follows the parenthesised command name.
	s := string(stat)
	if i := strings.LastIndexByte(s, ')'); i >= 0 && i+2 < len(s) {
		return s[i+2] == 'Z' || s[i+2] == 'X'
	}
	return false
}

// waitFor polls cond for at most limit; the limit only bounds a broken run.
func waitFor(limit time.Duration, cond func() bool) bool {
	for end := time.Now().Add(limit); time.Now().Before(end); time.Sleep(20 * time.Millisecond) {
		if cond() {
			return true
		}
	}
	return cond()
}

// selfExecutable returns the test binary, which serves as a backend, and
// its SHA-256.
func selfExecutable(t *testing.T) (path, sha string) {
	t.Helper()
	path, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	sha, err = FileSHA256(path)
	if err != nil {
		t.Fatal(err)
	}
	return path, sha
}

func TestHostStartEvaluate(t *testing.T) {
	h := newTestHost(t, HostConfig{})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "alpha"}); err != nil {
		t.Fatal(err)
	}
	if err := h.Start(ctx, BackendSpec{Name: "alpha"}); err != nil {
		t.Fatalf("starting again with the same spec: %v", err)
	}
	info, err := h.Info("alpha")
	if err != nil || info.Name != "alpha" || !slices.Contains(info.Families, "test-line") || !slices.Equal(info.Volumes, []string{"test-ideal"}) {
		t.Fatalf("Info = %+v, %v", info, err)
	}
	if got := h.Backends(); !slices.Equal(got, []string{"alpha"}) {
		t.Errorf("Backends = %v", got)
	}
	res, err := h.Evaluate(ctx, "alpha", EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{250, 400}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Results[0] != 13500 || res.Derivatives[0] != 50 || len(res.Failures) != 1 || res.Failures[0].Kind != FailOutOfRange {
		t.Errorf("Evaluate = %+v", res)
	}
	if _, err := h.Evaluate(ctx, "beta", EvalRequest{Op: OpPressure}); err == nil || !strings.Contains(err.Error(), "alpha") {
		t.Errorf("unknown backend: err = %v, want one listing the started backends", err)
	}
}

// TestHostLargeBatch sends a million doubles (8 MB, twice gRPC's default
// message limit) through a real plugin process and back.
func TestHostLargeBatch(t *testing.T) {
	h := newTestHost(t, HostConfig{})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "big"}); err != nil {
		t.Fatal(err)
	}
	const n = 1_000_000
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = 200 + 100*float64(i)/(n-1)
	}
	res, err := h.Evaluate(ctx, "big", EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: ts})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Results) != n || len(res.Failures) != 0 {
		t.Fatalf("%d results, %d failures", len(res.Results), len(res.Failures))
	}
	for i, p := range res.Results {
		if want := 1000 + 50*ts[i]; p != want || res.Derivatives[i] != 50 {
			t.Fatalf("point %d: P = %v, dP/dT = %v; want %v, 50", i, p, res.Derivatives[i], want)
		}
	}
}

func TestHostRefusesChecksumMismatch(t *testing.T) {
	exe, actual := selfExecutable(t)
	wrong := strings.Repeat("0", 64)
	h := newTestHost(t, HostConfig{})
	err := h.Start(context.Background(), BackendSpec{Name: "intruder", Path: exe, SHA256: wrong})
	var ce *ChecksumError
	if !errors.As(err, &ce) {
		t.Fatalf("err = %v, want a *ChecksumError", err)
	}
	if ce.Path != exe || ce.Expected != wrong || ce.Actual != actual {
		t.Errorf("ChecksumError = %+v, want path %s, expected %s, actual %s", ce, exe, wrong, actual)
	}
	for _, s := range []string{exe, wrong, actual} {
		if !strings.Contains(err.Error(), s) {
			t.Errorf("error %q does not name %s", err, s)
		}
	}
	if got := h.Backends(); len(got) != 0 {
		t.Errorf("a refused backend is listed: %v", got)
	}

	// Malformed and missing pins are refused before anything runs.
	for _, sha := range []string{"", "abc", strings.Repeat("g", 64)} {
		if err := h.Start(context.Background(), BackendSpec{Name: "intruder", Path: exe, SHA256: sha}); err == nil || !strings.Contains(err.Error(), "sha256") {
			t.Errorf("sha256 %q: err = %v, want a complaint about the sha256", sha, err)
		}
	}
}

func TestHostStandardBackendPinned(t *testing.T) {
	// A standard backend's executable is pinned at its first start: a
	// different file at the same path later is refused.
	dir := t.TempDir()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	copyPath := filepath.Join(dir, "backend")
	data, err := os.ReadFile(exe)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(copyPath, data, 0o755); err != nil {
		t.Fatal(err)
	}
	cmdFor := func(name string) (*exec.Cmd, error) {
		cmd := exec.Command(copyPath)
		cmd.Env = []string{backendEnv + "=" + name}
		return cmd, nil
	}
	h := newTestHost(t, HostConfig{Command: cmdFor})
	if err := h.Start(context.Background(), BackendSpec{Name: "first"}); err != nil {
		t.Fatal(err)
	}
	// Replace the file the way an upgrade does: write aside, rename over.
	if err := os.WriteFile(copyPath+".new", append(data, 0), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.Rename(copyPath+".new", copyPath); err != nil {
		t.Fatal(err)
	}
	err = h.Start(context.Background(), BackendSpec{Name: "second"})
	var ce *ChecksumError
	if !errors.As(err, &ce) || ce.Path != copyPath {
		t.Fatalf("after replacing the executable: err = %v, want a *ChecksumError for %s", err, copyPath)
	}
}

func TestHostThirdPartyBackend(t *testing.T) {
	exe, sum := selfExecutable(t)
	// A third-party backend runs with the host's environment: this tells
	// the test binary which backend to be.
	t.Setenv(backendEnv, "lab-fits")
	h := newTestHost(t, HostConfig{})
	if err := h.Start(context.Background(), BackendSpec{Name: "lab-fits", Path: exe, SHA256: strings.ToUpper(sum)}); err != nil {
		t.Fatal(err)
	}
	res, err := h.Evaluate(context.Background(), "lab-fits", EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpTemperature, Values: []float64{13500}})
	if err != nil || res.Results[0] != 250 || res.Derivatives[0] != 50 {
		t.Fatalf("Evaluate = %+v, %v; want T = 250 K, dP/dT = 50 Pa/K", res, err)
	}
}

// TestHostRestartsKilledBackend kills a backend with SIGKILL while a call
// is in flight: the call fails with ErrBackendUnavailable (never a value),
// the supervisor starts a new process, and calls succeed again.
func TestHostRestartsKilledBackend(t *testing.T) {
	var restarted atomic.Int64
	// The backend marks the sleeping call's arrival in a file, so the kill
	// lands while the call is certainly in flight.
	mark := filepath.Join(t.TempDir(), "sleeping")
	command := func(name string) (*exec.Cmd, error) {
		cmd, err := testCommand(name)
		if err == nil {
			cmd.Env = append(cmd.Env, markEnv+"="+mark)
		}
		return cmd, err
	}
	h := newTestHost(t, HostConfig{Command: command, OnRestart: func(string) { restarted.Add(1) }})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "fragile"}); err != nil {
		t.Fatal(err)
	}
	pid := currentPID(t, h, "fragile")

	type outcome struct {
		res EvalResult
		err error
	}
	done := make(chan outcome, 1)
	go func() {
		// One point that takes a minute: certainly in flight when killed.
		res, err := h.Evaluate(ctx, "fragile", EvalRequest{Family: "test-sleep", Params: thermo.Params{"seconds": {60}},
			Tmin: 1, Tmax: 1000, Op: OpPressure, Values: []float64{300}})
		done <- outcome{res, err}
	}()
	if !waitFor(60*time.Second, func() bool { _, err := os.Stat(mark); return err == nil }) {
		t.Fatal("the sleeping call did not reach the backend")
	}
	killed := time.Now()
	if err := syscall.Kill(pid, syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	got := <-done
	failedAfter := time.Since(killed)
	if !errors.Is(got.err, ErrBackendUnavailable) {
		t.Fatalf("in-flight call: result %+v, err %v; want an error wrapping ErrBackendUnavailable", got.res, got.err)
	}
	if got.res.Results != nil {
		t.Errorf("in-flight call returned values %v with its error", got.res.Results)
	}

	if !waitFor(60*time.Second, func() bool { return h.Restarts() >= 1 }) {
		t.Fatal("backend was not restarted")
	}
	t.Logf("in-flight call failed %v after SIGKILL; backend serving again %v after it", failedAfter, time.Since(killed))
	if restarted.Load() < 1 {
		t.Error("OnRestart was not called")
	}
	if newPID := currentPID(t, h, "fragile"); newPID == pid {
		t.Errorf("restarted backend has the old pid %d", pid)
	}
	res, err := h.Evaluate(ctx, "fragile", EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{250}})
	if err != nil || res.Results[0] != 13500 {
		t.Fatalf("after restart: %+v, %v", res, err)
	}
	if !waitFor(60*time.Second, func() bool { return processGone(pid) }) {
		t.Errorf("killed backend %d was not reaped", pid)
	}
	if entries, err := os.ReadDir(h.socketDir); err != nil || len(entries) != 1 {
		t.Errorf("socket directory holds %v (%v), want only the new backend's socket", entries, err)
	}
}

func TestHostCloseLeavesNoChild(t *testing.T) {
	h := newTestHost(t, HostConfig{})
	ctx := context.Background()
	var pids []int
	for _, name := range []string{"one", "two"} {
		if err := h.Start(ctx, BackendSpec{Name: name}); err != nil {
			t.Fatal(err)
		}
		pids = append(pids, currentPID(t, h, name))
	}
	dir := h.socketDir
	h.Close()
	for _, pid := range pids {
		if !processGone(pid) {
			t.Errorf("backend process %d still runs after Close", pid)
		}
	}
	if _, err := os.Stat(dir); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("socket directory %s left behind: %v", dir, err)
	}
	if _, err := h.Evaluate(ctx, "one", EvalRequest{Op: OpPressure}); !errors.Is(err, ErrBackendUnavailable) {
		t.Errorf("Evaluate after Close: err = %v, want ErrBackendUnavailable", err)
	}
	if err := h.Start(ctx, BackendSpec{Name: "three"}); err == nil {
		t.Error("Start after Close succeeded")
	}
	h.Close() // again: no effect
}

// TestBackendDiesWithHost kills a host process with SIGKILL (no cleanup
// runs) and checks that its backend does not outlive it, once through the
// parent-death signal (Linux) and once through the backend's own parent
// watcher alone.
func TestBackendDiesWithHost(t *testing.T) {
	modes := []string{"watcher"}
	if runtime.GOOS == "linux" {
		modes = append(modes, "signal")
	}
	for _, mode := range modes {
		t.Run(mode, func(t *testing.T) { testBackendDiesWithHost(t, mode) })
	}
}

func testBackendDiesWithHost(t *testing.T, mode string) {
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	host := exec.Command(exe)
	host.Env = append(os.Environ(), hostEnv+"="+mode)
	out, err := host.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := host.Start(); err != nil {
		t.Fatal(err)
	}
	defer func() { _ = host.Process.Kill(); _ = host.Wait() }()
	line, err := bufio.NewReader(out).ReadString('\n')
	if err != nil {
		t.Fatalf("host printed no backend pid: %v", err)
	}
	fields := strings.Fields(line)
	if len(fields) != 2 {
		t.Fatalf("host printed %q, want PID DIR", line)
	}
	pid, err := strconv.Atoi(fields[0])
	if err != nil {
		t.Fatalf("host printed %q: %v", line, err)
	}
	// A host killed by SIGKILL cannot remove its socket directory.
	t.Cleanup(func() { _ = os.RemoveAll(fields[1]) })
	if processGone(pid) {
		t.Fatalf("backend %d not running before the host is killed", pid)
	}
	if err := host.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	_ = host.Wait()
	if !waitFor(60*time.Second, func() bool { return processGone(pid) }) {
		_ = syscall.Kill(pid, syscall.SIGKILL)
		t.Fatalf("backend %d outlived its host", pid)
	}
}

func TestServeRefusesToRunByHand(t *testing.T) {
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(exe)
	cmd.Env = []string{backendEnv + "=manual"}
	var stdout, stderr strings.Builder
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	err = cmd.Run()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != 1 {
		t.Fatalf("exit: %v, want status 1", err)
	}
	if !strings.Contains(stderr.String(), "this is a phasebound backend; the server starts it") {
		t.Errorf("stderr = %q", stderr.String())
	}
	if stdout.Len() != 0 {
		t.Errorf("wrote to stdout: %q", stdout.String())
	}
}

// TestHostUnavailableWhileRestarting: between a backend's death and its
// restart, calls fail fast with ErrBackendUnavailable.
func TestHostUnavailableWhileRestarting(t *testing.T) {
	h := newTestHost(t, HostConfig{MinBackoff: 2 * time.Second})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "slowstart"}); err != nil {
		t.Fatal(err)
	}
	s, _ := h.supervisor("slowstart")
	inst := s.cur.Load()
	if err := syscall.Kill(inst.pid, syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	if !waitFor(60*time.Second, inst.isDead) {
		t.Fatal("death not detected")
	}
	req := EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{250}}
	if _, err := h.Evaluate(ctx, "slowstart", req); !errors.Is(err, ErrBackendUnavailable) || !strings.Contains(err.Error(), "restarting") {
		t.Fatalf("during restart: err = %v, want ErrBackendUnavailable saying it restarts", err)
	}
	if !waitFor(60*time.Second, func() bool { return h.Restarts() == 1 }) {
		t.Fatal("not restarted")
	}
	if res, err := h.Evaluate(ctx, "slowstart", req); err != nil || res.Results[0] != 13500 {
		t.Fatalf("after restart: %+v, %v", res, err)
	}
}

// TestHostDeadline: a call that outlives its deadline fails with the
// context's error (not as unavailable), and the backend keeps serving.
func TestHostDeadline(t *testing.T) {
	h := newTestHost(t, HostConfig{})
	if err := h.Start(context.Background(), BackendSpec{Name: "patient"}); err != nil {
		t.Fatal(err)
	}
	// 2 s: long enough for the call to reach the backend on a loaded
	// machine, far shorter than the 30 s the backend sleeps.
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	defer cancel()
	_, err := h.Evaluate(ctx, "patient", EvalRequest{Family: "test-sleep", Params: thermo.Params{"seconds": {30}},
		Tmin: 1, Tmax: 1000, Op: OpPressure, Values: []float64{300}})
	if !errors.Is(err, context.DeadlineExceeded) || errors.Is(err, ErrBackendUnavailable) {
		t.Fatalf("err = %v, want context.DeadlineExceeded", err)
	}
	res, err := h.Evaluate(context.Background(), "patient", EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{250}})
	if err != nil || res.Results[0] != 13500 {
		t.Fatalf("after a deadline: %+v, %v", res, err)
	}
	if h.Restarts() != 0 {
		t.Errorf("a deadline restarted the backend")
	}
}

// captureHandler records slog records.
type captureHandler struct {
	mu      sync.Mutex
	records []slog.Record
}

func (c *captureHandler) Enabled(context.Context, slog.Level) bool { return true }
func (c *captureHandler) Handle(_ context.Context, r slog.Record) error {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.records = append(c.records, r.Clone())
	return nil
}
func (c *captureHandler) WithAttrs([]slog.Attr) slog.Handler { return c }
func (c *captureHandler) WithGroup(string) slog.Handler      { return c }

func (c *captureHandler) find(level slog.Level, msg string) bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	for _, r := range c.records {
		if r.Level == level && r.Message == msg {
			return true
		}
	}
	return false
}

// TestHostRelaysBackendLogs: a backend's log lines (hclog JSON on its
// stderr) reach the host's slog logger with their level.
func TestHostRelaysBackendLogs(t *testing.T) {
	capture := &captureHandler{}
	h := newTestHost(t, HostConfig{Logger: slog.New(capture)})
	if err := h.Start(context.Background(), BackendSpec{Name: "chatty"}); err != nil {
		t.Fatal(err)
	}
	if !capture.find(slog.LevelInfo, "backend started") {
		t.Error("host did not log the start")
	}
	// The panicking family makes the backend log an error.
	_, _ = h.Evaluate(context.Background(), "chatty", EvalRequest{Family: "test-panic", Op: OpPressure, Values: []float64{1}})
	if !waitFor(60*time.Second, func() bool { return capture.find(slog.LevelError, "family panicked") }) {
		t.Error("the backend's error log line did not reach the host logger")
	}
}

// TestHostNeverReturnsWrongValues: callers hammering a backend that is
// killed twice get, for every call, either exactly the right values or an
// ErrBackendUnavailable error.
func TestHostNeverReturnsWrongValues(t *testing.T) {
	h := newTestHost(t, HostConfig{MinBackoff: 10 * time.Millisecond})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "hammered"}); err != nil {
		t.Fatal(err)
	}
	const n = 20_000
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = 200 + 100*float64(i)/(n-1)
	}
	req := EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: ts}

	var ok, unavailable atomic.Int64
	stop := make(chan struct{})
	errs := make(chan error, 4)
	var wg sync.WaitGroup
	for range 4 {
		wg.Go(func() {
			for calls := 0; calls < 10_000; calls++ { // bounded even if stop never comes
				select {
				case <-stop:
					return
				default:
				}
				res, err := h.Evaluate(ctx, "hammered", req)
				if errors.Is(err, ErrBackendUnavailable) {
					unavailable.Add(1)
					time.Sleep(5 * time.Millisecond)
					continue
				}
				if err != nil {
					errs <- err
					return
				}
				for i, p := range res.Results {
					if p != 1000+50*ts[i] || res.Derivatives[i] != 50 {
						errs <- errors.New("wrong value " + strconv.FormatFloat(p, 'g', -1, 64) + " at point " + strconv.Itoa(i))
						return
					}
				}
				ok.Add(1)
			}
		})
	}
	// Before each kill and after the last restart, wait until the callers
	// have completed a few more good calls (bounded), rather than for a
	// fixed time that a loaded machine may not fill. A caller's error ends
	// the wait at once and is reported below.
	moreOK := func() bool {
		from := ok.Load()
		return waitFor(60*time.Second, func() bool { return ok.Load() >= from+3 || len(errs) > 0 }) && len(errs) == 0
	}
	progressed := true
	for kill := 1; kill <= 2 && progressed; kill++ {
		if progressed = moreOK(); !progressed {
			break
		}
		if err := syscall.Kill(currentPID(t, h, "hammered"), syscall.SIGKILL); err != nil {
			t.Fatal(err)
		}
		if !waitFor(60*time.Second, func() bool { return h.Restarts() >= uint64(kill) }) {
			t.Fatalf("not restarted after kill %d", kill)
		}
	}
	if progressed {
		progressed = moreOK()
	}
	close(stop)
	wg.Wait()
	close(errs)
	failed := false
	for err := range errs {
		t.Error(err)
		failed = true
	}
	if !progressed && !failed {
		t.Error("callers stopped completing calls within 60 s")
	}
	if ok.Load() == 0 {
		t.Error("no call succeeded")
	}
	t.Logf("%d calls answered, %d refused as unavailable, %d restarts", ok.Load(), unavailable.Load(), h.Restarts())
}

func TestHostStartReplacesBackend(t *testing.T) {
	exe, sum := selfExecutable(t)
	t.Setenv(backendEnv, "swapped")
	h := newTestHost(t, HostConfig{})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "swapped"}); err != nil {
		t.Fatal(err)
	}
	oldPID := currentPID(t, h, "swapped")
	// Same name, now as a pinned executable: the new process replaces the old.
	if err := h.Start(ctx, BackendSpec{Name: "swapped", Path: exe, SHA256: sum}); err != nil {
		t.Fatal(err)
	}
	if pid := currentPID(t, h, "swapped"); pid == oldPID {
		t.Fatal("backend not replaced")
	}
	if !processGone(oldPID) {
		t.Errorf("replaced backend %d still runs", oldPID)
	}
	if res, err := h.Evaluate(ctx, "swapped", EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{250}}); err != nil || res.Results[0] != 13500 {
		t.Fatalf("after replacement: %+v, %v", res, err)
	}
}

// TestHostStartFailureQuotesBackend: a backend that dies at start-up has
// its last words in the error.
func TestHostStartFailureQuotesBackend(t *testing.T) {
	h := newTestHost(t, HostConfig{Command: func(name string) (*exec.Cmd, error) {
		return testCommand("Not A Valid Name") // Serve refuses the malformed backend and exits 1
	}})
	err := h.Start(context.Background(), BackendSpec{Name: "doomed"})
	if err == nil || !strings.Contains(err.Error(), `backend name "Not A Valid Name" must match`) {
		t.Fatalf("err = %v, want one quoting the backend's own complaint", err)
	}
	if strings.Contains(err.Error(), "\n") {
		t.Errorf("error spans lines: %q", err)
	}
}

func TestHostRefusesUnknownStandardBackend(t *testing.T) {
	h := NewHost(HostConfig{Logger: testLogger(t)}) // the default command: re-execute this binary
	defer h.Close()
	err := h.Start(context.Background(), BackendSpec{Name: "lab-fits"})
	if err == nil || !strings.Contains(err.Error(), "not a standard backend") || !strings.Contains(err.Error(), "solid, vapor, volume") {
		t.Fatalf("err = %v, want a refusal listing the standard backends", err)
	}
}

// TestHostRestartsHungBackend stops a backend with SIGSTOP: alive, but it
// answers nothing. The supervisor's pings go unanswered, it kills the
// process and starts a new one; a call in flight fails with
// ErrBackendUnavailable (never a value), and calls succeed again. A slow
// call on a backend that still answers pings restarts nothing
// (TestHostDeadline).
func TestHostRestartsHungBackend(t *testing.T) {
	h := newTestHost(t, HostConfig{PingInterval: 100 * time.Millisecond, PingTimeout: 300 * time.Millisecond, PingFailures: 3})
	ctx := context.Background()
	if err := h.Start(ctx, BackendSpec{Name: "stuck"}); err != nil {
		t.Fatal(err)
	}
	line := EvalRequest{Family: "test-line", Params: lineParams, Tmin: 200, Tmax: 300, Op: OpPressure, Values: []float64{250}}
	if _, err := h.Evaluate(ctx, "stuck", line); err != nil {
		t.Fatal(err)
	}
	// Several ping rounds with a working backend restart nothing.
	time.Sleep(600 * time.Millisecond)
	if h.Hung() != 0 || h.Restarts() != 0 {
		t.Fatalf("a healthy backend was killed: hung %d, restarts %d", h.Hung(), h.Restarts())
	}
	pid := currentPID(t, h, "stuck")
	if err := syscall.Kill(pid, syscall.SIGSTOP); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { _ = syscall.Kill(pid, syscall.SIGKILL) })
	res, err := h.Evaluate(ctx, "stuck", line)
	if !errors.Is(err, ErrBackendUnavailable) || res.Results != nil {
		t.Fatalf("call to the stopped backend: %+v, %v; want ErrBackendUnavailable and no values", res, err)
	}
	if !waitFor(60*time.Second, func() bool { return h.Restarts() >= 1 }) {
		t.Fatal("the stopped backend was not restarted")
	}
	if h.Hung() != 1 {
		t.Errorf("Hung() = %d, want 1", h.Hung())
	}
	if newPID := currentPID(t, h, "stuck"); newPID == pid {
		t.Errorf("restarted backend has the old pid %d", pid)
	}
	if res, err := h.Evaluate(ctx, "stuck", line); err != nil || res.Results[0] != 13500 {
		t.Fatalf("after the restart: %+v, %v", res, err)
	}
	if !waitFor(60*time.Second, func() bool { return processGone(pid) }) {
		t.Errorf("the stopped backend %d was not reaped", pid)
	}
}
