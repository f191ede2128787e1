package thermo

import (
	"errors"
	"fmt"
	"math"
)

// Clapeyron relations between the slope of a coexistence curve and the
// enthalpy and volume of the phase change across it.
//
// The Clapeyron equation holds exactly along any first-order coexistence
// curve (saturation, melting, sublimation, solid–solid transition):
//
//	dP/dT = ΔH / (T·ΔV)
//
// where
//
//	T     temperature on the curve, K
//	dP/dT slope of the curve, Pa/K
//	ΔH    molar enthalpy of the change, J/mol (high-T phase minus low-T phase)
//	ΔV    molar volume change, m³/mol (same order as ΔH)
//
// Signs follow the order: melting ice has ΔH > 0 and ΔV < 0, so its curve
// falls with temperature (dP/dT < 0). Every relation works with either sign.
//
// For a vapour curve far below the critical point the vapour is nearly an
// ideal gas and much larger than the condensed phase, V_vap ≈ R·T/P ≫
// V_cond, which gives the Clausius–Clapeyron estimate
//
//	ΔH ≈ R·T²·d(ln P)/dT = R·T²·(dP/dT)/P
//
// It neglects V_cond and the vapour's non-ideality: for water at its
// normal boiling point, with the IAPWS-IF97 slope 3616 Pa/K, it gives
// 41.3 kJ/mol against 40.66 kJ/mol, 1.6 % high; near the critical point it
// fails entirely. Use the exact form with both volumes where they are
// known.
//
// References:
//
//	Clapeyron, É. (1834). Mémoire sur la puissance motrice de la chaleur.
//	  Journal de l'École Polytechnique 14(23), 153–190.
//	Clausius, R. (1850). Ueber die bewegende Kraft der Wärme und die Gesetze,
//	  welche sich daraus für die Wärmelehre selbst ableiten lassen.
//	  Annalen der Physik 155(3), 368–397, 500–524.

// ErrZeroDenominator reports a Clapeyron relation whose denominator is zero
// (ΔV = 0, dP/dT = 0): the requested quantity is undefined there.
var ErrZeroDenominator = errors.New("thermo: zero denominator in a Clapeyron relation")

// clpFinite returns an *InputError unless v is finite.
func clpFinite(name string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return &InputError{Quantity: name, Value: v, Reason: "must be a finite number"}
	}
	return nil
}

func clpTemperature(t float64) error {
	if err := clpFinite("temperature", t); err != nil {
		return err
	}
	if t <= 0 {
		return &InputError{Quantity: "temperature", Value: t, Reason: "must be > 0 K"}
	}
	return nil
}

// clpInputs checks, in this order, the temperature t and two further
// inputs that must be finite.
func clpInputs(t float64, name1 string, v1 float64, name2 string, v2 float64) error {
	if err := clpTemperature(t); err != nil {
		return err
	}
	if err := clpFinite(name1, v1); err != nil {
		return err
	}
	return clpFinite(name2, v2)
}

func clpResult(name string, v float64) (float64, error) {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, fmt.Errorf("%w: %s overflows (%v)", ErrBadParam, name, v)
	}
	return v, nil
}

// ClapeyronSlope returns dP/dT = ΔH/(T·ΔV) in Pa/K from the molar enthalpy
// ΔH (J/mol) and volume ΔV (m³/mol) of the change at temperature t (K).
// ΔV = 0 gives an error wrapping ErrZeroDenominator.
func ClapeyronSlope(t, deltaH, deltaV float64) (float64, error) {
	if err := clpInputs(t, "enthalpy change", deltaH, "volume change", deltaV); err != nil {
		return 0, err
	}
	if deltaV == 0 {
		return 0, fmt.Errorf("%w: volume change ΔV is 0, the slope dP/dT = ΔH/(T·ΔV) is undefined", ErrZeroDenominator)
	}
	return clpResult("slope dP/dT", deltaH/(t*deltaV))
}

// ClapeyronEnthalpy returns ΔH = T·ΔV·dP/dT in J/mol from the slope dpdt
// (Pa/K) and the volume change ΔV (m³/mol) at temperature t (K).
func ClapeyronEnthalpy(t, dpdt, deltaV float64) (float64, error) {
	if err := clpInputs(t, "slope dP/dT", dpdt, "volume change", deltaV); err != nil {
		return 0, err
	}
	return clpResult("enthalpy change", t*deltaV*dpdt)
}

// ClapeyronEnthalpyVolumes returns ΔH = T·(V_high − V_low)·dP/dT in J/mol:
// the exact latent heat from both coexisting phases' molar volumes
// (m³/mol), V_high of the phase stable above the curve in temperature (the
// vapour on a saturation curve) and V_low of the other.
func ClapeyronEnthalpyVolumes(t, dpdt, vHigh, vLow float64) (float64, error) {
	if err := clpFinite("volume of the high-temperature phase", vHigh); err != nil {
		return 0, err
	}
	if err := clpFinite("volume of the low-temperature phase", vLow); err != nil {
		return 0, err
	}
	if vHigh <= 0 || vLow <= 0 {
		return 0, fmt.Errorf("%w: molar volumes must be > 0 m³/mol, got %g and %g", ErrBadParam, vHigh, vLow)
	}
	return ClapeyronEnthalpy(t, dpdt, vHigh-vLow)
}

// ClapeyronVolume returns ΔV = ΔH/(T·dP/dT) in m³/mol from the enthalpy
// change ΔH (J/mol) and the slope dpdt (Pa/K) at temperature t (K). A zero
// slope gives an error wrapping ErrZeroDenominator.
func ClapeyronVolume(t, dpdt, deltaH float64) (float64, error) {
	if err := clpInputs(t, "slope dP/dT", dpdt, "enthalpy change", deltaH); err != nil {
		return 0, err
	}
	if dpdt == 0 {
		return 0, fmt.Errorf("%w: slope dP/dT is 0, the volume change ΔV = ΔH/(T·dP/dT) is undefined", ErrZeroDenominator)
	}
	return clpResult("volume change", deltaH/(t*dpdt))
}

// IdealGasEnthalpy returns the Clausius–Clapeyron estimate
// ΔH ≈ R·T²·(dP/dT)/P in J/mol on a vapour curve (saturation or
// sublimation) at temperature t (K), pressure p (Pa) and slope dpdt
// (Pa/K). See the validity remarks above: it neglects the condensed
// phase's volume and the vapour's non-ideality.
func IdealGasEnthalpy(t, p, dpdt float64) (float64, error) {
	if err := clpTemperature(t); err != nil {
		return 0, err
	}
	if err := clpFinite("pressure", p); err != nil {
		return 0, err
	}
	if p <= 0 {
		return 0, &InputError{Quantity: "pressure", Value: p, Reason: "must be > 0 Pa"}
	}
	if err := clpFinite("slope dP/dT", dpdt); err != nil {
		return 0, err
	}
	return clpResult("enthalpy change", R*t*t*dpdt/p)
}

// IdealGasSlope returns the Clausius–Clapeyron slope dP/dT ≈ P·ΔH/(R·T²)
// in Pa/K, the inverse of IdealGasEnthalpy.
func IdealGasSlope(t, p, deltaH float64) (float64, error) {
	if err := clpTemperature(t); err != nil {
		return 0, err
	}
	if err := clpFinite("pressure", p); err != nil {
		return 0, err
	}
	if p <= 0 {
		return 0, &InputError{Quantity: "pressure", Value: p, Reason: "must be > 0 Pa"}
	}
	if err := clpFinite("enthalpy change", deltaH); err != nil {
		return 0, err
	}
	return clpResult("slope dP/dT", p*deltaH/(R*t*t))
}
