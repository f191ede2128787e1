package catalog

import (
	"strings"
	"testing"
	"testing/fstest"

	"github.com/phasebound/phasebound/thermo"
)

// Families that only the catalog tests register: none is served by a
// standard backend, and some misbehave on purpose.
type testFamily struct {
	name     string
	panicNew bool
	pressure func(t float64) float64
}

func (f testFamily) Name() string { return f.name }

func (f testFamily) New(p thermo.Params, tmin, tmax float64) (thermo.Correlation, error) {
	if f.panicNew {
		panic("boom in New")
	}
	return testCorrelation{f.pressure, thermo.Range{Tmin: tmin, Tmax: tmax}}, nil
}

type testCorrelation struct {
	p func(float64) float64
	r thermo.Range
}

func (c testCorrelation) Pressure(t float64) (float64, error) { return c.p(t), nil }
func (c testCorrelation) Slope(float64) (float64, error)      { return 0, nil }
func (c testCorrelation) PressureSlope(t float64) (float64, float64, error) {
	return c.p(t), 0, nil
}
func (c testCorrelation) Temperature(float64) (float64, error) { return 0, thermo.ErrNotImplemented }
func (c testCorrelation) Range() thermo.Range                  { return c.r }

type testVolumeFamily struct {
	name     string
	panicNew bool
}

func (f testVolumeFamily) Name() string { return f.name }

func (f testVolumeFamily) New(thermo.Params, float64, float64) (thermo.VolumeCorrelation, error) {
	if f.panicNew {
		panic("boom in volume New")
	}
	return nil, nil
}

func init() {
	thermo.Register(testFamily{name: "catalog-test-orphan", pressure: func(float64) float64 { return 1000 }})
	thermo.Register(testFamily{name: "catalog-test-panic", panicNew: true})
	thermo.Register(testFamily{name: "catalog-test-negative", pressure: func(t float64) float64 {
		if t > 240 {
			return -1
		}
		return 1000
	}})
	thermo.Register(testFamily{name: "catalog-test-pressure-panic", pressure: func(float64) float64 { panic("boom in Pressure") }})
	thermo.RegisterVolume(testVolumeFamily{name: "catalog-test-volume-orphan"})
	thermo.RegisterVolume(testVolumeFamily{name: "catalog-test-volume-panic", panicNew: true})
}

// TestMisbehavingFamilies checks that a family that panics or returns
// nonsense is reported as a catalog error, never a crash.
func TestMisbehavingFamilies(t *testing.T) {
	t.Parallel()
	good := readGood(t)
	for _, tc := range []struct {
		name, old, new, want string
	}{
		{"no standard backend", `family = "simon-glatzel"`, `family = "catalog-test-orphan"`,
			`x.toml:33: substance "testium" curve "melting" branch "solid-I": no standard backend serves family "catalog-test-orphan": name a [[backend]] that does`},
		{"panic in New", `family = "simon-glatzel"`, `family = "catalog-test-panic"`,
			`x.toml:39: substance "testium" curve "melting" branch "solid-I": family "catalog-test-panic": the family failed on these parameters: boom in New`},
		{"negative pressure", `family = "simon-glatzel"`, `family = "catalog-test-negative"`,
			`x.toml:39: substance "testium" curve "melting" branch "solid-I": family "catalog-test-negative" gives P(250 K) = -1 Pa, not a positive pressure`},
		{"panic in Pressure", `family = "simon-glatzel"`, `family = "catalog-test-pressure-panic"`,
			`x.toml:39: substance "testium" curve "melting" branch "solid-I": family "catalog-test-pressure-panic" cannot evaluate P(200 K): the family failed: boom in Pressure`},
		{"volume without standard backend", `volume_high = { family = "ideal-gas" }`, `volume_high = { family = "catalog-test-volume-orphan" }`,
			`x.toml:28: substance "testium" curve "saturation": no standard backend serves family "catalog-test-volume-orphan"`},
		{"panic in volume New", `volume_high = { family = "ideal-gas" }`, `volume_high = { family = "catalog-test-volume-panic" }`,
			`x.toml:28: substance "testium" curve "saturation": volume family "catalog-test-volume-panic": the family failed on these parameters: boom in volume New`},
		{"third-party backend skips the in-process check", `family = "simon-glatzel"`, `family = "catalog-test-panic"` + "\n    backend = \"lab-fits\"", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := Parse("x.toml", []byte(edit(t, good, tc.old, tc.new)))
			if tc.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				return
			}
			if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
				t.Fatalf("error\n  %v\nwant it to start with\n  %s", err, tc.want)
			}
		})
	}
}

func TestLoadDefaultFrom(t *testing.T) {
	t.Parallel()
	sub := func(id string) string {
		return "\n[[substance]]\nid = \"" + id + "\"\nmolar_mass = 0.1\nprovenance = { kind = \"invented\" }\n" +
			"  [[substance.curve]]\n  kind = \"saturation\"\n    [[substance.curve.branch]]\n" +
			"    family = \"clausius-clapeyron\"\n    t_min = 300.0\n    t_max = 400.0\n" +
			"    params = { t0 = 300.0, p0 = 1.0e5, delta_h = 40000.0 }\n"
	}
	file := func(text string) *fstest.MapFile { return &fstest.MapFile{Data: []byte("format = 1\n" + text)} }

	c, err := loadDefault(fstest.MapFS{
		"default/b.toml":     file(sub("b")),
		"default/a.toml":     file(sub("a")),
		"default/demo.toml":  file(sub("demo")),
		"default/water.toml": file(sub("water")),
		"default/notes.txt":  &fstest.MapFile{Data: []byte("not a catalog")},
	})
	if err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, s := range c.Substances {
		ids = append(ids, s.ID)
	}
	if want := "water demo a b"; strings.Join(ids, " ") != want {
		t.Errorf("order %v, want %s", ids, want)
	}
	if c.Source != DefaultSource {
		t.Errorf("Source = %q", c.Source)
	}

	for _, tc := range []struct {
		name string
		fs   fstest.MapFS
		want string
	}{
		{"include_default", fstest.MapFS{"default/water.toml": file("include_default = true\n" + sub("water"))},
			"catalog: embedded default: water.toml must not set include_default"},
		{"same id in two files", fstest.MapFS{"default/water.toml": file(sub("water")), "default/demo.toml": file(sub("water"))},
			`catalog: embedded default: demo.toml:3: substance "water" is defined in two embedded files`},
		{"broken file", fstest.MapFS{"default/water.toml": file(strings.Replace(sub("water"), "t_max = 400.0", "t_max = 250.0", 1))},
			`catalog: embedded default: default/water.toml:11: substance "water" curve "saturation": t_min 300 must be < t_max 250`},
		{"undeclared backend", fstest.MapFS{"default/water.toml": file(strings.Replace(sub("water"), "t_min", "backend = \"elsewhere\"\n    t_min", 1))},
			`catalog: embedded default: default/water.toml:11: substance "water" curve "saturation": backend "elsewhere" is not declared`},
		{"no files", fstest.MapFS{"default/notes.txt": &fstest.MapFile{Data: []byte("x")}},
			"catalog: embedded default: no catalog files"},
	} {
		if _, err := loadDefault(tc.fs); err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want it to start with %s", tc.name, err, tc.want)
		}
	}
}
