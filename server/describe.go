package server

import (
	"context"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/thermo"
)

// ListSubstances implements phasebound.v1.BoundaryService.
func (s *Server) ListSubstances(ctx context.Context, _ *phaseboundpb.ListSubstancesRequest) (*phaseboundpb.ListSubstancesResponse, error) {
	return s.snap.Load().list, nil
}

// DescribeSubstance implements phasebound.v1.BoundaryService.
func (s *Server) DescribeSubstance(ctx context.Context, req *phaseboundpb.DescribeSubstanceRequest) (*phaseboundpb.DescribeSubstanceResponse, error) {
	snap := s.snap.Load()
	sub, err := snap.substance(req.GetSubstance())
	if err != nil {
		return nil, err
	}
	return &phaseboundpb.DescribeSubstanceResponse{Substance: sub.pb, CatalogVersion: snap.version}, nil
}

// ExportTables implements phasebound.v1.BoundaryService.
func (s *Server) ExportTables(ctx context.Context, req *phaseboundpb.ExportTablesRequest) (*phaseboundpb.ExportTablesResponse, error) {
	snap := s.snap.Load()
	sub, err := snap.substance(req.GetSubstance())
	if err != nil {
		return nil, err
	}
	return sub.export, nil
}

// Echo implements phasebound.v1.BoundaryService: it returns copies of the
// payload and does no other work.
func (s *Server) Echo(ctx context.Context, req *phaseboundpb.EchoRequest) (*phaseboundpb.EchoResponse, error) {
	copies := int(req.GetCopies())
	if copies == 0 {
		copies = 1
	}
	n := len(req.GetValues())
	if n*copies > s.opts.MaxPointsPerRequest*8 {
		return nil, tooManyPoints(n*copies, s.opts.MaxPointsPerRequest*8)
	}
	out := make([]float64, n*copies)
	for i := 0; i < copies; i++ {
		copy(out[i*n:], req.GetValues())
	}
	return &phaseboundpb.EchoResponse{Values: out}, nil
}

// KindProto converts a curve kind to its proto enum.
func KindProto(k thermo.CurveKind) phaseboundpb.CurveKind {
	switch k {
	case thermo.Saturation:
		return phaseboundpb.CurveKind_CURVE_KIND_SATURATION
	case thermo.Melting:
		return phaseboundpb.CurveKind_CURVE_KIND_MELTING
	case thermo.Sublimation:
		return phaseboundpb.CurveKind_CURVE_KIND_SUBLIMATION
	case thermo.Transition:
		return phaseboundpb.CurveKind_CURVE_KIND_TRANSITION
	}
	return phaseboundpb.CurveKind_CURVE_KIND_UNSPECIFIED
}

// KindFromProto converts a proto curve kind; ok is false for
// CURVE_KIND_UNSPECIFIED and unknown values.
func KindFromProto(k phaseboundpb.CurveKind) (thermo.CurveKind, bool) {
	switch k {
	case phaseboundpb.CurveKind_CURVE_KIND_SATURATION:
		return thermo.Saturation, true
	case phaseboundpb.CurveKind_CURVE_KIND_MELTING:
		return thermo.Melting, true
	case phaseboundpb.CurveKind_CURVE_KIND_SUBLIMATION:
		return thermo.Sublimation, true
	case phaseboundpb.CurveKind_CURVE_KIND_TRANSITION:
		return thermo.Transition, true
	}
	return 0, false
}

func provenanceProto(p catalog.Provenance) *phaseboundpb.Provenance {
	k := phaseboundpb.ProvenanceKind_PROVENANCE_KIND_UNSPECIFIED
	switch p.Kind {
	case "published":
		k = phaseboundpb.ProvenanceKind_PROVENANCE_KIND_PUBLISHED
	case "fit":
		k = phaseboundpb.ProvenanceKind_PROVENANCE_KIND_FIT
	case "invented":
		k = phaseboundpb.ProvenanceKind_PROVENANCE_KIND_INVENTED
	}
	return &phaseboundpb.Provenance{Kind: k, Citation: p.Citation, DataFile: p.DataFile, DataSha256: p.DataSHA256, Note: p.Note}
}

func validityProto(r thermo.Range) *phaseboundpb.ValidityRange {
	return &phaseboundpb.ValidityRange{
		MinTemperatureK: r.Tmin, MaxTemperatureK: r.Tmax,
		MinPressurePa: r.Pmin, MaxPressurePa: r.Pmax,
	}
}

func substanceProto(sub *substance) *phaseboundpb.Substance {
	cs := sub.cat
	ps := &phaseboundpb.Substance{
		Id: cs.ID, Name: cs.Name, MolarMassKgPerMol: cs.MolarMass,
		Provenance: provenanceProto(cs.Provenance),
	}
	if cs.Critical != nil {
		ps.CriticalPoint = &phaseboundpb.StatePoint{TemperatureK: cs.Critical.Temperature, PressurePa: cs.Critical.Pressure}
	}
	for _, tp := range cs.Triple {
		ps.TriplePoints = append(ps.TriplePoints, &phaseboundpb.TriplePoint{
			Phases: append([]string(nil), tp.Phases...), TemperatureK: tp.Temperature, PressurePa: tp.Pressure,
		})
	}
	for _, cv := range sub.curves {
		pc := &phaseboundpb.Curve{Kind: KindProto(cv.kind)}
		for _, b := range cv.branch {
			pc.Branches = append(pc.Branches, &phaseboundpb.Branch{
				Name:             b.name,
				Family:           b.cat.Family,
				Backend:          b.backend,
				Validity:         validityProto(b.rng),
				Provenance:       provenanceProto(b.cat.Provenance),
				Uncertainty:      b.cat.Uncertainty,
				HasVolumes:       b.hasVolumes(),
				TableMaxRelError: b.maxErr,
				SolidForm:        b.cat.SolidForm,
			})
		}
		ps.Curves = append(ps.Curves, pc)
	}
	return ps
}

func tableProto(t *thermo.Table) *phaseboundpb.ChebyshevTable {
	if t == nil {
		return nil
	}
	d := t.Data()
	return &phaseboundpb.ChebyshevTable{
		XTransform:   phaseboundpb.Transform(d.XTransform),
		YTransform:   phaseboundpb.Transform(d.YTransform),
		Breaks:       d.Breaks,
		Offsets:      d.Offsets,
		Coefficients: d.Coeffs,
		XMin:         d.XMin,
		XMax:         d.XMax,
		MaxRelError:  d.MaxRelError,
		XReference:   d.XReference,
	}
}

func exportProto(sub *substance, version string) *phaseboundpb.ExportTablesResponse {
	r := &phaseboundpb.ExportTablesResponse{CatalogVersion: version, MolarMassKgPerMol: sub.cat.MolarMass}
	for _, cv := range sub.curves {
		for _, b := range cv.branch {
			r.Tables = append(r.Tables, &phaseboundpb.BranchTables{
				Curve:            KindProto(cv.kind),
				Branch:           b.name,
				Validity:         validityProto(b.rng),
				Pressure:         tableProto(b.pOfT),
				Temperature:      tableProto(b.tOfP),
				VolumeLowTPhase:  tableProto(b.vLow),
				VolumeHighTPhase: tableProto(b.vHigh),
			})
		}
	}
	return r
}
