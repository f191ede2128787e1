package thermo

import (
	"fmt"
	"math"
)

// Latent heat along a coexistence curve by the Clapeyron equation (the
// relations themselves live in clapeyron.go; this file composes them with a
// curve and two phase-volume correlations, point by point),
//
//	ΔH = T·(v_high − v_low)·dP/dT,
//
// where T is the temperature (K), dP/dT the curve's slope (Pa/K), v_low
// and v_high the molar volumes (m³/mol) of the phases stable below and above
// the curve in temperature, and ΔH = H_high − H_low the molar enthalpy of
// transition (J/mol): positive for melting, sublimation and vaporisation.
// The equation is exact thermodynamics; the result is as good as the slope
// and the two volumes. Where no volumes are known, a vapour curve
// (saturation or sublimation) falls back to the ideal-gas
// Clausius–Clapeyron estimate
//
//	ΔH ≈ R·T²·(dP/dT)/P,
//
// which neglects the condensed phase's volume and the vapour's
// non-ideality: about 0.1 % high for water below 300 K, but several percent
// wrong for any vapour above a few hundred kPa and meaningless near the
// critical point, where the true ΔH goes to zero. Results are engineering
// estimates, not a substitute for design codes.
//
// References:
//
//	Clapeyron, É. (1834). Mémoire sur la puissance motrice de la chaleur.
//	Journal de l'École Polytechnique 14, 153–190.
//	Smith, J. M., Van Ness, H. C., Abbott, M. M. (2005). Introduction to
//	Chemical Engineering Thermodynamics, 7th ed., McGraw-Hill, sec. 6.5.

// LatentSource says how a latent heat was obtained.
type LatentSource int

const (
	// LatentUnavailable: no value (no volumes, and not a vapour curve).
	LatentUnavailable LatentSource = iota
	// LatentClapeyron: T·(v_high − v_low)·dP/dT from both phase volumes.
	LatentClapeyron
	// LatentIdealGasEstimate: R·T²·(dP/dT)/P, the ideal-gas
	// Clausius–Clapeyron estimate for a vapour curve without volumes.
	LatentIdealGasEstimate
)

// String returns "unavailable", "clapeyron" or "ideal-gas-estimate".
func (s LatentSource) String() string {
	switch s {
	case LatentUnavailable:
		return "unavailable"
	case LatentClapeyron:
		return "clapeyron"
	case LatentIdealGasEstimate:
		return "ideal-gas-estimate"
	}
	return fmt.Sprintf("LatentSource(%d)", int(s))
}

// ErrNoLatentHeat is returned (wrapped) when a curve has neither both phase
// volumes nor a vapour side for the ideal-gas estimate. It wraps
// ErrNotImplemented.
var ErrNoLatentHeat = fmt.Errorf("%w: no latent heat", ErrNotImplemented)

// PhaseVolumes are the molar volumes of the two phases a curve separates:
// Low is stable below the curve in temperature (the solid on melting and
// sublimation curves, the liquid on the saturation curve), High above it.
// A nil field means unknown.
type PhaseVolumes struct {
	Low, High VolumeCorrelation
}

// Complete reports whether both volumes are known.
func (pv PhaseVolumes) Complete() bool { return pv.Low != nil && pv.High != nil }

// LatentHeat is the latent heat at one point of a curve.
type LatentHeat struct {
	Temperature float64 // K
	Pressure    float64 // Pa, on the curve
	Slope       float64 // dP/dT, Pa/K
	// VolumeLow and VolumeHigh are the phase volumes used, m³/mol; for the
	// ideal-gas estimate VolumeHigh is R·T/P and VolumeLow is 0.
	VolumeLow, VolumeHigh float64
	Molar                 float64 // ΔH, J/mol
	// Specific is ΔH in J/kg; 0 when the molar mass is not known
	// (MolarMass = 0).
	Specific  float64
	MolarMass float64 // kg/mol as given, 0 when unknown
	Source    LatentSource
}

// hasVapour reports whether the high-temperature side of a curve of kind k
// is a vapour (saturation and sublimation curves).
func hasVapour(k CurveKind) bool { return k == Saturation || k == Sublimation }

// LatentHeatAt returns the latent heat at temperature t on a curve of kind
// kind whose pressure there is p with slope dpdt (from a correlation, a
// compiled table or a backend), given the phase volumes and the molar mass
// (kg/mol, 0 when unknown). It uses the Clapeyron equation when both
// volumes are given and the ideal-gas estimate on vapour curves otherwise;
// it returns an error wrapping ErrNoLatentHeat when neither applies, an
// *InputError for a non-physical t or p, and the volume correlation's error
// (e.g. a *RangeError) when a volume cannot be evaluated. It allocates
// nothing on success.
func LatentHeatAt(kind CurveKind, t, p, dpdt float64, vol PhaseVolumes, molarMass float64) (LatentHeat, error) {
	if err := checkLatentInput(t, p, dpdt, molarMass); err != nil {
		return LatentHeat{}, err
	}
	out := LatentHeat{Temperature: t, Pressure: p, Slope: dpdt, MolarMass: molarMass}
	switch {
	case vol.Complete():
		lo, _, err := vol.Low.Volume(t, p)
		if err != nil {
			return LatentHeat{}, fmt.Errorf("thermo: latent heat: volume of the low-temperature phase: %w", err)
		}
		hi, _, err := vol.High.Volume(t, p)
		if err != nil {
			return LatentHeat{}, fmt.Errorf("thermo: latent heat: volume of the high-temperature phase: %w", err)
		}
		h, err := ClapeyronEnthalpyVolumes(t, dpdt, hi, lo)
		if err != nil {
			return LatentHeat{}, fmt.Errorf("thermo: latent heat: %w", err)
		}
		out.VolumeLow, out.VolumeHigh = lo, hi
		out.Molar = h
		out.Source = LatentClapeyron
	case hasVapour(kind):
		h, err := IdealGasEnthalpy(t, p, dpdt)
		if err != nil {
			return LatentHeat{}, fmt.Errorf("thermo: latent heat: %w", err)
		}
		out.VolumeHigh = R * t / p
		out.Molar = h
		out.Source = LatentIdealGasEstimate
	default:
		return LatentHeat{}, fmt.Errorf("%w on this %s curve: the Clapeyron equation needs both phase volumes (volume_low and volume_high), and the ideal-gas estimate applies to saturation and sublimation curves only",
			ErrNoLatentHeat, kind)
	}
	if molarMass > 0 {
		out.Specific = out.Molar / molarMass
	}
	return out, nil
}

func checkLatentInput(t, p, dpdt, molarMass float64) error {
	switch {
	case math.IsNaN(t) || math.IsInf(t, 0):
		return &InputError{Quantity: "temperature", Value: t, Reason: "must be a finite number"}
	case t <= 0:
		return &InputError{Quantity: "temperature", Value: t, Reason: "must be > 0 K"}
	case math.IsNaN(p) || math.IsInf(p, 0):
		return &InputError{Quantity: "pressure", Value: p, Reason: "must be a finite number"}
	case p <= 0:
		return &InputError{Quantity: "pressure", Value: p, Reason: "must be > 0 Pa"}
	case math.IsNaN(dpdt) || math.IsInf(dpdt, 0):
		return &InputError{Quantity: "slope dP/dT", Value: dpdt, Reason: "must be a finite number"}
	case math.IsNaN(molarMass) || math.IsInf(molarMass, 0) || molarMass < 0:
		return &InputError{Quantity: "molar mass", Value: molarMass, Reason: "must be ≥ 0 kg/mol (0 when unknown)"}
	}
	return nil
}

// LatentCurve composes a curve correlation with its phase volumes to give
// the latent heat along it. The zero value is not usable: Curve and Kind
// are required; Volumes and MolarMass may be empty.
type LatentCurve struct {
	Kind      CurveKind
	Curve     Correlation
	Volumes   PhaseVolumes
	MolarMass float64 // kg/mol, 0 when unknown
}

// At returns the latent heat at temperature t; see LatentHeatAt. The
// curve's range and input errors are returned unchanged.
func (c LatentCurve) At(t float64) (LatentHeat, error) {
	if c.Curve == nil {
		return LatentHeat{}, fmt.Errorf("%w: LatentCurve has no Curve", ErrBadParam)
	}
	p, dpdt, err := c.Curve.PressureSlope(t)
	if err != nil {
		return LatentHeat{}, err
	}
	return LatentHeatAt(c.Kind, t, p, dpdt, c.Volumes, c.MolarMass)
}

// AtPressure returns the latent heat at the curve's temperature for
// pressure p (the curve's T(P), then At).
func (c LatentCurve) AtPressure(p float64) (LatentHeat, error) {
	if c.Curve == nil {
		return LatentHeat{}, fmt.Errorf("%w: LatentCurve has no Curve", ErrBadParam)
	}
	t, err := c.Curve.Temperature(p)
	if err != nil {
		return LatentHeat{}, err
	}
	return c.At(t)
}
