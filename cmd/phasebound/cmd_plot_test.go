package main

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"image"
	_ "image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var goodCatalog = filepath.Join("..", "..", "testdata", "audit", "good.toml")

// checkImageFile asserts a valid PNG or SVG of reasonable size.
func checkImageFile(t *testing.T, path string) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(data) < 5_000 || len(data) > 5_000_000 {
		t.Errorf("%s: %d bytes, want 5 kB .. 5 MB", path, len(data))
	}
	if strings.HasSuffix(path, ".png") {
		cfg, format, err := image.DecodeConfig(bytes.NewReader(data))
		if err != nil || format != "png" || cfg.Width < 600 || cfg.Height < 400 {
			t.Errorf("%s: %v %s %d×%d", path, err, format, cfg.Width, cfg.Height)
		}
		return
	}
	dec := xml.NewDecoder(bytes.NewReader(data))
	root := ""
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("%s: not XML: %v", path, err)
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
		}
	}
	if root != "svg" {
		t.Errorf("%s: root %q, want svg", path, root)
	}
}

func TestPlotKinds(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	data := filepath.Join(dir, "points.csv")
	if err := os.WriteFile(data, []byte("temperature_k,pressure_pa\n250,6000\n300,55500\n350,190000\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name string
		args []string
	}{
		{"diagram.png", []string{"--data", data}},
		{"diagram.svg", []string{"--tmin", "150", "--tmax", "450", "--pmin", "1Pa", "--pmax", "1GPa"}},
		{"latent.png", []string{"--kind", "latent-heat"}},
		{"residuals.svg", []string{"--kind", "residuals", "--data", data, "--curve", "saturation"}},
	}
	for _, tc := range tests {
		out := filepath.Join(dir, tc.name)
		args := append([]string{"--catalog", goodCatalog, "plot", "--substance", "testium", "--out", out}, tc.args...)
		code, stdout, errOut := runCmd(t, args...)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", tc.name, code, errOut)
		}
		if !strings.Contains(stdout, "wrote "+out) {
			t.Errorf("%s: stdout %q", tc.name, stdout)
		}
		checkImageFile(t, out)
	}
	// The embedded default catalog's water through --server: five melting
	// branches, the sublimation curve down to 50 K (clipped by the
	// automatic axes). (The other cases above run the in-process server.)
	addr := sharedServer(t)
	for _, name := range []string{"water.png", "water-latent.svg"} {
		out := filepath.Join(dir, name)
		args := []string{"--server", addr, "plot", "--substance", "water", "--out", out}
		if strings.Contains(name, "latent") {
			args = append(args, "--kind", "latent-heat")
		}
		if code, _, errOut := runCmd(t, args...); code != 0 {
			t.Fatalf("%s: exit %d: %s", name, code, errOut)
		}
		checkImageFile(t, out)
	}
	// --json reports what was written.
	out := filepath.Join(dir, "j.png")
	code, stdout, errOut := runCmd(t, "--catalog", goodCatalog, "--json", "plot", "--substance", "testium", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rep map[string]string
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil || rep["out"] != out || rep["kind"] != "phase-diagram" {
		t.Errorf("json %q (%v)", stdout, err)
	}
}

func TestPlotBadInput(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	tests := []struct {
		args []string
		want string
	}{
		{[]string{"--substance", "testium"}, "--out FILE.png or FILE.svg is required"},
		{[]string{"--substance", "testium", "--out", filepath.Join(dir, "x.gif")}, "must end in .png or .svg"},
		{[]string{"--substance", "testium", "--out", filepath.Join(dir, "x.png"), "--kind", "pie"}, "not one of phase-diagram, latent-heat, residuals"},
		{[]string{"--substance", "testium", "--out", filepath.Join(dir, "x.png"), "--kind", "residuals"}, "needs --data and --curve"},
		{[]string{"--substance", "testium", "--out", filepath.Join(dir, "x.png"), "--tmin", "300", "--tmax", "200"}, "must be below --tmax"},
		{[]string{"--substance", "testium", "--out", filepath.Join(dir, "x.png"), "--pmin", "abc"}, "--pmin"},
		{[]string{"--substance", "nonesuch", "--out", filepath.Join(dir, "x.png")}, "nonesuch"},
	}
	for _, tc := range tests {
		code, _, errOut := runCmd(t, append([]string{"--catalog", goodCatalog, "plot"}, tc.args...)...)
		if code == 0 || !strings.Contains(errOut, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want it to contain %q", tc.args, code, errOut, tc.want)
		}
	}
}
