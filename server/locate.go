package server

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"

	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
	"github.com/phasebound/phasebound/thermo"
)

// phaseLocator answers LocatePhase for one substance from its compiled
// curves; err says why a substance has no phase diagram.
type phaseLocator struct {
	diagram *thermo.PhaseDiagram
	names   []string // boundary names
	forms   []string // solid forms of the branches, "" first
	formIx  map[string]uint32
	err     error
}

// newPhaseLocator builds the phase diagram of sub from its table-backed
// curves. A substance whose curves cannot make a diagram still loads; its
// LocatePhase calls fail with the reason.
func newPhaseLocator(sub *substance) (*phaseLocator, error) {
	spec := thermo.PhaseDiagramSpec{}
	for _, cv := range sub.curves {
		switch cv.kind {
		case thermo.Saturation:
			spec.Saturation = cv.thermo
		case thermo.Melting:
			spec.Melting = cv.thermo
		case thermo.Sublimation:
			spec.Sublimation = cv.thermo
		case thermo.Transition:
			spec.Transitions = append(spec.Transitions, cv.thermo)
		}
	}
	for _, tp := range sub.cat.Triple {
		spec.Triple = append(spec.Triple, thermo.TriplePoint{
			Phases: tp.Phases, StatePoint: thermo.StatePoint{Temperature: tp.Temperature, Pressure: tp.Pressure},
		})
	}
	if c := sub.cat.Critical; c != nil {
		spec.Critical = &thermo.StatePoint{Temperature: c.Temperature, Pressure: c.Pressure}
	}
	loc := &phaseLocator{forms: []string{""}, formIx: map[string]uint32{"": 0}}
	d, err := thermo.NewPhaseDiagram(spec)
	if err != nil {
		loc.err = err
		return loc, nil
	}
	loc.diagram = d
	loc.names = d.BoundaryNames()
	for _, cv := range sub.curves {
		for _, b := range cv.branch {
			if f := b.cat.SolidForm; f != "" {
				if _, ok := loc.formIx[f]; !ok {
					loc.formIx[f] = uint32(len(loc.forms))
					loc.forms = append(loc.forms, f)
				}
			}
		}
	}
	return loc, nil
}

// LocatePhase implements phasebound.v1.BoundaryService: the phase of each
// (T, P) state, its solid form when known, and its margins to the nearest
// boundary at fixed P (in K) and at fixed T (in Pa).
func (s *Server) LocatePhase(ctx context.Context, req *phaseboundpb.LocatePhaseRequest) (*phaseboundpb.LocatePhaseResponse, error) {
	snap := s.snap.Load()
	sub, err := snap.substance(req.GetSubstance())
	if err != nil {
		return nil, err
	}
	ts, ps := req.GetTemperatureK(), req.GetPressurePa()
	if len(ts) != len(ps) {
		return nil, invalidField("pressure_pa", "%d temperatures but %d pressures: give one pressure per temperature", len(ts), len(ps))
	}
	n := len(ts)
	if n > s.opts.MaxPointsPerRequest {
		return nil, tooManyPoints(n, s.opts.MaxPointsPerRequest)
	}
	loc := sub.phases
	if loc.diagram == nil {
		return nil, status.Errorf(codes.FailedPrecondition, "substance %q has no phase diagram: %v", sub.cat.ID, loc.err)
	}
	r := &phaseboundpb.LocatePhaseResponse{
		Phase:                make([]phaseboundpb.Phase, n),
		FormIndex:            make([]uint32, n),
		FormNames:            loc.forms,
		MarginTemperatureK:   make([]float64, n),
		MarginPressurePa:     make([]float64, n),
		NearestBoundaryIndex: make([]uint32, n),
		BoundaryNames:        loc.names,
		Status:               make([]phaseboundpb.PointStatus, n),
		CatalogVersion:       snap.version,
	}
	none := uint32(len(loc.names)) // index of "" when a point has no nearest boundary
	noneUsed := false
	var vs []violation
	code := codes.OutOfRange
	for i := range ts {
		if i&0xffff == 0xffff && ctx.Err() != nil {
			return nil, ctx.Err()
		}
		st, err := loc.diagram.Locate(ts[i], ps[i])
		if err != nil {
			pst := phaseboundpb.PointStatus_POINT_STATUS_INVALID
			var ie *thermo.InputError
			switch {
			case errors.As(err, &ie):
			case errors.Is(err, thermo.ErrOutsideCoverage):
				pst = phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE
			}
			if pst != phaseboundpb.PointStatus_POINT_STATUS_OUT_OF_RANGE {
				code = codes.InvalidArgument
			}
			msg := strings.TrimPrefix(err.Error(), "thermo: ")
			r.Status[i] = pst
			r.MarginTemperatureK[i], r.MarginPressurePa[i] = math.NaN(), math.NaN()
			r.NearestBoundaryIndex[i] = none
			noneUsed = true
			r.Errors = append(r.Errors, &phaseboundpb.PointError{Index: uint32(i), Status: pst, Message: msg})
			if req.GetStrict() && len(vs) < maxViolations {
				vs = append(vs, violation{fmt.Sprintf("temperature_k[%d]", i), fmt.Sprintf("state (%g K, %g Pa): %s", ts[i], ps[i], msg)})
			}
			continue
		}
		r.Status[i] = phaseboundpb.PointStatus_POINT_STATUS_OK
		r.Phase[i] = phaseboundpb.Phase(st.Phase)
		r.FormIndex[i] = loc.formIx[st.Form]
		r.MarginTemperatureK[i], r.MarginPressurePa[i] = st.MarginT, st.MarginP
		if st.Nearest >= 0 {
			r.NearestBoundaryIndex[i] = uint32(st.Nearest)
		} else {
			r.NearestBoundaryIndex[i] = none
			noneUsed = true
		}
	}
	if req.GetStrict() && len(r.Errors) > 0 {
		return nil, badRequestN(code, len(r.Errors), vs)
	}
	if noneUsed {
		r.BoundaryNames = append(append([]string(nil), loc.names...), "")
	}
	return r, nil
}
