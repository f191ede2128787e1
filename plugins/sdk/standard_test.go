package sdk

import (
	"context"
	"errors"
	"fmt"
	"os/exec"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestStandardFor(t *testing.T) {
	tests := []struct {
		family, backend string
	}{
		{"clausius-clapeyron", "vapor"},
		{"antoine", "vapor"},
		{"extended-antoine", "vapor"},
		{"wagner", "vapor"},
		{"iapws-if97", "vapor"},
		{"clapeyron-linear", "solid"},
		{"simon-glatzel", "solid"},
		{"power-sum", "solid"},
		{"log-power-sum", "solid"},
		{"shifted-power-sum", "solid"},
		{"inverse-log-power-sum", "solid"},
		{"density-power-series", "volume"},
		{"density-log-series", "volume"},
		{"rackett", "volume"},
		{"ideal-gas", "volume"},
		{"second-virial", "volume"},
		{"linear-density", "volume"},
	}
	for _, tc := range tests {
		got, err := StandardFor(tc.family)
		if err != nil || got != tc.backend {
			t.Errorf("StandardFor(%q) = %q, %v; want %q", tc.family, got, err, tc.backend)
		}
	}
	_, err := StandardFor("no-such-form")
	if err == nil || !strings.Contains(err.Error(), `"no-such-form"`) || !strings.Contains(err.Error(), "simon-glatzel") {
		t.Errorf("unknown family: err = %v, want one naming it and the valid families", err)
	}
}

func TestStandard(t *testing.T) {
	if got := StandardNames(); !slices.Equal(got, []string{"solid", "vapor", "volume"}) {
		t.Errorf("StandardNames = %v", got)
	}
	_, err := Standard("liquid")
	if err == nil || !strings.Contains(err.Error(), "solid, vapor, volume") {
		t.Errorf("Standard(liquid): err = %v, want one listing the valid names", err)
	}
}

// TestStandardFamiliesRegistered checks that this build's thermo package
// registers every family the standard backends promise.
func TestStandardFamiliesRegistered(t *testing.T) {
	for _, name := range StandardNames() {
		b, err := Standard(name)
		if err != nil {
			t.Fatal(err)
		}
		if missing := standardMissing(name); len(missing) > 0 {
			t.Errorf("standard backend %q: families not registered in thermo: %v", name, missing)
			continue
		}
		if err := b.validate(); err != nil {
			t.Errorf("standard backend %q: %v", name, err)
		}
	}
}

func ExampleStandardFor() {
	for _, family := range []string{"antoine", "simon-glatzel", "rackett"} {
		backend, _ := StandardFor(family)
		fmt.Println(family, "→", backend)
	}
	// Output:
	// antoine → vapor
	// simon-glatzel → solid
	// rackett → volume
}

// TestStandardBackendsServe runs each standard backend as a real process
// and checks what it serves, and the vapor backend's IAPWS-IF97 curve
// against the release's check values through the plugin boundary.
func TestStandardBackendsServe(t *testing.T) {
	h := newTestHost(t, HostConfig{Command: func(name string) (*exec.Cmd, error) { return testCommand("std:" + name) }})
	ctx := context.Background()
	for _, name := range StandardNames() {
		if err := h.Start(ctx, BackendSpec{Name: name}); err != nil {
			t.Fatal(err)
		}
		info, err := h.Info(name)
		if err != nil {
			t.Fatal(err)
		}
		if want := slices.Sorted(slices.Values(standardCurves[name])); !slices.Equal(info.Families, want) {
			t.Errorf("%s serves curve families %v, want %v", name, info.Families, want)
		}
		if want := slices.Sorted(slices.Values(standardVolumes[name])); !slices.Equal(info.Volumes, want) {
			t.Errorf("%s serves volume families %v, want %v", name, info.Volumes, want)
		}
	}

	ts := []float64{300, 500, 600}
	ps := []float64{
		0.353658941e-2 * 1e6, // IAPWS-IF97 (R7-97), Table 35 verification value (from memory)
		0.263889776e1 * 1e6,  // IAPWS-IF97 (R7-97), Table 35 verification value (from memory)
		0.123443146e2 * 1e6,  // IAPWS-IF97 (R7-97), Table 35 verification value (from memory)
	}
	res, err := h.Evaluate(ctx, "vapor", EvalRequest{Family: "iapws-if97", Tmin: 273.15, Tmax: 647.096, Op: OpPressure, Values: ts})
	if err != nil {
		t.Fatal(err)
	}
	for i := range ts {
		if !scalar.EqualWithinAbsOrRel(res.Results[i], ps[i], 0, 1e-8) || !(res.Derivatives[i] > 0) {
			t.Errorf("P(%g K) = %v Pa (dP/dT %v), want %v Pa", ts[i], res.Results[i], res.Derivatives[i], ps[i])
		}
	}
	pIn := []float64{0.1e6, 1e6, 10e6}
	tWant := []float64{
		0.372755919e3, // IAPWS-IF97 (R7-97), Table 36 verification value (from memory)
		0.453035632e3, // IAPWS-IF97 (R7-97), Table 36 verification value (from memory)
		0.584149488e3, // IAPWS-IF97 (R7-97), Table 36 verification value (from memory)
	}
	res, err = h.Evaluate(ctx, "vapor", EvalRequest{Family: "iapws-if97", Tmin: 273.15, Tmax: 647.096, Op: OpTemperature, Values: pIn})
	if err != nil {
		t.Fatal(err)
	}
	for i := range pIn {
		if !scalar.EqualWithinAbsOrRel(res.Results[i], tWant[i], 0, 1e-8) {
			t.Errorf("T(%g Pa) = %v K, want %v K", pIn[i], res.Results[i], tWant[i])
		}
	}
	// A family of another backend is a setup error naming what vapor serves.
	_, err = h.Evaluate(ctx, "vapor", EvalRequest{Family: "simon-glatzel", Op: OpPressure, Values: []float64{300}})
	var se *SetupError
	if !errors.As(err, &se) || !strings.Contains(err.Error(), "iapws-if97") {
		t.Errorf("wrong backend's family: err = %v", err)
	}
}
