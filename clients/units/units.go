package units

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Dimension is the physical quantity a unit measures.
type Dimension int

// Dimensions that Parse recognises.
const (
	// None is a bare number with no suffix: already SI, of either dimension.
	None Dimension = iota
	// Temperature values convert to K.
	Temperature
	// Pressure values convert to Pa.
	Pressure
)

// String names the dimension.
func (d Dimension) String() string {
	switch d {
	case Temperature:
		return "temperature"
	case Pressure:
		return "pressure"
	}
	return "dimensionless"
}

// ErrSyntax is wrapped by every parse failure.
var ErrSyntax = errors.New("units: cannot parse")

// unit converts a number written in it to SI: si = x*scale + offset.
type unit struct {
	suffix string
	dim    Dimension
	scale  float64
	offset float64
}

// The standard atmosphere and the pound-force per square inch are exact by
// definition (common practice: 1 atm = 101325 Pa, 1 psi = 6894.757293168 Pa,
// 1 torr = 101325/760 Pa).
var table = []unit{
	{"K", Temperature, 1, 0},
	{"degC", Temperature, 1, 273.15},
	{"°C", Temperature, 1, 273.15},
	{"degF", Temperature, 5.0 / 9.0, 273.15 - 32*5.0/9.0},
	{"°F", Temperature, 5.0 / 9.0, 273.15 - 32*5.0/9.0},
	{"degR", Temperature, 5.0 / 9.0, 0},
	{"Pa", Pressure, 1, 0},
	{"hPa", Pressure, 1e2, 0},
	{"kPa", Pressure, 1e3, 0},
	{"MPa", Pressure, 1e6, 0},
	{"GPa", Pressure, 1e9, 0},
	{"mbar", Pressure, 1e2, 0},
	{"bar", Pressure, 1e5, 0},
	{"kbar", Pressure, 1e8, 0},
	{"atm", Pressure, 101325, 0},
	{"psi", Pressure, 6894.757293168361, 0},
	{"torr", Pressure, 101325.0 / 760, 0},
}

// Suffixes returns the accepted unit suffixes of dimension d (all of them
// for None), in a stable order.
func Suffixes(d Dimension) []string {
	var s []string
	for _, u := range table {
		if d == None || u.dim == d {
			s = append(s, u.suffix)
		}
	}
	return s
}

// Parse reads a number with an optional unit suffix and returns its SI
// value and dimension. A bare number ("298.15") is returned unchanged with
// dimension None. Space between number and suffix is allowed. Suffixes are
// case-sensitive ("MPa" and "mPa" differ), except that "c", "f", "k" in
// "degc", "degf" and a lone "k" are accepted. NaN and infinities are refused.
func Parse(s string) (float64, Dimension, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, None, fmt.Errorf("%w: empty value (want a number with an optional unit: %s)", ErrSyntax, strings.Join(Suffixes(None), ", "))
	}
	num, suf := split(t)
	if num == "" {
		return 0, None, fmt.Errorf("%w %q: no number before the unit (accepted units: %s)", ErrSyntax, s, strings.Join(Suffixes(None), ", "))
	}
	x, err := strconv.ParseFloat(num, 64)
	if err != nil {
		return 0, None, fmt.Errorf("%w %q: %q is not a number (accepted units: %s)", ErrSyntax, s, num, strings.Join(Suffixes(None), ", "))
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, None, fmt.Errorf("%w %q: not a finite number", ErrSyntax, s)
	}
	if suf == "" {
		return x, None, nil
	}
	u, ok := lookup(suf)
	if !ok {
		return 0, None, fmt.Errorf("%w %q: unknown unit %q (accepted units: %s)", ErrSyntax, s, suf, strings.Join(Suffixes(None), ", "))
	}
	v := x*u.scale + u.offset
	if math.IsInf(v, 0) {
		return 0, None, fmt.Errorf("%w %q: too large", ErrSyntax, s)
	}
	return v, u.dim, nil
}

// ParseTemperature reads a temperature ("298.15", "298.15K", "25degC",
// "77degF") and returns it in K. It refuses pressure units, and
// temperatures at or below absolute zero.
func ParseTemperature(s string) (float64, error) {
	return parseAs(s, Temperature, "K")
}

// ParsePressure reads a pressure ("101325", "101325Pa", "2bar", "200MPa",
// "1atm", "14.7psi") and returns it in Pa. It refuses temperature units and
// pressures that are not positive.
func ParsePressure(s string) (float64, error) {
	return parseAs(s, Pressure, "Pa")
}

func parseAs(s string, want Dimension, si string) (float64, error) {
	v, d, err := Parse(s)
	if err != nil {
		if strings.Contains(err.Error(), "accepted units") {
			// Name only the units of the wanted dimension.
			return 0, fmt.Errorf("%w %q as a %s (accepted: a number in %s, or with a unit: %s)",
				ErrSyntax, s, want, si, strings.Join(Suffixes(want), ", "))
		}
		return 0, fmt.Errorf("%s: %w", want, err)
	}
	if d != None && d != want {
		return 0, fmt.Errorf("%w %q: a %s unit where a %s is wanted (accepted: %s)",
			ErrSyntax, s, d, want, strings.Join(Suffixes(want), ", "))
	}
	if v <= 0 {
		return 0, fmt.Errorf("%s %q is %g %s: must be > 0 %s", want, s, v, si, si)
	}
	return v, nil
}

// split separates a leading number from a trailing unit suffix.
func split(t string) (num, suf string) {
	// The suffix starts at the first letter or '°' that is not part of an
	// exponent ("1e5Pa": the 'e' followed by a digit or sign is exponent).
	for i := 0; i < len(t); i++ {
		c := t[i]
		switch {
		case c >= '0' && c <= '9', c == '.', c == '+', c == '-':
			continue
		case (c == 'e' || c == 'E') && i > 0 && i+1 < len(t) && isExpStart(t[i+1:]):
			continue
		}
		if i == 0 && (strings.HasPrefix(strings.ToLower(t), "nan") || strings.HasPrefix(strings.ToLower(t), "inf")) {
			return t, ""
		}
		return strings.TrimSpace(t[:i]), strings.TrimSpace(t[i:])
	}
	return t, ""
}

func isExpStart(r string) bool {
	c := r[0]
	if c == '+' || c == '-' {
		return len(r) > 1 && r[1] >= '0' && r[1] <= '9'
	}
	return c >= '0' && c <= '9'
}

func lookup(suf string) (unit, bool) {
	for _, u := range table {
		if u.suffix == suf {
			return u, true
		}
	}
	switch suf {
	case "k":
		return table[0], true
	case "degc", "°c":
		return table[1], true
	case "degf", "°f":
		return table[3], true
	}
	return unit{}, false
}
