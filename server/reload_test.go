package server

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/server/metrics"
)

// reloadCatalog is a one-substance catalog of invented demo data (a
// Clausius–Clapeyron vapour curve); extra is appended verbatim.
func reloadCatalog(id string, deltaH float64, extra string) string {
	return fmt.Sprintf(`format = 1

[[substance]]
id = %q
name = "Reloadium (invented for the reload tests)"
molar_mass = 0.05
provenance = { kind = "invented", note = "invented test data" }
  [[substance.curve]]
  kind = "saturation"
    [[substance.curve.branch]]
    family = "clausius-clapeyron"
    t_min = 200.0
    t_max = 400.0
    params = { t0 = 200.0, p0 = 1000.0, delta_h = %g }
    provenance = { kind = "invented", note = "invented test data" }
%s`, id, deltaH, extra)
}

// loaderOf returns a loader that parses text the way the serve command
// reads --catalog.
func loaderOf(name, text string) func() (*catalog.Catalog, error) {
	return func() (*catalog.Catalog, error) { return catalog.Parse(name, []byte(text)) }
}

func substanceIDs(t *testing.T, s *Server) []string {
	t.Helper()
	list, err := s.ListSubstances(context.Background(), &phaseboundpb.ListSubstancesRequest{})
	if err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, sub := range list.GetSubstances() {
		ids = append(ids, sub.GetId())
	}
	return ids
}

func TestReloadFromKeepsOldCatalogOnFailure(t *testing.T) {
	ctx := context.Background()
	first, err := catalog.Parse("first.toml", []byte(reloadCatalog("reload-a", 20000, "")))
	if err != nil {
		t.Fatal(err)
	}
	s, err := New(ctx, first, Options{Logger: slog.New(slog.NewTextHandler(io.Discard, nil))})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	s.RecordMetrics(ctx, metrics.Default())
	v0 := s.CatalogVersion()

	// An executable whose SHA-256 is not the one the catalog pins.
	dir := t.TempDir()
	exe := filepath.Join(dir, "lab-fits")
	if err := os.WriteFile(exe, []byte("#!/bin/sh\nexit 1\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	pinned := fmt.Sprintf(`
[[backend]]
name = "lab-fits"
path = %q
sha256 = "%s"

[[substance]]
id = "reload-lab"
molar_mass = 0.05
provenance = { kind = "invented" }
  [[substance.curve]]
  kind = "melting"
    [[substance.curve.branch]]
    family = "lab-linear"
    backend = "lab-fits"
    t_min = 250.0
    t_max = 300.0
    params = { t0 = 250.0, p0 = 1e5, slope = [3.0e6] }
    provenance = { kind = "invented" }
`, exe, strings.Repeat("0", 64))

	failures := reloadCount(t, "failed")
	bad := []struct {
		name string
		load func() (*catalog.Catalog, error)
		want string
	}{
		{"unreadable file", func() (*catalog.Catalog, error) { return catalog.Load(filepath.Join(dir, "missing.toml")) }, "missing.toml"},
		{"broken TOML", loaderOf("broken.toml", "format = 1\n[[substance]\nid = 3\n"), "broken.toml"},
		{"bad field", loaderOf("field.toml", reloadCatalog("reload-b", -5, "")), "field.toml"},
		{"unknown family", loaderOf("family.toml", strings.Replace(reloadCatalog("reload-b", 20000, ""), "clausius-clapeyron", "no-such-family", 1)), "no-such-family"},
		{"backend SHA-256 mismatch", loaderOf("pinned.toml", reloadCatalog("reload-b", 20000, pinned)), "refusing to start backend \"lab-fits\""},
		{"loader error", func() (*catalog.Catalog, error) { return nil, errors.New("disk on fire") }, "disk on fire"},
	}
	for _, tc := range bad {
		changed, err := s.ReloadFrom(ctx, tc.load)
		if err == nil || changed {
			t.Errorf("%s: changed %v, err %v; want a failure", tc.name, changed, err)
			continue
		}
		t.Logf("%s: %v", tc.name, err)
		if !strings.Contains(err.Error(), "still serving version "+short(v0)) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %q should say the old version is still served and name %q", tc.name, err, tc.want)
		}
		if v := s.CatalogVersion(); v != v0 {
			t.Errorf("%s: version changed to %s", tc.name, v)
		}
		if ids := substanceIDs(t, s); len(ids) != 1 || ids[0] != "reload-a" {
			t.Errorf("%s: serving %v after a failed reload, want [reload-a]", tc.name, ids)
		}
	}
	if got := reloadCount(t, "failed") - failures; got != float64(len(bad)) {
		t.Errorf("failed reloads counted %v, want %d", got, len(bad))
	}

	// The same catalog again is not recompiled.
	if changed, err := s.ReloadFrom(ctx, loaderOf("first.toml", reloadCatalog("reload-a", 20000, ""))); err != nil || changed {
		t.Errorf("unchanged catalog: changed %v, err %v; want false, nil", changed, err)
	}

	// A good reload swaps atomically: concurrent readers see either the
	// whole old catalog or the whole new one, never a mix.
	var stop atomic.Bool
	var wg sync.WaitGroup
	var mixed atomic.Int64
	for i := 0; i < 2; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for !stop.Load() {
				list, _ := s.ListSubstances(ctx, &phaseboundpb.ListSubstancesRequest{})
				ids := ""
				for _, sub := range list.GetSubstances() {
					ids += sub.GetId() + ","
				}
				if !(ids == "reload-a," && list.GetCatalogVersion() == v0) && !(ids == "reload-b,reload-c," && list.GetCatalogVersion() != v0) {
					mixed.Add(1)
				}
			}
		}()
	}
	second := reloadCatalog("reload-b", 30000, "") + strings.SplitN(reloadCatalog("reload-c", 25000, ""), "\n", 2)[1]
	changed, err := s.ReloadFrom(ctx, loaderOf("second.toml", second))
	stop.Store(true)
	wg.Wait()
	if err != nil || !changed {
		t.Fatalf("good reload: changed %v, err %v", changed, err)
	}
	if n := mixed.Load(); n != 0 {
		t.Errorf("%d reads saw a catalog that was neither the old nor the new one", n)
	}
	if ids := substanceIDs(t, s); strings.Join(ids, ",") != "reload-b,reload-c" {
		t.Errorf("serving %v after the reload, want [reload-b reload-c]", ids)
	}
	resp, err := s.Evaluate(ctx, &phaseboundpb.EvaluateRequest{Substance: "reload-b", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
		Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: []float64{200}})
	// P(T0) = P0 by construction of the family; the table reproduces it
	// within its tolerance.
	if err != nil || len(resp.GetPressurePa()) != 1 || !scalar.EqualWithinAbsOrRel(resp.GetPressurePa()[0], 1000, 0, 1e-9) {
		t.Errorf("evaluate on the reloaded catalog: %v %v, want P(200 K) = 1000 Pa", resp.GetPressurePa(), err)
	}
	// The metrics describe the new catalog's tables, not the old one's.
	if v, ok := tableGauge(t, "phasebound_table_build_seconds", "reload-c"); !ok || !(v > 0) {
		t.Errorf("table build time of reload-c = %v (present %v), want > 0", v, ok)
	}
	if v, ok := tableGauge(t, "phasebound_table_max_rel_error", "reload-b"); !ok || !(v > 0 && v <= MaxTableError) {
		t.Errorf("table error of reload-b = %v (present %v), want in (0, %g]", v, ok, MaxTableError)
	}
	if _, ok := tableGauge(t, "phasebound_table_max_rel_error", "reload-a"); ok {
		t.Error("the removed substance's table error is still reported")
	}
	if _, err := s.Evaluate(ctx, &phaseboundpb.EvaluateRequest{Substance: "reload-a", Curve: phaseboundpb.CurveKind_CURVE_KIND_SATURATION,
		Given: phaseboundpb.Variable_VARIABLE_TEMPERATURE, Values: []float64{250}}); err == nil {
		t.Error("the removed substance still answers")
	}
}

// reloadCount returns the default metrics' count of reloads with result
// "ok" or "failed".
func reloadCount(t *testing.T, result string) float64 {
	t.Helper()
	fams, err := metrics.Default().Registry().Gather()
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range fams {
		if f.GetName() != "phasebound_catalog_reloads_total" {
			continue
		}
		for _, m := range f.GetMetric() {
			for _, l := range m.GetLabel() {
				if l.GetName() == "result" && l.GetValue() == result {
					return m.GetCounter().GetValue()
				}
			}
		}
	}
	return 0
}

// tableGauge returns a table gauge of the default metrics for the
// saturation branch of substance.
func tableGauge(t *testing.T, name, substance string) (float64, bool) {
	t.Helper()
	fams, err := metrics.Default().Registry().Gather()
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range fams {
		if f.GetName() != name {
			continue
		}
		for _, m := range f.GetMetric() {
			labels := map[string]string{}
			for _, l := range m.GetLabel() {
				labels[l.GetName()] = l.GetValue()
			}
			if labels["substance"] == substance && labels["curve"] == "saturation" {
				return m.GetGauge().GetValue(), true
			}
		}
	}
	return 0, false
}
