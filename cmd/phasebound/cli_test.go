package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"net"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// evalJSON runs eval with --json and decodes its output.
func evalJSON(t *testing.T, args ...string) map[string]any {
	t.Helper()
	code, out, errOut := runCmd(t, append([]string{"--server", sharedServer(t), "--json", "eval"}, args...)...)
	if code != 0 {
		t.Fatalf("eval %v: exit %d: %s", args, code, errOut)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatalf("eval %v: %v: %s", args, err, out)
	}
	return m
}

func num(t *testing.T, m map[string]any, key string) float64 {
	t.Helper()
	v, ok := m[key].(float64)
	if !ok {
		t.Fatalf("JSON key %q missing or not a number in %v", key, m)
	}
	return v
}

func TestEvalReferenceValues(t *testing.T) {
	tests := []struct {
		args []string
		key  string
		want float64
		rel  float64
	}{
		{[]string{"--substance", "water", "--curve", "saturation", "--temperature", "300"}, "pressure_pa", 3.53658941e3, 1e-8},                  // IAPWS-IF97 Psat(300 K) = 3.53658941 kPa, Table 35 check value
		{[]string{"--substance", "water", "--curve", "saturation", "--temperature", "26.85degC"}, "pressure_pa", 3.53658941e3, 1e-8},            // IAPWS-IF97 Psat(300 K), Table 35 check value, given in degC
		{[]string{"--substance", "water", "--curve", "saturation", "--pressure", "1MPa"}, "temperature_k", 453.035632, 1e-8},                    // IAPWS-IF97 Tsat(1 MPa), Table 36 check value (from memory)
		{[]string{"--substance", "water", "--curve", "melting", "--branch", "ice-Ih", "--temperature", "260"}, "pressure_pa", 138.268e6, 1e-5},  // IAPWS R14-08 ice Ih 260 K -> 138.268 MPa
		{[]string{"--substance", "water", "--curve", "melting", "--branch", "ice-III", "--temperature", "254"}, "pressure_pa", 268.685e6, 1e-5}, // IAPWS R14-08 ice III 254 K -> 268.685 MPa
		{[]string{"--substance", "water", "--curve", "sublimation", "--temperature", "230"}, "pressure_pa", 8.94735, 1e-5},                      // IAPWS R14-08 sublimation 230 K -> 8.94735 Pa
		{[]string{"--substance", "water", "--curve", "sublimation", "--temperature", "230", "--exact"}, "pressure_pa", 8.94735, 1e-5},           // IAPWS R14-08 sublimation 230 K -> 8.94735 Pa
		{[]string{"--substance", "carbon-dioxide", "--curve", "sublimation", "--pressure", "1atm"}, "temperature_k", 194.7, 1e-3},               // dry ice at 1 atm sublimates at about 194.7 K, common practice
	}
	for _, tt := range tests {
		m := evalJSON(t, tt.args...)
		if got := num(t, m, tt.key); !scalar.EqualWithinAbsOrRel(got, tt.want, 0, tt.rel) {
			t.Errorf("eval %v: %s = %.10g, want %.10g (rel %g)", tt.args, tt.key, got, tt.want, tt.rel)
		}
		for _, k := range []string{"substance", "curve", "branch", "temperature_k", "pressure_pa", "dpdt_pa_per_k"} {
			if _, ok := m[k]; !ok {
				t.Errorf("eval %v: JSON lacks %q", tt.args, k)
			}
		}
	}
}

func TestEvalLatentHeat(t *testing.T) {
	// Ice Ih at the normal melting point: about 333.5 kJ/kg with ice at 916.7 kg/m³ (common practice).
	m := evalJSON(t, "--substance", "water", "--curve", "melting", "--pressure", "1atm")
	if _, ok := m["latent_heat_j_per_kg"]; !ok {
		t.Skip("the catalog gives no phase volumes for ice Ih melting")
	}
	if h := num(t, m, "latent_heat_j_per_kg"); !scalar.EqualWithinAbsOrRel(h, 333.5e3, 0, 0.01) {
		t.Errorf("latent heat of fusion %g J/kg", h)
	}
	mol, kg := num(t, m, "latent_heat_j_per_mol"), num(t, m, "latent_heat_j_per_kg")
	if !scalar.EqualWithinAbsOrRel(mol/kg, 0.018015268, 0, 1e-12) { // molar mass of water, IAPWS-95
		t.Errorf("J/mol over J/kg = %g", mol/kg)
	}
	for _, k := range []string{"volume_low_t_phase_m3_per_mol", "volume_high_t_phase_m3_per_mol", "latent_heat_source"} {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
}

func TestEvalHumanOutput(t *testing.T) {
	code, out, errOut := runCmd(t, "eval", "--substance", "water", "--curve", "saturation", "--temperature", "373.124")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, s := range []string{"saturation", "temperature", "pressure", "dP/dT", "Pa", "design codes"} {
		if !strings.Contains(out, s) {
			t.Errorf("human output lacks %q:\n%s", s, out)
		}
	}
}

func TestBadInputOneLine(t *testing.T) {
	tests := []struct {
		args    []string
		mention []string
	}{
		{[]string{"eval", "--substance", "unobtainium", "--curve", "saturation", "--temperature", "300"}, []string{"unobtainium", "water", "carbon-dioxide"}},
		{[]string{"eval", "--substance", "water", "--curve", "boiling", "--temperature", "300"}, []string{"boiling", "saturation", "melting"}},
		{[]string{"eval", "--substance", "water", "--curve", "saturation", "--temperature", "NaN"}, []string{"finite"}},
		{[]string{"eval", "--substance", "water", "--curve", "saturation", "--temperature", "-5"}, []string{"> 0 K"}},
		{[]string{"eval", "--substance", "water", "--curve", "saturation", "--temperature", "25 furlongs"}, []string{"degC", "K"}},
		{[]string{"eval", "--substance", "water", "--curve", "saturation", "--temperature", "2bar"}, []string{"pressure unit", "temperature"}},
		{[]string{"eval", "--substance", "water", "--curve", "saturation", "--temperature", "700"}, []string{"700", "273.15", "647.096"}},
		{[]string{"eval", "--substance", "water", "--curve", "melting", "--temperature", "254"}, []string{"ice-Ih", "ice-III", "--branch"}},
		{[]string{"eval", "--substance", "water", "--curve", "melting", "--branch", "ice-XX", "--temperature", "254"}, []string{"ice-XX", "ice-Ih", "ice-VII"}},
		{[]string{"eval", "--substance", "water", "--curve", "saturation"}, []string{"--temperature", "--pressure"}},
		{[]string{"eval", "--substance", "water", "--curve", "saturation", "--temperature", "300", "--pressure", "1bar"}, []string{"not both"}},
		{[]string{"phase", "--substance", "water", "--temperature", "300"}, []string{"--pressure"}},
		{[]string{"phase", "--substance", "nothing", "--temperature", "300", "--pressure", "1atm"}, []string{"nothing", "water"}},
		{[]string{"--catalog", "/nonexistent/catalog.toml", "substances"}, []string{"/nonexistent/catalog.toml"}},
	}
	for k, tt := range tests {
		args := tt.args
		if k%4 != 0 && tt.args[0] != "--catalog" {
			args = append([]string{"--server", sharedServer(t)}, args...) // most through the shared server, some in-process
		}
		code, out, errOut := runCmd(t, args...)
		if code == 0 {
			t.Errorf("%v: exit 0, stdout %q", tt.args, out)
			continue
		}
		lines := strings.Split(strings.TrimSpace(errOut), "\n")
		last := lines[len(lines)-1]
		if !strings.HasPrefix(last, "phasebound: ") {
			t.Errorf("%v: stderr %q does not end in one phasebound: line", tt.args, errOut)
		}
		for _, m := range tt.mention {
			if !strings.Contains(last, m) {
				t.Errorf("%v: error %q does not mention %q", tt.args, last, m)
			}
		}
	}
}

func TestPhaseJSON(t *testing.T) {
	tests := []struct {
		t, p  string
		phase string
		form  string
	}{
		{"-10degC", "1atm", "solid", "ice-Ih"},    // ice at -10 °C and 1 atm, common practice
		{"-10degC", "200MPa", "liquid", ""},       // ice Ih melts near 252 K at 200 MPa (IAPWS R14-08(2011))
		{"-20degC", "250MPa", "solid", "ice-III"}, // ice III melts at 253.3 K at 250 MPa (IAPWS R14-08(2011))
		{"25degC", "1atm", "liquid", ""},          // common practice
		{"150degC", "1atm", "vapor", ""},          // above the normal boiling point, common practice
		{"400degC", "30MPa", "supercritical", ""}, // above 647.096 K and 22.064 MPa (IAPWS-IF97)
	}
	for _, tt := range tests {
		code, out, errOut := runCmd(t, "--server", sharedServer(t), "--json", "phase", "--substance", "water", "--temperature", tt.t, "--pressure", tt.p)
		if code != 0 {
			t.Fatalf("phase %s %s: exit %d: %s", tt.t, tt.p, code, errOut)
		}
		var m map[string]any
		if err := json.Unmarshal([]byte(out), &m); err != nil {
			t.Fatal(err)
		}
		if m["phase"] != tt.phase || m["form"] != tt.form {
			t.Errorf("phase %s %s: %v %v, want %s %q", tt.t, tt.p, m["phase"], m["form"], tt.phase, tt.form)
		}
		if _, ok := m["margin_temperature_k"]; !ok {
			t.Errorf("phase JSON lacks margin_temperature_k: %s", out)
		}
	}
}

func TestSubstances(t *testing.T) {
	code, out, errOut := runCmd(t, "--server", sharedServer(t), "--json", "substances")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var l substancesJSON
	if err := json.Unmarshal([]byte(out), &l); err != nil {
		t.Fatal(err)
	}
	ids := map[string]substanceJSON{}
	for _, s := range l.Substances {
		ids[s.ID] = s
	}
	w, ok := ids["water"]
	if !ok || ids["carbon-dioxide"].ID == "" {
		t.Fatalf("substances %v", ids)
	}
	var branches []string
	for _, cv := range w.Curves {
		if cv.Kind == "melting" {
			for _, b := range cv.Branches {
				branches = append(branches, b.Name)
				if !(b.TableError > 0 && b.TableError <= 1e-10) || b.Provenance.Kind != "published" {
					t.Errorf("melting %s: table error %g, provenance %v", b.Name, b.TableError, b.Provenance.Kind)
				}
			}
		}
	}
	if strings.Join(branches, ",") != "ice-Ih,ice-III,ice-V,ice-VI,ice-VII" {
		t.Errorf("water melting branches %v", branches)
	}
	code, out, _ = runCmd(t, "substances")
	if code != 0 || !strings.Contains(out, "ice-III") || !strings.Contains(out, "design codes") || !strings.Contains(out, "INVENTED") {
		t.Errorf("human listing (exit %d):\n%s", code, out)
	}
}

func TestEvalBatch(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in.csv")
	var b strings.Builder
	b.WriteString("temperature_k\n300\nNaN\n-5\n700\n25degC\nabc\n\n")
	const n = 5000 // more than one chunk at --chunk 1000
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "%.6f\n", 280+float64(i)*0.07)
	}
	if err := os.WriteFile(in, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out.csv")
	code, stdout, errOut := runCmd(t, "--server", sharedServer(t), "--json", "eval", "--substance", "water", "--curve", "saturation",
		"--input", in, "--output", out, "--chunk", "1000")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var sum batchSummary
	if err := json.Unmarshal([]byte(stdout), &sum); err != nil {
		t.Fatal(err)
	}
	fh, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	rows, err := csv.NewReader(fh).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(rows[0], ",") != strings.Join(batchColumns, ",") {
		t.Fatalf("header %v", rows[0])
	}
	// The blank line is skipped by the CSV reader; every other row keeps its place.
	if len(rows)-1 != 6+n || sum.Rows != 6+n {
		t.Fatalf("%d output rows, summary %+v, want %d", len(rows)-1, sum, 6+n)
	}
	wantStatus := []string{"ok", "invalid", "invalid", "out-of-range", "ok", "invalid"}
	for i, w := range wantStatus {
		if !strings.HasPrefix(rows[1+i][4], w) {
			t.Errorf("row %d: status %q, want %s", i+1, rows[1+i][4], w)
		}
	}
	if p, _ := strconv.ParseFloat(rows[1][1], 64); !scalar.EqualWithinAbsOrRel(p, 3.53658941e3, 0, 1e-8) { // IAPWS-IF97 Psat(300 K), Table 35 check value
		t.Errorf("row 1 pressure %q", rows[1][1])
	}
	if !strings.Contains(rows[4][4], "647.096") {
		t.Errorf("out-of-range row does not give the range: %q", rows[4][4])
	}
	for i := 0; i < n; i++ {
		r := rows[7+i]
		tk, _ := strconv.ParseFloat(r[0], 64)
		if want := 280 + float64(i)*0.07; math.Abs(tk-want) > 1e-6 || r[4] != "ok" {
			t.Fatalf("row %d: %v, want T %g ok", 7+i, r, want)
		}
	}
	if sum.Failed != 4 {
		t.Errorf("summary %+v, want 4 failed", sum)
	}
}

func TestDemo(t *testing.T) {
	code, out, errOut := runCmd(t, "demo")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, s := range []string{"ice-Ih", "ice-III", "Dry-ice", "INVENTED", "design codes", "194."} {
		if !strings.Contains(out, s) {
			t.Errorf("demo report lacks %q", s)
		}
	}
	code, out, errOut = runCmd(t, "--server", sharedServer(t), "--json", "demo")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rep demoReport
	if err := json.NewDecoder(bytes.NewReader([]byte(out))).Decode(&rep); err != nil {
		t.Fatal(err)
	}
	if rep.PCMSubstance == "" || len(rep.Freezing) < 5 || len(rep.DryIce) == 0 {
		t.Errorf("demo JSON %+v", rep)
	}
	// At 200 MPa ice Ih melts at about 252.3 K (IAPWS R14-08(2011) melting equation of ice Ih).
	for _, p := range rep.Freezing {
		if p.Pressure == 200e6 && !scalar.EqualWithinAbsOrRel(p.Temperature, 252.3, 0.1, 0) {
			t.Errorf("melting at 200 MPa: %g K", p.Temperature)
		}
	}
}

func TestServeRefusesOpenListenWithoutSecurity(t *testing.T) {
	code, _, errOut := runCmd(t, "serve", "--listen", "0.0.0.0:0")
	if code == 0 || !strings.Contains(errOut, "--insecure") || !strings.Contains(errOut, "0.0.0.0:0") {
		t.Errorf("exit %d: %s", code, errOut)
	}
	code, _, errOut = runCmd(t, "serve", "--listen", "nonsense")
	if code == 0 || !strings.Contains(errOut, "HOST:PORT") {
		t.Errorf("exit %d: %s", code, errOut)
	}
}

func TestUnreachableServer(t *testing.T) {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	addr := l.Addr().String()
	l.Close() // nothing listens there now
	code, _, errOut := runCmd(t, "--server", addr, "eval", "--substance", "water", "--curve", "saturation", "--temperature", "300")
	if code == 0 || !strings.Contains(errOut, "cannot reach "+addr) {
		t.Errorf("exit %d: %s", code, errOut)
	}
}
