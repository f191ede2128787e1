package thermo

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"sync"
)

// R is the molar gas constant in J/(mol·K) (CODATA 2018, exact since the 2019 SI).
const R = 8.314462618

// CurveKind names which two phases a coexistence curve separates.
type CurveKind int

// Curve kinds, by the phases they separate.
const (
	Saturation  CurveKind = iota + 1 // liquid–vapour
	Melting                          // solid–liquid
	Sublimation                      // solid–vapour
	Transition                       // solid–solid
)

var kindNames = map[CurveKind]string{
	Saturation:  "saturation",
	Melting:     "melting",
	Sublimation: "sublimation",
	Transition:  "transition",
}

// String returns the kind's catalog name ("saturation", "melting", ...).
func (k CurveKind) String() string {
	if s, ok := kindNames[k]; ok {
		return s
	}
	return fmt.Sprintf("CurveKind(%d)", int(k))
}

// ParseCurveKind returns the kind named s, or an error listing the valid names.
func ParseCurveKind(s string) (CurveKind, error) {
	for k, n := range kindNames {
		if strings.EqualFold(s, n) {
			return k, nil
		}
	}
	return 0, fmt.Errorf("thermo: unknown curve kind %q (valid: saturation, melting, sublimation, transition)", s)
}

// Range is a rectangle of validity in temperature and pressure. A
// correlation is valid for Tmin ≤ T ≤ Tmax; Pmin and Pmax are the pressures
// the curve takes over that interval (for a non-monotonic curve, its extremes).
type Range struct {
	Tmin, Tmax float64 // K
	Pmin, Pmax float64 // Pa
}

// ContainsT reports whether Tmin ≤ t ≤ Tmax.
func (r Range) ContainsT(t float64) bool { return t >= r.Tmin && t <= r.Tmax }

// ContainsP reports whether Pmin ≤ p ≤ Pmax.
func (r Range) ContainsP(p float64) bool { return p >= r.Pmin && p <= r.Pmax }

// Correlation is one branch of a coexistence curve: P(T), its analytic slope
// dP/dT and the inverse T(P), valid over Range. Implementations are
// immutable and safe for concurrent use; the evaluation methods allocate
// nothing on success.
type Correlation interface {
	// Pressure returns P(T) in Pa.
	Pressure(t float64) (float64, error)
	// Slope returns dP/dT at T in Pa/K.
	Slope(t float64) (float64, error)
	// PressureSlope returns P(T) and dP/dT together (one evaluation).
	PressureSlope(t float64) (p, dpdt float64, err error)
	// Temperature returns T(P) in K. For a curve that is not monotonic over
	// its range the root nearest the low-temperature end is returned.
	Temperature(p float64) (float64, error)
	// Range returns the validity range.
	Range() Range
}

// Params holds a family's parameters by name, every value SI. A scalar
// parameter is a slice of length one; list parameters (coefficients,
// exponents) keep their order.
type Params map[string][]float64

// Scalar returns the scalar parameter name, or an error naming the missing
// or non-scalar parameter.
func (p Params) Scalar(name string) (float64, error) {
	v, ok := p[name]
	if !ok {
		return 0, fmt.Errorf("%w: %q", ErrMissingParam, name)
	}
	if len(v) != 1 {
		return 0, fmt.Errorf("%w: %q must be a single number, got %d values", ErrBadParam, name, len(v))
	}
	if math.IsNaN(v[0]) || math.IsInf(v[0], 0) {
		return 0, fmt.Errorf("%w: %q is %v", ErrBadParam, name, v[0])
	}
	return v[0], nil
}

// List returns the list parameter name, or an error naming it.
func (p Params) List(name string) ([]float64, error) {
	v, ok := p[name]
	if !ok {
		return nil, fmt.Errorf("%w: %q", ErrMissingParam, name)
	}
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("%w: %q[%d] is %v", ErrBadParam, name, i, x)
		}
	}
	return append([]float64(nil), v...), nil
}

// Family is a correlation form: it builds a Correlation from parameters and
// a temperature validity interval.
type Family interface {
	// Name is the family's catalog name, e.g. "simon-glatzel".
	Name() string
	// New builds a correlation valid for tmin ≤ T ≤ tmax.
	New(p Params, tmin, tmax float64) (Correlation, error)
}

var (
	familiesMu sync.RWMutex
	families   = map[string]Family{}
)

// Register makes a family available by name. It panics if the name is
// taken: registration happens in init functions, and a clash is a
// programming error.
func Register(f Family) {
	familiesMu.Lock()
	defer familiesMu.Unlock()
	if _, dup := families[f.Name()]; dup {
		panic("thermo: family registered twice: " + f.Name())
	}
	families[f.Name()] = f
}

// GetFamily returns the family registered under name, or an error listing
// the registered names.
func GetFamily(name string) (Family, error) {
	familiesMu.RLock()
	defer familiesMu.RUnlock()
	if f, ok := families[name]; ok {
		return f, nil
	}
	return nil, fmt.Errorf("%w %q (valid: %s)", ErrUnknownFamily, name, strings.Join(familyNamesLocked(), ", "))
}

// FamilyNames returns the registered family names, sorted.
func FamilyNames() []string {
	familiesMu.RLock()
	defer familiesMu.RUnlock()
	return familyNamesLocked()
}

func familyNamesLocked() []string {
	names := make([]string, 0, len(families))
	for n := range families {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// Sentinel errors. Errors returned by this package wrap one of these (or
// are a *RangeError, *InputError or *AmbiguousBranchError), so callers can
// test with errors.Is and errors.As.
var (
	ErrUnknownFamily  = errors.New("thermo: unknown family")
	ErrMissingParam   = errors.New("thermo: missing parameter")
	ErrBadParam       = errors.New("thermo: bad parameter")
	ErrNoConvergence  = errors.New("thermo: solver did not converge")
	ErrNoBracket      = errors.New("thermo: root not bracketed")
	ErrUnknownBranch  = errors.New("thermo: unknown branch")
	ErrNotImplemented = errors.New("thermo: not available for this curve")
)

// RangeError reports a value outside the validity range. It carries the
// offending value and the valid interval.
type RangeError struct {
	Quantity string  // "temperature" or "pressure"
	Value    float64 // the offending value, SI
	Min, Max float64 // the valid closed interval, SI
	Unit     string  // "K" or "Pa"
}

func (e *RangeError) Error() string {
	return fmt.Sprintf("thermo: %s %g %s outside the validity range [%g, %g] %s",
		e.Quantity, e.Value, e.Unit, e.Min, e.Max, e.Unit)
}

// InputError reports a value that is not a physical input at all: NaN, ±Inf,
// a non-positive temperature or pressure.
type InputError struct {
	Quantity string
	Value    float64
	Reason   string // e.g. "must be > 0 K"
}

func (e *InputError) Error() string {
	return fmt.Sprintf("thermo: %s %v is not valid: %s", e.Quantity, e.Value, e.Reason)
}

// AmbiguousBranchError reports that P(T) matches several branches of a curve.
type AmbiguousBranchError struct {
	Temperature float64
	Branches    []string
}

func (e *AmbiguousBranchError) Error() string {
	return fmt.Sprintf("thermo: temperature %g K lies on several branches (%s); name one",
		e.Temperature, strings.Join(e.Branches, ", "))
}

// CheckTemperature returns an *InputError for NaN, ±Inf or T ≤ 0 and a
// *RangeError for T outside r; nil otherwise.
func CheckTemperature(t float64, r Range) error {
	if math.IsNaN(t) || math.IsInf(t, 0) {
		return &InputError{Quantity: "temperature", Value: t, Reason: "must be a finite number"}
	}
	if t <= 0 {
		return &InputError{Quantity: "temperature", Value: t, Reason: "must be > 0 K"}
	}
	if !r.ContainsT(t) {
		return &RangeError{Quantity: "temperature", Value: t, Min: r.Tmin, Max: r.Tmax, Unit: "K"}
	}
	return nil
}

// CheckPressure returns an *InputError for NaN, ±Inf or P ≤ 0 and a
// *RangeError for P outside r; nil otherwise.
func CheckPressure(p float64, r Range) error {
	if math.IsNaN(p) || math.IsInf(p, 0) {
		return &InputError{Quantity: "pressure", Value: p, Reason: "must be a finite number"}
	}
	if p <= 0 {
		return &InputError{Quantity: "pressure", Value: p, Reason: "must be > 0 Pa"}
	}
	if !r.ContainsP(p) {
		return &RangeError{Quantity: "pressure", Value: p, Min: r.Pmin, Max: r.Pmax, Unit: "Pa"}
	}
	return nil
}

// Extrapolator is implemented by correlations that can evaluate beyond
// their validity range for callers that opt in explicitly. The results are
// the formula's, with no claim of accuracy; callers must flag them.
type Extrapolator interface {
	// PressureSlopeBeyond returns P(T) and dP/dT ignoring the validity
	// range; it still refuses NaN, ±Inf and T ≤ 0.
	PressureSlopeBeyond(t float64) (p, dpdt float64, err error)
	// TemperatureBeyond returns T(P) ignoring the validity range; it still
	// refuses NaN, ±Inf and P ≤ 0, and fails when no root exists.
	TemperatureBeyond(p float64) (float64, error)
}

// VolumeCorrelation gives the molar volume of one coexisting phase along a
// curve, as a function of temperature and (for vapours) the curve pressure
// at that temperature. Implementations are immutable and safe for
// concurrent use.
type VolumeCorrelation interface {
	// Volume returns v in m³/mol and dv/dT in m³/(mol·K) at T (K) and the
	// coexistence pressure P (Pa) at T.
	Volume(t, p float64) (v, dvdt float64, err error)
	// Range returns the validity range (temperatures; pressures may be 0
	// when the form does not depend on pressure).
	Range() Range
}

// VolumeFamily builds a VolumeCorrelation from parameters.
type VolumeFamily interface {
	Name() string
	New(p Params, tmin, tmax float64) (VolumeCorrelation, error)
}

var volumeFamilies = map[string]VolumeFamily{}

// RegisterVolume makes a volume family available by name; it panics on a
// duplicate name (a programming error).
func RegisterVolume(f VolumeFamily) {
	familiesMu.Lock()
	defer familiesMu.Unlock()
	if _, dup := volumeFamilies[f.Name()]; dup {
		panic("thermo: volume family registered twice: " + f.Name())
	}
	volumeFamilies[f.Name()] = f
}

// GetVolumeFamily returns the volume family registered under name, or an
// error listing the registered names.
func GetVolumeFamily(name string) (VolumeFamily, error) {
	familiesMu.RLock()
	defer familiesMu.RUnlock()
	if f, ok := volumeFamilies[name]; ok {
		return f, nil
	}
	return nil, fmt.Errorf("%w %q (valid volume families: %s)", ErrUnknownFamily, name, strings.Join(volumeFamilyNamesLocked(), ", "))
}

// VolumeFamilyNames returns the registered volume family names, sorted.
func VolumeFamilyNames() []string {
	familiesMu.RLock()
	defer familiesMu.RUnlock()
	return volumeFamilyNamesLocked()
}

func volumeFamilyNamesLocked() []string {
	names := make([]string, 0, len(volumeFamilies))
	for n := range volumeFamilies {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}
