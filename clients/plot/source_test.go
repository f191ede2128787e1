package plot

import (
	"context"
	"fmt"
	"math"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
)

// fakeSource serves an invented two-solid substance from closed forms, so
// the drawing can be tested without a server (invented data):
// Clausius–Clapeyron vapour curves through the triple point (200 K,
// 1 kPa) with ΔH_vap = 20 kJ/mol and ΔH_sub = 26 kJ/mol, the critical
// point at 400 K, and a two-branch Simon–Glatzel melting curve (solid
// alpha to 250 K, solid beta above).
type fakeSource struct{}

const (
	fkTt, fkPt       = 200.0, 1000.0
	fkHvap, fkHsub   = 20000.0, 26000.0
	fkTc             = 400.0
	fkTab            = 250.0 // alpha–beta–liquid triple point
	fkDvMelt         = 1e-5  // m³/mol
	fkMolarMass      = 0.05
	fkRgas           = 8.314462618
	fkSubTmin        = 120.0
	fkMeltBetaTmax   = 420.0
	fkAlphaA, fkAlpC = 3e8, 2.0
	fkBetaA, fkBetaC = 5e8, 3.0
)

func fkCC(t, h float64) (p, s float64) {
	p = fkPt * math.Exp(-h/fkRgas*(1/t-1/fkTt))
	return p, p * h / (fkRgas * t * t)
}

func fkPab() float64 { return fkPt + fkAlphaA*(math.Pow(fkTab/fkTt, fkAlpC)-1) }

func fkMelt(branch string, t float64) (p, s float64) {
	if branch == "alpha" {
		return fkPt + fkAlphaA*(math.Pow(t/fkTt, fkAlpC)-1), fkAlphaA * fkAlpC / fkTt * math.Pow(t/fkTt, fkAlpC-1)
	}
	return fkPab() + fkBetaA*(math.Pow(t/fkTab, fkBetaC)-1), fkBetaA * fkBetaC / fkTab * math.Pow(t/fkTab, fkBetaC-1)
}

type fkBranch struct {
	kind       phaseboundpb.CurveKind
	name       string
	tmin, tmax float64
}

var fkBranches = []fkBranch{
	{phaseboundpb.CurveKind_CURVE_KIND_SATURATION, "", fkTt, fkTc},
	{phaseboundpb.CurveKind_CURVE_KIND_SUBLIMATION, "", fkSubTmin, fkTt},
	{phaseboundpb.CurveKind_CURVE_KIND_MELTING, "alpha", fkTt, fkTab},
	{phaseboundpb.CurveKind_CURVE_KIND_MELTING, "beta", fkTab, fkMeltBetaTmax},
}

func (b fkBranch) eval(t float64) (p, s float64) {
	switch b.kind {
	case phaseboundpb.CurveKind_CURVE_KIND_SATURATION:
		return fkCC(t, fkHvap)
	case phaseboundpb.CurveKind_CURVE_KIND_SUBLIMATION:
		return fkCC(t, fkHsub)
	}
	return fkMelt(b.name, t)
}

func (fakeSource) DescribeSubstance(_ context.Context, id string) (*phaseboundpb.DescribeSubstanceResponse, error) {
	if id != "fakium" {
		return nil, fmt.Errorf("unknown substance %q (valid: fakium)", id)
	}
	s := &phaseboundpb.Substance{
		Id: "fakium", Name: "Fakium", MolarMassKgPerMol: fkMolarMass,
		CriticalPoint: &phaseboundpb.StatePoint{TemperatureK: fkTc, PressurePa: must(fkCC(fkTc, fkHvap))},
		TriplePoints: []*phaseboundpb.TriplePoint{
			{Phases: []string{"alpha", "liquid", "vapor"}, TemperatureK: fkTt, PressurePa: fkPt},
			{Phases: []string{"alpha", "beta", "liquid"}, TemperatureK: fkTab, PressurePa: fkPab()},
		},
		Provenance: &phaseboundpb.Provenance{Kind: phaseboundpb.ProvenanceKind_PROVENANCE_KIND_INVENTED},
	}
	for _, b := range fkBranches {
		var c *phaseboundpb.Curve
		for _, x := range s.Curves {
			if x.Kind == b.kind {
				c = x
			}
		}
		if c == nil {
			c = &phaseboundpb.Curve{Kind: b.kind}
			s.Curves = append(s.Curves, c)
		}
		p0, _ := b.eval(b.tmin)
		p1, _ := b.eval(b.tmax)
		c.Branches = append(c.Branches, &phaseboundpb.Branch{Name: b.name, SolidForm: b.name,
			Validity: &phaseboundpb.ValidityRange{MinTemperatureK: b.tmin, MaxTemperatureK: b.tmax,
				MinPressurePa: math.Min(p0, p1), MaxPressurePa: math.Max(p0, p1)}})
	}
	return &phaseboundpb.DescribeSubstanceResponse{Substance: s}, nil
}

func must(p, _ float64) float64 { return p }

func (fakeSource) Evaluate(_ context.Context, req *phaseboundpb.EvaluateRequest) (*phaseboundpb.EvaluateResponse, error) {
	var br *fkBranch
	for i, b := range fkBranches {
		if b.kind == req.Curve && (b.name == req.Branch || req.Branch == "" && b.kind != phaseboundpb.CurveKind_CURVE_KIND_MELTING) {
			br = &fkBranches[i]
		}
	}
	if br == nil {
		return nil, fmt.Errorf("no branch %v/%q", req.Curve, req.Branch)
	}
	n := len(req.Values)
	r := &phaseboundpb.EvaluateResponse{
		TemperatureK: make([]float64, n), PressurePa: make([]float64, n), DpdtPaPerK: make([]float64, n),
		Status: make([]phaseboundpb.PointStatus, n), BranchIndex: make([]uint32, n), BranchNames: []string{br.name},
	}
	if req.IncludeLatentHeat {
		r.LatentHeatJPerMol = make([]float64, n)
		r.LatentHeatJPerKg = make([]float64, n)
		r.LatentHeatSource = make([]phaseboundpb.LatentHeatSource, n)
	}
	for i, v := range req.Values {
		t := v
		if req.Given == phaseboundpb.Variable_VARIABLE_PRESSURE {
			lo, hi := br.tmin, br.tmax
			plo, _ := br.eval(lo)
			for k := 0; k < 200; k++ {
				mid := 0.5 * (lo + hi)
				pm, _ := br.eval(mid)
				if (pm < v) == (plo < v) {
					lo, plo = mid, pm
				} else {
					hi = mid
				}
			}
			t = 0.5 * (lo + hi)
		}
		if !(t >= br.tmin && t <= br.tmax) {
			r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE
			r.TemperatureK[i], r.PressurePa[i], r.DpdtPaPerK[i] = math.NaN(), math.NaN(), math.NaN()
			r.Errors = append(r.Errors, &phaseboundpb.PointError{Index: uint32(i), Status: r.Status[i],
				Message: fmt.Sprintf("temperature %g K outside [%g, %g] K", t, br.tmin, br.tmax)})
			continue
		}
		p, s := br.eval(t)
		r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OK
		r.TemperatureK[i], r.PressurePa[i], r.DpdtPaPerK[i] = t, p, s
		if req.IncludeLatentHeat {
			var h float64
			if br.kind == phaseboundpb.CurveKind_CURVE_KIND_MELTING {
				h = t * fkDvMelt * s
				r.LatentHeatSource[i] = phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_CLAPEYRON
			} else {
				h = fkRgas * t * t * s / p
				r.LatentHeatSource[i] = phaseboundpb.LatentHeatSource_LATENT_HEAT_SOURCE_IDEAL_GAS_ESTIMATE
			}
			r.LatentHeatJPerMol[i], r.LatentHeatJPerKg[i] = h, h/fkMolarMass
		}
	}
	if len(r.Errors) == 0 && n > 0 {
		// Every point OK on the one branch: the compact form, as the
		// server sends it.
		r.Status, r.BranchIndex = nil, nil
	}
	return r, nil
}

func (fakeSource) LocatePhase(_ context.Context, req *phaseboundpb.LocatePhaseRequest) (*phaseboundpb.LocatePhaseResponse, error) {
	n := len(req.TemperatureK)
	r := &phaseboundpb.LocatePhaseResponse{Phase: make([]phaseboundpb.Phase, n), FormIndex: make([]uint32, n),
		FormNames: []string{"", "alpha", "beta"}, Status: make([]phaseboundpb.PointStatus, n)}
	pc, _ := fkCC(fkTc, fkHvap)
	for i := range r.Phase {
		t, p := req.TemperatureK[i], req.PressurePa[i]
		r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OK
		solid := func() {
			r.Phase[i] = phaseboundpb.Phase_PHASE_SOLID
			r.FormIndex[i] = 1
			if t > fkTab {
				r.FormIndex[i] = 2
			}
		}
		switch {
		case t <= fkTt:
			if ps, _ := fkCC(t, fkHsub); p > ps {
				solid()
			} else {
				r.Phase[i] = phaseboundpb.Phase_PHASE_VAPOR
			}
		case t <= fkMeltBetaTmax && p > meltAt(t):
			solid()
		case t < fkTc:
			if ps, _ := fkCC(t, fkHvap); p > ps {
				r.Phase[i] = phaseboundpb.Phase_PHASE_LIQUID
			} else {
				r.Phase[i] = phaseboundpb.Phase_PHASE_VAPOR
			}
		case p > pc:
			r.Phase[i] = phaseboundpb.Phase_PHASE_SUPERCRITICAL
		default:
			r.Phase[i] = phaseboundpb.Phase_PHASE_VAPOR
		}
	}
	return r, nil
}

func meltAt(t float64) float64 {
	if t <= fkTab {
		p, _ := fkMelt("alpha", t)
		return p
	}
	p, _ := fkMelt("beta", t)
	return p
}
