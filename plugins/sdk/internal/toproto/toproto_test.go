package toproto_test

import (
	"maps"
	"slices"
	"testing"

	"github.com/phasebound/phasebound/plugins/sdk/internal/fromproto"
	"github.com/phasebound/phasebound/plugins/sdk/internal/toproto"
	"github.com/phasebound/phasebound/thermo"
)

func TestParamsRoundTrip(t *testing.T) {
	tests := []thermo.Params{
		nil,
		{"t0": {273.16}},
		{"a": {1, 2, 3}, "b": {0.5, 1.5, 2.5}, "t_ref": {273.16}, "empty": {}},
	}
	for _, p := range tests {
		got := fromproto.Params(toproto.Params(p))
		if len(got) != len(p) {
			t.Fatalf("%v → %v", p, got)
		}
		for name, v := range p {
			if !slices.Equal(got[name], v) {
				t.Errorf("%v: %q → %v", p, name, got[name])
			}
		}
		if !maps.EqualFunc(got, p, func(a, b []float64) bool { return slices.Equal(a, b) }) {
			t.Errorf("%v → %v", p, got)
		}
	}
}

func TestIndicesRoundTrip(t *testing.T) {
	tests := []struct {
		in     []int
		offset int
		want   []int
	}{
		{nil, 0, nil},
		{[]int{0, 3, 7}, 0, []int{0, 3, 7}},
		{[]int{0, 3, 7}, 1 << 22, []int{1 << 22, 1<<22 + 3, 1<<22 + 7}},
	}
	for _, tc := range tests {
		if got := fromproto.Indices(toproto.Indices(tc.in), tc.offset); !slices.Equal(got, tc.want) {
			t.Errorf("Indices(%v, %d) = %v, want %v", tc.in, tc.offset, got, tc.want)
		}
	}
}
