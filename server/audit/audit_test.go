package audit

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

func loadTestCatalog(t testing.TB, name string) *catalog.Catalog {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "audit", name)
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	c, err := catalog.Parse(path, data)
	if err != nil {
		t.Fatalf("parse %s: %v", name, err)
	}
	return c
}

func findingsWith(r *Report, code string, sev Severity) []Finding {
	var out []Finding
	for _, f := range r.Findings {
		if f.Code == code && f.Severity == sev {
			out = append(out, f)
		}
	}
	return out
}

func TestGoodCatalogIsClean(t *testing.T) {
	t.Parallel()
	r, err := Check(loadTestCatalog(t, "good.toml"), "testium", Tolerances{})
	if err != nil {
		t.Fatal(err)
	}
	if !r.OK || r.Count(SeverityError) != 0 || r.Count(SeverityWarning) != 0 {
		t.Fatalf("good catalog not clean: %+v", r.Findings)
	}
	if r.Checks < 10 {
		t.Errorf("only %d checks made; want every check to run on the good catalog", r.Checks)
	}
	// The passing comparisons are reported as info with their measurements.
	for _, code := range []string{CodeClapeyronSlope, CodeClausiusClapeyron, CodeLatentHeat, CodeTripleEnthalpySum} {
		fs := findingsWith(r, code, SeverityInfo)
		if len(fs) == 0 {
			t.Errorf("no info finding %s on the good catalog", code)
			continue
		}
		if dev := fs[0].Values["deviation_rel"]; math.Abs(dev) > 1e-3 {
			t.Errorf("%s: deviation %g on the consistent catalog; want < 1e-3", code, dev)
		}
	}
}

// Each deliberately broken catalog must produce its finding, with the
// measured value where the break fixes it analytically (invented data).
func TestBrokenCatalogs(t *testing.T) {
	t.Parallel()
	// Linearised gap of the shifted sublimation curve: ΔP/(dP/dT) with the
	// shifted curve's slope dP/dT = P·ΔH/(R·T²) at 200 K, 1100 Pa,
	// 26 kJ/mol; ΔP = 100 Pa.
	shiftGapK := 100 / (1100 * 26000 / (thermo.R * 200 * 200))
	tests := []struct {
		file     string
		code     string
		severity Severity
		curve    string
		key      string  // a Values key to check, "" for none
		want     float64 // its expected value
		tol      float64 // relative
	}{
		{"shifted-branch.toml", CodeTriplePointGap, SeverityError, "sublimation", "temperature_gap_k", shiftGapK, 1e-6},
		{"shifted-branch.toml", CodeTriplePointGap, SeverityError, "sublimation", "pressure_gap_rel", 0.1, 1e-9},
		{"wrong-slope-sign.toml", CodeSlopeSign, SeverityError, "melting", "slope_pa_per_k", 3e8 * 2 / 200, 1e-6},
		{"wrong-slope-sign.toml", CodeClapeyronSlope, SeverityError, "melting", "deviation_rel", 2, 1e-6},
		{"critical-mismatch.toml", CodeCriticalMismatch, SeverityError, "saturation", "pressure_gap_rel", 408960.1637877032/429408.17 - 1, 1e-6},
		{"beyond-critical.toml", CodeCriticalMismatch, SeverityError, "saturation", "temperature_gap_k", 10, 1e-9},
		{"latent-heat.toml", CodeLatentHeat, SeverityError, "saturation", "reference_j_per_mol", 25000, 1e-12},
		{"latent-heat.toml", CodeClausiusClapeyron, SeverityWarning, "saturation", "deviation_rel", 20000.0/25000 - 1, 1e-9},
		{"enthalpy-sum.toml", CodeTripleEnthalpySum, SeverityError, "", "sublimation_j_per_mol", 30000, 1e-12},
		{"range-gap.toml", CodeRangeGap, SeverityError, "saturation", "temperature_gap_k", 5, 1e-12},
		{"melting-gap.toml", CodeRangeGap, SeverityError, "melting", "temperature_gap_k", 10, 1e-12},
		{"missing-triple.toml", CodeJunctionNotTriple, SeverityWarning, "melting", "pressure_pa", 168751000, 1e-12},
	}
	for _, tc := range tests {
		t.Run(tc.file+"/"+tc.code, func(t *testing.T) {
			t.Parallel()
			r, err := Check(loadTestCatalog(t, tc.file), "testium", Tolerances{})
			if err != nil {
				t.Fatal(err)
			}
			fs := findingsWith(r, tc.code, tc.severity)
			if len(fs) == 0 {
				t.Fatalf("no %s finding %s; got %+v", tc.severity, tc.code, r.Findings)
			}
			f := fs[0]
			if f.Curve != tc.curve {
				t.Errorf("finding on curve %q, want %q", f.Curve, tc.curve)
			}
			if f.Message == "" {
				t.Error("empty message")
			}
			if tc.severity == SeverityError && r.OK {
				t.Error("report OK despite an error finding")
			}
			if tc.key != "" {
				got, ok := f.Values[tc.key]
				if !ok {
					t.Fatalf("finding has no value %q: %v", tc.key, f.Values)
				}
				if !scalar.EqualWithinAbsOrRel(got, tc.want, 0, tc.tol) {
					t.Errorf("%s = %.10g, want %.10g (rel tol %g)", tc.key, got, tc.want, tc.tol)
				}
			}
		})
	}
}

// A broken catalog must not raise findings unrelated to its break.
func TestBrokenCatalogsOnlyTheirFindings(t *testing.T) {
	t.Parallel()
	allowed := map[string][]string{
		"shifted-branch.toml":    {CodeTriplePointGap},
		"wrong-slope-sign.toml":  {CodeSlopeSign, CodeClapeyronSlope},
		"critical-mismatch.toml": {CodeCriticalMismatch},
		"beyond-critical.toml":   {CodeCriticalMismatch},
		"latent-heat.toml":       {CodeLatentHeat, CodeClausiusClapeyron},
		"enthalpy-sum.toml":      {CodeTripleEnthalpySum},
		"range-gap.toml":         {CodeRangeGap},
		"melting-gap.toml":       {CodeRangeGap},
		"missing-triple.toml":    {CodeJunctionNotTriple},
	}
	for file, codes := range allowed {
		r, err := Check(loadTestCatalog(t, file), "testium", Tolerances{})
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range r.Findings {
			if f.Severity == SeverityInfo {
				continue
			}
			ok := false
			for _, c := range codes {
				ok = ok || f.Code == c
			}
			if !ok {
				t.Errorf("%s: unexpected %s %s: %s", file, f.Severity, f.Code, f.Message)
			}
		}
	}
}

func TestTolerancesDecide(t *testing.T) {
	t.Parallel()
	c := loadTestCatalog(t, "shifted-branch.toml")
	// A 1.3 K miss passes a 2 K temperature tolerance.
	r, err := Check(c, "testium", Tolerances{TripleTemperatureK: 2})
	if err != nil {
		t.Fatal(err)
	}
	if fs := findingsWith(r, CodeTriplePointGap, SeverityError); len(fs) != 0 {
		t.Errorf("2 K tolerance still flags: %+v", fs)
	}
	d := DefaultTolerances()
	if d.TripleTemperatureK != 0.01 || d.TriplePressureRel != 1e-3 || d.EnthalpySumRel != 0.02 {
		t.Errorf("defaults changed: %+v", d)
	}
}

func TestUnknownSubstance(t *testing.T) {
	t.Parallel()
	_, err := Check(loadTestCatalog(t, "good.toml"), "unobtainium", Tolerances{})
	if err == nil || !strings.Contains(err.Error(), "testium") {
		t.Fatalf("error %v should name the valid ids", err)
	}
	if _, err := Check(nil, "x", Tolerances{}); err == nil {
		t.Fatal("nil catalog accepted")
	}
}

func TestFindingsMarshal(t *testing.T) {
	t.Parallel()
	r, err := Check(loadTestCatalog(t, "latent-heat.toml"), "testium", Tolerances{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	var back struct {
		OK       bool `json:"ok"`
		Findings []struct {
			Severity, Code, Curve, Message string
			Values                         map[string]float64
		} `json:"findings"`
	}
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if back.OK || len(back.Findings) == 0 || back.Findings[0].Severity != "error" {
		t.Fatalf("errors must sort first and ok be false: %s", b)
	}
}

// The embedded default catalog must audit without errors. Warnings are
// allowed only with the justification listed here.
func TestDefaultCatalogClean(t *testing.T) {
	t.Parallel()
	c, err := catalog.Default()
	if err != nil {
		t.Fatal(err)
	}
	justified := map[string]string{
		// A vapour curve fitted to invented or narrow data may stop below
		// the critical point; the audit says so as a warning.
		CodeShortOfCritical: "saturation correlation published for a narrower range than up to Tc",
	}
	for _, s := range c.Substances {
		r, err := Check(c, s.ID, Tolerances{})
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range r.Findings {
			switch f.Severity {
			case SeverityError:
				t.Errorf("%s: %s %s: %s", s.ID, f.Code, f.Where(), f.Message)
			case SeverityWarning:
				if why, ok := justified[f.Code]; ok {
					t.Logf("%s: warning %s accepted (%s): %s", s.ID, f.Code, why, f.Message)
				} else {
					t.Errorf("%s: unjustified warning %s %s: %s", s.ID, f.Code, f.Where(), f.Message)
				}
			}
		}
		t.Logf("%s: %d checks, %d findings", s.ID, r.Checks, len(r.Findings))
	}
}

var benchSink *Report

func BenchmarkCheckGood(b *testing.B) {
	c := loadTestCatalog(b, "good.toml")
	b.ReportAllocs()
	for b.Loop() {
		r, err := Check(c, "testium", Tolerances{})
		if err != nil {
			b.Fatal(err)
		}
		benchSink = r
	}
}
