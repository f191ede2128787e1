package sdk

import (
	"context"
	"errors"
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"github.com/hashicorp/go-hclog"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	"github.com/phasebound/phasebound/plugins/sdk/internal/fromproto"
	"github.com/phasebound/phasebound/plugins/sdk/internal/pluginpb"
	"github.com/phasebound/phasebound/thermo"
)

// maxCachedCorrelations bounds the backend's cache of built correlations; a
// catalog has a few hundred branches at most, so the bound only matters
// against a host that sends endless distinct parameter sets.
const maxCachedCorrelations = 4096

// ctxCheckEvery is how many points a batch evaluates between checks of the
// call's context, so a cancelled call stops working promptly.
const ctxCheckEvery = 1 << 16

// backendServer implements the plugin protocol's BackendService over a
// Backend's families.
type backendServer struct {
	pluginpb.UnimplementedBackendServiceServer
	b       Backend
	curves  map[string]thermo.Family
	volumes map[string]thermo.VolumeFamily
	log     hclog.Logger

	mu    sync.Mutex
	cache map[string]any // thermo.Correlation or thermo.VolumeCorrelation by buildKey
}

func newBackendServer(b Backend, log hclog.Logger) *backendServer {
	s := &backendServer{
		b:       b,
		curves:  make(map[string]thermo.Family, len(b.Families)),
		volumes: make(map[string]thermo.VolumeFamily, len(b.Volumes)),
		log:     log,
		cache:   map[string]any{},
	}
	for _, f := range b.Families {
		s.curves[f.Name()] = f
	}
	for _, f := range b.Volumes {
		s.volumes[f.Name()] = f
	}
	return s
}

// Describe implements BackendService.Describe.
func (s *backendServer) Describe(context.Context, *pluginpb.DescribeRequest) (*pluginpb.DescribeResponse, error) {
	resp := &pluginpb.DescribeResponse{Backend: s.b.Name, Version: s.b.Version}
	for n := range s.curves {
		resp.CurveFamilies = append(resp.CurveFamilies, n)
	}
	for n := range s.volumes {
		resp.VolumeFamilies = append(resp.VolumeFamilies, n)
	}
	sort.Strings(resp.CurveFamilies)
	sort.Strings(resp.VolumeFamilies)
	return resp, nil
}

// Evaluate implements BackendService.Evaluate. Per-point problems become
// PointFailures; a correlation that cannot be built becomes setup_error; a
// gRPC error is returned only for a cancelled call or a broken request.
func (s *backendServer) Evaluate(ctx context.Context, req *pluginpb.EvaluateRequest) (resp *pluginpb.EvaluateResponse, err error) {
	defer func() {
		// A family that panics must not take the backend process down with
		// every other caller's work: report it as this call's failure.
		if r := recover(); r != nil {
			s.log.Error("family panicked", "family", req.GetFamily(), "panic", fmt.Sprint(r))
			resp, err = nil, status.Errorf(codes.Internal, "backend %q: family %q panicked: %v", s.b.Name, req.GetFamily(), r)
		}
	}()
	n := len(req.GetValues())
	switch req.GetOperation() {
	case pluginpb.Operation_OPERATION_PRESSURE, pluginpb.Operation_OPERATION_TEMPERATURE:
		c, setupErr := s.curve(req)
		if setupErr != "" {
			return &pluginpb.EvaluateResponse{SetupError: setupErr}, nil
		}
		resp = newResponse(n)
		if req.GetOperation() == pluginpb.Operation_OPERATION_PRESSURE {
			err = evalPressure(ctx, c, req, resp)
		} else {
			err = evalTemperature(ctx, c, req, resp)
		}
	case pluginpb.Operation_OPERATION_VOLUME:
		if p := req.GetPressures(); len(p) != 0 && len(p) != n {
			return &pluginpb.EvaluateResponse{SetupError: fmt.Sprintf(
				"%d pressures given for %d temperatures; give one per temperature or none", len(p), n)}, nil
		}
		v, setupErr := s.volume(req)
		if setupErr != "" {
			return &pluginpb.EvaluateResponse{SetupError: setupErr}, nil
		}
		resp = newResponse(n)
		err = evalVolume(ctx, v, req, resp)
	default:
		return nil, status.Errorf(codes.InvalidArgument, "unknown operation %v (valid: pressure, temperature, volume)", req.GetOperation())
	}
	if err != nil {
		return nil, status.FromContextError(err).Err()
	}
	return resp, nil
}

func newResponse(n int) *pluginpb.EvaluateResponse {
	return &pluginpb.EvaluateResponse{Results: make([]float64, n), Derivatives: make([]float64, n)}
}

// curve returns the correlation the request names, built once per
// (family, parameters, range) and cached; or a setup error message.
func (s *backendServer) curve(req *pluginpb.EvaluateRequest) (thermo.Correlation, string) {
	key := buildKey('c', req)
	if c, ok := s.cached(key); ok {
		return c.(thermo.Correlation), ""
	}
	f, ok := s.curves[req.GetFamily()]
	if !ok {
		return nil, s.unknownFamily(req.GetFamily(), "curve", slices.Sorted(maps.Keys(s.curves)))
	}
	c, err := f.New(fromproto.Params(req.GetParams()), req.GetMinTemperatureK(), req.GetMaxTemperatureK())
	if err != nil {
		return nil, err.Error()
	}
	s.store(key, c)
	return c, ""
}

// volume is curve for volume families.
func (s *backendServer) volume(req *pluginpb.EvaluateRequest) (thermo.VolumeCorrelation, string) {
	key := buildKey('v', req)
	if v, ok := s.cached(key); ok {
		return v.(thermo.VolumeCorrelation), ""
	}
	f, ok := s.volumes[req.GetFamily()]
	if !ok {
		return nil, s.unknownFamily(req.GetFamily(), "volume", slices.Sorted(maps.Keys(s.volumes)))
	}
	v, err := f.New(fromproto.Params(req.GetParams()), req.GetMinTemperatureK(), req.GetMaxTemperatureK())
	if err != nil {
		return nil, err.Error()
	}
	s.store(key, v)
	return v, ""
}

func (s *backendServer) unknownFamily(name, kind string, served []string) string {
	valid := strings.Join(served, ", ")
	if valid == "" {
		valid = "none"
	}
	return fmt.Sprintf("backend %q does not serve %s family %q (serves: %s)", s.b.Name, kind, name, valid)
}

func (s *backendServer) cached(key string) (any, bool) {
	s.mu.Lock()
	defer s.mu.Unlock()
	v, ok := s.cache[key]
	return v, ok
}

func (s *backendServer) store(key string, v any) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if len(s.cache) >= maxCachedCorrelations {
		clear(s.cache)
	}
	s.cache[key] = v
}

// buildKey identifies a built correlation: kind, family, every parameter
// (names sorted, values as exact bit patterns) and the validity interval.
func buildKey(kind byte, req *pluginpb.EvaluateRequest) string {
	var sb strings.Builder
	sb.WriteByte(kind)
	sb.WriteString(req.GetFamily())
	names := make([]string, 0, len(req.GetParams()))
	for n := range req.GetParams() {
		names = append(names, n)
	}
	sort.Strings(names)
	num := func(x float64) {
		sb.WriteByte(' ')
		sb.WriteString(strconv.FormatUint(math.Float64bits(x), 16))
	}
	for _, n := range names {
		sb.WriteByte('|')
		sb.WriteString(n)
		for _, x := range req.GetParams()[n].GetValues() {
			num(x)
		}
	}
	sb.WriteByte('|')
	num(req.GetMinTemperatureK())
	num(req.GetMaxTemperatureK())
	return sb.String()
}

// fail records point i as failed, classifying err.
func fail(resp *pluginpb.EvaluateResponse, i int, err error) {
	resp.Results[i], resp.Derivatives[i] = math.NaN(), math.NaN()
	pf := &pluginpb.PointFailure{Index: uint32(i), Kind: pluginpb.FailureKind_FAILURE_KIND_OTHER, Message: err.Error()}
	var ie *thermo.InputError
	var re *thermo.RangeError
	switch {
	case errors.As(err, &ie):
		pf.Kind = pluginpb.FailureKind_FAILURE_KIND_INVALID
	case errors.As(err, &re):
		pf.Kind = pluginpb.FailureKind_FAILURE_KIND_OUT_OF_RANGE
		pf.ValidMin, pf.ValidMax = re.Min, re.Max
	}
	resp.Failures = append(resp.Failures, pf)
}

// checkFinite guards the boundary: a family that returns NaN or ±Inf
// without an error fails the point rather than passing on a wrong value.
func checkFinite(value, deriv float64) error {
	if math.IsNaN(value) || math.IsInf(value, 0) || math.IsNaN(deriv) || math.IsInf(deriv, 0) {
		return fmt.Errorf("the correlation gave a non-finite result (value %v, derivative %v)", value, deriv)
	}
	return nil
}

func isRangeError(err error) bool {
	var re *thermo.RangeError
	return errors.As(err, &re)
}

func evalPressure(ctx context.Context, c thermo.Correlation, req *pluginpb.EvaluateRequest, resp *pluginpb.EvaluateResponse) error {
	ext, _ := c.(thermo.Extrapolator)
	allow := req.GetAllowExtrapolation() && ext != nil
	for i, t := range req.GetValues() {
		if i%ctxCheckEvery == ctxCheckEvery-1 && ctx.Err() != nil {
			return ctx.Err()
		}
		p, d, err := c.PressureSlope(t)
		if err != nil && allow && isRangeError(err) {
			if p, d, err = ext.PressureSlopeBeyond(t); err == nil {
				resp.Extrapolated = append(resp.Extrapolated, uint32(i))
			}
		}
		if err == nil {
			err = checkFinite(p, d)
		}
		if err != nil {
			fail(resp, i, err)
			continue
		}
		resp.Results[i], resp.Derivatives[i] = p, d
	}
	return nil
}

func evalTemperature(ctx context.Context, c thermo.Correlation, req *pluginpb.EvaluateRequest, resp *pluginpb.EvaluateResponse) error {
	ext, _ := c.(thermo.Extrapolator)
	allow := req.GetAllowExtrapolation() && ext != nil
	for i, p := range req.GetValues() {
		if i%ctxCheckEvery == ctxCheckEvery-1 && ctx.Err() != nil {
			return ctx.Err()
		}
		beyond := false
		t, err := c.Temperature(p)
		if err != nil && allow && isRangeError(err) {
			t, err = ext.TemperatureBeyond(p)
			beyond = err == nil
		}
		if err != nil {
			fail(resp, i, err)
			continue
		}
		d, err := c.Slope(t)
		if err != nil && ext != nil && isRangeError(err) {
			// The root may sit a rounding error beyond a range end (or, when
			// extrapolating, anywhere beyond it): the slope comes from the
			// same formula.
			_, d, err = ext.PressureSlopeBeyond(t)
		}
		if err != nil {
			fail(resp, i, fmt.Errorf("slope at T = %g K: %w", t, err))
			continue
		}
		if err := checkFinite(t, d); err != nil {
			fail(resp, i, err)
			continue
		}
		if beyond {
			resp.Extrapolated = append(resp.Extrapolated, uint32(i))
		}
		resp.Results[i], resp.Derivatives[i] = t, d
	}
	return nil
}

func evalVolume(ctx context.Context, v thermo.VolumeCorrelation, req *pluginpb.EvaluateRequest, resp *pluginpb.EvaluateResponse) error {
	r := v.Range()
	pressures := req.GetPressures()
	for i, t := range req.GetValues() {
		if i%ctxCheckEvery == ctxCheckEvery-1 && ctx.Err() != nil {
			return ctx.Err()
		}
		beyond := false
		if err := thermo.CheckTemperature(t, r); err != nil {
			if !req.GetAllowExtrapolation() || !isRangeError(err) {
				fail(resp, i, err)
				continue
			}
			beyond = true
		}
		p := 0.0
		if len(pressures) > 0 {
			p = pressures[i]
		}
		vol, d, err := v.Volume(t, p)
		if err == nil {
			// dv/dT of a saturated volume is ±Inf at the critical point
			// (the density families document it); its value is finite
			// and passes on.
			dd := d
			if math.IsInf(d, 0) {
				dd = 0
			}
			err = checkFinite(vol, dd)
		}
		if err != nil {
			fail(resp, i, err)
			continue
		}
		if beyond {
			resp.Extrapolated = append(resp.Extrapolated, uint32(i))
		}
		resp.Results[i], resp.Derivatives[i] = vol, d
	}
	return nil
}
