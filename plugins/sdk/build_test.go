package sdk

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// buildBinary builds pkg into dir and returns the executable's path.
func buildBinary(t *testing.T, dir, pkg string) string {
	t.Helper()
	out := filepath.Join(dir, filepath.Base(pkg))
	cmd := exec.Command("go", "build", "-o", out, pkg)
	cmd.Env = os.Environ()
	if msg, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build %s: %v\n%s", pkg, err, msg)
	}
	return out
}

// TestBuiltBackends builds the real executables (a three-line standard
// main and the phasebound command) and runs them as backends: the main as
// a third-party executable pinned by SHA-256, the command through its
// "backend NAME" re-exec for every standard backend.
func TestBuiltBackends(t *testing.T) {
	if testing.Short() {
		t.Skip("builds binaries")
	}
	if _, err := exec.LookPath("go"); err != nil {
		t.Skip("no go command to build with")
	}
	dir := t.TempDir()
	const (
		tCheck = 500.0               // K
		pCheck = 0.263889776e1 * 1e6 // Pa; IAPWS-IF97 (R7-97), Table 35 verification value (from memory)
	)
	check := func(t *testing.T, h *Host, backend string) {
		t.Helper()
		res, err := h.Evaluate(context.Background(), backend, EvalRequest{Family: "iapws-if97", Tmin: 273.15, Tmax: 647.096, Op: OpPressure, Values: []float64{tCheck}})
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(res.Results[0], pCheck, 0, 1e-8) {
			t.Errorf("P(%g K) = %v Pa, want %v Pa", tCheck, res.Results[0], pCheck)
		}
	}

	t.Run("standard main as a pinned executable", func(t *testing.T) {
		// plugins/solid and plugins/volume are the same three lines.
		bin := buildBinary(t, dir, "github.com/phasebound/phasebound/plugins/vapor")
		sum, err := FileSHA256(bin)
		if err != nil {
			t.Fatal(err)
		}
		h := newTestHost(t, HostConfig{})
		if err := h.Start(context.Background(), BackendSpec{Name: "vapor", Path: bin, SHA256: sum}); err != nil {
			t.Fatal(err)
		}
		check(t, h, "vapor")
	})

	t.Run("phasebound backend NAME", func(t *testing.T) {
		bin := buildBinary(t, dir, "github.com/phasebound/phasebound/cmd/phasebound")
		h := newTestHost(t, HostConfig{Command: func(name string) (*exec.Cmd, error) {
			return exec.Command(bin, "backend", name), nil
		}})
		for _, name := range StandardNames() {
			if err := h.Start(context.Background(), BackendSpec{Name: name}); err != nil {
				t.Fatal(err)
			}
			if info, _ := h.Info(name); info.Name != name || len(info.Families)+len(info.Volumes) == 0 {
				t.Errorf("backend %s describes itself as %+v", name, info)
			}
		}
		check(t, h, "vapor")
		// Run by hand, it refuses and says what it is.
		out, err := exec.Command(bin, "backend", "vapor").CombinedOutput()
		if err == nil || !strings.Contains(string(out), "this is a phasebound backend; the server starts it") {
			t.Errorf("run by hand: %v, output %q", err, out)
		}
	})
}
