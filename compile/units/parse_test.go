package units

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestParseCompound(t *testing.T) {
	tests := []struct {
		text  string
		scale float64
		dim   Dim
		canon string
	}{
		// Scales follow from the catalogue's reference values (see
		// table_test.go for their sources) by exact arithmetic.
		{"mol/(m^3*s)", 1, ReactionRate, "mol/(m^3·s)"},
		{"mol/(m^3·s)", 1, ReactionRate, "mol/(m^3·s)"},
		{"mol / (m^3 ⋅ s)", 1, ReactionRate, "mol/(m^3·s)"},
		{"mol/m^3/s", 1, ReactionRate, "mol/(m^3·s)"},
		{"mol*m^-3*s^-1", 1, ReactionRate, "mol/(m^3·s)"},
		{"m^2/s", 1, Diffusivity, "m^2/s"},
		{"cm^2/s", 1e-4, Diffusivity, "cm^2/s"},          // (1e-2)^2
		{"mm^2/min", 1e-6 / 60, Diffusivity, "mm^2/min"}, // one division, correctly rounded
		{"mg/L", 1e-3, MassConcentration, "mg/L"},        // 1e-6 / 1e-3
		{"g/L", 1, MassConcentration, "g/L"},
		{"mM", 1, Concentration, "mM"},
		{"mmol/L", 1, Concentration, "mmol/L"},
		{"µmol/L", 1e-3, Concentration, "µmol/L"},
		{"mol/L", 1e3, Concentration, "mol/L"},
		{"g/mol", 1e-3, MolarMass, "g/mol"},
		{"1/s", 1, Frequency, "1/s"},
		{"s^-1", 1, Frequency, "1/s"},
		{"s^(-1)", 1, Frequency, "1/s"},
		{"1/min", 1.0 / 60, Frequency, "1/min"},
		{"1/h", 1.0 / 3600, Frequency, "1/h"},
		{"1/d", 1.0 / 86400, Frequency, "1/d"},
		{"m/s", 1, Velocity, "m/s"},
		{"cm/h", 1e-2 / 3600, Velocity, "cm/h"},
		{"mL", 1e-6, Volume, "mL"},
		{"cm^3", 1e-6, Volume, "cm^3"},
		{"dm^3", 1e-3, Volume, "dm^3"},
		{"m^3", 1, Volume, "m^3"},
		{"L/(mol*s)", 1e-3, dim(3, 0, -1, -1, 0), "L/(mol·s)"},
		{"J/mol/K", 1, dim(2, 1, -2, -1, -1), "J/(mol·K)"},
		{"kJ/mol", 1e3, dim(2, 1, -2, -1, 0), "kJ/mol"},
		{"kg·m^2/s^2", 1, Energy, "kg·m^2/s^2"},
		{"N*m", 1, Energy, "N·m"},
		{"mPa*s", 1e-3, dim(-1, 1, -1, 0, 0), "mPa·s"},
		{"(m/s)^2", 1, dim(2, 0, -2, 0, 0), "m^2/s^2"},
		{"(mm)^+2", 1e-6, Area, "mm^2"},
		{"m*m", 1, Area, "m^2"},
		{"m*s/m", 1, Time, "s"},
		{"m/m", 1, Dimensionless, "1"},
		{"mm/m", 1e-3, Dimensionless, "mm/m"},
		{"m^0", 1, Dimensionless, "1"},
		{"%/h", 1e-2 / 3600, Frequency, "%/h"},
		{"mg/kg", 1e-6, Dimensionless, "mg/kg"},
		{"um", 1e-6, Length, "µm"},
		{"μm", 1e-6, Length, "µm"},
		{"ml/min", 1e-6 / 60, dim(3, 0, -1, 0, 0), "mL/min"},
		{"atm", 101325, Pressure, "atm"},
		{"1 / (1/s)", 1, Time, "s"},
		{"1", 1, Dimensionless, "1"},
		{"", 1, Dimensionless, "1"},
		{"  ", 1, Dimensionless, "1"},
		{"-", 1, Dimensionless, "1"},
		{" - ", 1, Dimensionless, "1"},
		{"  mm ", 1e-3, Length, "mm"},
		{"%", 1e-2, Dimensionless, "%"},
		{"ppm", 1e-6, Dimensionless, "ppm"},
	}
	for _, tt := range tests {
		u, err := Parse(tt.text)
		if err != nil {
			t.Errorf("Parse(%q): %v", tt.text, err)
			continue
		}
		if u.Scale != tt.scale || u.Dim != tt.dim || u.Text != tt.canon || u.Offset != 0 {
			t.Errorf("Parse(%q) = {%g, %g, %v, %q}, want {%g, 0, %v, %q}",
				tt.text, u.Scale, u.Offset, u.Dim, u.Text, tt.scale, tt.dim, tt.canon)
		}
	}
}

// TestScaleIndependentOfSpelling checks that equal units written in
// different ways have bit-identical scales.
func TestScaleIndependentOfSpelling(t *testing.T) {
	groups := [][]string{
		{"mmol/L", "mM", "mol/m^3", "µmol/mL", "nmol/µL"},
		{"cm^2/s", "cm*cm/s", "s^-1*cm^2", "mm^2*mm^-2*cm^2/s"},
		{"1/min", "min^-1", "h/min/h", "s/(min*s)"},
		{"mg/L", "g/m^3", "µg/mL", "ng/µL"},
		{"atm/min", "min^-1*atm", "atm*h/min/h"},
	}
	for _, g := range groups {
		first, err := Parse(g[0])
		if err != nil {
			t.Fatalf("Parse(%q): %v", g[0], err)
		}
		for _, s := range g[1:] {
			u, err := Parse(s)
			if err != nil || u.Scale != first.Scale || u.Dim != first.Dim {
				t.Errorf("Parse(%q) = %g %v, %v; want %g %v as for %q", s, u.Scale, u.Dim, err, first.Scale, first.Dim, g[0])
			}
		}
	}
}

func TestConvert(t *testing.T) {
	tests := []struct {
		v    float64
		unit string
		si   float64
	}{
		{1.5, "mm", 1.5e-3},
		{4e-10, "m^2/s", 4e-10},
		{2e-3, "1/s", 2e-3},
		{0.8, "mol/m^3", 0.8},
		{1.2, "mL", 1.2e-6},
		{25, "%", 0.25},
		{300, "K", 300},
		{1, "bar", 1e5},
		{10, "mg/L", 1e-2},
		{479.3, "g/mol", 0.4793},
		{4, "h", 14400},
		{5, "min", 300},
		{1, "atm", 101325},
		{2.5, "mM", 2.5},
		{1e-5, "cm^2/s", 1e-9},
		// source: SI Brochure 9th ed. (2019), Sec. 2.3.1: t/°C = T/K − 273.15
		// (section number from memory).
		{25, "°C", 298.15},
		{0, "degC", 273.15},
		{-273.15, "°C", 0},
	}
	for _, tt := range tests {
		u, err := Parse(tt.unit)
		if err != nil {
			t.Fatalf("Parse(%q): %v", tt.unit, err)
		}
		got := u.Convert(tt.v)
		if !approxEqual(got, tt.si) {
			t.Errorf("%g [%s] = %.17g SI, want %.17g", tt.v, tt.unit, got, tt.si)
		}
		if back := u.FromSI(got); !approxEqual(back, tt.v) {
			t.Errorf("FromSI(Convert(%g [%s])) = %.17g", tt.v, tt.unit, back)
		}
	}
}

// approxEqual compares to a few units in the last place.
func approxEqual(a, b float64) bool {
	return a == b || math.Abs(a-b) <= 4e-16*math.Max(math.Abs(a), math.Abs(b))
}

func TestParseErrors(t *testing.T) {
	tests := []struct {
		text       string
		offset     int
		end        int
		msg        string
		suggestion string
	}{
		{"mmm", 0, 3, `unknown unit "mmm"`, "mm"},
		{"mol/mmm", 4, 7, `unknown unit "mmm"`, "mm"},
		{"hr", 0, 2, `unknown unit "hr"`, "h"},
		{"sec", 0, 3, `unknown unit "sec"`, "s"},
		{"Kpa", 0, 3, `unknown unit "Kpa"`, "kPa"},
		{"xyz", 0, 3, `unknown unit "xyz"`, ""},
		{"kmin", 0, 4, `prefix "k" is not used with "min"`, "min"},
		{"mK", 0, 2, `prefix "m" is not used with "K"`, "K"},
		{"cm2", 0, 3, `missing "^" before the exponent in "cm2"`, "cm^2"},
		{"m2/s", 0, 2, `missing "^" before the exponent in "m2"`, "m^2"},
		{"s-1", 0, 3, `missing "^" before the exponent in "s-1"`, "s^-1"},
		{"mol/m3", 4, 6, `missing "^" before the exponent in "m3"`, "m^3"},
		{"(m", 0, 1, `unbalanced "(": missing ")"`, ""},
		{"mol/(m^3*s", 4, 5, `unbalanced "(": missing ")"`, ""},
		{"m)", 1, 2, `unbalanced ")": no matching "("`, ""},
		{"(m))", 3, 4, `unbalanced ")": no matching "("`, ""},
		{"()", 0, 2, "empty parentheses", ""},
		{"m^0.5", 2, 5, "exponent must be an integer", ""},
		{"m^1.5", 2, 5, "exponent must be an integer", ""},
		{"m^1/2", 1, 5, "exponent must be an integer: fractional powers are not supported", ""},
		{"m^(1/2)", 2, 5, "exponent must be an integer: fractional powers are not supported", ""},
		{"m^x", 2, 3, `expected an integer exponent after "^"`, ""},
		{"m^", 2, 2, `expected an integer exponent after "^"`, ""},
		{"m^(2", 2, 3, `unbalanced "(": missing ")"`, ""},
		{"m^128", 2, 5, "exponent overflow: 128 exceeds 127", ""},
		{"m^99999999999999999999", 2, 22, "exponent overflow: 99999999999999999999 exceeds 127", ""},
		{"(m^100)^2", 0, 9, `exponent overflow: the power of "m" exceeds 127`, ""},
		{"m^100*m^100", 0, 11, `exponent overflow: the power of "m" exceeds 127`, ""},
		{"m^100*cm^100", 0, 12, "exponent overflow: the power of m in the dimension exceeds 127", ""},
		{"km^127", 0, 6, "unit scale out of floating-point range", ""},
		{"pm^127", 0, 6, "unit scale out of floating-point range", ""},
		{"m^2^3", 3, 4, `repeated "^": use parentheses, as in (m^2)^3`, ""},
		{"m**2", 1, 3, `powers are written with "^", not "**"`, "^"},
		{"m²", 1, 3, `superscript exponents are not accepted: write "^" and digits`, "^2"},
		{"s⁻¹", 1, 6, `superscript exponents are not accepted: write "^" and digits`, "^-1"},
		{"N.m", 1, 2, `"." does not multiply units: write "*" or "·"`, "*"},
		{"N m", 1, 2, `missing "*" between units`, "*"},
		{"m(s)", 1, 1, `missing "*" between units`, "*"},
		{"1000/s", 0, 4, "number 1000 not allowed in a unit: only 1, as in 1/s; put factors in the value", ""},
		{"1e-3 m", 0, 4, "number 1e-3 not allowed in a unit: only 1, as in 1/s; put factors in the value", ""},
		{"/s", 0, 0, `missing numerator before "/": write 1/s for a reciprocal unit`, "1"},
		{"m/", 2, 2, `expected a unit after "/"`, ""},
		{"m*", 2, 2, `expected a unit after "*"`, ""},
		{"m//s", 2, 3, `expected a unit, found "/"`, ""},
		{"*m", 0, 1, `expected a unit, found "*"`, ""},
		{"m-s", 1, 2, `unexpected "-" in unit`, ""},
		{"--", 0, 1, `expected a unit, found "-"`, ""},
		{"mol/m^3*s", 4, 9, `ambiguous "*" after "/": put the whole denominator in parentheses`, "(m^3*s)"},
		{"W/m^2·K", 2, 8, `ambiguous "*" after "/": put the whole denominator in parentheses`, "(m^2·K)"},
		{"J/(mol·°C)", 8, 11, `"°C" must stand alone: in compound units write K (a step of 1 °C is 1 K)`, "K"},
		{"degC^2", 0, 4, `"degC" must stand alone: in compound units write K (a step of 1 °C is 1 K)`, "K"},
		{"°C/°C", 0, 3, `"°C" must stand alone: in compound units write K (a step of 1 °C is 1 K)`, "K"},
		{"m#", 1, 2, `unexpected character '#' in unit`, ""},
		{"m_s", 1, 2, `unexpected character '_' in unit`, ""},
		{"m\xff", 1, 2, "invalid UTF-8 byte in unit", ""},
		{strings.Repeat("(", 65) + "m" + strings.Repeat(")", 65), 64, 65, "parentheses nested more than 64 deep", ""},
	}
	for _, tt := range tests {
		_, err := Parse(tt.text)
		var e *Error
		if !errors.As(err, &e) {
			t.Errorf("Parse(%q) error = %v, want *Error", tt.text, err)
			continue
		}
		if e.Offset != tt.offset || e.End != tt.end || e.Msg != tt.msg || e.Suggestion != tt.suggestion {
			t.Errorf("Parse(%q) error = {%d, %d, %q, %q}, want {%d, %d, %q, %q}",
				tt.text, e.Offset, e.End, e.Msg, e.Suggestion, tt.offset, tt.end, tt.msg, tt.suggestion)
		}
		// A suggestion replaces text[Offset:End]; applied, it must fix the
		// unit (except where a second problem remains, as in "°C/°C").
		if e.Suggestion != "" && tt.text != "°C/°C" && e.End <= len(tt.text) {
			fixed := tt.text[:e.Offset] + e.Suggestion + tt.text[e.End:]
			if _, err := Parse(fixed); err != nil {
				t.Errorf("Parse(%q): suggestion gives %q, which fails: %v", tt.text, fixed, err)
			}
		}
	}
}

func TestParseAt(t *testing.T) {
	_, err := ParseAt("mol/mmm", 100)
	var e *Error
	if !errors.As(err, &e) || e.Offset != 104 || e.End != 107 {
		t.Fatalf("ParseAt error = %#v, want offsets 104..107", err)
	}
	u, err := ParseAt("mm", 100)
	if err != nil || u.Text != "mm" {
		t.Errorf("ParseAt(mm) = %+v, %v", u, err)
	}
}

func TestErrorString(t *testing.T) {
	tests := []struct{ text, want string }{
		{"mmm", `units: byte 0: unknown unit "mmm" (did you mean "mm"?)`},
		{"/s", `units: byte 0: missing numerator before "/": write 1/s for a reciprocal unit (insert "1")`},
		{"(m", `units: byte 0: unbalanced "(": missing ")"`},
	}
	for _, tt := range tests {
		_, err := Parse(tt.text)
		if err == nil || err.Error() != tt.want {
			t.Errorf("Parse(%q) error %q, want %q", tt.text, err, tt.want)
		}
	}
}

func TestUnitDescribe(t *testing.T) {
	tests := []struct{ text, want string }{
		{"mg/L", "mg/L = 0.001 kg/m^3 (mass concentration or density)"},
		{"m^2/s", "m^2/s (diffusivity)"},
		{"cm^2/s", "cm^2/s = 0.0001 m^2/s (diffusivity)"},
		{"°C", "°C: 0 °C = 273.15 K (temperature)"},
		{"1/min", "1/min = 0.0166667 1/s (first-order rate constant or frequency)"},
	}
	for _, tt := range tests {
		u, err := Parse(tt.text)
		if err != nil {
			t.Fatal(err)
		}
		if got := u.Describe(); got != tt.want {
			t.Errorf("Describe(%q) = %q, want %q", tt.text, got, tt.want)
		}
		if u.String() != u.Text {
			t.Errorf("String() = %q, Text = %q", u.String(), u.Text)
		}
	}
}

func BenchmarkParse(b *testing.B) {
	texts := []string{"mm", "m^2/s", "mol/(m^3*s)", "mg/L", "1/min", "J/(mol·K)", "µmol/(g*h)"}
	for b.Loop() {
		for _, s := range texts {
			if _, err := Parse(s); err != nil {
				b.Fatal(err)
			}
		}
	}
}

// TestParseLongInput checks that a long product parses in reasonable time
// and merges all its factors.
func TestParseLongInput(t *testing.T) {
	s := strings.Repeat("m*", 120) + "1/(" + strings.Repeat("m*", 120) + "s)"
	u, err := Parse(s)
	if err != nil || u.Dim != Frequency || u.Text != "1/s" {
		t.Errorf("long input = %+v, %v", u, err)
	}
	deep := strings.Repeat("(", 64) + "m" + strings.Repeat(")", 64)
	if u, err := Parse(deep); err != nil || u.Text != "m" {
		t.Errorf("64 nested parentheses = %+v, %v", u, err)
	}
}
