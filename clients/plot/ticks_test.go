package plot

import "testing"

// Linear ticks label round values, and zero as "0" even when the axis
// starts a hair below it (a latent-heat axis that ends at the critical
// point showed "-0").
func TestLinearTicksLabels(t *testing.T) {
	for _, tc := range []struct {
		min, max float64
		want     []string // labels that must appear
	}{
		{-1e-12, 2600, []string{"0", "500", "1000", "2500"}},
		{-0.0, 40, []string{"0", "10", "40"}},
		{-3.5e-9, 0.7, []string{"0", "0.2", "0.6"}},
		{273.16, 647.1, []string{"300", "400", "600"}},
	} {
		got := map[string]bool{}
		for _, tk := range (linearTicks{}).Ticks(tc.min, tc.max) {
			if tk.Label == "-0" {
				t.Errorf("[%g, %g]: a tick is labelled -0", tc.min, tc.max)
			}
			got[tk.Label] = true
		}
		for _, w := range tc.want {
			if !got[w] {
				t.Errorf("[%g, %g]: no tick labelled %q (got %v)", tc.min, tc.max, w, got)
			}
		}
	}
}
