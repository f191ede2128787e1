package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"github.com/phasebound/phasebound/clients/goclient"
	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

func init() { register(newDemoCmd) }

func newDemoCmd(a *app) *cobra.Command {
	return &cobra.Command{
		Use:   "demo [--server ADDR]",
		Short: "Run the demo scenario (an invented food plant) and print a readable report",
		Long: `demo runs the queries of the demo scenario against the server (--server) or
an in-process one on the catalog (--catalog, default the embedded one) and
prints a report: an invented food plant that plans a pressure-assisted
freezing and thawing cycle for a water-based product in the ice Ih / ice
III region, a dry-ice line, and a thermal store filled with a phase-change
material of its own (the catalog's invented demo substance).

The plant and the phase-change material are invented; the water and carbon
dioxide values come from the published equations the catalog cites.

CAUTION: not a substitute for design codes; defer to local codes and
licensed engineers.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return a.demo(cmd.Context())
		},
	}
}

// demoPoint is one evaluated point of the report.
type demoPoint struct {
	Label       string   `json:"label"`
	Substance   string   `json:"substance"`
	Curve       string   `json:"curve"`
	Branch      string   `json:"branch"`
	SolidForm   string   `json:"solid_form,omitempty"`
	Temperature float64  `json:"temperature_k"`
	Pressure    float64  `json:"pressure_pa"`
	Slope       float64  `json:"dpdt_pa_per_k"`
	LatentMol   *float64 `json:"latent_heat_j_per_mol,omitempty"`
	LatentKg    *float64 `json:"latent_heat_j_per_kg,omitempty"`
	LatentFrom  string   `json:"latent_heat_source,omitempty"`
}

// demoReport is the JSON form of the report.
type demoReport struct {
	CatalogVersion string        `json:"catalog_version"`
	Freezing       []demoPoint   `json:"pressure_freezing"`
	States         []phaseResult `json:"product_states"`
	DryIce         []demoPoint   `json:"dry_ice"`
	PCMSubstance   string        `json:"pcm_substance"`
	PCM            []demoPoint   `json:"pcm"`
	Notes          []string      `json:"notes"`
	Cautions       []string      `json:"cautions"`
}

var demoCautions = []string{
	"The plant, its product and the phase-change material are invented for this demonstration; never use the material's numbers for design.",
	"Water and carbon dioxide values are only as good as the published equations behind them, within their validity ranges and stated uncertainties ('phasebound substances').",
	"Phase boundaries give equilibrium; a pressurised product can supercool and freeze later than the melting curve says (metastable states are not represented).",
	"Latent heats marked ideal-gas-estimate neglect the condensed-phase volume and vapour non-ideality: a few per cent at low pressure, worse near the critical point.",
	"Not a substitute for design codes: pressure-vessel, refrigeration and food-safety designs must follow the applicable local codes and be checked by licensed engineers.",
}

func (a *app) demo(ctx context.Context) error {
	c, done, err := a.connect(ctx)
	if err != nil {
		return err
	}
	defer done()
	list, err := c.ListSubstances(ctx)
	if err != nil {
		return a.rpcError(err)
	}
	have := map[string]*pb.Substance{}
	var pcm *pb.Substance
	for _, s := range list.Substances {
		have[s.Id] = s
		if pcm == nil && s.GetProvenance().GetKind() == pb.ProvenanceKind_PROVENANCE_KIND_INVENTED {
			pcm = s
		}
	}
	rep := demoReport{CatalogVersion: list.CatalogVersion, Cautions: demoCautions}

	// 1. Pressure-assisted freezing and thawing: the ice Ih -> ice III region.
	if w := have["water"]; w != nil {
		for _, mpa := range []float64{0.101325, 100, 150, 200, 208, 250, 300} {
			p, err := a.demoEval(ctx, c, w, pb.CurveKind_CURVE_KIND_MELTING, pb.Variable_VARIABLE_PRESSURE, mpa*1e6,
				fmt.Sprintf("ice melting at %g MPa", mpa))
			if err != nil {
				rep.Notes = append(rep.Notes, fmt.Sprintf("water melting at %g MPa: %v", mpa, err))
				continue
			}
			rep.Freezing = append(rep.Freezing, p)
		}
		for _, st := range []struct{ t, p float64 }{
			{268.15, 0.101325e6}, // frozen storage, -5 degC at 1 atm
			{258.15, 200e6},      // pressurised to 200 MPa and cooled to -15 degC
			{251.15, 200e6},      // the same product cooled to -22 degC at 200 MPa
			{253.15, 250e6},      // -20 degC at 250 MPa: the ice III region
			{258.15, 0.101325e6}, // after a fast release to 1 atm at -15 degC
		} {
			r, err := locateOne(ctx, a, c.LocatePhase, "water", st.t, st.p)
			if err != nil {
				rep.Notes = append(rep.Notes, fmt.Sprintf("water at %g K, %g Pa: %v", st.t, st.p, err))
				continue
			}
			rep.States = append(rep.States, r)
		}
	} else {
		rep.Notes = append(rep.Notes, "the catalog has no substance \"water\": freezing section skipped")
	}

	// 2. The dry-ice line.
	if co2 := have["carbon-dioxide"]; co2 != nil {
		if p, err := a.demoEval(ctx, c, co2, pb.CurveKind_CURVE_KIND_SUBLIMATION, pb.Variable_VARIABLE_PRESSURE, 101325,
			"dry ice sublimating at 1 atm"); err == nil {
			rep.DryIce = append(rep.DryIce, p)
		} else {
			rep.Notes = append(rep.Notes, fmt.Sprintf("carbon dioxide sublimation at 1 atm: %v", err))
		}
		if p, err := a.demoEval(ctx, c, co2, pb.CurveKind_CURVE_KIND_SUBLIMATION, pb.Variable_VARIABLE_TEMPERATURE, 194.15,
			"dry ice at -79 °C"); err == nil {
			rep.DryIce = append(rep.DryIce, p)
		}
	} else {
		rep.Notes = append(rep.Notes, "the catalog has no substance \"carbon-dioxide\": dry-ice section skipped")
	}

	// 3. The plant's own phase-change material (invented).
	if pcm != nil {
		rep.PCMSubstance = pcm.Id
		for _, cv := range pcm.Curves {
			switch cv.Kind {
			case pb.CurveKind_CURVE_KIND_MELTING:
				if p, err := a.demoEval(ctx, c, pcm, cv.Kind, pb.Variable_VARIABLE_PRESSURE, 101325, "melting at 1 atm"); err == nil {
					rep.PCM = append(rep.PCM, p)
				} else {
					rep.Notes = append(rep.Notes, fmt.Sprintf("%s melting at 1 atm: %v", pcm.Id, err))
				}
			case pb.CurveKind_CURVE_KIND_SATURATION:
				if len(cv.Branches) > 0 {
					t := cv.Branches[0].GetValidity().GetMinTemperatureK() + 40
					if p, err := a.demoEval(ctx, c, pcm, cv.Kind, pb.Variable_VARIABLE_TEMPERATURE, t,
						fmt.Sprintf("vapour pressure %g K above its triple point", 40.0)); err == nil {
						rep.PCM = append(rep.PCM, p)
					}
				}
			}
		}
	} else {
		rep.Notes = append(rep.Notes, "the catalog has no invented demo substance: phase-change material section skipped")
	}

	if a.jsonOut {
		if rep.Freezing == nil {
			rep.Freezing = []demoPoint{}
		}
		return writeJSON(a.stdout, rep)
	}
	a.printDemo(rep, pcm)
	return nil
}

// demoEval evaluates one point strictly, with latent heat.
func (a *app) demoEval(ctx context.Context, c *goclient.Client, s *pb.Substance, kind pb.CurveKind, given pb.Variable, x float64, label string) (demoPoint, error) {
	resp, err := c.Evaluate(ctx, &pb.EvaluateRequest{
		Substance: s.Id, Curve: kind, Given: given, Values: []float64{x}, Strict: true, IncludeLatentHeat: true,
	})
	if err != nil {
		return demoPoint{}, a.rpcError(err)
	}
	p := demoPoint{
		Label: label, Substance: s.Id, Curve: kindName(kind), Branch: resp.BranchNames[resp.BranchIndex[0]],
		Temperature: resp.TemperatureK[0], Pressure: resp.PressurePa[0], Slope: resp.DpdtPaPerK[0],
	}
	for _, cv := range s.Curves {
		if cv.Kind == kind {
			for _, b := range cv.Branches {
				if b.Name == p.Branch {
					p.SolidForm = b.SolidForm
				}
			}
		}
	}
	if len(resp.LatentHeatSource) == 1 {
		src := resp.LatentHeatSource[0]
		p.LatentFrom = latentSourceName(src)
		if src == pb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON || src == pb.LatentHeatSource_LATENT_HEAT_SOURCE_IDEAL_GAS_ESTIMATE {
			p.LatentMol, p.LatentKg = finite(resp.LatentHeatJPerMol[0]), finite(resp.LatentHeatJPerKg[0])
		}
	}
	return p, nil
}

func latentText(p demoPoint) string {
	if p.LatentKg == nil {
		if p.LatentFrom == "no-volumes" {
			return "n/a (no phase volumes in the catalog)"
		}
		return "n/a"
	}
	s := fmt.Sprintf("%.1f kJ/kg", *p.LatentKg/1e3)
	if p.LatentFrom == "ideal-gas-estimate" {
		s += " (ideal-gas estimate)"
	}
	return s
}

func (a *app) printDemo(rep demoReport, pcm *pb.Substance) {
	w := a.stdout
	rule := strings.Repeat("=", 78)
	fmt.Fprintln(w, rule)
	fmt.Fprintln(w, "phasebound demo: an invented food plant plans with phase boundaries")
	fmt.Fprintf(w, "catalog version %s\n", rep.CatalogVersion)
	fmt.Fprintln(w, rule)

	fmt.Fprintln(w, "\n1. Pressure-assisted freezing and thawing of a water-based product")
	fmt.Fprintln(w, "   Ice melts under pressure down to the ice Ih / ice III / liquid triple point")
	fmt.Fprintln(w, "   (251.165 K, 208.566 MPa, IAPWS R14-08); above it ice III melts at rising T.")
	if len(rep.Freezing) > 0 {
		fmt.Fprintf(w, "\n   %-11s  %-21s  %-8s  %-14s  %s\n", "pressure", "melting temperature", "ice form", "slope dP/dT", "latent heat of fusion")
		for _, p := range rep.Freezing {
			form := p.SolidForm
			if form == "" {
				form = p.Branch
			}
			fmt.Fprintf(w, "   %-11s  %8.3f K %7.2f °C  %-8s  %8.3f MPa/K  %s\n", humanPressure(p.Pressure), p.Temperature,
				p.Temperature-273.15, form, p.Slope/1e6, latentText(p))
		}
		fmt.Fprintln(w, "   The ice Ih latent heats rest on constant ice and liquid densities taken at")
		fmt.Fprintln(w, "   0.1 MPa: good near 0 °C only, increasingly short as the pressure rises")
		fmt.Fprintln(w, "   (see the branch's uncertainty in 'phasebound substances').")
	}
	if len(rep.States) > 0 {
		fmt.Fprintf(w, "\n   Product states along the cycle (treated as water):\n")
		for _, s := range rep.States {
			what := s.Phase
			if s.Form != "" {
				what += " (" + s.Form + ")"
			}
			margin := ""
			if s.MarginT != nil {
				margin = fmt.Sprintf("%.2f K from %s at this pressure", *s.MarginT, s.NearestBoundary)
			}
			fmt.Fprintf(w, "   %7.2f °C at %-11s  %-16s %s\n", s.Temperature-273.15, humanPressure(s.Pressure), what, margin)
		}
		fmt.Fprintln(w, "   A product held liquid at -15 °C under 200 MPa freezes all at once when the")
		fmt.Fprintln(w, "   pressure is released (pressure-shift freezing): small, even ice crystals.")
	}

	fmt.Fprintln(w, "\n2. Dry-ice line (carbon dioxide sublimation)")
	for _, p := range rep.DryIce {
		fmt.Fprintf(w, "   %-28s %8.3f K (%7.2f °C) at %-11s slope %8.3f kPa/K, latent heat %s\n", p.Label+":", p.Temperature,
			p.Temperature-273.15, humanPressure(p.Pressure), p.Slope/1e3, latentText(p))
	}
	if len(rep.DryIce) > 0 {
		fmt.Fprintln(w, "   (Dry ice at 1 atm is commonly quoted at 194.7 K, -78.5 °C: common practice.)")
	}

	fmt.Fprintln(w, "\n3. Thermal store with the plant's own phase-change material")
	if pcm != nil {
		fmt.Fprintf(w, "   %s (%s): INVENTED data for this demonstration only.\n", pcm.Name, pcm.Id)
		for _, p := range rep.PCM {
			fmt.Fprintf(w, "   %-40s %8.3f K (%7.2f °C) at %-11s latent heat %s\n", p.Label+":", p.Temperature,
				p.Temperature-273.15, humanPressure(p.Pressure), latentText(p))
		}
	}

	if len(rep.Notes) > 0 {
		fmt.Fprintln(w, "\nNotes:")
		for _, n := range rep.Notes {
			fmt.Fprintf(w, "   - %s\n", n)
		}
	}
	fmt.Fprintln(w, "\nCautions:")
	for _, cn := range rep.Cautions {
		writeWrapped(w, "   - ", cn, 78)
	}
}

// writeWrapped writes text after prefix, wrapped at width columns.
func writeWrapped(w io.Writer, prefix, text string, width int) {
	line := prefix
	indent := strings.Repeat(" ", len([]rune(prefix)))
	for _, word := range strings.Fields(text) {
		if len([]rune(line))+len(word)+1 > width && strings.TrimSpace(line) != strings.TrimSpace(prefix) {
			fmt.Fprintln(w, line)
			line = indent
		}
		if line != indent && line != prefix {
			line += " "
		}
		line += word
	}
	fmt.Fprintln(w, line)
}
