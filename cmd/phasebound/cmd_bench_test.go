package main

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"
)

// TestBenchJSONContract runs a short bench against the in-process loopback
// server and checks that the JSON object carries every field the
// command-line contract names, plus the ratios, goals and per-family
// breakdown, with plausible values. It asserts no timing.
func TestBenchJSONContract(t *testing.T) {
	var out, errb bytes.Buffer
	code := run([]string{"bench", "--json", "--points", "20000", "--repeat", "1", "--unary-duration", "100ms", "--callers", "2"},
		strings.NewReader(""), &out, &errb)
	if code != 0 {
		t.Fatalf("bench exited %d: %s", code, errb.String())
	}
	var m map[string]any
	if err := json.Unmarshal(out.Bytes(), &m); err != nil {
		t.Fatalf("bench --json output is not one JSON object: %v\n%s", err, out.String())
	}
	for _, k := range []string{
		// The contract's fields (DESIGN.md).
		"direct_ns_per_point", "table_ns_per_point", "rpc_batch_ns_per_point", "echo_floor_ns_per_point",
		"exact_ns_per_point", "unary_calls_per_second", "table_max_rel_error",
		// Ours on top.
		"echo_unary_calls_per_second", "table_allocs_per_point",
	} {
		v, ok := m[k].(float64)
		if !ok {
			t.Errorf("field %q missing or not a number: %v", k, m[k])
			continue
		}
		if k == "table_allocs_per_point" || k == "table_max_rel_error" {
			if v < 0 {
				t.Errorf("%s = %g, want ≥ 0", k, v)
			}
		} else if !(v > 0) {
			t.Errorf("%s = %g, want > 0", k, v)
		}
	}
	if e := m["table_max_rel_error"].(float64); !(e <= 1e-10) {
		t.Errorf("table_max_rel_error = %g, want ≤ 1e-10 (the server's table tolerance)", e)
	}
	if m["points"].(float64) != 5*20000 {
		t.Errorf("points = %v, want 100000 (20000 on each of 5 branches)", m["points"])
	}
	if m["rpc_matches_table"] != true {
		t.Errorf("rpc_matches_table = %v: the served values differ from the exported tables", m["rpc_matches_table"])
	}
	ratios, _ := m["ratios"].(map[string]any)
	for _, k := range []string{"rpc_batch_over_echo_floor", "table_over_direct", "unary_over_echo_unary"} {
		if v, ok := ratios[k].(float64); !ok || !(v > 0) {
			t.Errorf("ratios.%s = %v", k, ratios[k])
		}
	}
	goals, _ := m["goals"].(map[string]any)
	for _, k := range []string{"rpc_batch_over_echo_floor", "table_over_direct", "table_allocs_per_point", "table_max_rel_error", "unary_over_echo_unary"} {
		g, _ := goals[k].(map[string]any)
		if _, ok := g["met"].(bool); !ok {
			t.Errorf("goals.%s has no met flag: %v", k, goals[k])
		}
	}
	if _, ok := m["all_goals_met"].(bool); !ok {
		t.Error("all_goals_met missing")
	}
	fams, _ := m["families"].([]any)
	seen := map[string]bool{}
	for _, f := range fams {
		fm := f.(map[string]any)
		seen[fm["family"].(string)] = true
		if fm["table_segments"].(float64) < 1 {
			t.Errorf("family %v: no table segments", fm["family"])
		}
	}
	for _, fam := range []string{"iapws-if97", "power-sum", "wagner"} {
		if !seen[fam] {
			t.Errorf("families lack %s: %v", fam, seen)
		}
	}
	lat, _ := m["latent_heat"].(map[string]any)
	if v, ok := lat["latent_table_ns_per_point"].(float64); !ok || !(v > 0) {
		t.Errorf("latent_heat.latent_table_ns_per_point = %v", lat["latent_table_ns_per_point"])
	}
}

// TestBenchBadFlags checks that out-of-range flags give one clear line.
func TestBenchBadFlags(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"bench", "--points", "10"}, "--points 10 outside [1000, 100000000]"},
		{[]string{"bench", "--repeat", "0"}, "--repeat 0 outside [1, 100]"},
		{[]string{"bench", "--soak", "2h"}, "--soak 2h0m0s outside"},
		{[]string{"bench", "--callers", "0"}, "--callers 0 outside [1, 1024]"},
	} {
		var out, errb bytes.Buffer
		if code := run(tc.args, strings.NewReader(""), &out, &errb); code == 0 {
			t.Errorf("%v: exit 0, want failure", tc.args)
		}
		if !strings.Contains(errb.String(), tc.want) || strings.Count(errb.String(), "\n") != 1 {
			t.Errorf("%v: stderr %q, want one line containing %q", tc.args, errb.String(), tc.want)
		}
	}
}

// TestBenchSoakShort runs a two-second soak and checks its report.
func TestBenchSoakShort(t *testing.T) {
	var out, errb bytes.Buffer
	code := run([]string{"bench", "--json", "--soak", "2s", "--callers", "2"}, strings.NewReader(""), &out, &errb)
	if code != 0 {
		t.Fatalf("soak exited %d: %s", code, errb.String())
	}
	var m map[string]any
	if err := json.Unmarshal(out.Bytes(), &m); err != nil {
		t.Fatal(err)
	}
	if m["calls"].(float64) < 1 || m["errors"].(float64) != 0 || m["point_mismatches"].(float64) != 0 {
		t.Errorf("soak: calls %v errors %v mismatches %v (first error %v)", m["calls"], m["errors"], m["point_mismatches"], m["first_error"])
	}
	for _, side := range []string{"start", "end"} {
		s, _ := m[side].(map[string]any)
		if s["goroutines"].(float64) < 1 || s["heap_alloc_bytes"].(float64) <= 0 {
			t.Errorf("soak %s sample: %v", side, s)
		}
	}
}
