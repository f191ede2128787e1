package sdk

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"log/slog"
	"math"
	"os"
	"os/exec"
	"os/signal"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/phasebound/phasebound/thermo"
)

// Test-only families and the trick that makes the test binary its own
// backend: TestMain serves a backend when backendEnv names one, so a
// HostConfig.Command pointing at os.Executable() starts real plugin
// processes without building anything.

const (
	backendEnv = "PHASEBOUND_SDK_TEST_BACKEND" // serve the test backend of this name
	hostEnv    = "PHASEBOUND_SDK_TEST_HOST"    // act as a host that starts a backend and waits; "watcher": without the parent-death signal
	markEnv    = "PHASEBOUND_SDK_TEST_MARK"    // in a backend: test-sleep creates this file when a call starts sleeping
)

func TestMain(m *testing.M) {
	if name := os.Getenv(backendEnv); name != "" {
		if std, ok := strings.CutPrefix(name, "std:"); ok {
			Serve(MustStandard(std)) // a standard backend, exactly as its main runs it
		} else {
			Serve(testBackend(name))
		}
		os.Exit(0)
	}
	if mode := os.Getenv(hostEnv); mode != "" {
		useParentDeathSignal = mode != "watcher"
		os.Exit(runTestHost())
	}
	os.Exit(m.Run())
}

func testBackend(name string) Backend {
	return Backend{
		Name:     name,
		Version:  "test",
		Families: []thermo.Family{lineFamily{}, sleepFamily{}, panicFamily{}, &countingFamily{}},
		Volumes:  []thermo.VolumeFamily{idealVolumeFamily{}},
	}
}

// lineFamily is P = a + b·T (invented for tests), valid over [tmin, tmax],
// with b > 0; it can extrapolate.
type lineFamily struct{}

func (lineFamily) Name() string { return "test-line" }

func (lineFamily) New(p thermo.Params, tmin, tmax float64) (thermo.Correlation, error) {
	a, err := p.Scalar("a")
	if err != nil {
		return nil, err
	}
	b, err := p.Scalar("b")
	if err != nil {
		return nil, err
	}
	if b <= 0 {
		return nil, fmt.Errorf("%w: \"b\" = %g must be > 0", thermo.ErrBadParam, b)
	}
	if !(tmin > 0 && tmax > tmin) {
		return nil, fmt.Errorf("%w: range [%g, %g] K", thermo.ErrBadParam, tmin, tmax)
	}
	return line{a: a, b: b, r: thermo.Range{Tmin: tmin, Tmax: tmax, Pmin: a + b*tmin, Pmax: a + b*tmax}}, nil
}

type line struct {
	a, b float64
	r    thermo.Range
}

var _ thermo.Extrapolator = line{}

func (l line) Pressure(t float64) (float64, error) { p, _, err := l.PressureSlope(t); return p, err }
func (l line) Slope(t float64) (float64, error)    { _, d, err := l.PressureSlope(t); return d, err }
func (l line) Range() thermo.Range                 { return l.r }

func (l line) PressureSlope(t float64) (float64, float64, error) {
	if err := thermo.CheckTemperature(t, l.r); err != nil {
		return 0, 0, err
	}
	return l.a + l.b*t, l.b, nil
}

func (l line) Temperature(p float64) (float64, error) {
	if err := thermo.CheckPressure(p, l.r); err != nil {
		return 0, err
	}
	return (p - l.a) / l.b, nil
}

func (l line) PressureSlopeBeyond(t float64) (float64, float64, error) {
	if err := thermo.CheckTemperature(t, thermo.Range{Tmin: 0, Tmax: math.Inf(1)}); err != nil {
		return 0, 0, err
	}
	return l.a + l.b*t, l.b, nil
}

func (l line) TemperatureBeyond(p float64) (float64, error) {
	if err := thermo.CheckPressure(p, thermo.Range{Pmin: 0, Pmax: math.Inf(1)}); err != nil {
		return 0, err
	}
	t := (p - l.a) / l.b
	if t <= 0 {
		return 0, fmt.Errorf("no positive temperature has P = %g Pa", p)
	}
	return t, nil
}

// sleepFamily answers P = T after sleeping "seconds" per point: a call
// that stays in flight long enough to kill its backend under it.
type sleepFamily struct{}

func (sleepFamily) Name() string { return "test-sleep" }

func (sleepFamily) New(p thermo.Params, tmin, tmax float64) (thermo.Correlation, error) {
	s, err := p.Scalar("seconds")
	if err != nil {
		return nil, err
	}
	return sleeper{d: time.Duration(s * float64(time.Second)), r: thermo.Range{Tmin: tmin, Tmax: tmax, Pmin: tmin, Pmax: tmax}}, nil
}

type sleeper struct {
	d time.Duration
	r thermo.Range
}

func (s sleeper) Pressure(t float64) (float64, error)    { s.sleep(); return t, nil }
func (s sleeper) Slope(float64) (float64, error)         { return 1, nil }
func (s sleeper) Temperature(p float64) (float64, error) { s.sleep(); return p, nil }
func (s sleeper) Range() thermo.Range                    { return s.r }
func (s sleeper) PressureSlope(t float64) (float64, float64, error) {
	s.sleep()
	return t, 1, nil
}

// sleep marks the call as in flight (the file named by markEnv, when set)
// and sleeps, so a test can wait for the call to reach the backend instead
// of guessing a delay.
func (s sleeper) sleep() {
	if mark := os.Getenv(markEnv); mark != "" {
		_ = os.WriteFile(mark, nil, 0o600)
	}
	time.Sleep(s.d)
}

// panicFamily builds fine and panics on evaluation.
type panicFamily struct{}

func (panicFamily) Name() string { return "test-panic" }
func (panicFamily) New(thermo.Params, float64, float64) (thermo.Correlation, error) {
	return panicker{}, nil
}

type panicker struct{}

func (panicker) Pressure(float64) (float64, error)               { panic("test-panic") }
func (panicker) Slope(float64) (float64, error)                  { panic("test-panic") }
func (panicker) Temperature(float64) (float64, error)            { panic("test-panic") }
func (panicker) Range() thermo.Range                             { return thermo.Range{} }
func (panicker) PressureSlope(float64) (float64, float64, error) { panic("test-panic") }

// countingFamily is lineFamily that counts how often it builds.
type countingFamily struct{ builds atomic.Int64 }

func (*countingFamily) Name() string { return "test-counting" }
func (f *countingFamily) New(p thermo.Params, tmin, tmax float64) (thermo.Correlation, error) {
	f.builds.Add(1)
	return lineFamily{}.New(p, tmin, tmax)
}

// idealVolumeFamily is v = R·T/P with (∂v/∂T)_P = R/P.
type idealVolumeFamily struct{}

func (idealVolumeFamily) Name() string { return "test-ideal" }
func (idealVolumeFamily) New(_ thermo.Params, tmin, tmax float64) (thermo.VolumeCorrelation, error) {
	return idealVolume{r: thermo.Range{Tmin: tmin, Tmax: tmax}}, nil
}

type idealVolume struct{ r thermo.Range }

func (v idealVolume) Range() thermo.Range { return v.r }
func (v idealVolume) Volume(t, p float64) (float64, float64, error) {
	if !(p > 0) || math.IsInf(p, 0) {
		return 0, 0, &thermo.InputError{Quantity: "pressure", Value: p, Reason: "must be > 0 Pa"}
	}
	return thermo.R * t / p, thermo.R / p, nil
}

// testCommand runs this test binary as test backend name.
func testCommand(name string) (*exec.Cmd, error) {
	exe, err := os.Executable()
	if err != nil {
		return nil, err
	}
	cmd := exec.Command(exe)
	cmd.Env = []string{backendEnv + "=" + name}
	return cmd, nil
}

// testLogger writes to the test log until the test ends, then nowhere
// (go-plugin may log from its goroutines while Close runs).
func testLogger(t testing.TB) *slog.Logger {
	w := &testLogWriter{t: t}
	t.Cleanup(func() { w.mu.Lock(); w.done = true; w.mu.Unlock() })
	return slog.New(slog.NewTextHandler(w, &slog.HandlerOptions{Level: slog.LevelWarn}))
}

type testLogWriter struct {
	mu   sync.Mutex
	t    testing.TB
	done bool
}

func (w *testLogWriter) Write(p []byte) (int, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	if !w.done {
		w.t.Log(string(p))
	}
	return len(p), nil
}

// newTestHost starts a Host whose standard backends are this test binary.
func newTestHost(t testing.TB, cfg HostConfig) *Host {
	t.Helper()
	if cfg.Logger == nil {
		cfg.Logger = testLogger(t)
	}
	if cfg.Command == nil {
		cfg.Command = testCommand
	}
	h := NewHost(cfg)
	t.Cleanup(h.Close)
	return h
}

// runTestHost is a host process for TestBackendDiesWithHost: it starts one
// backend, prints the backend's pid and its socket directory, and waits to
// be killed.
func runTestHost() int {
	h := NewHost(HostConfig{Command: testCommand, Logger: slog.New(slog.NewTextHandler(io.Discard, nil))})
	if err := h.Start(context.Background(), BackendSpec{Name: "orphan"}); err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	h.mu.Lock()
	pid, dir := h.sups["orphan"].cur.Load().pid, h.socketDir
	h.mu.Unlock()
	w := bufio.NewWriter(os.Stdout)
	fmt.Fprintln(w, strconv.Itoa(pid), dir)
	w.Flush()
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, syscall.SIGTERM)
	select {
	case <-ch:
	case <-time.After(2 * time.Minute): // bounded even if the test never kills us
	}
	h.Close()
	return 0
}
