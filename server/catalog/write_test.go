package catalog

import (
	"bytes"
	"math"
	"reflect"
	"strings"
	"testing"

	"github.com/phasebound/phasebound/thermo"
)

// content returns c's backends and substances without positions, for
// comparing a catalog with its round trip.
func content(c *Catalog) ([]Backend, []Substance) {
	var subs []Substance
	for _, s := range c.Substances {
		cp := *s
		cp.Line, cp.File = 0, ""
		cp.Curves = nil
		for _, cv := range s.Curves {
			ccv := &Curve{Kind: cv.Kind}
			for _, b := range cv.Branches {
				cb := *b
				cb.Line = 0
				ccv.Branches = append(ccv.Branches, &cb)
			}
			cp.Curves = append(cp.Curves, ccv)
		}
		subs = append(subs, cp)
	}
	return c.Backends, subs
}

// roundTrip writes c, parses the text and reports any difference.
func roundTrip(t testing.TB, c *Catalog) string {
	t.Helper()
	var buf bytes.Buffer
	if err := Write(&buf, c); err != nil {
		t.Fatalf("Write: %v", err)
	}
	back, err := Parse("written.toml", buf.Bytes())
	if err != nil {
		t.Fatalf("Parse of the written catalog: %v\n%s", err, buf.String())
	}
	b1, s1 := content(c)
	b2, s2 := content(back)
	if !equalContent(b1, b2, s1, s2) {
		t.Errorf("the catalog differs after the round trip:\n%s", buf.String())
	}
	if back.IncludeDefault != c.IncludeDefault {
		t.Errorf("IncludeDefault %v after the round trip, want %v:\n%s", back.IncludeDefault, c.IncludeDefault, buf.String())
	}
	return buf.String()
}

func equalContent(b1, b2 []Backend, s1, s2 []Substance) bool {
	return reflect.DeepEqual(b1, b2) && reflect.DeepEqual(s1, s2)
}

func TestWriteRoundTrip(t *testing.T) {
	t.Parallel()
	good, err := Parse("good.toml", []byte(readGood(t)))
	if err != nil {
		t.Fatal(err)
	}
	text := roundTrip(t, good)
	for _, want := range []string{
		"format = 1\n",
		"[[backend]]\nname = \"lab-fits\"\n",
		"    [[substance.curve.branch]]\n    name = \"solid-I\"\n    family = \"simon-glatzel\"\n",
		"    [substance.curve.branch.params]\n    a = 300000000.0\n    c = 2.0\n",
		"    slope = [3000000.0, 1000.0]\n",
		"    [substance.curve.branch.volume_low]\n    family = \"linear-density\"\n",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("written catalog lacks %q:\n%s", want, text)
		}
	}
	def, err := Default()
	if err != nil {
		t.Fatal(err)
	}
	roundTrip(t, def)
}

// TestWriteIncludeDefault: include_default survives Parse → Write → Parse,
// and a catalog built in code with IncludeDefault set writes a file that
// loads on top of the embedded default.
func TestWriteIncludeDefault(t *testing.T) {
	t.Parallel()
	def, err := Default()
	if err != nil {
		t.Fatal(err)
	}
	parsed, err := Parse("site.toml", []byte("format = 1\ninclude_default = true\n"+strings.TrimPrefix(overlayText, "format = 1\n")))
	if err != nil {
		t.Fatal(err)
	}
	if !parsed.IncludeDefault {
		t.Fatal("Parse did not set IncludeDefault from include_default = true")
	}
	if text := roundTrip(t, parsed); !strings.Contains(text, "format = 1\ninclude_default = true\n") {
		t.Errorf("written catalog lacks include_default = true after the format line:\n%s", text)
	}

	own := parsed.Lookup("other") // served by a standard backend
	tests := []struct {
		name           string
		includeDefault bool
		wantSubstances int
	}{
		{"on top of the default", true, len(def.Substances) + 1},
		{"alone", false, 1},
	}
	for _, tc := range tests {
		built := &Catalog{Substances: []*Substance{own}, IncludeDefault: tc.includeDefault}
		var buf bytes.Buffer
		if err := Write(&buf, built); err != nil {
			t.Fatal(err)
		}
		if got := strings.Contains(buf.String(), "include_default"); got != tc.includeDefault {
			t.Errorf("%s: include_default written %v, want %v:\n%s", tc.name, got, tc.includeDefault, buf.String())
		}
		back, err := Parse("built.toml", buf.Bytes())
		if err != nil {
			t.Fatalf("%s: %v\n%s", tc.name, err, buf.String())
		}
		if back.IncludeDefault != tc.includeDefault || len(back.Substances) != tc.wantSubstances || back.Lookup("other") == nil {
			t.Errorf("%s: parsed back with IncludeDefault %v and %d substances (own substance %v), want %v and %d",
				tc.name, back.IncludeDefault, len(back.Substances), back.Lookup("other") != nil, tc.includeDefault, tc.wantSubstances)
		}
	}
}

func TestWriteBuiltCatalog(t *testing.T) {
	t.Parallel()
	// A catalog built in code, as the fit command does, with awkward text
	// and numbers.
	c := &Catalog{
		Source: "fit\nresult",
		Substances: []*Substance{{
			ID: "lab-sample", Name: "Sample \"A\" \\ with ü", MolarMass: 0.1,
			Provenance: Provenance{Kind: Fit, DataFile: "runs/2026-11.csv", DataSHA256: strings.Repeat("0", 64), Note: "line one\nline two\twith \x01 and \x7f"},
			Curves: []*Curve{{Kind: thermo.Saturation, Branches: []*Branch{{
				Correlation: Correlation{Family: "clausius-clapeyron", Params: thermo.Params{"t0": {300}, "p0": {1e5}, "delta_h": {4.0000000000000001e4}}},
				Tmin:        250, Tmax: 350.5,
				Uncertainty: "±2 % (k=2)",
				Provenance:  Provenance{Kind: Fit, DataFile: "runs/2026-11.csv", DataSHA256: strings.Repeat("0", 64)},
				Reference:   &Reference{Temperature: 300, DeltaH: 4e4, DeltaV: math.SmallestNonzeroFloat64},
			}}}},
		}},
	}
	roundTrip(t, c)
}

func TestNum(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		v    float64
		want string
	}{
		{1, "1.0"}, {-2, "-2.0"}, {0.1, "0.1"}, {1e21, "1e+21"}, {2.5e-7, "2.5e-07"}, {1e-4, "0.0001"},
		{2436831.3284154017, "2436831.3284154017"}, {1.8e-6, "1.8e-06"}, {9.999999999999998e15, "9999999999999998.0"}, {1e16, "1e+16"},
		{math.Inf(1), "inf"}, {math.Inf(-1), "-inf"}, {math.NaN(), "nan"}, {math.Copysign(0, -1), "-0.0"},
	} {
		if got := num(tc.v); got != tc.want {
			t.Errorf("num(%v) = %q, want %q", tc.v, got, tc.want)
		}
	}
}
