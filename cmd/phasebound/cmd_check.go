package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/phasebound/phasebound/clients/units"
	"github.com/phasebound/phasebound/server/audit"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

func init() { register(newCheckCmd) }

const checkLong = `Audit a substance of the catalog (--catalog, or the embedded default) for
thermodynamic consistency. The curves are built in-process from the catalog's
correlations and phase volumes; the checks are:

  triple-point-gap           every curve between two of a triple point's phases
                             passes through it (pressure gap relative and the
                             equivalent temperature gap in K)
  critical-point-mismatch    the saturation curve ends at the critical point
  range-gap, range-overlap,  a curve's branches join without gaps, touching
  branch-junction            at their ends
  slope-sign                 dP/dT has the sign of ΔV (negative for ice Ih)
  clapeyron-slope            dP/dT = ΔH/(T·ΔV) at a reference state
  clausius-clapeyron-dh      the ideal-gas estimate R·T²·(dP/dT)/P against a
                             given ΔH on vapour curves (info or warning only:
                             it neglects the condensed phase and non-ideality)
  latent-heat-vs-reference   the served latent heat T·ΔV·dP/dT against ΔH
  triple-point-enthalpy-sum  ΔH_sub = ΔH_fus + ΔH_vap at a triple point

The tolerances are --tol-k (temperature gaps, default 0.01 K), --tol-rel
(relative pressure gaps, default 0.001) and --tol-dh (Clapeyron slope and
latent heat against reference values, default 0.03); a point misses a curve
only when both its pressure gap and its equivalent temperature gap exceed
theirs, since a steep melting curve moves megapascals in a millikelvin.

Reference states (ΔH, ΔV at a temperature) come from the catalog's
"reference" fields, or for one curve from --curve/--branch with --delta-h,
--delta-v and --at.

Output: readable text, or with --json one object {"substance", "ok",
"checks", "findings": [{"severity", "code", "curve", "branch", "phases",
"message", "values"}]}; "values" holds the measured numbers and tolerances,
keyed with their SI unit.

Exit status: 0 when no finding has severity "error" (warnings and info may
be present), 2 when any does, 1 when the audit could not run (unknown
substance, broken catalog, bad flags).

CAUTION: a clean audit shows the catalog is self-consistent, not that its
correlations are right; it is not a substitute for design codes or for
review by a licensed engineer.`

type checkFlags struct {
	substance, curve, branch string
	deltaH, deltaV           float64
	at                       string
	tolK, tolRel, tolDH      float64
}

func newCheckCmd(a *app) *cobra.Command {
	var f checkFlags
	cmd := &cobra.Command{
		Use:   "check --substance ID",
		Short: "Audit a substance's curves for consistency (triple and critical points, Clapeyron slopes, latent heats)",
		Long:  checkLong,
		Args:  cobra.NoArgs,
		RunE:  func(cmd *cobra.Command, _ []string) error { return a.runCheck(&f) },
	}
	fl := cmd.Flags()
	fl.StringVar(&f.substance, "substance", "", "substance id")
	fl.StringVar(&f.curve, "curve", "", "curve that --delta-h/--delta-v refer to")
	fl.StringVar(&f.branch, "branch", "", "branch that --delta-h/--delta-v refer to")
	fl.Float64Var(&f.deltaH, "delta-h", 0, "reference enthalpy of transition, J/mol (high-T phase minus low-T phase)")
	fl.Float64Var(&f.deltaV, "delta-v", 0, "reference volume of transition, m³/mol (high-T phase minus low-T phase)")
	fl.StringVar(&f.at, "at", "", "temperature of the reference state (e.g. 273.16, 0degC)")
	d := audit.DefaultTolerances()
	fl.Float64Var(&f.tolK, "tol-k", d.TripleTemperatureK, "temperature gaps allowed at triple points, the critical point and branch junctions, K")
	fl.Float64Var(&f.tolRel, "tol-rel", d.TriplePressureRel, "relative pressure gaps allowed at triple points, the critical point and branch junctions")
	fl.Float64Var(&f.tolDH, "tol-dh", d.LatentHeatRel, "relative tolerance of the Clapeyron slope and the latent heat against reference values")
	return cmd
}

func (a *app) runCheck(f *checkFlags) error {
	if f.substance == "" {
		return errors.New("check: --substance is required")
	}
	cat, err := a.loadCatalog()
	if err != nil {
		return fmt.Errorf("check: %w", err)
	}
	if f.deltaH != 0 || f.deltaV != 0 || f.at != "" {
		if cat, err = withReference(cat, f); err != nil {
			return fmt.Errorf("check: %w", err)
		}
	}
	for _, v := range []struct {
		name string
		v    float64
	}{{"--tol-k", f.tolK}, {"--tol-rel", f.tolRel}, {"--tol-dh", f.tolDH}} {
		if !(v.v > 0) || math.IsInf(v.v, 0) {
			return fmt.Errorf("check: %s %v must be a positive number", v.name, v.v)
		}
	}
	tol := audit.Tolerances{
		TripleTemperatureK: f.tolK, CriticalTemperatureK: f.tolK, RangeGapK: f.tolK,
		TriplePressureRel: f.tolRel, CriticalPressureRel: f.tolRel,
		ClapeyronSlopeRel: f.tolDH, LatentHeatRel: f.tolDH,
	}
	rep, err := audit.Check(cat, f.substance, tol)
	if err != nil {
		return fmt.Errorf("check: %w", err)
	}
	if a.jsonOut {
		if err := json.NewEncoder(a.stdout).Encode(rep); err != nil {
			return err
		}
	} else {
		printCheckText(a.stdout, rep)
	}
	if n := rep.Count(audit.SeverityError); n > 0 {
		return &exitError{code: 2, err: fmt.Errorf("check: %s is inconsistent: %d error finding(s)", rep.Substance, n)}
	}
	return nil
}

// withReference returns cat with the flags' reference state set on one
// branch of the substance (a copy; cat is not changed).
func withReference(cat *catalog.Catalog, f *checkFlags) (*catalog.Catalog, error) {
	if f.curve == "" || f.at == "" || f.deltaH == 0 {
		return nil, errors.New("a reference state needs --curve, --at and --delta-h (and --delta-v for the Clapeyron slope)")
	}
	if math.IsNaN(f.deltaH) || math.IsInf(f.deltaH, 0) || math.IsNaN(f.deltaV) || math.IsInf(f.deltaV, 0) {
		return nil, errors.New("--delta-h and --delta-v must be finite numbers")
	}
	kind, err := thermo.ParseCurveKind(f.curve)
	if err != nil {
		return nil, err
	}
	t, err := units.ParseTemperature(f.at)
	if err != nil {
		return nil, fmt.Errorf("--at: %w", err)
	}
	old := cat.Lookup(f.substance)
	if old == nil {
		_, err := audit.Check(cat, f.substance, audit.Tolerances{}) // names the valid ids
		return nil, err
	}
	sub := copySubstance(old)
	cv := sub.Curve(kind)
	if cv == nil {
		return nil, fmt.Errorf("substance %q has no %s curve", f.substance, kind)
	}
	var br *catalog.Branch
	names := make([]string, 0, len(cv.Branches))
	for _, b := range cv.Branches {
		names = append(names, b.Name)
		if b.Name == f.branch || f.branch == "" && len(cv.Branches) == 1 {
			br = b
		}
	}
	if br == nil {
		return nil, fmt.Errorf("substance %q %s curve has no branch %q (branches: %s)", f.substance, kind, f.branch, strings.Join(names, ", "))
	}
	br.Reference = &catalog.Reference{Temperature: t, DeltaH: f.deltaH, DeltaV: f.deltaV}
	out := *cat
	out.Substances = make([]*catalog.Substance, len(cat.Substances))
	for i, s := range cat.Substances {
		if s == old {
			s = sub
		}
		out.Substances[i] = s
	}
	return &out, nil
}

func printCheckText(w io.Writer, rep *audit.Report) {
	ne, nw, ni := rep.Count(audit.SeverityError), rep.Count(audit.SeverityWarning), rep.Count(audit.SeverityInfo)
	verdict := "consistent"
	if !rep.OK {
		verdict = "INCONSISTENT"
	}
	fmt.Fprintf(w, "%s: %s — %d checks, %d errors, %d warnings, %d notes\n", rep.Substance, verdict, rep.Checks, ne, nw, ni)
	if len(rep.Findings) == 0 {
		return
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, f := range rep.Findings {
		where := f.Where()
		if where == "" {
			where = "-"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\n", strings.ToUpper(string(f.Severity)), f.Code, where, f.Message)
	}
	tw.Flush()
}
