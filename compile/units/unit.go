package units

import "fmt"

// Unit is a resolved unit of measurement. A value v written in the unit is
//
//	v·Scale + Offset
//
// in coherent SI units of dimension Dim. Offset is zero for every unit
// except the degree Celsius, whose Offset is 273.15 (K); see the package
// documentation for where "°C" may be written. Units compare with ==; two
// units parsed from spellings with the same canonical Text are equal.
type Unit struct {
	// Scale is the size of the unit in coherent SI units, the exact value
	// correctly rounded to float64 (so "cm^2/s" has Scale 1e-4 exactly as
	// the literal 1e-4 does).
	Scale float64
	// Offset is added after scaling; non-zero only for "°C".
	Offset float64
	// Dim is the dimension.
	Dim Dim
	// Text is the canonical spelling; Parse(Text) returns this same Unit.
	Text string
}

// One is the dimensionless unit of scale 1, written "1".
var One = Unit{Scale: 1, Text: "1"}

// Convert returns the SI value of v expressed in u: v·Scale + Offset.
func (u Unit) Convert(v float64) float64 { return v*u.Scale + u.Offset }

// FromSI returns the value in u of the SI value si: (si − Offset)/Scale.
func (u Unit) FromSI(si float64) float64 { return (si - u.Offset) / u.Scale }

// String returns the canonical spelling, Text.
func (u Unit) String() string { return u.Text }

// Describe returns the canonical spelling with the dimension in words, such
// as "mg/L = 0.001 kg/m^3 (mass concentration or density)" or, for the
// degree Celsius, "°C: 0 °C = 273.15 K (temperature)".
func (u Unit) Describe() string {
	si := u.Dim.Describe()
	if u.Scale == 1 && u.Offset == 0 && u.Text == u.Dim.String() {
		return si
	}
	if u.Offset != 0 {
		return fmt.Sprintf("%s: 0 %s = %g %s", u.Text, u.Text, u.Offset, si)
	}
	return fmt.Sprintf("%s = %.6g %s", u.Text, u.Scale, si)
}
