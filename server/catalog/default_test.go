package catalog

import (
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/phasebound/phasebound/thermo"
)

func TestDefault(t *testing.T) {
	t.Parallel()
	c, err := Default()
	if err != nil {
		t.Fatalf("the embedded default catalog is broken: %v", err)
	}
	again, err := Default()
	if err != nil || again != c {
		t.Error("Default does not return the cached catalog")
	}
	if c.Source != DefaultSource || len(c.Version) != 64 {
		t.Errorf("Source, Version = %q, %q", c.Source, c.Version)
	}
	var ids []string
	for _, s := range c.Substances {
		ids = append(ids, s.ID)
	}
	if want := []string{"water", "carbon-dioxide", "demo-frostwax"}; !slices.Equal(ids, want) {
		t.Fatalf("default substances %v, want %v in this order", ids, want)
	}

	water := c.Lookup("water")
	melt := water.Curve(thermo.Melting)
	if melt == nil {
		t.Fatal("water has no melting curve")
	}
	var names []string
	for _, b := range melt.Branches {
		names = append(names, b.Name)
	}
	if want := []string{"ice-Ih", "ice-III", "ice-V", "ice-VI", "ice-VII"}; !slices.Equal(names, want) {
		t.Errorf("water melting branches %v, want %v", names, want)
	}
	if sub := water.Curve(thermo.Sublimation); sub == nil || len(sub.Branches) != 1 {
		t.Error("water needs one sublimation branch")
	}
	if sat := water.Curve(thermo.Saturation); sat == nil || len(sat.Branches) != 1 || sat.Branches[0].Family != "iapws-if97" {
		t.Error("water needs its saturation curve by IAPWS-IF97")
	}
	co2 := c.Lookup("carbon-dioxide")
	for _, k := range []thermo.CurveKind{thermo.Saturation, thermo.Melting, thermo.Sublimation} {
		if co2.Curve(k) == nil {
			t.Errorf("carbon-dioxide has no %s curve", k)
		}
	}
	for _, s := range []*Substance{water, co2} {
		for _, cv := range s.Curves {
			for _, b := range cv.Branches {
				if b.Kind != Published || b.Citation == "" {
					t.Errorf("%s %s %q: provenance %+v, want a published citation", s.ID, cv.Kind, b.Name, b.Provenance)
				}
			}
		}
	}
}

// TestDemoSubstance checks that the invented demo material is marked
// invented everywhere and that its curves really meet at its triple point
// and its saturation curve ends at its critical point.
func TestDemoSubstance(t *testing.T) {
	t.Parallel()
	c, err := Default()
	if err != nil {
		t.Fatal(err)
	}
	s := c.Lookup("demo-frostwax")
	if s == nil {
		t.Fatal("demo-frostwax missing from the default catalog")
	}
	if s.Kind != Invented || !strings.Contains(s.Name, "invented") || !strings.Contains(s.Note, "never use for design") {
		t.Errorf("demo-frostwax is not marked invented: %q %+v", s.Name, s.Provenance)
	}
	if len(s.Triple) != 1 || s.Critical == nil {
		t.Fatalf("demo-frostwax needs one triple point and a critical point")
	}
	tp := s.Triple[0]
	const tol = 1e-12
	for _, k := range []thermo.CurveKind{thermo.Saturation, thermo.Melting, thermo.Sublimation} {
		cv := s.Curve(k)
		if cv == nil || len(cv.Branches) != 1 {
			t.Fatalf("demo-frostwax needs one %s branch", k)
		}
		b := cv.Branches[0]
		if b.Kind != Invented || !strings.Contains(b.Note, "never use for design") {
			t.Errorf("%s branch provenance %+v is not marked invented", k, b.Provenance)
		}
		if b.Reference == nil || b.VolumeLow == nil || b.VolumeHigh == nil {
			t.Errorf("%s branch lacks a reference or phase volumes", k)
		}
		corr := build(t, b)
		p, err := corr.Pressure(tp.Temperature)
		if err != nil {
			t.Fatalf("%s P(T_triple): %v", k, err)
		}
		if !scalar.EqualWithinRel(p, tp.Pressure, tol) {
			t.Errorf("%s curve gives %.15g Pa at the triple point %.15g K, want %.15g Pa", k, p, tp.Temperature, tp.Pressure)
		}
	}
	sat := build(t, s.Curve(thermo.Saturation).Branches[0])
	pc, err := sat.Pressure(s.Critical.Temperature)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinRel(pc, s.Critical.Pressure, tol) {
		t.Errorf("saturation gives %.15g Pa at Tc, the critical pressure is %.15g Pa", pc, s.Critical.Pressure)
	}
}

func build(t *testing.T, b *Branch) thermo.Correlation {
	t.Helper()
	f, err := thermo.GetFamily(b.Family)
	if err != nil {
		t.Fatal(err)
	}
	c, err := f.New(b.Params, b.Tmin, b.Tmax)
	if err != nil {
		t.Fatal(err)
	}
	return c
}
