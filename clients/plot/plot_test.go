package plot

import (
	"bytes"
	"context"
	"encoding/xml"
	"image"
	_ "image/png"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	gp "gonum.org/v1/plot"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// outDir is where the tests write their images: a temporary folder, or
// PHASEBOUND_PLOT_DIR when set (to look at them).
func outDir(t *testing.T) string {
	if d := os.Getenv("PHASEBOUND_PLOT_DIR"); d != "" {
		return d
	}
	return t.TempDir()
}

// checkImage asserts that path is a valid PNG or SVG of reasonable size.
func checkImage(t *testing.T, path string) {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(data) < 5_000 || len(data) > 5_000_000 {
		t.Errorf("%s: %d bytes, want 5 kB .. 5 MB", path, len(data))
	}
	switch filepath.Ext(path) {
	case ".png":
		cfg, format, err := image.DecodeConfig(bytes.NewReader(data))
		if err != nil {
			t.Fatalf("%s: not an image: %v", path, err)
		}
		if format != "png" || cfg.Width < 600 || cfg.Height < 400 {
			t.Errorf("%s: %s %d×%d, want png at least 600×400", path, format, cfg.Width, cfg.Height)
		}
	case ".svg":
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
			t.Errorf("%s: root element %q, want svg", path, root)
		}
	}
}

func TestPhaseDiagramFiles(t *testing.T) {
	t.Parallel()
	dir := outDir(t)
	data := []Point{{210, 1700}, {230, 5200}, {260, 22000}, {300, 56000}, {350, 150000}}
	for _, ext := range []string{"png", "svg"} {
		p, err := PhaseDiagram(context.Background(), fakeSource{}, "fakium", Options{Data: data})
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(dir, "fakium-diagram."+ext)
		if err := Save(p, path); err != nil {
			t.Fatal(err)
		}
		checkImage(t, path)
	}
}

func TestPhaseDiagramContent(t *testing.T) {
	t.Parallel()
	d, err := fetchDiagram(context.Background(), fakeSource{}, "fakium", Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.curves) != 4 {
		t.Fatalf("%d curves drawn, want 4 (saturation, sublimation, melting alpha and beta)", len(d.curves))
	}
	want := map[string]bool{"saturation": true, "sublimation": true, "melting · alpha": true, "melting · beta": true}
	for _, c := range d.curves {
		if !want[c.label] {
			t.Errorf("unexpected curve label %q", c.label)
		}
		if len(c.ts) < 100 {
			t.Errorf("%s: only %d points", c.label, len(c.ts))
		}
	}
	if d.regions == nil {
		t.Fatal("no phase regions located")
	}
	got := strings.Join(d.regions.names, ",")
	for _, r := range []string{"vapor", "liquid", "alpha", "beta", "supercritical fluid"} {
		if !strings.Contains(got, r) {
			t.Errorf("region %q not found among %s", r, got)
		}
	}
	// The automatic axes span the curves: decades, at most 13 of them.
	if d.pmax < 1e9 || d.pmin > 1 || d.pmax/d.pmin > 1.0001e13 {
		t.Errorf("pressure axis [%g, %g]", d.pmin, d.pmax)
	}
	if d.tmin > fkSubTmin || d.tmax < fkMeltBetaTmax {
		t.Errorf("temperature axis [%g, %g] misses the curves", d.tmin, d.tmax)
	}
	// Explicit limits win.
	d2, err := fetchDiagram(context.Background(), fakeSource{}, "fakium", Options{Tmin: 190, Tmax: 300, Pmin: 100, Pmax: 1e6})
	if err != nil {
		t.Fatal(err)
	}
	if d2.tmin != 190 || d2.tmax != 300 || d2.pmin != 100 || d2.pmax != 1e6 {
		t.Errorf("limits not honoured: %g %g %g %g", d2.tmin, d2.tmax, d2.pmin, d2.pmax)
	}
	if _, err := fetchDiagram(context.Background(), fakeSource{}, "fakium", Options{Pmin: 1e6, Pmax: 1e5}); err == nil {
		t.Error("pmin > pmax accepted")
	}
}

func TestLatentHeatFile(t *testing.T) {
	t.Parallel()
	p, err := LatentHeat(context.Background(), fakeSource{}, "fakium", Options{})
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(outDir(t), "fakium-latent.png")
	if err := Save(p, path); err != nil {
		t.Fatal(err)
	}
	checkImage(t, path)
}

func TestResiduals(t *testing.T) {
	t.Parallel()
	data := []Point{{210, 1700}, {230, 5200}, {260, 22000}, {300, 56000}, {350, 150000}}
	res, err := ResidualsAgainst(context.Background(), fakeSource{}, "fakium", phaseboundpb.CurveKind_CURVE_KIND_SATURATION, "", data)
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range res {
		p, _ := fkCC(data[i].T, fkHvap)
		if want := (data[i].P - p) / data[i].P; r.Rel != want {
			t.Errorf("point %d: rel %g, want %g", i, r.Rel, want)
		}
	}
	p, err := Residuals(res, "fakium saturation")
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(outDir(t), "fakium-residuals.svg")
	if err := Save(p, path); err != nil {
		t.Fatal(err)
	}
	checkImage(t, path)
	// A point outside the validity range is named.
	_, err = ResidualsAgainst(context.Background(), fakeSource{}, "fakium", phaseboundpb.CurveKind_CURVE_KIND_SATURATION, "", []Point{{500, 1e6}})
	if err == nil || !strings.Contains(err.Error(), "point 1") {
		t.Errorf("out-of-range point: error %v should name point 1", err)
	}
	if _, err := Residuals(nil, ""); err == nil {
		t.Error("empty residuals accepted")
	}
}

func TestSaveRejectsExtension(t *testing.T) {
	t.Parallel()
	if err := Save(gp.New(), filepath.Join(t.TempDir(), "x.gif")); err == nil || !strings.Contains(err.Error(), ".png or .svg") {
		t.Fatalf("error %v should list the formats", err)
	}
}

func TestFormatPressure(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		p    float64
		want string
	}{{611.657, "611.7 Pa"}, {22.064e6, "22.06 MPa"}, {1e-3, "1 mPa"}, {1e5, "100 kPa"}, {2.2e9, "2.2 GPa"}} {
		if got := FormatPressure(tc.p); got != tc.want {
			t.Errorf("FormatPressure(%g) = %q, want %q", tc.p, got, tc.want)
		}
	}
}
