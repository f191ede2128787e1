package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// runCmd runs the phasebound command line with args and returns its exit
// code and streams.
func runCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, strings.NewReader(""), &out, &errb)
	return code, out.String(), errb.String()
}

// ccPressure is the Clausius–Clapeyron curve the synthetic data follow
// (invented): 1 kPa at 200 K, ΔH = 20 kJ/mol.
func ccPressure(t float64) float64 {
	return 1000 * math.Exp(-20000/thermo.R*(1/t-1/200.0))
}

// writeCCData writes noise-free points of ccPressure at 210, 220, … 390 K.
func writeCCData(t *testing.T) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("temperature_k,pressure_pa\n")
	for T := 210.0; T <= 390; T += 10 {
		fmt.Fprintf(&b, "%.17g,%.17g\n", T, ccPressure(T))
	}
	path := filepath.Join(t.TempDir(), "cc-points.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestFitJSONContract(t *testing.T) {
	t.Parallel()
	data := writeCCData(t)
	code, out, errOut := runCmd(t, "--json", "fit", "--substance", "testfluid", "--curve", "saturation",
		"--family", "clausius-clapeyron", "--data", data, "--fixed", "t0=200")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got map[string]any
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("not one JSON object: %v\n%s", err, out)
	}
	for _, k := range []string{"family", "parameters", "parameter_std_err", "n_points", "rms_rel_dev", "max_rel_dev"} {
		if _, ok := got[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	var rep struct {
		Family     string             `json:"family"`
		Parameters map[string]float64 `json:"parameters"`
		NPoints    int                `json:"n_points"`
		RMS        float64            `json:"rms_rel_dev"`
		Residuals  []float64          `json:"residuals_rel"`
		SHA        string             `json:"data_sha256"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Family != "clausius-clapeyron" || rep.NPoints != 19 || len(rep.Residuals) != 19 || len(rep.SHA) != 64 {
		t.Errorf("family %q, n %d, %d residuals, sha %q", rep.Family, rep.NPoints, len(rep.Residuals), rep.SHA)
	}
	// Noise-free data: the generating parameters come back (invented data).
	for k, want := range map[string]float64{"t0": 200, "p0": 1000, "delta_h": 20000} {
		if !scalar.EqualWithinAbsOrRel(rep.Parameters[k], want, 0, 1e-8) {
			t.Errorf("%s = %.12g, want %g", k, rep.Parameters[k], want)
		}
	}
	if rep.RMS > 1e-10 {
		t.Errorf("rms %g on exact data", rep.RMS)
	}
}

// fit --out writes a catalog that --catalog accepts: eval serves the fitted
// curve, and check audits it.
func TestFitOutServesThroughCatalog(t *testing.T) {
	t.Parallel()
	data := writeCCData(t)
	out := filepath.Join(t.TempDir(), "fitted.toml")
	code, stdout, errOut := runCmd(t, "fit", "--substance", "testfluid", "--curve", "saturation",
		"--family", "clausius-clapeyron", "--data", data, "--fixed", "t0=200", "--out", out, "--molar-mass", "0.05")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(stdout, "wrote "+out) {
		t.Errorf("text output does not say where it wrote: %s", stdout)
	}
	text, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(text), "include_default = true") {
		t.Error("written catalog does not include the default")
	}
	c, err := catalog.Load(out)
	if err != nil {
		t.Fatalf("written catalog does not load: %v", err)
	}
	if !c.IncludeDefault {
		t.Error("the loaded catalog's IncludeDefault is false")
	}
	s := c.Lookup("testfluid")
	if s == nil {
		t.Fatal("fitted substance missing")
	}
	if def, err := catalog.Default(); err == nil && len(c.Substances) != len(def.Substances)+1 {
		t.Errorf("merged catalog has %d substances, want the default's %d plus one", len(c.Substances), len(def.Substances))
	}
	b := s.Curves[0].Branches[0]
	if b.Provenance.Kind != "fit" || b.Provenance.DataFile != "cc-points.csv" || len(b.Provenance.DataSHA256) != 64 ||
		!strings.Contains(b.Provenance.Note, "clausius-clapeyron") {
		t.Errorf("provenance %+v", b.Provenance)
	}
	if b.Tmin != 210 || b.Tmax != 390 {
		t.Errorf("validity [%g, %g], want the data's [210, 390]", b.Tmin, b.Tmax)
	}

	code, stdout, errOut = runCmd(t, "--catalog", out, "--json", "eval", "--substance", "testfluid",
		"--curve", "saturation", "--temperature", "300")
	if code != 0 {
		t.Fatalf("eval through the fitted catalog: exit %d: %s", code, errOut)
	}
	var ev struct {
		P float64 `json:"pressure_pa"`
	}
	if err := json.Unmarshal([]byte(stdout), &ev); err != nil {
		t.Fatalf("%v: %s", err, stdout)
	}
	if want := ccPressure(300); !scalar.EqualWithinAbsOrRel(ev.P, want, 0, 1e-8) {
		t.Errorf("served P(300 K) = %.12g, want %.12g", ev.P, want)
	}
	code, stdout, errOut = runCmd(t, "--catalog", out, "--json", "check", "--substance", "testfluid")
	if code != 0 {
		t.Fatalf("check of the fitted catalog: exit %d: %s %s", code, stdout, errOut)
	}
}

// Refitting a curve of a substance already in the catalog replaces just
// that curve and keeps the rest (triple point, other curves, volumes).
func TestFitReplacesCurveOfExistingSubstance(t *testing.T) {
	t.Parallel()
	data := writeCCData(t)
	good := filepath.Join("..", "..", "testdata", "audit", "good.toml")
	out := filepath.Join(t.TempDir(), "refit.toml")
	code, _, errOut := runCmd(t, "--catalog", good, "fit", "--substance", "testium", "--curve", "saturation",
		"--family", "clausius-clapeyron", "--data", data, "--fixed", "t0=200", "--tmin", "200", "--tmax", "400", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	c, err := catalog.Load(out)
	if err != nil {
		t.Fatal(err)
	}
	s := c.Lookup("testium")
	if s == nil || len(s.Curves) != 3 || len(s.Triple) != 1 || s.Critical == nil {
		t.Fatalf("substance not copied whole: %+v", s)
	}
	sat := s.Curve(thermo.Saturation).Branches[0]
	if sat.Provenance.Kind != "fit" || sat.VolumeLow == nil || sat.VolumeHigh == nil || sat.Reference == nil {
		t.Errorf("fitted branch lost its volumes or reference: %+v", sat)
	}
	if sat.Tmin != 200 || sat.Tmax != 400 {
		t.Errorf("widened range [%g, %g], want [200, 400]", sat.Tmin, sat.Tmax)
	}
	// The refit reproduces the original curve, so the audit stays clean.
	code, stdout, errOut := runCmd(t, "--catalog", out, "check", "--substance", "testium")
	if code != 0 || !strings.Contains(stdout, "consistent") {
		t.Errorf("check after refit: exit %d\n%s%s", code, stdout, errOut)
	}
}

func TestFitBadInput(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	file := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	good := "temperature_k,pressure_pa\n250,100\n260,200\n270,390\n280,700\n"
	tests := []struct {
		name string
		args []string
		want string // in the one line on stderr
	}{
		{"non-numeric", []string{"--data", file("a.csv", "temperature_k,pressure_pa\n250,100\n260,abc\n")}, "a.csv line 3: pressure_pa \"abc\" is not a number"},
		{"unit suffix", []string{"--data", file("b.csv", "temperature_k,pressure_pa\n25degC,100\n")}, "b.csv line 2: temperature_k \"25degC\" has a unit suffix; data files take plain SI numbers only"},
		{"missing column", []string{"--data", file("c.csv", "temperature_k,p\n250,100\n")}, "c.csv line 1: the header must name the columns temperature_k and pressure_pa"},
		{"missing cell", []string{"--data", file("d.csv", "temperature_k,pressure_pa\n250,100\n260\n")}, "d.csv line 3: pressure_pa is missing"},
		{"T <= 0", []string{"--data", file("e.csv", "temperature_k,pressure_pa\n250,100\n-3,200\n")}, "e.csv line 3: temperature_k -3 must be > 0 K"},
		{"P <= 0", []string{"--data", file("f.csv", "temperature_k,pressure_pa\n250,0\n")}, "f.csv line 2: pressure_pa 0 must be > 0 Pa"},
		{"negative weight", []string{"--data", file("g.csv", "temperature_k,pressure_pa,weight\n250,100,-1\n")}, "g.csv line 2: weight -1 must be ≥ 0"},
		{"empty", []string{"--data", file("h.csv", "")}, "h.csv: empty file"},
		{"no rows", []string{"--data", file("i.csv", "temperature_k,pressure_pa\n")}, "i.csv: no data rows"},
		{"too few points", []string{"--data", file("j.csv", "temperature_k,pressure_pa\n250,100\n")}, "fit"},
		{"duplicated row", []string{"--data", file("k.csv", "temperature_k,pressure_pa\n250,100\n260,200\n# comment\n260,200\n280,700\n")}, "line 5"},
		{"no such file", []string{"--data", filepath.Join(dir, "none.csv")}, "no such file"},
		{"unknown family", []string{"--data", file("l.csv", good), "--family", "nonesuch"}, "nonesuch"},
		{"bad fixed", []string{"--data", file("m.csv", good), "--fixed", "t0"}, "--fixed: \"t0\" is not name=value"},
		{"bad out", []string{"--data", file("n.csv", good), "--out", filepath.Join(dir, "x.json")}, "must be a .toml catalog file"},
		{"new substance without molar mass", []string{"--data", file("o.csv", good), "--out", filepath.Join(dir, "x.toml")}, "give --molar-mass"},
		{"bad curve", []string{"--data", file("p.csv", good), "--curve", "boiling"}, "valid: saturation"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			args := []string{"fit", "--substance", "newfluid", "--curve", "saturation", "--family", "clausius-clapeyron"}
			args = append(args, tc.args...)
			code, _, errOut := runCmd(t, args...)
			if code == 0 {
				t.Fatal("accepted")
			}
			if strings.Count(strings.TrimSpace(errOut), "\n") != 0 || !strings.HasPrefix(errOut, "phasebound: ") {
				t.Errorf("want one line 'phasebound: ...', got %q", errOut)
			}
			if !strings.Contains(errOut, tc.want) {
				t.Errorf("stderr %q does not contain %q", errOut, tc.want)
			}
		})
	}
}

// A curve of several branches needs --branch, and the error lists them.
func TestFitNeedsBranchOnMultiBranchCurve(t *testing.T) {
	t.Parallel()
	data := writeCCData(t)
	code, _, errOut := runCmd(t, "--catalog", filepath.Join("..", "..", "testdata", "audit", "melting-gap.toml"),
		"fit", "--substance", "testium", "--curve", "melting", "--family", "clausius-clapeyron", "--data", data,
		"--out", filepath.Join(t.TempDir(), "x.toml"))
	if code == 0 || !strings.Contains(errOut, "alpha, beta") || !strings.Contains(errOut, "--branch") {
		t.Fatalf("exit %d, stderr %q: want the branches named", code, errOut)
	}
}

// FuzzParseDataCSV: any bytes give points or an error naming the file,
// never a panic, and every point returned is physical.
func FuzzParseDataCSV(f *testing.F) {
	for _, s := range []string{
		"temperature_k,pressure_pa\n250,100\n260,200\n",
		"temperature_k,pressure_pa,weight\n250,100,1\n# c\n\n260,200,0.5\n",
		"pressure_pa,temperature_k\n1e5,373.124\n",
		"temperature_k,pressure_pa\n25degC,1bar\n",
		"temperature_k,pressure_pa\nNaN,1\n",
		"temperature_k\n1\n",
		"\"temperature_k\",\"pressure_pa\"\n\"1\",\"2\n",
		"",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, raw []byte) {
		pts, err := parseDataCSV("fuzz.csv", raw)
		if err != nil {
			if !strings.Contains(err.Error(), "fuzz.csv") {
				t.Fatalf("error does not name the file: %v", err)
			}
			return
		}
		if len(pts) == 0 {
			t.Fatal("no points and no error")
		}
		for _, q := range pts {
			if !(q.t > 0) || !(q.p > 0) || q.w < 0 || math.IsInf(q.t, 0) || math.IsInf(q.p, 0) || math.IsNaN(q.w) || q.line < 2 {
				t.Fatalf("unphysical point accepted: %+v", q)
			}
		}
	})
}

// The demo scenario's setup workflow on its invented melting measurements:
// fit a Simon–Glatzel form anchored at the catalog's triple point, draw the
// residuals, audit the fitted catalog, and query it.
func TestFitDemoMeltingWorkflow(t *testing.T) {
	t.Parallel()
	data := filepath.Join("..", "..", "testdata", "demo", "frostwax-melting.csv")
	dir := t.TempDir()
	out, res := filepath.Join(dir, "frostwax.toml"), filepath.Join(dir, "residuals.png")
	code, stdout, errOut := runCmd(t, "--json", "fit", "--substance", "demo-frostwax", "--curve", "melting",
		"--family", "simon-glatzel", "--data", data, "--fixed", "t0=291.35,p0=12", "--tmin", "291.35",
		"--out", out, "--plot", res)
	if code != 0 {
		t.Fatalf("fit: exit %d: %s", code, errOut)
	}
	var rep struct {
		NPoints  int      `json:"n_points"`
		RMS      float64  `json:"rms_rel_dev"`
		Warnings []string `json:"warnings"`
	}
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatal(err)
	}
	// 26 invented points with about 1 % scatter (testdata/demo/README.md).
	if rep.NPoints != 26 || rep.RMS > 0.03 || len(rep.Warnings) == 0 {
		t.Errorf("n %d, rms %g, warnings %v (want the widened-range warning)", rep.NPoints, rep.RMS, rep.Warnings)
	}
	checkImageFile(t, res)
	code, stdout, errOut = runCmd(t, "--catalog", out, "--json", "check", "--substance", "demo-frostwax")
	if code != 0 {
		t.Fatalf("check: exit %d: %s %s", code, stdout, errOut)
	}
	var ck checkJSON
	if err := json.Unmarshal([]byte(stdout), &ck); err != nil {
		t.Fatal(err)
	}
	slope := false
	for _, f := range ck.Findings {
		if f.Code == "clapeyron-slope" && f.Curve == "melting" {
			slope = true
			if dev := f.Values["deviation_rel"]; dev > 0.03 || dev < -0.03 {
				t.Errorf("fitted melting slope %g off the catalog's Clapeyron slope", dev)
			}
		}
	}
	if !ck.OK || !slope {
		t.Errorf("audit of the fitted catalog: %s", stdout)
	}
	code, stdout, errOut = runCmd(t, "--catalog", out, "--json", "eval", "--substance", "demo-frostwax",
		"--curve", "melting", "--temperature", "300")
	if code != 0 || !strings.Contains(stdout, `"pressure_pa"`) {
		t.Fatalf("eval: exit %d: %s %s", code, stdout, errOut)
	}
}
