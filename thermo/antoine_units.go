package thermo

import (
	"fmt"
	"math"
	"strings"
)

// AntoineUnits describes how a handbook states Antoine constants: the
// pressure unit, the temperature unit and the logarithm base of
//
//	log(P/unit) = A − B/(t/unit + C).
//
// The zero value is not valid; name every field.
type AntoineUnits struct {
	// Pressure is the pressure unit: "Pa", "kPa", "MPa", "bar", "mbar",
	// "mmHg" (conventional, 133.322387415 Pa), "torr" (101325/760 Pa),
	// "atm" (101325 Pa) or
	// "psi" (6894.757293168 Pa).
	Pressure string
	// Temperature is "K" or "degC" (t/°C = T/K − 273.15).
	Temperature string
	// Log is the logarithm base: 10 or math.E (natural logarithm).
	Log float64
}

// antoinePressureUnits are the pressure units AntoineToSI knows, in Pa.
var antoinePressureUnits = map[string]float64{
	"Pa":   1,
	"kPa":  1e3,
	"MPa":  1e6,
	"bar":  1e5,
	"mbar": 1e2,
	"mmHg": 133.322387415, // conventional millimetre of mercury
	"torr": 101325.0 / 760,
	"atm":  101325,
	"psi":  6894.757293168,
}

// AntoineToSI converts handbook Antoine constants into the SI form of the
// "antoine" family, log10(P/Pa) = A′ − B′/(T/K + C′). With the handbook
// form log_b(P/u) = A − B/(t + C), where t is in K or °C and b is 10 or e:
//
//	A′ = A/log_b(10) + log10(u/Pa)     (log_b(10) = 1 for b = 10, ln 10 for b = e)
//	B′ = B/log_b(10)                   K
//	C′ = C − 273.15 for t in °C, C for t in K
//
// so that for example the common water constants for 1–100 °C with P in
// mmHg, A = 8.07131, B = 1730.63, C = 233.426, become A′ = 10.19621,
// B′ = 1730.63 K, C′ = −39.724 K. The conversion is exact; the accuracy is
// that of the handbook constants over the range they were fitted to.
//
// The conventional mmHg (133.322387415 Pa) and the torr (101325/760 Pa)
// differ by 1.4e-7 relative, far below any Antoine fit's accuracy; both are
// accepted.
//
// References:
//
//	B. E. Poling, J. M. Prausnitz, J. P. O'Connell, The Properties of Gases
//	and Liquids, 5th ed., McGraw-Hill, 2001, §7-3 and Appendix A.
//	BIPM, The International System of Units (SI), 9th ed., 2019, Table 8
//	(units outside the SI: bar, mmHg).
func AntoineToSI(a, b, c float64, u AntoineUnits) (aSI, bSI, cSI float64, err error) {
	for _, v := range [...]struct {
		n string
		x float64
	}{{"A", a}, {"B", b}, {"C", c}} {
		if math.IsNaN(v.x) || math.IsInf(v.x, 0) {
			return 0, 0, 0, fmt.Errorf("%w: Antoine constant %s is %v", ErrBadParam, v.n, v.x)
		}
	}
	scale, ok := antoinePressureUnits[u.Pressure]
	if !ok {
		return 0, 0, 0, fmt.Errorf("%w: unknown Antoine pressure unit %q (valid: Pa, kPa, MPa, bar, mbar, mmHg, torr, atm, psi)", ErrBadParam, u.Pressure)
	}
	var shift float64
	switch strings.TrimSpace(u.Temperature) {
	case "K":
	case "degC", "°C", "C":
		shift = -273.15
	default:
		return 0, 0, 0, fmt.Errorf("%w: unknown Antoine temperature unit %q (valid: K, degC)", ErrBadParam, u.Temperature)
	}
	var k float64 // log_b(10)
	switch u.Log {
	case 10:
		k = 1
	case math.E:
		k = math.Ln10
	default:
		return 0, 0, 0, fmt.Errorf("%w: Antoine logarithm base %g (valid: 10 or e = %g)", ErrBadParam, u.Log, math.E)
	}
	return a/k + math.Log10(scale), b / k, c + shift, nil
}

// AntoineParams is AntoineToSI returning the parameters of the "antoine"
// family, ready for AntoineFamily.New.
func AntoineParams(a, b, c float64, u AntoineUnits) (Params, error) {
	as, bs, cs, err := AntoineToSI(a, b, c, u)
	if err != nil {
		return nil, err
	}
	return Params{"a": {as}, "b": {bs}, "c": {cs}}, nil
}
