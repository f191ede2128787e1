package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"
	gp "gonum.org/v1/plot"

	"github.com/phasebound/phasebound/clients/plot"
	"github.com/phasebound/phasebound/clients/units"
	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/thermo"
)

func init() { register(newPlotCmd) }

const plotLong = `Draw a substance as served (in-process on --catalog or the embedded default,
or by --server), to PNG or SVG by the --out extension. Kinds:

  phase-diagram  (default) log P against T: every curve and branch drawn and
                 labelled, the phase regions named (solid forms, liquid,
                 vapor, supercritical fluid), the triple and critical points
                 marked, and the --data points overlaid.
  latent-heat    the latent heat ΔH along every curve against T (Clapeyron
                 equation with the phase volumes; the ideal-gas estimate on
                 vapour curves without volumes is drawn dashed).
  residuals      the relative deviation of the --data points from the served
                 --curve (and --branch) against T.

--data is CSV with the columns temperature_k,pressure_pa (SI numbers only).
--tmin/--tmax/--pmin/--pmax bound the axes and take unit suffixes (250,
-20degC, 1e-3Pa, 200MPa); by default the axes span every curve, with at most
13 decades of pressure below the highest.

CAUTION: a picture of the catalog's correlations, with their stated validity
ranges and uncertainties; not a substitute for design codes.`

type plotFlags struct {
	substance, out, data, kind string
	curve, branch, title       string
	tmin, tmax, pmin, pmax     string
}

func newPlotCmd(a *app) *cobra.Command {
	var f plotFlags
	cmd := &cobra.Command{
		Use:   "plot --substance ID --out FILE.png|FILE.svg [--data IN.csv] [--kind phase-diagram|latent-heat|residuals]",
		Short: "Draw the phase diagram, latent heats or residuals of a substance",
		Long:  plotLong,
		Args:  cobra.NoArgs,
		RunE:  func(cmd *cobra.Command, _ []string) error { return a.runPlot(cmd, &f) },
	}
	fl := cmd.Flags()
	fl.StringVar(&f.substance, "substance", "", "substance id")
	fl.StringVar(&f.out, "out", "", "output image, .png or .svg")
	fl.StringVar(&f.data, "data", "", "measured points to overlay (CSV: temperature_k,pressure_pa)")
	fl.StringVar(&f.kind, "kind", "phase-diagram", "phase-diagram, latent-heat or residuals")
	fl.StringVar(&f.curve, "curve", "", "curve of the residuals (saturation, melting, sublimation, transition)")
	fl.StringVar(&f.branch, "branch", "", "branch of the residuals, when the curve has several")
	fl.StringVar(&f.title, "title", "", "title instead of the automatic one")
	fl.StringVar(&f.tmin, "tmin", "", "lowest temperature on the axis")
	fl.StringVar(&f.tmax, "tmax", "", "highest temperature on the axis")
	fl.StringVar(&f.pmin, "pmin", "", "lowest pressure on the axis (phase diagram)")
	fl.StringVar(&f.pmax, "pmax", "", "highest pressure on the axis (phase diagram)")
	return cmd
}

var plotKinds = []string{"phase-diagram", "latent-heat", "residuals"}

func (a *app) runPlot(cmd *cobra.Command, f *plotFlags) error {
	if f.substance == "" {
		return errors.New("plot: --substance is required")
	}
	if f.out == "" {
		return errors.New("plot: --out FILE.png or FILE.svg is required")
	}
	switch strings.ToLower(filepath.Ext(f.out)) {
	case ".png", ".svg":
	default:
		return fmt.Errorf("plot: --out %q must end in .png or .svg", f.out)
	}
	known := false
	for _, k := range plotKinds {
		known = known || f.kind == k
	}
	if !known {
		return fmt.Errorf("plot: --kind %q is not one of %s", f.kind, strings.Join(plotKinds, ", "))
	}
	var opt plot.Options
	opt.Title = f.title
	for _, lim := range []struct {
		flag, val string
		dst       *float64
		parse     func(string) (float64, error)
	}{
		{"tmin", f.tmin, &opt.Tmin, units.ParseTemperature},
		{"tmax", f.tmax, &opt.Tmax, units.ParseTemperature},
		{"pmin", f.pmin, &opt.Pmin, units.ParsePressure},
		{"pmax", f.pmax, &opt.Pmax, units.ParsePressure},
	} {
		if lim.val == "" {
			continue
		}
		v, err := lim.parse(lim.val)
		if err != nil {
			return fmt.Errorf("plot: --%s: %w", lim.flag, err)
		}
		*lim.dst = v
	}
	if opt.Tmin > 0 && opt.Tmax > 0 && opt.Tmin >= opt.Tmax {
		return fmt.Errorf("plot: --tmin %g K must be below --tmax %g K", opt.Tmin, opt.Tmax)
	}
	if opt.Pmin > 0 && opt.Pmax > 0 && opt.Pmin >= opt.Pmax {
		return fmt.Errorf("plot: --pmin %g Pa must be below --pmax %g Pa", opt.Pmin, opt.Pmax)
	}
	if f.data != "" {
		pts, _, err := readDataCSV(f.data)
		if err != nil {
			return fmt.Errorf("plot: %w", err)
		}
		for _, q := range pts {
			opt.Data = append(opt.Data, plot.Point{T: q.t, P: q.p})
		}
		opt.DataLabel = filepath.Base(f.data)
	}
	var kind phaseboundpb.CurveKind
	if f.kind == "residuals" {
		if f.data == "" || f.curve == "" {
			return errors.New("plot: --kind residuals needs --data and --curve (and --branch when the curve has several)")
		}
		k, err := thermo.ParseCurveKind(f.curve)
		if err != nil {
			return fmt.Errorf("plot: --curve: %w", err)
		}
		kind = phaseboundpb.CurveKind(k) // the enums share their numbers
	}

	ctx := cmd.Context()
	client, done, err := a.connect(ctx)
	if err != nil {
		return fmt.Errorf("plot: %w", err)
	}
	defer done()
	var p *gp.Plot
	switch f.kind {
	case "phase-diagram":
		p, err = plot.PhaseDiagram(ctx, client, f.substance, opt)
	case "latent-heat":
		p, err = plot.LatentHeat(ctx, client, f.substance, opt)
	case "residuals":
		var res []plot.Residual
		res, err = plot.ResidualsAgainst(ctx, client, f.substance, kind, f.branch, opt.Data)
		if err == nil {
			title := f.title
			if title == "" {
				title = fmt.Sprintf("%s %s against %s", f.substance, curveLabel(thermo.CurveKind(kind), f.branch), opt.DataLabel)
			}
			p, err = plot.Residuals(res, title)
		}
	}
	if err != nil {
		return fmt.Errorf("plot: %w", a.rpcError(err))
	}
	if err := plot.Save(p, f.out); err != nil {
		return err
	}
	if a.jsonOut {
		return json.NewEncoder(a.stdout).Encode(map[string]any{"substance": f.substance, "kind": f.kind, "out": f.out})
	}
	fmt.Fprintf(a.stdout, "wrote %s\n", f.out)
	return nil
}
