package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"github.com/phasebound/phasebound/server/catalog"
)

type checkJSON struct {
	Substance string `json:"substance"`
	OK        bool   `json:"ok"`
	Findings  []struct {
		Severity string             `json:"severity"`
		Code     string             `json:"code"`
		Curve    string             `json:"curve"`
		Message  string             `json:"message"`
		Values   map[string]float64 `json:"values"`
	} `json:"findings"`
}

func auditCatalog(name string) string { return filepath.Join("..", "..", "testdata", "audit", name) }

// Every substance of the embedded default catalog audits clean.
func TestCheckDefaultCatalogClean(t *testing.T) {
	t.Parallel()
	def, err := catalog.Default()
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range def.Substances {
		code, out, errOut := runCmd(t, "--json", "check", "--substance", s.ID)
		if code != 0 {
			t.Errorf("%s: exit %d: %s %s", s.ID, code, out, errOut)
			continue
		}
		var rep checkJSON
		if err := json.Unmarshal([]byte(out), &rep); err != nil {
			t.Fatalf("%s: %v: %s", s.ID, err, out)
		}
		if !rep.OK || rep.Substance != s.ID || rep.Findings == nil {
			t.Errorf("%s: %s", s.ID, out)
		}
		for _, f := range rep.Findings {
			if f.Severity != "info" {
				t.Errorf("%s: %s %s: %s", s.ID, f.Severity, f.Code, f.Message)
			}
		}
	}
}

func TestCheckBrokenCatalogExitCode(t *testing.T) {
	t.Parallel()
	tests := []struct{ file, code string }{
		{"shifted-branch.toml", "triple-point-gap"},
		{"wrong-slope-sign.toml", "slope-sign"},
		{"critical-mismatch.toml", "critical-point-mismatch"},
		{"range-gap.toml", "range-gap"},
		{"latent-heat.toml", "latent-heat-vs-reference"},
		{"enthalpy-sum.toml", "triple-point-enthalpy-sum"},
	}
	for _, tc := range tests {
		code, out, errOut := runCmd(t, "--catalog", auditCatalog(tc.file), "--json", "check", "--substance", "testium")
		if code != 2 {
			t.Errorf("%s: exit %d, want 2 (error findings)", tc.file, code)
		}
		if !strings.HasPrefix(errOut, "phasebound: check: testium is inconsistent") {
			t.Errorf("%s: stderr %q", tc.file, errOut)
		}
		var rep checkJSON
		if err := json.Unmarshal([]byte(out), &rep); err != nil {
			t.Fatalf("%s: %v: %s", tc.file, err, out)
		}
		found := false
		for _, f := range rep.Findings {
			found = found || f.Code == tc.code && f.Severity == "error"
		}
		if rep.OK || !found {
			t.Errorf("%s: ok=%v, no error %s in %s", tc.file, rep.OK, tc.code, out)
		}
	}
}

func TestCheckText(t *testing.T) {
	t.Parallel()
	code, out, _ := runCmd(t, "--catalog", auditCatalog("shifted-branch.toml"), "check", "--substance", "testium")
	if code != 2 || !strings.Contains(out, "testium: INCONSISTENT") || !strings.Contains(out, "ERROR") ||
		!strings.Contains(out, "triple-point-gap") || !strings.Contains(out, "sublimation") {
		t.Errorf("exit %d, text:\n%s", code, out)
	}
	code, out, _ = runCmd(t, "--catalog", auditCatalog("good.toml"), "check", "--substance", "testium")
	if code != 0 || !strings.HasPrefix(out, "testium: consistent") {
		t.Errorf("exit %d, text:\n%s", code, out)
	}
	// The shifted branch misses by about 1.2 K: a 2 K tolerance passes it.
	code, out, _ = runCmd(t, "--catalog", auditCatalog("shifted-branch.toml"), "check", "--substance", "testium", "--tol-k", "2")
	if code != 0 || !strings.HasPrefix(out, "testium: consistent") {
		t.Errorf("--tol-k 2: exit %d, text:\n%s", code, out)
	}
}

// A reference state given by flags is checked like a catalog one.
func TestCheckReferenceFlags(t *testing.T) {
	t.Parallel()
	// The good catalog's melting slope at 200 K is a·c/T0 = 3 MPa/K; a
	// reference ΔH twice the consistent 6 kJ/mol breaks the Clapeyron slope.
	code, out, _ := runCmd(t, "--catalog", auditCatalog("good.toml"), "--json", "check", "--substance", "testium",
		"--curve", "melting", "--at", "200", "--delta-h", "12000", "--delta-v", "1e-5")
	if code != 2 {
		t.Fatalf("exit %d: %s", code, out)
	}
	var rep checkJSON
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	ok := false
	for _, f := range rep.Findings {
		if f.Code == "clapeyron-slope" && f.Severity == "error" {
			ok = f.Values["expected_slope_pa_per_k"] == 12000/(200*1e-5)
		}
	}
	if !ok {
		t.Errorf("no clapeyron-slope error with the flags' expected slope: %s", out)
	}
	// -73.15 °C is 200 K: unit suffixes work for --at.
	code, _, errOut := runCmd(t, "--catalog", auditCatalog("good.toml"), "check", "--substance", "testium",
		"--curve", "melting", "--at", "-73.15degC", "--delta-h", "6000", "--delta-v", "1e-5")
	if code != 0 {
		t.Errorf("consistent flags: exit %d %s", code, errOut)
	}
}

func TestCheckBadInput(t *testing.T) {
	t.Parallel()
	tests := []struct {
		args []string
		want string
	}{
		{[]string{"check"}, "--substance is required"},
		{[]string{"check", "--substance", "nonesuch"}, "unknown substance \"nonesuch\" (valid: "},
		{[]string{"check", "--substance", "testium", "--delta-h", "6000"}, "needs --curve, --at and --delta-h"},
		{[]string{"check", "--substance", "testium", "--curve", "boiling", "--at", "200", "--delta-h", "1"}, "valid: saturation"},
		{[]string{"check", "--substance", "testium", "--curve", "transition", "--at", "200", "--delta-h", "1"}, "has no transition curve"},
		{[]string{"--catalog", "no-such-file.toml", "check", "--substance", "x"}, "no-such-file.toml"},
		{[]string{"check", "--substance", "testium", "--tol-k", "0"}, "--tol-k 0 must be a positive number"},
	}
	for _, tc := range tests {
		args := tc.args
		if args[0] == "check" {
			args = append([]string{"--catalog", auditCatalog("good.toml")}, args...)
		}
		code, _, errOut := runCmd(t, args...)
		if code != 1 || !strings.Contains(errOut, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit 1 and %q", tc.args, code, errOut, tc.want)
		}
	}
}
