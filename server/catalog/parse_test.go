package catalog

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/phasebound/phasebound/thermo"
)

const goodPath = "../../testdata/catalog/good.toml"

func readGood(t testing.TB) string {
	t.Helper()
	b, err := os.ReadFile(goodPath)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestParseGood(t *testing.T) {
	t.Parallel()
	src := readGood(t)
	c, err := Parse("good.toml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256([]byte(src))
	if c.Version != hex.EncodeToString(sum[:]) || c.Source != "good.toml" {
		t.Errorf("Version, Source = %q, %q; want the SHA-256 of the text and the name", c.Version, c.Source)
	}
	want := []Backend{{Name: "lab-fits", Path: "bin/lab-fits", SHA256: strings.Repeat("a", 64)}}
	if !reflect.DeepEqual(c.Backends, want) {
		t.Errorf("Backends = %+v, want %+v (sha256 lower-cased, path as written)", c.Backends, want)
	}
	if len(c.Substances) != 2 || c.Substances[0].ID != "testium" || c.Substances[1].ID != "other" {
		t.Fatalf("substances not in file order: %+v", c.Substances)
	}
	s := c.Lookup("testium")
	if s.Line != 8 || s.File != "good.toml" || s.MolarMass != 0.05 || s.Critical == nil || s.Critical.Pressure != 408960.1637877032 {
		t.Errorf("testium = line %d, M %v, critical %+v", s.Line, s.MolarMass, s.Critical)
	}
	if len(s.Triple) != 1 || !reflect.DeepEqual(s.Triple[0].Phases, []string{"solid", "liquid", "vapor"}) || s.Triple[0].Temperature != 200 {
		t.Errorf("triple = %+v", s.Triple)
	}
	sat := s.Curve(thermo.Saturation)
	if sat == nil || len(sat.Branches) != 1 {
		t.Fatalf("saturation curve = %+v", sat)
	}
	b := sat.Branches[0]
	if b.Line != 22 || b.Name != "" || b.Family != "clausius-clapeyron" || b.Tmin != 200 || b.Tmax != 400 {
		t.Errorf("saturation branch = %+v", b)
	}
	if b.Provenance != s.Provenance {
		t.Errorf("branch provenance %+v, want the substance's %+v (inherited)", b.Provenance, s.Provenance)
	}
	if got := b.VolumeLow.Params["molar_mass"]; len(got) != 1 || got[0] != 0.05 {
		t.Errorf("volume_low molar_mass = %v, want the substance's 0.05 injected", got)
	}
	if b.VolumeHigh == nil || b.VolumeHigh.Family != "ideal-gas" {
		t.Errorf("volume_high = %+v", b.VolumeHigh)
	}
	if b.Reference == nil || *b.Reference != (Reference{Temperature: 200, DeltaH: 20000}) {
		t.Errorf("reference = %+v", b.Reference)
	}
	melt := s.Curve(thermo.Melting)
	if melt == nil || len(melt.Branches) != 2 {
		t.Fatalf("melting curve = %+v", melt)
	}
	if b := melt.Branches[0]; b.Name != "solid-I" || b.SolidForm != "solid-I" || b.Kind != Published || b.Line != 33 {
		t.Errorf("solid-I = %+v", b)
	}
	b2 := melt.Branches[1]
	if b2.Backend != "lab-fits" || b2.Kind != Fit || b2.DataFile != "solid-II.csv" ||
		!reflect.DeepEqual(b2.Params["slope"], []float64{3e6, 1e3}) || !reflect.DeepEqual(b2.Params["p0"], []float64{1.69e8}) {
		t.Errorf("solid-II = %+v", b2)
	}
	o := c.Lookup("other")
	if got := o.Curves[0].Branches[0].Params["a"]; !reflect.DeepEqual(got, []float64{9}) {
		t.Errorf("integer-valued parameter a = %v, want [9]", got)
	}
}

// edit returns src with old replaced by new exactly once.
func edit(t testing.TB, src, old, new string) string {
	t.Helper()
	if strings.Count(src, old) != 1 {
		t.Fatalf("edit: %q occurs %d times in good.toml", old, strings.Count(src, old))
	}
	return strings.Replace(src, old, new, 1)
}

func TestParseErrors(t *testing.T) {
	t.Parallel()
	good := readGood(t)
	const branchI = `x.toml:%d: substance "testium" curve "melting" branch "solid-I": `
	cases := []struct {
		name      string
		old, new  string // edit of good.toml; old == "" means src is new
		want      string // fragment of the message
		wantLine  int
		wantField string
	}{
		{"toml syntax", `molar_mass = 0.05`, `molar_mass = 0.05 0.06`, `x.toml:11: invalid TOML`, 11, ""},
		{"format missing", "format = 1\n", "\n", `x.toml: format is missing (this version reads format = 1)`, 0, ""},
		{"format 2", "format = 1\n", "format = 2\n", `x.toml:1: format 2 is not supported (this version reads format = 1)`, 1, "format"},
		{"unknown top-level field", "format = 1\n", "format = 1\ncolour = \"blue\"\n", `x.toml:2: unknown field "colour" (valid: backend, format, include_default, substance)`, 2, "colour"},
		{"include_default type", "format = 1\n", "format = 1\ninclude_default = \"yes\"\n", `x.toml:2: include_default must be true or false, got a string`, 2, "include_default"},
		{"backend name", `name = "lab-fits"`, `name = "Lab Fits"`, `x.toml:4: backend #1: backend name "Lab Fits" must match [a-z0-9-]+`, 4, "name"},
		{"backend shadows standard", `name = "lab-fits"`, `name = "vapor"`, `x.toml:4: backend "vapor": "vapor" is a standard backend and needs no [[backend]] entry (standard: solid, vapor, volume)`, 4, "name"},
		{"backend twice", "[[substance]]\nid = \"testium\"", "[[backend]]\nname = \"lab-fits\"\npath = \"x\"\nsha256 = \"" + strings.Repeat("c", 64) + "\"\n\n[[substance]]\nid = \"testium\"", `x.toml:9: backend "lab-fits": backend "lab-fits" is declared twice`, 9, "name"},
		{"backend path blank", `path = "bin/lab-fits"`, `path = "  "`, `x.toml:5: backend "lab-fits": path must name the backend executable`, 5, "path"},
		{"backend name missing", `name = "lab-fits"` + "\n", ``, `x.toml:3: backend #1: name is missing`, 3, ""},
		{"family empty", `family = "simon-glatzel"`, `family = " "`, fmt.Sprintf(branchI, 35) + `family is empty (valid: `, 35, "family"},
		{"backend path missing", `path = "bin/lab-fits"`, ``, `x.toml:3: backend "lab-fits": path is missing`, 3, ""},
		{"backend sha256", `sha256 = "AAAA`, `sha256 = "ZAAA`, `x.toml:6: backend "lab-fits": sha256 must be 64 hexadecimal digits, got "ZAAA`, 6, "sha256"},
		{"backend unknown field", `path = "bin/lab-fits"`, "path = \"bin/lab-fits\"\nargs = [\"-v\"]", `x.toml:6: backend "lab-fits": unknown field "args" (valid: name, path, sha256)`, 6, "args"},
		{"id missing", `id = "testium"`, ``, `x.toml:8: substance #1: id is missing`, 8, ""},
		{"id pattern", `id = "testium"`, `id = "Test_ium"`, `x.toml:9: substance #1: id "Test_ium" must match [a-z0-9-]+`, 9, "id"},
		{"id duplicate", `id = "other"`, `id = "testium"`, `x.toml:52: substance "testium": id "testium" is already used by the substance at line 8`, 52, "id"},
		{"name on two lines", `name = "Testium (invented for the catalog tests)"`, `name = "Testium\nsecond line"`, `x.toml:10: substance "testium": name "Testium\nsecond line" must be one line of text`, 10, "name"},
		{"solid form with a tab", `solid_form = "solid-I"`, `solid_form = "solid\tI"`, fmt.Sprintf(branchI, 38) + `solid_form "solid\tI" must be one line of text`, 38, "solid_form"},
		{"triple phase with a newline", `phases = ["solid", "liquid", "vapor"]`, `phases = ["solid", "liquid", "vap\nor"]`, `x.toml:16: substance "testium" triple point #1: phases[2] "vap\nor" must be one line of text`, 16, "phases"},
		{"molar mass missing", "molar_mass = 0.05\n", "", `x.toml:8: substance "testium": molar_mass is missing (a number > 0 kg/mol)`, 8, ""},
		{"molar mass negative", `molar_mass = 0.05`, `molar_mass = -0.05`, `x.toml:11: substance "testium": molar_mass must be a finite number > 0 kg/mol, got -0.05`, 11, "molar_mass"},
		{"molar mass nan", `molar_mass = 0.05`, `molar_mass = nan`, `molar_mass must be a finite number > 0 kg/mol, got NaN`, 11, "molar_mass"},
		{"molar mass string", `molar_mass = 0.05`, `molar_mass = "0.05"`, `x.toml:11: substance "testium": molar_mass must be a number, got a string`, 11, "molar_mass"},
		{"critical pressure", `pressure = 408960.1637877032`, `pressure = 0`, `x.toml:12: substance "testium": critical.pressure must be a finite number > 0 Pa, got 0`, 12, "critical.pressure"},
		{"critical temperature inf", `critical = { temperature = 400.0`, `critical = { temperature = inf`, `x.toml:12: substance "testium": critical.temperature must be a finite number > 0 K, got +Inf`, 12, "critical.temperature"},
		{"critical unknown field", `pressure = 408960.1637877032 }`, `pressure = 408960.1637877032, volume = 1 }`, `x.toml:12: substance "testium": unknown field "critical.volume"`, 12, "critical.volume"},
		{"critical not a table", `critical = { temperature = 400.0, pressure = 408960.1637877032 }`, `critical = 400.0`, `x.toml:12: substance "testium": critical must be a table, got a float`, 12, "critical"},
		{"provenance kind", `{ kind = "invented", note = "catalog test`, `{ kind = "made-up", note = "catalog test`, `x.toml:13: substance "testium": provenance.kind "made-up" is not valid (valid: published, fit, invented)`, 13, "provenance.kind"},
		{"provenance kind missing", `{ kind = "invented", note = "catalog test`, `{ note = "catalog test`, `x.toml:13: substance "testium": provenance.kind is missing`, 13, ""},
		{"published without citation", `{ kind = "published", citation = "A. Author, Invented Citation for the Catalog Tests, 2026." }`, `{ kind = "published" }`, fmt.Sprintf(branchI, 40) + `provenance.citation is required when kind = "published"`, 40, ""},
		{"fit without data file", `data_file = "solid-II.csv", `, ``, `x.toml:49: substance "testium" curve "melting" branch "solid-II": provenance.data_file is required when kind = "fit"`, 49, ""},
		{"fit with bad sha", `data_sha256 = "bbbb`, `data_sha256 = "bbb`, `x.toml:49: substance "testium" curve "melting" branch "solid-II": provenance.data_sha256 must be the 64 hexadecimal digits`, 49, "provenance.data_sha256"},
		{"triple two phases", `phases = ["solid", "liquid", "vapor"]`, `phases = ["solid", "liquid"]`, `x.toml:16: substance "testium" triple point #1: phases must name three phases, got 2`, 16, "phases"},
		{"triple phase twice", `phases = ["solid", "liquid", "vapor"]`, `phases = ["solid", "liquid", "liquid"]`, `x.toml:16: substance "testium" triple point #1: phase "liquid" is named twice`, 16, "phases"},
		{"triple phases missing", "  phases = [\"solid\", \"liquid\", \"vapor\"]\n", "", `x.toml:15: substance "testium" triple point #1: phases is missing`, 15, ""},
		{"triple phase not a string", `phases = ["solid", "liquid", "vapor"]`, `phases = ["solid", "liquid", 3]`, `x.toml:16: substance "testium" triple point #1: phases[2] must be a string, got an integer`, 16, "phases"},
		{"triple temperature", `temperature = 200.0` + "\n  pressure", `temperature = -5.0` + "\n  pressure", `x.toml:17: substance "testium" triple point #1: temperature must be a finite number > 0 K, got -5`, 17, "temperature"},
		{"no curves", "  [[substance.curve]]\n  kind = \"saturation\"\n    [[substance.curve.branch]]\n    family = \"antoine\"\n    t_min = 300.0\n    t_max = 400.0\n    params = { a = 9.0, b = 1500.0, c = -50.0 }\n", "", `x.toml:51: substance "other": substance has no [[substance.curve]]`, 51, ""},
		{"curve kind", `kind = "melting"`, `kind = "boiling"`, `x.toml:32: substance "testium" curve #2: kind "boiling" is not a curve kind (valid: saturation, melting, sublimation, transition)`, 32, "kind"},
		{"curve kind case", `kind = "melting"`, `kind = "Melting"`, `x.toml:32: substance "testium" curve #2: kind "Melting" is not a curve kind`, 32, "kind"},
		{"curve kind twice", `kind = "melting"`, `kind = "saturation"`, `x.toml:32: substance "testium" curve "saturation": substance "testium" has two saturation curves`, 32, "kind"},
		{"curve without branch", "  kind = \"saturation\"\n    [[substance.curve.branch]]\n    family = \"antoine\"\n    t_min = 300.0\n    t_max = 400.0\n    params = { a = 9.0, b = 1500.0, c = -50.0 }\n", "  kind = \"saturation\"\n", `x.toml:55: substance "other" curve "saturation": curve has no [[substance.curve.branch]]`, 55, ""},
		{"curve unknown field", `kind = "melting"`, `kind = "melting"` + "\n  colour = 1", `x.toml:33: substance "testium" curve "melting": unknown field "colour" (valid: branch, kind)`, 33, "colour"},
		{"branch name required", `name = "solid-II"` + "\n", "", `x.toml:42: substance "testium" curve "melting" branch #2: branch name is required: the curve has 2 branches`, 42, ""},
		{"branch name twice", `name = "solid-II"`, `name = "solid-I"`, `x.toml:43: substance "testium" curve "melting" branch "solid-I": branch name "solid-I" is used twice in this curve (first at line 33)`, 43, "name"},
		{"branch name pattern", `name = "solid-II"`, `name = "solid II"`, `x.toml:43: substance "testium" curve "melting" branch #2: branch name "solid II" must be letters, digits`, 43, "name"},
		{"family unknown", `family = "simon-glatzel"`, `family = "simon"`, fmt.Sprintf(branchI, 35) + `family "simon" is not known (valid: `, 35, "family"},
		{"family missing", `family = "simon-glatzel"` + "\n", "", fmt.Sprintf(branchI, 33) + `family is missing`, 33, ""},
		{"t_min >= t_max", `t_min = 200.0` + "\n    t_max = 250.0", `t_min = 260.0` + "\n    t_max = 250.0", fmt.Sprintf(branchI, 36) + `t_min 260 must be < t_max 250`, 36, "t_min"},
		{"t_max negative", `t_max = 250.0`, `t_max = -250.0`, fmt.Sprintf(branchI, 37) + `t_max must be a finite number > 0 K, got -250`, 37, "t_max"},
		{"t_min missing", "    t_min = 200.0\n    t_max = 250.0", "    t_max = 250.0", fmt.Sprintf(branchI, 33) + `t_min is missing (a number > 0 K)`, 33, ""},
		{"params string", `a = 3.0e8, c = 2.0 }`, `a = "3e8", c = 2.0 }`, fmt.Sprintf(branchI, 39) + `params.a must be a number or a list of numbers, got a string`, 39, "params.a"},
		{"params nan", `a = 3.0e8, c = 2.0 }`, `a = nan, c = 2.0 }`, fmt.Sprintf(branchI, 39) + `params.a must be finite, got NaN`, 39, "params.a"},
		{"params list element", `slope = [3.0e6, 1.0e3]`, `slope = [3.0e6, "x"]`, `x.toml:48: substance "testium" curve "melting" branch "solid-II": params.slope[1] must be a number, got a string`, 48, "params.slope"},
		{"params empty list", `slope = [3.0e6, 1.0e3]`, `slope = []`, `x.toml:48: substance "testium" curve "melting" branch "solid-II": params.slope is an empty list`, 48, "params.slope"},
		{"params rejected by family", `a = 3.0e8, c = 2.0 }`, `a = 3.0e8, c = 0.0 }`, fmt.Sprintf(branchI, 39) + `family "simon-glatzel": thermo: bad parameter: simon-glatzel: c = 0`, 39, "params"},
		{"params unknown to family", `a = 3.0e8, c = 2.0 }`, `a = 3.0e8, c = 2.0, z = 1.0 }`, fmt.Sprintf(branchI, 39) + `family "simon-glatzel": thermo: bad parameter: simon-glatzel: unknown parameter "z"`, 39, "params"},
		{"params missing for family", `params = { t0 = 200.0, p0 = 1000.0, a = 3.0e8, c = 2.0 }`, ``, fmt.Sprintf(branchI, 33) + `family "simon-glatzel": thermo: missing parameter`, 33, "params"},
		{"pressure not positive in range", `a = 3.0e8, c = 2.0 }`, `a = -3.0e3, c = 2.0 }`, fmt.Sprintf(branchI, 39) + `family "simon-glatzel": thermo: bad parameter: simon-glatzel: the parameters give P = `, 39, "params"},
		{"backend undeclared", `backend = "lab-fits"`, `backend = "elsewhere"`, `x.toml:45: substance "testium" curve "melting" branch "solid-II": backend "elsewhere" is not declared: declare it in [[backend]], name a standard backend (solid, vapor, volume, lab-fits)`, 45, "backend"},
		{"standard backend does not serve the family", `family = "simon-glatzel"`, `family = "simon-glatzel"` + "\n    backend = \"vapor\"", fmt.Sprintf(branchI, 36) + `backend "vapor" does not serve family "simon-glatzel" (the standard backend "solid" does; or leave backend "")`, 36, "backend"},
		{"standard volume backend does not serve the family", `volume_high = { family = "ideal-gas" }`, `volume_high = { family = "ideal-gas", backend = "solid" }`, `x.toml:28: substance "testium" curve "saturation": volume_high.backend "solid" does not serve family "ideal-gas" (the standard backend "volume" does`, 28, "volume_high.backend"},
		{"backend name pattern in branch", `backend = "lab-fits"`, `backend = "Lab"`, `x.toml:45: substance "testium" curve "melting" branch "solid-II": backend "Lab" must match [a-z0-9-]+`, 45, "backend"},
		{"provenance missing", "provenance = { kind = \"invented\" }\n  [[substance.curve]]", "  [[substance.curve]]", `x.toml:56: substance "other" curve "saturation": provenance is missing (here or on the substance)`, 56, ""},
		{"volume family unknown", `volume_low = { family = "linear-density"`, `volume_low = { family = "steam"`, `x.toml:27: substance "testium" curve "saturation": volume_low.family "steam" is not known (valid: `, 27, "volume_low.family"},
		{"volume params rejected", `rho0 = 1000.0`, `rho0 = -1000.0`, `x.toml:27: substance "testium" curve "saturation": volume family "linear-density": `, 27, "volume_low.params"},
		{"volume unknown field", `volume_high = { family = "ideal-gas" }`, `volume_high = { family = "ideal-gas", phase = "vapor" }`, `x.toml:28: substance "testium" curve "saturation": unknown field "volume_high.phase" (valid: backend, family, params)`, 28, "volume_high.phase"},
		{"volume backend undeclared", `volume_high = { family = "ideal-gas" }`, `volume_high = { family = "ideal-gas", backend = "gas-lab" }`, `x.toml:28: substance "testium" curve "saturation": volume_high.backend "gas-lab" is not declared`, 28, "volume_high.backend"},
		{"reference outside", `reference = { temperature = 200.0`, `reference = { temperature = 500.0`, `x.toml:29: substance "testium" curve "saturation": reference.temperature 500 K must lie within [t_min, t_max] = [200, 400] K`, 29, "reference.temperature"},
		{"reference delta_h missing", `temperature = 200.0, delta_h = 20000.0 }`, `temperature = 200.0 }`, `x.toml:29: substance "testium" curve "saturation": reference.delta_h is missing (J/mol)`, 29, ""},
		{"reference delta_v inf", `temperature = 200.0, delta_h = 20000.0 }`, `temperature = 200.0, delta_h = 20000.0, delta_v = -inf }`, `x.toml:29: substance "testium" curve "saturation": reference.delta_v must be a finite number, got -Inf`, 29, "reference.delta_v"},
		{"branch field misspelt", `t_min = 300.0`, `tmin = 300.0`, `x.toml:57: substance "other" curve "saturation": t_min is missing`, 57, ""},
		{"branch misspelt field", `t_max = 400.0` + "\n    params = { a = 9.0", `t_max = 400.0` + "\n    tmax = 400.0\n    params = { a = 9.0", `x.toml:61: substance "other" curve "saturation": unknown field "tmax" (valid: backend, family, name, params, provenance, reference, solid_form, t_max, t_min, uncertainty, volume_high, volume_low)`, 61, "tmax"},
		{"substance not array", "", "format = 1\nsubstance = 3\n", `x.toml:2: substance must be an array of tables, got an integer`, 2, "substance"},
		{"substance array of non-tables", "", "format = 1\nsubstance = [1, 2]\n", `x.toml:2: substance[0] must be a table, got an integer`, 2, "substance"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			src := tc.new
			if tc.old != "" {
				src = edit(t, good, tc.old, tc.new)
			}
			c, err := Parse("x.toml", []byte(src))
			if err == nil {
				t.Fatalf("Parse accepted the broken catalog (%d substances)", len(c.Substances))
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error\n  %v\nwant it to contain\n  %s", err, tc.want)
			}
			var ce *Error
			if !errors.As(err, &ce) {
				t.Fatalf("error %T is not a *catalog.Error", err)
			}
			if ce.File != "x.toml" || ce.Line != tc.wantLine || ce.Field != tc.wantField {
				t.Errorf("File, Line, Field = %q, %d, %q; want x.toml, %d, %q", ce.File, ce.Line, ce.Field, tc.wantLine, tc.wantField)
			}
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("error spans several lines: %q", err)
			}
		})
	}
}

func TestParseInlineArrayOfTables(t *testing.T) {
	t.Parallel()
	src := `format = 1
substance = [
  { id = "inline", molar_mass = 0.02, provenance = { kind = "invented" }, curve = [
    { kind = "saturation", branch = [ { family = "antoine", t_min = 300.0, t_max = 400.0, params = { a = 9.0, b = 1500.0, c = -50.0 } } ] },
  ] },
]
`
	c, err := Parse("inline.toml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	if s := c.Lookup("inline"); s == nil || len(s.Curves) != 1 || s.Curves[0].Branches[0].Family != "antoine" {
		t.Fatalf("inline form decoded to %+v", s)
	}
	_, err = Parse("inline.toml", []byte(strings.Replace(src, "t_min = 300.0", "t_min = 500.0", 1)))
	if err == nil || !strings.HasPrefix(err.Error(), `inline.toml:4: substance "inline" curve "saturation": t_min 500 must be < t_max 400`) {
		t.Fatalf("error = %v", err)
	}
}

func TestLoadResolvesBackendPath(t *testing.T) {
	t.Parallel()
	c, err := Load(goodPath)
	if err != nil {
		t.Fatal(err)
	}
	want, err := filepath.Abs(filepath.Join(filepath.Dir(goodPath), "bin/lab-fits"))
	if err != nil {
		t.Fatal(err)
	}
	if c.Backends[0].Path != want {
		t.Errorf("backend path %q, want %q", c.Backends[0].Path, want)
	}
	if c.Source != goodPath {
		t.Errorf("Source = %q, want %q", c.Source, goodPath)
	}
	if _, err := Load(filepath.Join(t.TempDir(), "absent.toml")); err == nil || !strings.Contains(err.Error(), "absent.toml") {
		t.Errorf("Load of a missing file: %v", err)
	}
}

func TestErrorUnwrap(t *testing.T) {
	t.Parallel()
	src := edit(t, readGood(t), `a = 3.0e8, c = 2.0 }`, `a = 3.0e8, c = 0.0 }`)
	_, err := Parse("x.toml", []byte(src))
	if !errors.Is(err, thermo.ErrBadParam) {
		t.Errorf("error %v does not wrap thermo.ErrBadParam", err)
	}
}

func TestStandardBackends(t *testing.T) {
	t.Parallel()
	got := StandardBackends()
	if want := []string{"solid", "vapor", "volume"}; !reflect.DeepEqual(got, want) {
		t.Errorf("StandardBackends() = %v, want %v", got, want)
	}
	got[0] = "changed"
	if !IsStandardBackend("solid") || IsStandardBackend("changed") || IsStandardBackend("") {
		t.Error("IsStandardBackend is wrong or StandardBackends shares its slice")
	}
}

func TestLoadFilesIncludeDefault(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	a := filepath.Join(dir, "a.toml")
	if err := os.WriteFile(a, []byte("format = 1\ninclude_default = true\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	c, err := LoadFiles(a, goodPath)
	if err != nil {
		t.Fatal(err)
	}
	def, _ := Default()
	if c.Lookup("water") == nil || c.Lookup("testium") == nil || len(c.Substances) != len(def.Substances)+2 {
		t.Errorf("LoadFiles with include_default gave %d substances", len(c.Substances))
	}
	if _, err := LoadFiles(a, filepath.Join(dir, "absent.toml")); err == nil {
		t.Error("a missing file was accepted")
	}
	bad := filepath.Join(dir, "bad.toml")
	if err := os.WriteFile(bad, []byte("format = 3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := LoadFiles(a, bad); err == nil || !strings.HasPrefix(err.Error(), bad+":1: format 3 is not supported") {
		t.Errorf("error %v", err)
	}
}

// TestBrokenCatalogFiles loads testdata/catalog/broken-*.toml, each of
// which names the error it must give on its second line ("# want: ...").
func TestBrokenCatalogFiles(t *testing.T) {
	t.Parallel()
	dir := filepath.Dir(goodPath)
	files, err := filepath.Glob(filepath.Join(dir, "broken-*.toml"))
	if err != nil || len(files) < 5 {
		t.Fatalf("broken catalogs: %v, %v", files, err)
	}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		lines := strings.SplitN(string(data), "\n", 3)
		want, ok := strings.CutPrefix(lines[1], "# want: ")
		if !ok {
			t.Fatalf("%s: second line is not \"# want: ...\"", f)
		}
		_, err = Load(f)
		if err == nil || !strings.HasPrefix(err.Error(), filepath.Join(dir, want)) {
			t.Errorf("%s: error\n  %v\nwant it to start with\n  %s", filepath.Base(f), err, filepath.Join(dir, want))
		}
	}
}
