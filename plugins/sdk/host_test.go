package sdk

import (
	"context"
	"errors"
	"os"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

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
