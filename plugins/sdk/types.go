package sdk

import (
	"errors"
	"fmt"

	"github.com/phasebound/phasebound/thermo"
)

// Backend is what a backend executable serves: the correlation families of
// coexistence curves and of coexisting-phase volumes. Families are looked up
// by their Name; two families of one kind may not share a name.
type Backend struct {
	Name     string // backend name, e.g. "vapor"; [a-z0-9-]+
	Version  string // free-form version reported to the host
	Families []thermo.Family
	Volumes  []thermo.VolumeFamily
}

// Op says what an evaluation computes.
type Op int

// Operations. The values match the plugin protocol's numbering.
const (
	// OpPressure takes temperatures (K) and returns P(T) in Pa with dP/dT in Pa/K.
	OpPressure Op = iota + 1
	// OpTemperature takes pressures (Pa) and returns T(P) in K with dP/dT in
	// Pa/K at that temperature.
	OpTemperature
	// OpVolume takes temperatures (K), with the coexistence pressure at each
	// in EvalRequest.Pressures, and returns the molar volume in m³/mol with
	// dv/dT in m³/(mol·K).
	OpVolume
)

var opNames = map[Op]string{OpPressure: "pressure", OpTemperature: "temperature", OpVolume: "volume"}

// String returns "pressure", "temperature" or "volume".
func (o Op) String() string {
	if s, ok := opNames[o]; ok {
		return s
	}
	return fmt.Sprintf("Op(%d)", int(o))
}

// EvalRequest is one correlation applied to a batch of points.
type EvalRequest struct {
	Family     string        // family name, e.g. "antoine"
	Params     thermo.Params // the family's parameters, SI
	Tmin, Tmax float64       // validity interval in K the correlation is built for
	Op         Op
	// Values are the inputs: temperatures for OpPressure and OpVolume,
	// pressures for OpTemperature.
	Values []float64
	// Pressures are, for OpVolume only, the coexistence pressures in Pa at
	// each temperature (index-aligned with Values); nil when the volume form
	// ignores pressure.
	Pressures []float64
	// AllowExtrapolation evaluates points outside the validity range with the
	// formula instead of failing them; such points are listed in
	// EvalResult.Extrapolated.
	AllowExtrapolation bool
}

// FailureKind classifies a point that could not be evaluated.
type FailureKind int

// Failure kinds.
const (
	// FailInvalid: the input is not physical (NaN, ±Inf, T ≤ 0, P ≤ 0).
	FailInvalid FailureKind = iota + 1
	// FailOutOfRange: the input lies outside the validity range [Min, Max].
	FailOutOfRange
	// FailOther: the formula or its solver failed.
	FailOther
)

var failNames = map[FailureKind]string{FailInvalid: "invalid", FailOutOfRange: "out-of-range", FailOther: "other"}

// String returns "invalid", "out-of-range" or "other".
func (k FailureKind) String() string {
	if s, ok := failNames[k]; ok {
		return s
	}
	return fmt.Sprintf("FailureKind(%d)", int(k))
}

// Failure explains one point that has no result.
type Failure struct {
	Index   int // position in EvalRequest.Values
	Kind    FailureKind
	Message string
	// Min and Max are the valid interval (SI) for FailOutOfRange, else 0.
	Min, Max float64
}

// EvalResult holds index-aligned results. A failed point has NaN in Results
// and Derivatives and one entry in Failures.
type EvalResult struct {
	Results     []float64
	Derivatives []float64
	Failures    []Failure // ordered by Index
	// Extrapolated lists, in order, the points evaluated outside the validity
	// range because EvalRequest.AllowExtrapolation was set.
	Extrapolated []int
}

// BackendInfo describes a running backend.
type BackendInfo struct {
	Name     string
	Version  string
	Families []string // curve families served
	Volumes  []string // volume families served
}

// ErrBackendUnavailable reports that a backend process is not there to
// answer: it died during the call, or is being restarted. The call may be
// retried; no result of the failed call is ever returned.
var ErrBackendUnavailable = errors.New("sdk: backend unavailable")

// ErrNotLaunched is the error of a backend executable run by hand rather
// than by the phasebound server.
var ErrNotLaunched = errors.New("this is a phasebound backend; the server starts it (it is not meant to be run by hand)")

// SetupError reports that a correlation could not be built from its
// parameters (a missing or bad parameter, an unknown family). No point of
// the request was evaluated.
type SetupError struct {
	Backend string
	Family  string
	Message string
}

func (e *SetupError) Error() string {
	return fmt.Sprintf("sdk: backend %q cannot build family %q: %s", e.Backend, e.Family, e.Message)
}

// ChecksumError reports a backend executable whose SHA-256 differs from the
// pinned one; the host refuses to start it.
type ChecksumError struct {
	Backend  string
	Path     string
	Expected string // lower-case hex
	Actual   string // lower-case hex
}

func (e *ChecksumError) Error() string {
	return fmt.Sprintf("sdk: refusing to start backend %q: executable %s has SHA-256 %s, expected %s",
		e.Backend, e.Path, e.Actual, e.Expected)
}
