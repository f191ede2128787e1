package catalog

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

const overlayText = `format = 1

[[backend]]
name = "lab-fits"
path = "/opt/lab-fits-2"
sha256 = "` + "dddddddddddddddddddddddddddddddddddddddddddddddddddddddddddddddd" + `"

[[substance]]
id = "other"
name = "Other, replaced"
molar_mass = 0.2
provenance = { kind = "invented" }
  [[substance.curve]]
  kind = "sublimation"
    [[substance.curve.branch]]
    family = "clausius-clapeyron"
    t_min = 100.0
    t_max = 200.0
    params = { t0 = 200.0, p0 = 100.0, delta_h = 30000.0 }

[[substance]]
id = "newcomer"
molar_mass = 0.03
provenance = { kind = "invented" }
  [[substance.curve]]
  kind = "saturation"
    [[substance.curve.branch]]
    family = "clausius-clapeyron"
    backend = "lab-fits"
    t_min = 300.0
    t_max = 400.0
    params = { t0 = 300.0, p0 = 1.0e5, delta_h = 40000.0 }
`

func TestMerge(t *testing.T) {
	t.Parallel()
	goodText := readGood(t)
	base, err := Parse("good.toml", []byte(goodText))
	if err != nil {
		t.Fatal(err)
	}
	overlay, err := Parse("overlay.toml", []byte(overlayText))
	if err != nil {
		t.Fatal(err)
	}
	baseOther := base.Lookup("other")
	m := Merge(base, overlay)

	var ids []string
	for _, s := range m.Substances {
		ids = append(ids, s.ID)
	}
	if want := []string{"testium", "other", "newcomer"}; !reflect.DeepEqual(ids, want) {
		t.Errorf("merged ids %v, want %v (replacement keeps its place, new ones follow)", ids, want)
	}
	if got := m.Lookup("other"); got != overlay.Lookup("other") || got.Name != "Other, replaced" || len(got.Curves) != 1 {
		t.Errorf("other = %+v, want the overlay's whole substance", got)
	}
	if m.Lookup("testium") != base.Lookup("testium") {
		t.Error("testium is not the base's")
	}
	if len(m.Backends) != 1 || m.Backends[0].Path != "/opt/lab-fits-2" {
		t.Errorf("backends %+v, want the overlay's lab-fits only", m.Backends)
	}
	sum := sha256.Sum256([]byte(goodText + overlayText))
	if m.Version != hex.EncodeToString(sum[:]) {
		t.Errorf("Version %s is not the SHA-256 of the concatenated texts", m.Version)
	}
	if m.Source != "good.toml + overlay.toml" {
		t.Errorf("Source = %q", m.Source)
	}
	// The inputs are unchanged.
	if base.Lookup("other") != baseOther || len(base.Substances) != 2 || base.Backends[0].Path != "bin/lab-fits" {
		t.Error("Merge changed its base")
	}
	if len(overlay.Substances) != 2 {
		t.Error("Merge changed its overlay")
	}
	// Merging a catalog built in code hashes its Write output.
	built := &Catalog{Substances: []*Substance{base.Lookup("testium")}}
	var buf bytes.Buffer
	if err := Write(&buf, built); err != nil {
		t.Fatal(err)
	}
	m2 := Merge(overlay, built)
	sum = sha256.Sum256(append([]byte(overlayText), buf.Bytes()...))
	if m2.Version != hex.EncodeToString(sum[:]) {
		t.Error("Version of a merge with a built catalog is not over its Write output")
	}
}

func TestIncludeDefault(t *testing.T) {
	t.Parallel()
	def, err := Default()
	if err != nil {
		t.Fatal(err)
	}
	text := "format = 1\ninclude_default = true\n" + strings.TrimPrefix(overlayText, "format = 1\n")
	c, err := Parse("site.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Substances) != len(def.Substances)+2 {
		t.Errorf("%d substances, want the default's %d and 2 more", len(c.Substances), len(def.Substances))
	}
	for _, s := range def.Substances {
		if c.Lookup(s.ID) != s {
			t.Errorf("default substance %q missing from the merge", s.ID)
		}
	}
	if c.Lookup("newcomer") == nil {
		t.Error("newcomer missing")
	}
	if !c.IncludeDefault || def.IncludeDefault {
		t.Errorf("IncludeDefault: merged %v, default %v; want true and false", c.IncludeDefault, def.IncludeDefault)
	}
	sum := sha256.Sum256(append(append([]byte(nil), def.raw...), text...))
	if c.Version != hex.EncodeToString(sum[:]) {
		t.Error("Version is not over the default's text followed by the file's")
	}
	// A file on top of the default replaces a default substance wholesale.
	repl := "format = 1\ninclude_default = true\n" + strings.Replace(strings.TrimPrefix(overlayText, "format = 1\n"), `id = "other"`, `id = "demo-frostwax"`, 1)
	c, err = Parse("site.toml", []byte(repl))
	if err != nil {
		t.Fatal(err)
	}
	if s := c.Lookup("demo-frostwax"); s.Name != "Other, replaced" {
		t.Errorf("demo-frostwax = %q, want the site file's", s.Name)
	}
	if s, _ := Default(); s.Lookup("demo-frostwax").Name == "Other, replaced" {
		t.Error("the merge changed the cached default catalog")
	}
}

func TestLoadFiles(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	// The backend is declared in the first file and used by the second.
	first := filepath.Join(dir, "backends.toml")
	firstText := "format = 1\n[[backend]]\nname = \"lab-fits\"\npath = \"lab-fits\"\nsha256 = \"" + strings.Repeat("e", 64) + "\"\n"
	second := filepath.Join(dir, "site.toml")
	secondText := strings.Replace(overlayText, "[[backend]]\nname = \"lab-fits\"\npath = \"/opt/lab-fits-2\"\nsha256 = \""+strings.Repeat("d", 64)+"\"\n", "", 1)
	if strings.Contains(secondText, "[[backend]]") {
		t.Fatal("test setup: backend not removed from the overlay")
	}
	for p, s := range map[string]string{first: firstText, second: secondText} {
		if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := Load(second); err == nil || !strings.Contains(err.Error(), `site.toml:25: substance "newcomer" curve "saturation": backend "lab-fits" is not declared`) {
		t.Fatalf("Load of the second file alone: %v", err)
	}
	c, err := LoadFiles(first, second)
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Backends) != 1 || c.Backends[0].Path != filepath.Join(dir, "lab-fits") {
		t.Errorf("backends = %+v", c.Backends)
	}
	if c.Lookup("newcomer") == nil || c.Lookup("other") == nil {
		t.Error("substances missing")
	}
	sum := sha256.Sum256([]byte(firstText + secondText))
	if c.Version != hex.EncodeToString(sum[:]) {
		t.Error("Version is not over the concatenated files")
	}
	if _, err := LoadFiles(); err == nil {
		t.Error("LoadFiles() with no files succeeded")
	}
	if _, err := LoadFiles(second, first); err != nil {
		t.Errorf("order should not matter for backend declarations: %v", err)
	}
}
