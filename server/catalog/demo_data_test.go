package catalog

import (
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"

	"github.com/phasebound/phasebound/thermo"
)

// TestDemoMeasurements checks the invented measurement files of the demo
// (testdata/demo, written by testdata/demo/gen): well-formed, and close to
// but not the same as the catalog's invented curves, since they come from
// a different invented law with noise.
func TestDemoMeasurements(t *testing.T) {
	t.Parallel()
	def, err := Default()
	if err != nil {
		t.Fatal(err)
	}
	s := def.Lookup("demo-frostwax")
	if s == nil {
		t.Fatal("demo-frostwax missing")
	}
	for _, tc := range []struct {
		file         string
		kind         thermo.CurveKind
		maxDev       float64 // largest |P_data/P_catalog − 1| allowed
		minWeightRMS float64 // the weighted RMS deviation must exceed this: not the catalog's law
	}{
		{"../../testdata/demo/frostwax-melting.csv", thermo.Melting, 0.10, 0.005},
		{"../../testdata/demo/frostwax-vapor.csv", thermo.Saturation, 0.05, 0.005},
	} {
		t.Run(tc.kind.String(), func(t *testing.T) {
			rows := readCSV(t, tc.file)
			if len(rows) < 20 {
				t.Fatalf("%d rows, want at least 20", len(rows))
			}
			corr := build(t, s.Curve(tc.kind).Branches[0])
			var sw, swd2, maxW float64
			for i, r := range rows {
				if i > 0 && r[0] <= rows[i-1][0] {
					t.Errorf("row %d: temperatures not increasing", i+2)
				}
				if !(r[1] > 0) || math.IsInf(r[1], 0) || !(r[2] > 0 && r[2] <= 1) {
					t.Errorf("row %d: pressure %v or weight %v out of range", i+2, r[1], r[2])
				}
				maxW = math.Max(maxW, r[2])
				p, err := corr.Pressure(r[0])
				if err != nil {
					t.Fatalf("row %d: catalog curve at %v K: %v", i+2, r[0], err)
				}
				d := r[1]/p - 1
				if math.Abs(d) > tc.maxDev {
					t.Errorf("row %d: %v Pa at %v K is %+.1f%% from the catalog curve (limit %.0f%%)", i+2, r[1], r[0], 100*d, 100*tc.maxDev)
				}
				sw += r[2]
				swd2 += r[2] * d * d
			}
			if maxW != 1 {
				t.Errorf("largest weight %v, want 1", maxW)
			}
			if rms := math.Sqrt(swd2 / sw); rms < tc.minWeightRMS {
				t.Errorf("weighted RMS deviation from the catalog %.3g%%: the data look like the catalog's own law", 100*rms)
			} else {
				t.Logf("weighted RMS deviation from the catalog curve: %.2f%%", 100*rms)
			}
		})
	}
}

// readCSV reads a temperature_k,pressure_pa,weight file.
func readCSV(t *testing.T, path string) [][3]float64 {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) == 0 || len(recs[0]) != 3 || recs[0][0] != "temperature_k" || recs[0][1] != "pressure_pa" || recs[0][2] != "weight" {
		t.Fatalf("header %v, want temperature_k,pressure_pa,weight", recs[:min(1, len(recs))])
	}
	var rows [][3]float64
	for i, rec := range recs[1:] {
		var r [3]float64
		for j := range r {
			v, err := strconv.ParseFloat(rec[j], 64)
			if err != nil {
				t.Fatalf("row %d: %v", i+2, err)
			}
			r[j] = v
		}
		rows = append(rows, r)
	}
	return rows
}
