package main

import (
	"context"
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"github.com/phasebound/phasebound/clients/units"
	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

func init() { register(newPhaseCmd) }

// phaseResult is the JSON form of a located state. Margins are null when
// no boundary crosses the isobar (or isotherm).
type phaseResult struct {
	Substance       string   `json:"substance"`
	Temperature     float64  `json:"temperature_k"`
	Pressure        float64  `json:"pressure_pa"`
	Phase           string   `json:"phase"`
	Form            string   `json:"form"`
	MarginT         *float64 `json:"margin_temperature_k"`
	MarginP         *float64 `json:"margin_pressure_pa"`
	NearestBoundary string   `json:"nearest_boundary"`
	Catalog         string   `json:"catalog_version"`
}

func newPhaseCmd(a *app) *cobra.Command {
	var substance, temperature, pressure string
	cmd := &cobra.Command{
		Use:   "phase --substance ID --temperature V --pressure V",
		Short: "Tell which phase a state (T, P) is in, with margins to the nearest boundary",
		Long: `phase tells whether the state (T, P) of a substance is solid (and which
solid form, when the catalog's branches name one), liquid, vapor or
supercritical, and how far it is from the nearest phase boundary: in K at
fixed pressure and in Pa at fixed temperature.

Values take unit suffixes (25degC, 200MPa, 1atm). States the substance's
curves do not cover are refused rather than guessed.

CAUTION: a state near a boundary (small margins) is only as certain as the
correlations' stated uncertainty; metastable states (supercooled liquid,
superheated liquid) are not represented. Not a substitute for design codes;
defer to local codes and licensed engineers.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return a.phase(cmd.Context(), substance, temperature, pressure)
		},
	}
	f := cmd.Flags()
	f.StringVar(&substance, "substance", "", "substance id (see 'phasebound substances')")
	f.StringVar(&temperature, "temperature", "", "temperature, e.g. 263.15, -10degC")
	f.StringVar(&pressure, "pressure", "", "pressure, e.g. 101325, 200MPa, 1atm")
	return cmd
}

func (a *app) phase(ctx context.Context, substance, temperature, pressure string) error {
	if substance == "" {
		return errors.New("phase needs --substance ID (see 'phasebound substances')")
	}
	if temperature == "" || pressure == "" {
		return errors.New("phase needs both --temperature V and --pressure V")
	}
	t, err := units.ParseTemperature(temperature)
	if err != nil {
		return fmt.Errorf("--temperature: %w", err)
	}
	p, err := units.ParsePressure(pressure)
	if err != nil {
		return fmt.Errorf("--pressure: %w", err)
	}
	c, done, err := a.connect(ctx)
	if err != nil {
		return err
	}
	defer done()
	r, err := locateOne(ctx, a, c.LocatePhase, substance, t, p)
	if err != nil {
		return err
	}
	if a.jsonOut {
		return writeJSON(a.stdout, r)
	}
	w := a.stdout
	what := r.Phase
	if r.Form != "" {
		what += " (" + r.Form + ")"
	}
	fmt.Fprintf(w, "%s at %.6g K (%.4g °C), %s: %s\n", r.Substance, r.Temperature, r.Temperature-273.15, humanPressure(r.Pressure), what)
	if r.MarginT != nil {
		fmt.Fprintf(w, "  margin at fixed pressure      %.6g K\n", *r.MarginT)
	}
	if r.MarginP != nil {
		fmt.Fprintf(w, "  margin at fixed temperature   %s\n", humanPressure(*r.MarginP))
	}
	if r.NearestBoundary != "" {
		fmt.Fprintf(w, "  nearest boundary              %s\n", r.NearestBoundary)
	}
	fmt.Fprintf(w, "Metastable states are not represented. Not a substitute for design codes; defer to local codes and licensed engineers.\n")
	return nil
}

type locateFunc func(context.Context, *pb.LocatePhaseRequest) (*pb.LocatePhaseResponse, error)

// locateOne locates one state strictly: a bad state is an error.
func locateOne(ctx context.Context, a *app, locate locateFunc, substance string, t, p float64) (phaseResult, error) {
	resp, err := locate(ctx, &pb.LocatePhaseRequest{Substance: substance, TemperatureK: []float64{t}, PressurePa: []float64{p}, Strict: true})
	if err != nil {
		return phaseResult{}, a.rpcError(err)
	}
	r := phaseResult{
		Substance: substance, Temperature: t, Pressure: p,
		Phase:           phaseName(resp.Phase[0]),
		Form:            resp.FormNames[resp.FormIndex[0]],
		MarginT:         finite(resp.MarginTemperatureK[0]),
		MarginP:         finite(resp.MarginPressurePa[0]),
		NearestBoundary: resp.BoundaryNames[resp.NearestBoundaryIndex[0]],
		Catalog:         resp.CatalogVersion,
	}
	return r, nil
}

func phaseName(p pb.Phase) string {
	switch p {
	case pb.Phase_PHASE_SOLID:
		return "solid"
	case pb.Phase_PHASE_LIQUID:
		return "liquid"
	case pb.Phase_PHASE_VAPOR:
		return "vapor"
	case pb.Phase_PHASE_SUPERCRITICAL:
		return "supercritical"
	}
	return "unknown"
}
