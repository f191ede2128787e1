package main

import (
	"context"
	"fmt"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	pb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server"
)

func init() { register(newSubstancesCmd) }

// JSON forms of the catalog listing.
type (
	provenanceJSON struct {
		Kind       string `json:"kind"`
		Citation   string `json:"citation,omitempty"`
		DataFile   string `json:"data_file,omitempty"`
		DataSHA256 string `json:"data_sha256,omitempty"`
		Note       string `json:"note,omitempty"`
	}
	pointJSON struct {
		Temperature float64 `json:"temperature_k"`
		Pressure    float64 `json:"pressure_pa"`
	}
	tripleJSON struct {
		Phases      []string `json:"phases"`
		Temperature float64  `json:"temperature_k"`
		Pressure    float64  `json:"pressure_pa"`
	}
	branchJSON struct {
		Name        string         `json:"name"`
		Family      string         `json:"family"`
		Backend     string         `json:"backend"`
		SolidForm   string         `json:"solid_form,omitempty"`
		Tmin        float64        `json:"t_min_k"`
		Tmax        float64        `json:"t_max_k"`
		Pmin        float64        `json:"p_min_pa"`
		Pmax        float64        `json:"p_max_pa"`
		Uncertainty string         `json:"uncertainty"`
		HasVolumes  bool           `json:"has_volumes"`
		TableError  float64        `json:"table_max_rel_error"`
		Provenance  provenanceJSON `json:"provenance"`
	}
	curveJSON struct {
		Kind     string       `json:"kind"`
		Branches []branchJSON `json:"branches"`
	}
	substanceJSON struct {
		ID         string         `json:"id"`
		Name       string         `json:"name"`
		MolarMass  float64        `json:"molar_mass_kg_per_mol"`
		Critical   *pointJSON     `json:"critical_point,omitempty"`
		Triple     []tripleJSON   `json:"triple_points"`
		Provenance provenanceJSON `json:"provenance"`
		Curves     []curveJSON    `json:"curves"`
	}
	substancesJSON struct {
		CatalogVersion string          `json:"catalog_version"`
		Substances     []substanceJSON `json:"substances"`
	}
)

func provenanceKindName(k pb.ProvenanceKind) string {
	switch k {
	case pb.ProvenanceKind_PROVENANCE_KIND_PUBLISHED:
		return "published"
	case pb.ProvenanceKind_PROVENANCE_KIND_FIT:
		return "fit"
	case pb.ProvenanceKind_PROVENANCE_KIND_INVENTED:
		return "invented"
	}
	return "unspecified"
}

func provJSON(p *pb.Provenance) provenanceJSON {
	return provenanceJSON{Kind: provenanceKindName(p.GetKind()), Citation: p.GetCitation(), DataFile: p.GetDataFile(), DataSHA256: p.GetDataSha256(), Note: p.GetNote()}
}

func kindName(k pb.CurveKind) string {
	kind, ok := server.KindFromProto(k)
	if !ok {
		return "unspecified"
	}
	return kind.String()
}

func substanceToJSON(s *pb.Substance) substanceJSON {
	o := substanceJSON{ID: s.Id, Name: s.Name, MolarMass: s.MolarMassKgPerMol, Provenance: provJSON(s.Provenance), Triple: []tripleJSON{}}
	if c := s.CriticalPoint; c != nil {
		o.Critical = &pointJSON{c.TemperatureK, c.PressurePa}
	}
	for _, tp := range s.TriplePoints {
		o.Triple = append(o.Triple, tripleJSON{tp.Phases, tp.TemperatureK, tp.PressurePa})
	}
	for _, cv := range s.Curves {
		cj := curveJSON{Kind: kindName(cv.Kind)}
		for _, b := range cv.Branches {
			v := b.GetValidity()
			cj.Branches = append(cj.Branches, branchJSON{
				Name: b.Name, Family: b.Family, Backend: b.Backend, SolidForm: b.SolidForm,
				Tmin: v.GetMinTemperatureK(), Tmax: v.GetMaxTemperatureK(), Pmin: v.GetMinPressurePa(), Pmax: v.GetMaxPressurePa(),
				Uncertainty: b.Uncertainty, HasVolumes: b.HasVolumes, TableError: b.TableMaxRelError, Provenance: provJSON(b.Provenance),
			})
		}
		o.Curves = append(o.Curves, cj)
	}
	return o
}

func newSubstancesCmd(a *app) *cobra.Command {
	var only string
	cmd := &cobra.Command{
		Use:   "substances [--substance ID]",
		Short: "List the substances, their curves, branches, validity ranges, uncertainty and provenance",
		Long: `substances lists every substance of the catalog (--catalog, the embedded
default, or the one --server serves): molar mass, critical and triple
points, and for each curve its branches with the correlation family, the
validity range in temperature and pressure, the stated uncertainty, whether
phase volumes (hence Clapeyron latent heats) are known, the measured error
of the compiled tables, and the provenance (published source, fit to a data
file, or invented demonstration data).

CAUTION: outside its validity range a correlation has no stated accuracy;
invented data is for demonstration only. Not a substitute for design codes;
defer to local codes and licensed engineers.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return a.substances(cmd.Context(), only)
		},
	}
	cmd.Flags().StringVar(&only, "substance", "", "list only this substance")
	return cmd
}

func (a *app) substances(ctx context.Context, only string) error {
	c, done, err := a.connect(ctx)
	if err != nil {
		return err
	}
	defer done()
	var subs []*pb.Substance
	var version string
	if only != "" {
		d, err := c.DescribeSubstance(ctx, only)
		if err != nil {
			return a.rpcError(err)
		}
		subs, version = []*pb.Substance{d.Substance}, d.CatalogVersion
	} else {
		l, err := c.ListSubstances(ctx)
		if err != nil {
			return a.rpcError(err)
		}
		subs, version = l.Substances, l.CatalogVersion
	}
	if a.jsonOut {
		out := substancesJSON{CatalogVersion: version, Substances: []substanceJSON{}}
		for _, s := range subs {
			out.Substances = append(out.Substances, substanceToJSON(s))
		}
		return writeJSON(a.stdout, out)
	}
	w := a.stdout
	for i, s := range subs {
		if i > 0 {
			fmt.Fprintln(w)
		}
		fmt.Fprintf(w, "%s — %s\n", s.Id, s.Name)
		fmt.Fprintf(w, "  molar mass %g kg/mol", s.MolarMassKgPerMol)
		if c := s.CriticalPoint; c != nil {
			fmt.Fprintf(w, "; critical point %g K, %s", c.TemperatureK, humanPressure(c.PressurePa))
		}
		fmt.Fprintln(w)
		for _, tp := range s.TriplePoints {
			fmt.Fprintf(w, "  triple point %s: %g K, %s\n", strings.Join(tp.Phases, "/"), tp.TemperatureK, humanPressure(tp.PressurePa))
		}
		fmt.Fprintf(w, "  provenance: %s\n", describeProvenance(s.Provenance))
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  CURVE\tBRANCH\tFAMILY\tT RANGE (K)\tP RANGE\tVOLUMES\tTABLE ERR\tUNCERTAINTY")
		for _, cv := range s.Curves {
			for _, b := range cv.Branches {
				v := b.GetValidity()
				name := b.Name
				if name == "" {
					name = "-"
				}
				vol := "no"
				if b.HasVolumes {
					vol = "yes"
				}
				fmt.Fprintf(tw, "  %s\t%s\t%s\t%g – %g\t%s – %s\t%s\t%.1e\t%s\n", kindName(cv.Kind), name, b.Family,
					v.GetMinTemperatureK(), v.GetMaxTemperatureK(), humanPressure(v.GetMinPressurePa()), humanPressure(v.GetMaxPressurePa()),
					vol, b.TableMaxRelError, b.Uncertainty)
			}
		}
		tw.Flush()
		for _, cv := range s.Curves {
			for _, b := range cv.Branches {
				label := kindName(cv.Kind)
				if b.Name != "" {
					label += "/" + b.Name
				}
				fmt.Fprintf(w, "  source of %s: %s\n", label, describeProvenance(b.Provenance))
			}
		}
	}
	fmt.Fprintf(w, "\nCatalog version %s. Correlations are valid only within the ranges shown; invented data is for\ndemonstration only. Not a substitute for design codes; defer to local codes and licensed engineers.\n", version)
	return nil
}

func describeProvenance(p *pb.Provenance) string {
	parts := []string{provenanceKindName(p.GetKind())}
	if p.GetCitation() != "" {
		parts = append(parts, p.GetCitation())
	}
	if p.GetDataFile() != "" {
		parts = append(parts, "data "+p.GetDataFile())
	}
	if p.GetNote() != "" {
		parts = append(parts, p.GetNote())
	}
	if p.GetKind() == pb.ProvenanceKind_PROVENANCE_KIND_INVENTED {
		parts[0] = "INVENTED (demonstration only, never for design)"
	}
	return strings.Join(parts, "; ")
}
