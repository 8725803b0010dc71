package report

import (
	"math"
	"testing"
)

func TestFormatNumber(t *testing.T) {
	tests := []struct {
		v    float64
		sig  int
		want string
	}{
		{0, 5, "0"},
		{math.Copysign(0, -1), 5, "0"},
		{1, 5, "1"},
		{0.5, 5, "0.5"},
		{123.456789, 5, "123.46"},
		{-123.456789, 5, "-123.46"},
		{12345.6, 5, "12346"},
		{123456, 5, "1.2346e5"},
		{1.5e-7, 5, "1.5e-7"},
		{0.00012345, 5, "0.00012345"},
		{0.000012345, 5, "1.2345e-5"},
		{4e-10, 3, "4e-10"},
		{2.0 / 3, 0, "0.66667"}, // 0 digits means the default
		{2.0 / 3, 2, "0.67"},
		{2.0 / 3, 99, "0.66666666666666663"},
		{math.NaN(), 5, "NaN"},
		{math.Inf(1), 5, "Inf"},
		{math.Inf(-1), 5, "-Inf"},
		{1e300, 5, "1e300"},
	}
	for _, tc := range tests {
		if got := FormatNumber(tc.v, tc.sig); got != tc.want {
			t.Errorf("FormatNumber(%v, %d) = %q, want %q", tc.v, tc.sig, got, tc.want)
		}
	}
}

func TestPrettyUnitAndLabel(t *testing.T) {
	tests := []struct{ in, want string }{
		{"m^2/s", "m²/s"},
		{"s^-1", "s⁻¹"},
		{"mol*m^-3", "mol·m⁻³"},
		{"mol/m^3", "mol/m³"},
		{"m^", "m^"},    // caret without digits kept
		{"m^x", "m^x"},  // not an integer power
		{"kg", "kg"},    // nothing to do
		{"m^12", "m¹²"}, // several digits
		{"m^-", "m^-"},  // minus without digits kept
		{"", ""},
	}
	for _, tc := range tests {
		if got := PrettyUnit(tc.in); got != tc.want {
			t.Errorf("PrettyUnit(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	labels := []struct{ name, unit, want string }{
		{"time", "s", "time [s]"},
		{"uptake", "1", "uptake"},
		{"uptake", "", "uptake"},
		{"uptake", "  ", "uptake"},
		{"D", "m^2/s", "D [m²/s]"},
		{"", "mm", "[mm]"},
	}
	for _, tc := range labels {
		if got := Label(tc.name, tc.unit); got != tc.want {
			t.Errorf("Label(%q, %q) = %q, want %q", tc.name, tc.unit, got, tc.want)
		}
	}
	if got := (Column{"D", "m^2/s"}).Header(); got != "D [m^2/s]" {
		t.Errorf("Column.Header keeps the unit as written: got %q", got)
	}
}

func TestFormatColumn(t *testing.T) {
	tests := []struct {
		name string
		in   []float64
		want []string
	}{
		{"plain", []float64{0, 0.5, 60, 14400}, []string{"0", "0.5", "60", "14400"}},
		{"five digits", []float64{0.123456, 1.23456}, []string{"0.12346", "1.2346"}},
		{"small values keep digits", []float64{0.8, 0.0012345}, []string{"0.8", "0.0012345"}},
		{"false zero switches to exponent", []float64{0.8, 1e-12}, []string{"8.0000e-01", "1.0000e-12"}},
		{"large", []float64{1e6, 2.5e6}, []string{"1.0000e+06", "2.5000e+06"}},
		{"tiny", []float64{4e-10, 0}, []string{"4.0000e-10", "0"}},
		{"all zero", []float64{0, 0}, []string{"0", "0"}},
		{"non-finite", []float64{1, math.NaN(), math.Inf(-1)}, []string{"1", "NaN", "-Inf"}},
		{"negative", []float64{-1.5, 2}, []string{"-1.5", "2"}},
		{"empty", nil, []string{}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := formatColumn(tc.in, 5)
			if len(got) != len(tc.want) {
				t.Fatalf("got %q, want %q", got, tc.want)
			}
			for i := range got {
				if got[i] != tc.want[i] {
					t.Errorf("value %d: got %q, want %q", i, got[i], tc.want[i])
				}
			}
		})
	}
}
