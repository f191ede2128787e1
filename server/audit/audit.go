package audit

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// Severity grades a finding.
type Severity string

// Severities, from worst to mildest. An error means the substance is
// inconsistent and should not be served to a solver as it stands; a warning
// asks an engineer to look; info reports a measured comparison that passed
// or that cannot be stricter than an estimate.
const (
	SeverityError   Severity = "error"
	SeverityWarning Severity = "warning"
	SeverityInfo    Severity = "info"
)

// Finding codes. Each check reports under one code, so scripts can filter.
const (
	CodeBranchInvalid      = "branch-invalid"               // a branch's correlation cannot be built
	CodeVolumeInvalid      = "volume-invalid"               // a branch's phase volume cannot be built
	CodeNotAudited         = "branch-not-audited"           // third-party family, not available in-process
	CodeBadPressure        = "bad-pressure"                 // P(T) fails or is not positive inside the range
	CodeSlopeSign          = "slope-sign"                   // dP/dT has the wrong sign for ΔV
	CodeRangeGap           = "range-gap"                    // consecutive branches do not touch
	CodeRangeOverlap       = "range-overlap"                // vapour-curve branches overlap in temperature
	CodeBranchJunction     = "branch-junction"              // branches touch in T but not in P
	CodeTriplePointGap     = "triple-point-gap"             // a curve misses a triple point
	CodeCriticalMismatch   = "critical-point-mismatch"      // saturation curve does not end at the critical point
	CodeShortOfCritical    = "saturation-short-of-critical" // saturation curve stops below Tc
	CodeNoCriticalPoint    = "no-critical-point"            // saturation curve but no critical point stated
	CodeReferenceOutside   = "reference-outside-range"      // a reference state outside its branch
	CodeClapeyronSlope     = "clapeyron-slope"              // dP/dT against ΔH/(T·ΔV)
	CodeClausiusClapeyron  = "clausius-clapeyron-dh"        // ideal-gas ΔH estimate against a given ΔH
	CodeLatentHeat         = "latent-heat-vs-reference"     // served latent heat against a given ΔH
	CodeTripleEnthalpySum  = "triple-point-enthalpy-sum"    // ΔH_sub = ΔH_fus + ΔH_vap at a triple point
	CodeVolumeSignMismatch = "volume-sign"                  // catalog ΔV and phase volumes disagree in sign
	CodeJunctionNotTriple  = "junction-not-triple-point"    // two solid forms' branches meet where no triple point is listed
)

// Tolerances are the limits the checks measure against. The zero value of
// each field means the documented default.
type Tolerances struct {
	// TripleTemperatureK and TriplePressureRel bound how far a branch may
	// pass from a triple point: it misses only when both the relative
	// pressure gap and the equivalent temperature gap (pressure gap over
	// slope) exceed them. Defaults 0.01 K and 1e-3.
	TripleTemperatureK float64
	TriplePressureRel  float64
	// CriticalTemperatureK and CriticalPressureRel do the same for the end
	// of the saturation curve at the critical point. Defaults 0.01 K and 1e-3.
	CriticalTemperatureK float64
	CriticalPressureRel  float64
	// RangeGapK is the largest temperature gap allowed where two branches
	// of a curve meet. Default 0.01 K.
	RangeGapK float64
	// ClapeyronSlopeRel bounds |dP/dT − ΔH/(T·ΔV)| / |ΔH/(T·ΔV)| at a
	// reference state. Default 0.03.
	ClapeyronSlopeRel float64
	// ClausiusClapeyronRel is where the ideal-gas estimate of ΔH turns
	// from info into a warning. Default 0.05.
	ClausiusClapeyronRel float64
	// LatentHeatRel bounds the served latent heat against a catalog ΔH.
	// Default 0.03.
	LatentHeatRel float64
	// EnthalpySumRel bounds |ΔH_sub − ΔH_fus − ΔH_vap| / ΔH_sub at a
	// triple point. Default 0.02.
	EnthalpySumRel float64
}

// DefaultTolerances returns the defaults that zero fields stand for.
func DefaultTolerances() Tolerances { return Tolerances{}.withDefaults() }

func (t Tolerances) withDefaults() Tolerances {
	def := func(v *float64, d float64) {
		if *v <= 0 || math.IsNaN(*v) {
			*v = d
		}
	}
	def(&t.TripleTemperatureK, 0.01)
	def(&t.TriplePressureRel, 1e-3)
	def(&t.CriticalTemperatureK, 0.01)
	def(&t.CriticalPressureRel, 1e-3)
	def(&t.RangeGapK, 0.01)
	def(&t.ClapeyronSlopeRel, 0.03)
	def(&t.ClausiusClapeyronRel, 0.05)
	def(&t.LatentHeatRel, 0.03)
	def(&t.EnthalpySumRel, 0.02)
	return t
}

// Finding is one result of an audit.
type Finding struct {
	Severity Severity `json:"severity"`
	Code     string   `json:"code"`
	// Curve and Branch say where; both empty for substance-wide findings.
	Curve  string `json:"curve,omitempty"`
	Branch string `json:"branch,omitempty"`
	// Phases names the triple point a finding is about.
	Phases  []string `json:"phases,omitempty"`
	Message string   `json:"message"`
	// Values holds the measured quantities and the tolerance they were
	// held to, keyed with their SI unit ("pressure_gap_rel",
	// "temperature_gap_k", "tolerance_rel", "slope_pa_per_k", ...).
	Values map[string]float64 `json:"values,omitempty"`
}

// Where returns "curve/branch", "curve" or "" for messages.
func (f Finding) Where() string {
	switch {
	case f.Curve != "" && f.Branch != "":
		return f.Curve + "/" + f.Branch
	default:
		return f.Curve
	}
}

// Report is the outcome of auditing one substance.
type Report struct {
	Substance string `json:"substance"`
	// OK is true when no finding has error severity.
	OK bool `json:"ok"`
	// Checks counts the individual comparisons made.
	Checks   int       `json:"checks"`
	Findings []Finding `json:"findings"`
}

// Count returns how many findings have severity s.
func (r *Report) Count(s Severity) int {
	n := 0
	for _, f := range r.Findings {
		if f.Severity == s {
			n++
		}
	}
	return n
}

// Check audits the substance id of cat. It builds every branch's
// correlation and phase volumes in-process from the registered thermo
// families (branches served by a third-party backend whose family is not
// registered are reported and skipped) and runs every check for which the
// catalog holds the data. It returns an error only when the substance is
// not in the catalog; everything wrong with the substance is a finding.
func Check(cat *catalog.Catalog, id string, tol Tolerances) (*Report, error) {
	if cat == nil {
		return nil, errors.New("audit: no catalog")
	}
	sub := cat.Lookup(id)
	if sub == nil {
		ids := make([]string, 0, len(cat.Substances))
		for _, s := range cat.Substances {
			ids = append(ids, s.ID)
		}
		return nil, fmt.Errorf("audit: unknown substance %q (valid: %s)", id, strings.Join(ids, ", "))
	}
	a := &auditor{sub: sub, tol: tol.withDefaults()}
	a.build()
	for _, br := range a.branches {
		a.checkSamples(br)
		a.checkSlopeSign(br)
		a.checkReference(br)
	}
	for _, c := range sub.Curves {
		a.checkCoverage(c)
	}
	for _, tp := range sub.Triple {
		a.checkTriple(tp)
		a.checkEnthalpySum(tp)
	}
	a.checkCritical()
	r := &Report{Substance: sub.ID, Checks: a.checks, Findings: a.findings, OK: true}
	if r.Findings == nil {
		r.Findings = []Finding{}
	}
	sort.SliceStable(r.Findings, func(i, j int) bool {
		return severityRank[r.Findings[i].Severity] < severityRank[r.Findings[j].Severity]
	})
	r.OK = r.Count(SeverityError) == 0
	return r, nil
}

var severityRank = map[Severity]int{SeverityError: 0, SeverityWarning: 1, SeverityInfo: 2}

// branch is one catalog branch with its correlation built.
type branch struct {
	kind      thermo.CurveKind
	b         *catalog.Branch
	corr      thermo.Correlation // nil when it could not be built
	low, high thermo.VolumeCorrelation
}

func (br *branch) vapour() bool {
	return br.kind == thermo.Saturation || br.kind == thermo.Sublimation
}

// latentHeat returns the served latent heat ΔH = T·(v_high − v_low)·dP/dT
// (thermo.LatentHeatAt, the same computation the server makes) and ΔV at t.
func (br *branch) latentHeat(t float64) (dh, dv float64, err error) {
	if br.low == nil || br.high == nil {
		return 0, 0, thermo.ErrNotImplemented
	}
	p, s, err := br.corr.PressureSlope(t)
	if err != nil {
		return 0, 0, err
	}
	lh, err := thermo.LatentHeatAt(br.kind, t, p, s, thermo.PhaseVolumes{Low: br.low, High: br.high}, 0)
	if err != nil {
		return 0, 0, err
	}
	return lh.Molar, lh.VolumeHigh - lh.VolumeLow, nil
}

// idealGasHeat is the ideal-gas Clausius–Clapeyron estimate R·T²·(dP/dT)/P.
func (br *branch) idealGasHeat(t float64) (float64, error) {
	p, s, err := br.corr.PressureSlope(t)
	if err != nil {
		return 0, err
	}
	return thermo.IdealGasEnthalpy(t, p, s)
}

type auditor struct {
	sub      *catalog.Substance
	tol      Tolerances
	branches []*branch
	findings []Finding
	checks   int
}

func (a *auditor) add(sev Severity, code string, br *branch, values map[string]float64, format string, args ...any) {
	f := Finding{Severity: sev, Code: code, Message: fmt.Sprintf(format, args...)}
	if br != nil {
		f.Curve = br.kind.String()
		f.Branch = br.b.Name
	}
	for k, v := range values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			delete(values, k)
		}
	}
	if len(values) > 0 {
		f.Values = values
	}
	a.findings = append(a.findings, f)
}

func name(br *branch) string {
	if br.b.Name == "" {
		return br.kind.String() + " curve"
	}
	return br.kind.String() + " branch " + br.b.Name
}

// build constructs every branch's correlation and volumes.
func (a *auditor) build() {
	for _, c := range a.sub.Curves {
		for _, b := range c.Branches {
			br := &branch{kind: c.Kind, b: b}
			a.branches = append(a.branches, br)
			a.checks++
			if !(b.Tmin > 0 && b.Tmax > b.Tmin) {
				a.add(SeverityError, CodeBranchInvalid, br, map[string]float64{"t_min_k": b.Tmin, "t_max_k": b.Tmax},
					"%s: validity range [%g, %g] K is empty or not positive", name(br), b.Tmin, b.Tmax)
				continue
			}
			fam, err := thermo.GetFamily(b.Family)
			if err != nil {
				if b.Backend != "" {
					a.add(SeverityInfo, CodeNotAudited, br, nil,
						"%s: family %q is served by backend %q and is not available in-process; its values were not audited",
						name(br), b.Family, b.Backend)
				} else {
					a.add(SeverityError, CodeBranchInvalid, br, nil, "%s: %v", name(br), err)
				}
				continue
			}
			corr, err := fam.New(b.Params, b.Tmin, b.Tmax)
			if err != nil {
				a.add(SeverityError, CodeBranchInvalid, br, nil, "%s: family %s: %v", name(br), b.Family, err)
				continue
			}
			br.corr = corr
			br.low = a.buildVolume(br, "low-temperature", b.VolumeLow)
			br.high = a.buildVolume(br, "high-temperature", b.VolumeHigh)
			if br.low == nil || br.high == nil {
				br.low, br.high = nil, nil
			}
		}
	}
}

func (a *auditor) buildVolume(br *branch, side string, c *catalog.Correlation) thermo.VolumeCorrelation {
	if c == nil {
		return nil
	}
	a.checks++
	fam, err := thermo.GetVolumeFamily(c.Family)
	if err != nil {
		if c.Backend != "" {
			a.add(SeverityInfo, CodeNotAudited, br, nil,
				"%s: %s phase volume family %q is served by backend %q and is not available in-process",
				name(br), side, c.Family, c.Backend)
		} else {
			a.add(SeverityError, CodeVolumeInvalid, br, nil, "%s: %s phase volume: %v", name(br), side, err)
		}
		return nil
	}
	v, err := fam.New(c.Params, br.b.Tmin, br.b.Tmax)
	if err != nil {
		a.add(SeverityError, CodeVolumeInvalid, br, nil, "%s: %s phase volume (%s): %v", name(br), side, c.Family, err)
		return nil
	}
	return v
}

// samples returns n temperatures spread over the branch's range, ends included.
func samples(b *catalog.Branch, n int) []float64 {
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = b.Tmin + (b.Tmax-b.Tmin)*float64(i)/float64(n-1)
	}
	ts[n-1] = b.Tmax
	return ts
}

const nSamples = 41

// checkSamples evaluates the branch across its range: every pressure must
// be finite and positive.
func (a *auditor) checkSamples(br *branch) {
	if br.corr == nil {
		return
	}
	a.checks++
	for _, t := range samples(br.b, nSamples) {
		p, s, err := br.corr.PressureSlope(t)
		if err != nil {
			a.add(SeverityError, CodeBadPressure, br, map[string]float64{"temperature_k": t},
				"%s: P(T) fails inside its validity range at %g K: %v", name(br), t, err)
			return
		}
		if !(p > 0) || math.IsInf(p, 0) || math.IsNaN(s) || math.IsInf(s, 0) {
			a.add(SeverityError, CodeBadPressure, br, map[string]float64{"temperature_k": t, "pressure_pa": p, "slope_pa_per_k": s},
				"%s: P(%g K) = %g Pa, dP/dT = %g Pa/K; pressures must be finite and > 0", name(br), t, p, s)
			return
		}
	}
}

// expectedVolumeChange returns ΔV (high-T phase minus low-T phase) at the
// branch's reference or middle temperature, from the catalog's reference or
// its phase volumes, and where it came from.
func (a *auditor) expectedVolumeChange(br *branch) (dv float64, from string, ok bool) {
	if r := br.b.Reference; r != nil && r.DeltaV != 0 {
		return r.DeltaV, "the catalog's reference ΔV", true
	}
	if br.low != nil && br.high != nil {
		t := 0.5 * (br.b.Tmin + br.b.Tmax)
		if _, dv, err := br.latentHeat(t); err == nil && dv != 0 {
			return dv, fmt.Sprintf("the phase volumes at %g K", t), true
		}
	}
	if br.vapour() {
		return 1, "the vapour's larger volume", true
	}
	return 0, "", false
}

// checkSlopeSign compares the sign of dP/dT along the branch with the sign
// of ΔV: ΔH > 0 on crossing to the high-temperature phase, so by the
// Clapeyron equation dP/dT = ΔH/(T·ΔV) has the sign of ΔV (negative for
// ice Ih, whose melting curve falls with temperature).
func (a *auditor) checkSlopeSign(br *branch) {
	if br.corr == nil {
		return
	}
	dv, from, ok := a.expectedVolumeChange(br)
	if !ok {
		return
	}
	a.checks++
	// A volume-sign check between the reference ΔV and the phase volumes.
	if r := br.b.Reference; r != nil && r.DeltaV != 0 && br.low != nil {
		t := clamp(r.Temperature, br.b.Tmin, br.b.Tmax)
		if _, vdv, err := br.latentHeat(t); err == nil && vdv*r.DeltaV < 0 {
			a.add(SeverityError, CodeVolumeSignMismatch, br,
				map[string]float64{"temperature_k": t, "delta_v_m3_per_mol": vdv, "reference_delta_v_m3_per_mol": r.DeltaV},
				"%s: the phase volumes give ΔV = %.4g m³/mol at %g K but the catalog's reference ΔV is %.4g m³/mol",
				name(br), vdv, t, r.DeltaV)
		}
	}
	bad, first, firstSlope := 0, 0.0, 0.0
	for _, t := range samples(br.b, nSamples) {
		s, err := br.corr.Slope(t)
		if err != nil || s == 0 {
			continue
		}
		if (s > 0) != (dv > 0) {
			if bad == 0 {
				first, firstSlope = t, s
			}
			bad++
		}
	}
	if bad == 0 {
		return
	}
	a.add(SeverityError, CodeSlopeSign, br,
		map[string]float64{"temperature_k": first, "slope_pa_per_k": firstSlope, "delta_v_m3_per_mol": dv,
			"fraction_of_range": float64(bad) / nSamples},
		"%s: dP/dT = %.4g Pa/K at %g K (and at %d of %d sample temperatures) has the opposite sign to ΔV = %.4g m³/mol from %s; "+
			"by the Clapeyron equation dP/dT = ΔH/(T·ΔV) with ΔH > 0 the two signs must agree",
		name(br), firstSlope, first, bad, nSamples, dv, from)
}

func clamp(x, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, x)) }

// refTemperature returns the reference temperature clamped into the
// branch's range, or false (after a finding) when it lies outside.
func (a *auditor) refTemperature(br *branch) (float64, bool) {
	r := br.b.Reference
	if r.Temperature < br.b.Tmin-a.tol.RangeGapK || r.Temperature > br.b.Tmax+a.tol.RangeGapK {
		a.checks++
		a.add(SeverityWarning, CodeReferenceOutside, br,
			map[string]float64{"temperature_k": r.Temperature, "t_min_k": br.b.Tmin, "t_max_k": br.b.Tmax},
			"%s: the reference state at %g K lies outside the validity range [%g, %g] K and was not compared",
			name(br), r.Temperature, br.b.Tmin, br.b.Tmax)
		return 0, false
	}
	return clamp(r.Temperature, br.b.Tmin, br.b.Tmax), true
}

// checkReference compares the branch with its catalog reference state:
// slope against the Clapeyron equation, the ideal-gas estimate of ΔH on
// vapour curves, and the served latent heat against ΔH.
func (a *auditor) checkReference(br *branch) {
	r := br.b.Reference
	if br.corr == nil || r == nil || r.DeltaH == 0 {
		return
	}
	t, ok := a.refTemperature(br)
	if !ok {
		return
	}
	p, s, err := br.corr.PressureSlope(t)
	if err != nil {
		return // reported by checkSamples
	}
	if r.DeltaV != 0 {
		a.checks++
		want := r.DeltaH / (t * r.DeltaV)
		rel := (s - want) / math.Abs(want)
		vals := map[string]float64{"temperature_k": t, "slope_pa_per_k": s, "expected_slope_pa_per_k": want,
			"deviation_rel": rel, "tolerance_rel": a.tol.ClapeyronSlopeRel}
		if math.Abs(rel) > a.tol.ClapeyronSlopeRel {
			a.add(SeverityError, CodeClapeyronSlope, br, vals,
				"%s: dP/dT = %.5g Pa/K at %g K but the Clapeyron equation with the catalog's ΔH = %.5g J/mol and ΔV = %.5g m³/mol gives %.5g Pa/K (%+.2f%%, tolerance %.2g%%)",
				name(br), s, t, r.DeltaH, r.DeltaV, want, 100*rel, 100*a.tol.ClapeyronSlopeRel)
		} else {
			a.add(SeverityInfo, CodeClapeyronSlope, br, vals,
				"%s: dP/dT = %.5g Pa/K at %g K agrees with ΔH/(T·ΔV) = %.5g Pa/K (%+.2f%%)",
				name(br), s, t, want, 100*rel)
		}
	}
	if br.vapour() {
		a.checks++
		est := thermo.R * t * t * s / p
		rel := (est - r.DeltaH) / r.DeltaH
		sev := SeverityInfo
		if math.Abs(rel) > a.tol.ClausiusClapeyronRel {
			sev = SeverityWarning
		}
		a.add(sev, CodeClausiusClapeyron, br,
			map[string]float64{"temperature_k": t, "pressure_pa": p, "estimate_j_per_mol": est, "reference_j_per_mol": r.DeltaH,
				"deviation_rel": rel, "tolerance_rel": a.tol.ClausiusClapeyronRel},
			"%s: the ideal-gas Clausius–Clapeyron estimate R·T²·(dP/dT)/P = %.5g J/mol at %g K is %+.2f%% from the catalog's ΔH = %.5g J/mol "+
				"(the estimate neglects the condensed phase's volume and non-ideality, so it drifts from the true value as P rises)",
			name(br), est, t, 100*rel, r.DeltaH)
	}
	if br.low != nil && br.high != nil {
		a.checks++
		dh, dv, err := br.latentHeat(t)
		if err != nil {
			a.add(SeverityError, CodeLatentHeat, br, map[string]float64{"temperature_k": t},
				"%s: latent heat at %g K cannot be computed: %v", name(br), t, err)
			return
		}
		rel := (dh - r.DeltaH) / math.Abs(r.DeltaH)
		vals := map[string]float64{"temperature_k": t, "latent_heat_j_per_mol": dh, "reference_j_per_mol": r.DeltaH,
			"delta_v_m3_per_mol": dv, "deviation_rel": rel, "tolerance_rel": a.tol.LatentHeatRel}
		if math.Abs(rel) > a.tol.LatentHeatRel {
			a.add(SeverityError, CodeLatentHeat, br, vals,
				"%s: the served latent heat T·ΔV·dP/dT = %.5g J/mol at %g K (ΔV = %.5g m³/mol from the phase volumes) is %+.2f%% from the catalog's ΔH = %.5g J/mol (tolerance %.2g%%)",
				name(br), dh, t, dv, 100*rel, r.DeltaH, 100*a.tol.LatentHeatRel)
		} else {
			a.add(SeverityInfo, CodeLatentHeat, br, vals,
				"%s: served latent heat %.5g J/mol at %g K agrees with the catalog's ΔH = %.5g J/mol (%+.2f%%)",
				name(br), dh, t, r.DeltaH, 100*rel)
		}
	}
}

// end is one end of a branch's validity range.
type end struct {
	t, p float64
	ok   bool
}

func (br *branch) ends() (lo, hi end) {
	if br.corr == nil {
		return
	}
	if p, err := br.corr.Pressure(br.b.Tmin); err == nil {
		lo = end{br.b.Tmin, p, true}
	}
	if p, err := br.corr.Pressure(br.b.Tmax); err == nil {
		hi = end{br.b.Tmax, p, true}
	}
	return
}

// checkCoverage checks that a curve's branches join without gaps. Vapour
// curves are single-valued in T, so their branches follow each other in
// temperature; melting and transition branches follow each other along the
// curve (in pressure) and may overlap in temperature (water's ice Ih and
// ice III branches both exist at 254 K), so each must touch the next at an
// end.
func (a *auditor) checkCoverage(c *catalog.Curve) {
	var brs []*branch
	for _, br := range a.branches {
		if br.kind == c.Kind && br.corr != nil {
			brs = append(brs, br)
		}
	}
	if len(brs) < 2 {
		return
	}
	if brs[0].vapour() {
		sort.Slice(brs, func(i, j int) bool { return brs[i].b.Tmin < brs[j].b.Tmin })
		for i := 1; i < len(brs); i++ {
			prev, next := brs[i-1], brs[i]
			a.checks++
			gap := next.b.Tmin - prev.b.Tmax
			vals := map[string]float64{"temperature_gap_k": gap, "tolerance_k": a.tol.RangeGapK}
			switch {
			case gap > a.tol.RangeGapK:
				a.add(SeverityError, CodeRangeGap, next, vals,
					"%s starts at %g K but %s ends at %g K: no correlation covers the %.4g K between",
					name(next), next.b.Tmin, name(prev), prev.b.Tmax, gap)
				continue
			case gap < -a.tol.RangeGapK:
				a.add(SeverityWarning, CodeRangeOverlap, next, vals,
					"%s starts at %g K, %.4g K inside %s (ends %g K): P(T) is two-valued there and callers must name a branch",
					name(next), next.b.Tmin, -gap, name(prev), prev.b.Tmax)
				continue
			}
			_, ph := prev.ends()
			nl, _ := next.ends()
			a.checkJunction(prev, next, ph, nl)
			a.checkJunctionTriple(prev, next, ph)
		}
		return
	}
	mid := func(br *branch) float64 {
		p, err := br.corr.Pressure(0.5 * (br.b.Tmin + br.b.Tmax))
		if err != nil {
			return math.NaN()
		}
		return p
	}
	sort.SliceStable(brs, func(i, j int) bool { return mid(brs[i]) < mid(brs[j]) })
	for i := 1; i < len(brs); i++ {
		prev, next := brs[i-1], brs[i]
		a.checks++
		pl, ph := prev.ends()
		nl, nh := next.ends()
		// The pair of ends closest in temperature, then in pressure.
		var best [2]end
		bestD := math.Inf(1)
		for _, e1 := range []end{pl, ph} {
			for _, e2 := range []end{nl, nh} {
				if !e1.ok || !e2.ok {
					continue
				}
				d := math.Abs(e1.t-e2.t)/a.tol.RangeGapK + math.Abs(math.Log(e1.p/e2.p))/a.tol.TriplePressureRel
				if d < bestD {
					bestD, best = d, [2]end{e1, e2}
				}
			}
		}
		if math.IsInf(bestD, 1) {
			continue
		}
		gap := math.Abs(best[1].t - best[0].t)
		if gap > a.tol.RangeGapK {
			a.add(SeverityError, CodeRangeGap, next,
				map[string]float64{"temperature_gap_k": gap, "tolerance_k": a.tol.RangeGapK,
					"end_temperature_k": best[0].t, "next_end_temperature_k": best[1].t},
				"%s and %s do not meet: their nearest ends are at %g K and %g K (%.4g K apart, tolerance %g K)",
				name(prev), name(next), best[0].t, best[1].t, gap, a.tol.RangeGapK)
			continue
		}
		a.checkJunction(prev, next, best[0], best[1])
		a.checkJunctionTriple(prev, next, best[0])
	}
}

func form(br *branch) string {
	if br.b.SolidForm != "" {
		return br.b.SolidForm
	}
	return br.b.Name
}

// checkJunctionTriple checks that where the branches of two different
// solid forms meet, the catalog lists the triple point (the two solids and
// the curve's other phase coexist there), so that phase location and the
// audit know it.
func (a *auditor) checkJunctionTriple(prev, next *branch, e end) {
	f1, f2 := form(prev), form(next)
	if !e.ok || f1 == "" || f2 == "" || f1 == f2 {
		return
	}
	a.checks++
	for _, tp := range a.sub.Triple {
		has := func(x string) bool {
			for _, p := range tp.Phases {
				if p == x {
					return true
				}
			}
			return false
		}
		if has(f1) && has(f2) && math.Abs(tp.Temperature-e.t) <= a.tol.TripleTemperatureK {
			return
		}
	}
	a.add(SeverityWarning, CodeJunctionNotTriple, next,
		map[string]float64{"temperature_k": e.t, "pressure_pa": e.p},
		"%s and %s meet at %g K, %.6g Pa, but the catalog lists no triple point of %s and %s there; add it so phase location and the audit know it",
		name(prev), name(next), e.t, e.p, f1, f2)
}

// checkJunction compares the pressures of two branches where they touch.
func (a *auditor) checkJunction(prev, next *branch, e1, e2 end) {
	if !e1.ok || !e2.ok {
		return
	}
	rel := (e2.p - e1.p) / e1.p
	if math.Abs(rel) <= a.tol.TriplePressureRel {
		return
	}
	// Equivalent temperature offset along the steeper branch.
	s, err := prev.corr.Slope(e1.t)
	dT := math.Inf(1)
	if err == nil && s != 0 {
		dT = (e2.p - e1.p) / s
	}
	if math.Abs(dT) <= a.tol.RangeGapK {
		return
	}
	a.add(SeverityError, CodeBranchJunction, next,
		map[string]float64{"temperature_k": e1.t, "pressure_pa": e1.p, "next_pressure_pa": e2.p,
			"pressure_gap_rel": rel, "temperature_gap_k": dT, "tolerance_rel": a.tol.TriplePressureRel},
		"%s ends at %g Pa (%g K) but %s starts at %g Pa (%g K): a %+.3g%% pressure jump where the branches meet",
		name(prev), e1.p, e1.t, name(next), e2.p, e2.t, 100*rel)
}

func isLiquid(p string) bool { return strings.EqualFold(p, "liquid") }
func isVapour(p string) bool {
	return strings.EqualFold(p, "vapor") || strings.EqualFold(p, "vapour") || strings.EqualFold(p, "gas")
}

// branchesFor returns the branches on the boundary between phases x and y.
func (a *auditor) branchesFor(x, y string) (thermo.CurveKind, []*branch) {
	if isLiquid(y) || isVapour(y) && !isLiquid(x) {
		x, y = y, x
	}
	var kind thermo.CurveKind
	var solid string
	switch {
	case isLiquid(x) && isVapour(y):
		kind = thermo.Saturation
	case isLiquid(x) && !isVapour(y):
		kind, solid = thermo.Melting, y
	case isVapour(x) && !isLiquid(y):
		kind, solid = thermo.Sublimation, y
	default:
		kind = thermo.Transition
	}
	var out, all []*branch
	for _, br := range a.branches {
		if br.kind != kind || br.corr == nil {
			continue
		}
		all = append(all, br)
		switch kind {
		case thermo.Saturation:
			out = append(out, br)
		case thermo.Transition:
			n := br.b.Name
			if strings.Contains(n, x) && strings.Contains(n, y) {
				out = append(out, br)
			}
		default:
			if br.b.SolidForm == solid || br.b.Name == solid {
				out = append(out, br)
			}
		}
	}
	if len(out) == 0 && len(all) == 1 && all[0].b.Name == "" && all[0].b.SolidForm == "" && kind != thermo.Transition {
		out = all // a single unnamed branch covers the one solid form
	}
	return kind, out
}

// nearest returns the branch whose range lies nearest t, and the distance.
func nearest(brs []*branch, t float64) (*branch, float64) {
	var best *branch
	bestD := math.Inf(1)
	for _, br := range brs {
		d := math.Max(0, math.Max(br.b.Tmin-t, t-br.b.Tmax))
		if d < bestD {
			best, bestD = br, d
		}
	}
	return best, bestD
}

// checkTriple checks that every curve between two of the triple point's
// phases passes through it.
func (a *auditor) checkTriple(tp catalog.TriplePoint) {
	ph := tp.Phases
	for i := 0; i < len(ph); i++ {
		for j := i + 1; j < len(ph); j++ {
			_, brs := a.branchesFor(ph[i], ph[j])
			br, d := nearest(brs, tp.Temperature)
			if br == nil {
				continue
			}
			a.checks++
			desc := fmt.Sprintf("triple point %s (%g K, %g Pa)", strings.Join(ph, "/"), tp.Temperature, tp.Pressure)
			if d > a.tol.TripleTemperatureK {
				edge := br.b.Tmin
				if tp.Temperature > br.b.Tmax {
					edge = br.b.Tmax
				}
				a.add(SeverityError, CodeTriplePointGap, br,
					map[string]float64{"temperature_gap_k": d, "tolerance_k": a.tol.TripleTemperatureK, "end_temperature_k": edge},
					"%s ends at %g K, %.4g K short of the %s", name(br), edge, d, desc)
				a.findings[len(a.findings)-1].Phases = ph
				continue
			}
			t := clamp(tp.Temperature, br.b.Tmin, br.b.Tmax)
			p, s, err := br.corr.PressureSlope(t)
			if err != nil {
				continue
			}
			rel := (p - tp.Pressure) / tp.Pressure
			dT := math.Inf(1)
			if s != 0 {
				dT = (p - tp.Pressure) / s
			}
			dT += t - tp.Temperature
			if math.Abs(rel) > a.tol.TriplePressureRel && math.Abs(dT) > a.tol.TripleTemperatureK {
				a.add(SeverityError, CodeTriplePointGap, br,
					map[string]float64{"temperature_k": t, "pressure_pa": p, "triple_pressure_pa": tp.Pressure,
						"pressure_gap_rel": rel, "temperature_gap_k": dT,
						"tolerance_rel": a.tol.TriplePressureRel, "tolerance_k": a.tol.TripleTemperatureK},
					"%s passes %g K at %.6g Pa, missing the %s by %+.3g%% in pressure, %+.3g K in temperature (tolerances %g, %g K)",
					name(br), t, p, desc, 100*rel, dT, a.tol.TriplePressureRel, a.tol.TripleTemperatureK)
				a.findings[len(a.findings)-1].Phases = ph
			}
		}
	}
}

// checkCritical checks that the saturation curve ends at the critical point.
func (a *auditor) checkCritical() {
	var sat []*branch
	for _, br := range a.branches {
		if br.kind == thermo.Saturation && br.corr != nil {
			sat = append(sat, br)
		}
	}
	if len(sat) == 0 {
		return
	}
	top := sat[0]
	for _, br := range sat[1:] {
		if br.b.Tmax > top.b.Tmax {
			top = br
		}
	}
	a.checks++
	cp := a.sub.Critical
	if cp == nil {
		a.add(SeverityInfo, CodeNoCriticalPoint, top, nil,
			"the catalog states no critical point, so the end of the saturation curve (%g K) was not checked and phase location above it cannot tell liquid from vapour",
			top.b.Tmax)
		return
	}
	tc, pc := cp.Temperature, cp.Pressure
	switch {
	case top.b.Tmax > tc+a.tol.CriticalTemperatureK:
		a.add(SeverityError, CodeCriticalMismatch, top,
			map[string]float64{"t_max_k": top.b.Tmax, "critical_temperature_k": tc, "temperature_gap_k": top.b.Tmax - tc,
				"tolerance_k": a.tol.CriticalTemperatureK},
			"%s extends to %g K, beyond the critical temperature %g K: no liquid–vapour coexistence exists above Tc",
			name(top), top.b.Tmax, tc)
		return
	case top.b.Tmax < tc-a.tol.CriticalTemperatureK:
		a.add(SeverityWarning, CodeShortOfCritical, top,
			map[string]float64{"t_max_k": top.b.Tmax, "critical_temperature_k": tc, "temperature_gap_k": tc - top.b.Tmax,
				"tolerance_k": a.tol.CriticalTemperatureK},
			"%s stops at %g K, %.4g K below the critical temperature %g K: saturation queries and liquid/vapour location between are not served",
			name(top), top.b.Tmax, tc-top.b.Tmax, tc)
		return
	}
	t := math.Min(tc, top.b.Tmax)
	p, s, err := top.corr.PressureSlope(t)
	if err != nil {
		return
	}
	rel := (p - pc) / pc
	dT := math.Inf(1)
	if s != 0 {
		dT = (p-pc)/s + t - tc
	}
	if math.Abs(rel) > a.tol.CriticalPressureRel && math.Abs(dT) > a.tol.CriticalTemperatureK {
		a.add(SeverityError, CodeCriticalMismatch, top,
			map[string]float64{"temperature_k": t, "pressure_pa": p, "critical_pressure_pa": pc,
				"pressure_gap_rel": rel, "temperature_gap_k": dT,
				"tolerance_rel": a.tol.CriticalPressureRel, "tolerance_k": a.tol.CriticalTemperatureK},
			"%s ends at %.6g Pa at %g K but the critical pressure is %.6g Pa (%+.3g%%, %+.3g K along the curve; tolerances %g, %g K)",
			name(top), p, t, pc, 100*rel, dT, a.tol.CriticalPressureRel, a.tol.CriticalTemperatureK)
	}
}

// heatAt returns ΔH for the branch at t and where it came from: the
// Clapeyron equation with the phase volumes, the catalog's reference when
// it is at t, or (vapour curves) the ideal-gas estimate.
func (a *auditor) heatAt(br *branch, t float64) (dh float64, source string, exact, ok bool) {
	if dh, _, err := br.latentHeat(t); err == nil {
		return dh, "Clapeyron with phase volumes", true, true
	}
	if r := br.b.Reference; r != nil && r.DeltaH != 0 && math.Abs(r.Temperature-t) <= a.tol.TripleTemperatureK {
		return r.DeltaH, "catalog reference", true, true
	}
	if br.vapour() {
		if dh, err := br.idealGasHeat(t); err == nil {
			return dh, "ideal-gas estimate", false, true
		}
	}
	return 0, "", false, false
}

// checkEnthalpySum checks ΔH_sub = ΔH_fus + ΔH_vap at a solid–liquid–vapour
// triple point: enthalpy is a function of state, and the three transitions
// there start and end at the same states.
func (a *auditor) checkEnthalpySum(tp catalog.TriplePoint) {
	if len(tp.Phases) != 3 {
		return
	}
	var solid string
	var hasL, hasV bool
	for _, p := range tp.Phases {
		switch {
		case isLiquid(p):
			hasL = true
		case isVapour(p):
			hasV = true
		default:
			solid = p
		}
	}
	if !hasL || !hasV || solid == "" {
		return
	}
	t := tp.Temperature
	pick := func(x, y string) *branch {
		_, brs := a.branchesFor(x, y)
		br, d := nearest(brs, t)
		if br == nil || d > a.tol.TripleTemperatureK {
			return nil
		}
		return br
	}
	sub, fus, vap := pick(solid, "vapor"), pick(solid, "liquid"), pick("liquid", "vapor")
	if sub == nil || fus == nil || vap == nil {
		return
	}
	tt := func(br *branch) float64 { return clamp(t, br.b.Tmin, br.b.Tmax) }
	hs, ss, es, ok1 := a.heatAt(sub, tt(sub))
	hf, sf, ef, ok2 := a.heatAt(fus, tt(fus))
	hv, sv, ev, ok3 := a.heatAt(vap, tt(vap))
	if !ok1 || !ok2 || !ok3 {
		return
	}
	a.checks++
	rel := (hs - hf - hv) / hs
	vals := map[string]float64{"temperature_k": t, "sublimation_j_per_mol": hs, "melting_j_per_mol": hf,
		"saturation_j_per_mol": hv, "deviation_rel": rel, "tolerance_rel": a.tol.EnthalpySumRel}
	detail := fmt.Sprintf("ΔH_sub = %.5g J/mol (%s), ΔH_fus = %.5g J/mol (%s), ΔH_vap = %.5g J/mol (%s)", hs, ss, hf, sf, hv, sv)
	sev := SeverityInfo
	verdict := "agree"
	if math.Abs(rel) > a.tol.EnthalpySumRel {
		verdict = "disagree"
		sev = SeverityError
		if !es || !ef || !ev {
			sev = SeverityWarning // an estimate is in the sum
		}
	}
	a.add(sev, CodeTripleEnthalpySum, nil, vals,
		"triple point %s at %g K: ΔH_sub and ΔH_fus + ΔH_vap %s (they differ by %+.2f%% of ΔH_sub, tolerance %.2g%%); %s",
		strings.Join(tp.Phases, "/"), t, verdict, 100*rel, 100*a.tol.EnthalpySumRel, detail)
	a.findings[len(a.findings)-1].Phases = tp.Phases
}
