package units

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestParseTemperature(t *testing.T) {
	t.Parallel()
	tests := []struct {
		in   string
		want float64
	}{
		{"298.15", 298.15},
		{"298.15K", 298.15},
		{"298.15 K", 298.15},
		{"25degC", 298.15},     // 0 °C = 273.15 K exactly (SI definition)
		{"-5degC", 268.15},     // SI definition of the Celsius scale
		{"25°C", 298.15},       // SI definition of the Celsius scale
		{"77degF", 298.15},     // 77 °F = 25 °C, common practice
		{"-40degF", 233.15},    // -40 °F = -40 °C, common practice
		{"491.67degR", 273.15}, // Rankine: 491.67 °R = 0 °C, common practice
		{"2.7315e2K", 273.15},
		{"1e3", 1000},
	}
	for _, tt := range tests {
		got, err := ParseTemperature(tt.in)
		if err != nil {
			t.Errorf("ParseTemperature(%q): %v", tt.in, err)
			continue
		}
		if !scalar.EqualWithinAbsOrRel(got, tt.want, 1e-12, 1e-13) {
			t.Errorf("ParseTemperature(%q) = %.15g, want %.15g", tt.in, got, tt.want)
		}
	}
}

func TestParsePressure(t *testing.T) {
	t.Parallel()
	tests := []struct {
		in   string
		want float64
	}{
		{"101325", 101325},
		{"101325Pa", 101325},
		{"1atm", 101325}, // standard atmosphere, exact by definition
		{"2bar", 2e5},    // 1 bar = 1e5 Pa, exact by definition
		{"200MPa", 200e6},
		{"0.1 MPa", 1e5},
		{"14.7psi", 101352.93221}, // 1 psi = 6894.757293168 Pa, common practice
		{"760torr", 101325},       // 1 torr = 101325/760 Pa, exact by definition
		{"3.5kPa", 3500},
		{"1e5Pa", 1e5},
		{"1.5e-3GPa", 1.5e6},
		{"10mbar", 1000},
		{"2kbar", 2e8},
		{"1013.25hPa", 101325},
	}
	for _, tt := range tests {
		got, err := ParsePressure(tt.in)
		if err != nil {
			t.Errorf("ParsePressure(%q): %v", tt.in, err)
			continue
		}
		if !scalar.EqualWithinAbsOrRel(got, tt.want, 1e-9, 1e-10) {
			t.Errorf("ParsePressure(%q) = %.15g, want %.15g", tt.in, got, tt.want)
		}
	}
}

func TestParseErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		in      string
		temp    bool
		mention string
	}{
		{"", true, "degC"},
		{"abc", true, "degC"},
		{"25 furlongs", true, "degC"},
		{"2bar", true, "temperature"},
		{"25degC", false, "pressure"},
		{"NaN", true, "finite"},
		{"Inf", false, "finite"},
		{"-inf", false, "MPa"},
		{"-300degC", true, "> 0 K"},
		{"0", true, "> 0 K"},
		{"-1bar", false, "> 0 Pa"},
		{"1e999", false, "number"},
		{"mPa", false, "number"},
		{"5mPa", false, "MPa"},
	}
	for _, tt := range tests {
		var err error
		if tt.temp {
			_, err = ParseTemperature(tt.in)
		} else {
			_, err = ParsePressure(tt.in)
		}
		if err == nil {
			t.Errorf("%q: no error", tt.in)
			continue
		}
		if !strings.Contains(err.Error(), tt.mention) {
			t.Errorf("%q: error %q does not mention %q", tt.in, err, tt.mention)
		}
	}
}

func TestParseDimension(t *testing.T) {
	t.Parallel()
	if _, d, err := Parse("3bar"); err != nil || d != Pressure {
		t.Errorf("Parse(3bar) dimension %v, %v", d, err)
	}
	if _, d, err := Parse("3K"); err != nil || d != Temperature {
		t.Errorf("Parse(3K) dimension %v, %v", d, err)
	}
	if _, d, err := Parse("3"); err != nil || d != None {
		t.Errorf("Parse(3) dimension %v, %v", d, err)
	}
	if _, _, err := Parse("3 parsecs"); !errors.Is(err, ErrSyntax) {
		t.Errorf("Parse(3 parsecs) error %v does not wrap ErrSyntax", err)
	}
}

func FuzzParse(f *testing.F) {
	for _, s := range []string{"25degC", "298.15K", "298.15", "2bar", "200MPa", "1atm", "101325Pa", "14.7psi", "-5degC", "77degF", "1e5", "NaN", "", "°C", "1e", "--1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, d, err := Parse(s)
		if err != nil {
			if !errors.Is(err, ErrSyntax) {
				t.Fatalf("Parse(%q) error %v does not wrap ErrSyntax", s, err)
			}
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("Parse(%q) = %v, %v: not finite", s, v, d)
		}
		if tv, err := ParseTemperature(s); err == nil && (tv <= 0 || (d != None && d != Temperature)) {
			t.Fatalf("ParseTemperature(%q) = %v accepted", s, tv)
		}
		if pv, err := ParsePressure(s); err == nil && (pv <= 0 || (d != None && d != Pressure)) {
			t.Fatalf("ParsePressure(%q) = %v accepted", s, pv)
		}
	})
}
