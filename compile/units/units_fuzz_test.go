package units

import (
	"errors"
	"math"
	"testing"
	"unicode/utf8"
)

// FuzzParse checks that Parse never panics, that errors carry a valid span,
// and that every unit it accepts survives a round trip through its
// canonical Text.
func FuzzParse(f *testing.F) {
	for _, s := range []string{
		"", "-", "1", "mm", "m^2/s", "mol/(m^3*s)", "mol/(m^3·s)", "1/s", "s^-1",
		"m^(-3)", "mg/L", "mM", "µmol/L", "umol/L", "μmol/L", "%", "ppm", "°C",
		"degC", "J/mol/K", "kg·m^2/s^2", "(m/s)^2", "mm/m", "atm/min", "1/min",
		"mmm", "cm2", "s-1", "kmin", "(m", "m)", "m^0.5", "m^1/2", "m**2", "m²",
		"N.m", "N m", "/s", "mol/m^3*s", "J/(mol·°C)", "km^127", "m^128",
		"(m^100)^2", "1000/s", "m\xff", "((((m))))^-1", "m ^ +2 / ( h * mL )",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		u, err := Parse(text)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("Parse(%q) error %T is not *Error", text, err)
			}
			if e.Offset < 0 || e.End < e.Offset || e.End > len(text) || e.Msg == "" {
				t.Fatalf("Parse(%q) error span %d..%d (len %d), msg %q", text, e.Offset, e.End, len(text), e.Msg)
			}
			if u != (Unit{}) {
				t.Fatalf("Parse(%q) returned %+v with an error", text, u)
			}
			return
		}
		if !(u.Scale > 0) || math.IsInf(u.Scale, 0) || !utf8.ValidString(u.Text) || u.Text == "" {
			t.Fatalf("Parse(%q) = %+v: bad scale or text", text, u)
		}
		again, err := Parse(u.Text)
		if err != nil {
			t.Fatalf("Parse(%q) = %q, which does not parse: %v", text, u.Text, err)
		}
		if again != u {
			t.Fatalf("Parse(%q) = %+v, but Parse(%q) = %+v", text, u, u.Text, again)
		}
		if si, err := Parse(u.Dim.String()); err != nil || si.Scale != 1 || si.Dim != u.Dim {
			t.Fatalf("Dim %v of %q does not parse back: %+v, %v", u.Dim, text, si, err)
		}
	})
}
