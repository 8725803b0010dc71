package units

import (
	"math"
	"strconv"
	"strings"
)

// Base names one of the seven SI base quantities; it indexes a Dim.
type Base int

// The SI base quantities, in the order in which they index a Dim.
const (
	BaseLength      Base = iota // metre, m
	BaseMass                    // kilogram, kg
	BaseTime                    // second, s
	BaseAmount                  // mole, mol
	BaseTemperature             // kelvin, K
	BaseCurrent                 // ampere, A
	BaseLuminous                // candela, cd
	NumBases                    // number of base quantities (7)
)

// Dim is a dimension: the integer exponents of the SI base quantities,
// indexed by Base. The zero value is dimensionless. Dims compare with ==.
type Dim [NumBases]int8

// maxExp is the largest magnitude of an exponent in a Dim or of a single
// unit symbol inside a parsed unit.
const maxExp = math.MaxInt8

// dim builds a Dim from exponents of length, mass, time, amount and
// temperature (the bases massline models actually use).
func dim(l, m, t, n, th int8) Dim {
	return Dim{BaseLength: l, BaseMass: m, BaseTime: t, BaseAmount: n, BaseTemperature: th}
}

// Named dimensions. They are values; treat them as constants.
var (
	Dimensionless     = Dim{}
	Length            = dim(1, 0, 0, 0, 0)
	Mass              = dim(0, 1, 0, 0, 0)
	Time              = dim(0, 0, 1, 0, 0)
	Amount            = dim(0, 0, 0, 1, 0)
	Temperature       = dim(0, 0, 0, 0, 1)
	Current           = Dim{BaseCurrent: 1}
	LuminousIntensity = Dim{BaseLuminous: 1}

	Area              = dim(2, 0, 0, 0, 0)   // m^2
	Volume            = dim(3, 0, 0, 0, 0)   // m^3
	Frequency         = dim(0, 0, -1, 0, 0)  // 1/s: first-order rate constant
	Velocity          = dim(1, 0, -1, 0, 0)  // m/s: also a mass-transfer coefficient
	Diffusivity       = dim(2, 0, -1, 0, 0)  // m^2/s
	Concentration     = dim(-3, 0, 0, 1, 0)  // mol/m^3
	MassConcentration = dim(-3, 1, 0, 0, 0)  // kg/m^3: also density
	ReactionRate      = dim(-3, 0, -1, 1, 0) // mol/(m^3·s)
	MolarFlux         = dim(-2, 0, -1, 1, 0) // mol/(m^2·s)
	MolarMass         = dim(0, 1, 0, -1, 0)  // kg/mol
	Force             = dim(1, 1, -2, 0, 0)  // N
	Pressure          = dim(-1, 1, -2, 0, 0) // Pa
	Energy            = dim(2, 1, -2, 0, 0)  // J
	Power             = dim(2, 1, -3, 0, 0)  // W
)

// IsZero reports whether d is dimensionless.
func (d Dim) IsZero() bool { return d == Dim{} }

// Mul returns the dimension of a product, d·e. An exponent that would leave
// the int8 range is clamped to ±127; use MulChecked to detect that.
func (d Dim) Mul(e Dim) Dim {
	r, _ := d.MulChecked(e)
	return r
}

// Div returns the dimension of a quotient, d/e. An exponent that would leave
// the int8 range is clamped to ±127; use DivChecked to detect that.
func (d Dim) Div(e Dim) Dim {
	r, _ := d.DivChecked(e)
	return r
}

// MulChecked returns d·e and ok = false if an exponent leaves the range
// [-127, 127] (the result is then clamped).
func (d Dim) MulChecked(e Dim) (Dim, bool) {
	var r Dim
	ok := true
	for i := range d {
		v, in := clamp(int(d[i]) + int(e[i]))
		r[i] = v
		ok = ok && in
	}
	return r, ok
}

// DivChecked returns d/e and ok = false if an exponent leaves the range
// [-127, 127] (the result is then clamped).
func (d Dim) DivChecked(e Dim) (Dim, bool) {
	var r Dim
	ok := true
	for i := range d {
		v, in := clamp(int(d[i]) - int(e[i]))
		r[i] = v
		ok = ok && in
	}
	return r, ok
}

// Pow returns d raised to the integer power n. ok is false, and the result
// clamped, if an exponent leaves the range [-127, 127].
func (d Dim) Pow(n int) (Dim, bool) {
	var r Dim
	ok := true
	// Bound n first so that the product cannot overflow int64.
	m := int64(max(min(n, 2*maxExp), -2*maxExp))
	for i := range d {
		v, in := clamp64(int64(d[i]) * m)
		r[i] = v
		ok = ok && in
	}
	return r, ok
}

// Root returns the n-th root of d (n ≥ 1), for example Root(2) of m^2/s^2
// is m/s. ok is false, and the result is Dimensionless, when n < 1 or an
// exponent of d is not a multiple of n.
func (d Dim) Root(n int) (Dim, bool) {
	if n < 1 {
		return Dim{}, false
	}
	var r Dim
	for i := range d {
		if int(d[i])%n != 0 {
			return Dim{}, false
		}
		r[i] = int8(int(d[i]) / n)
	}
	return r, true
}

func clamp(v int) (int8, bool) { return clamp64(int64(v)) }

func clamp64(v int64) (int8, bool) {
	switch {
	case v > maxExp:
		return maxExp, false
	case v < -maxExp:
		return -maxExp, false
	}
	return int8(v), true
}

// symbolOrder is the canonical order of base symbols in Dim.String: mass,
// length, amount, temperature, current, luminous intensity, time. Time comes
// last so that rates read naturally ("mol/(m^3·s)", "kg·m^2/s^2").
var symbolOrder = [NumBases]Base{BaseMass, BaseLength, BaseAmount, BaseTemperature, BaseCurrent, BaseLuminous, BaseTime}

// baseSymbol is the SI symbol of the coherent unit of each base quantity.
var baseSymbol = [NumBases]string{
	BaseLength: "m", BaseMass: "kg", BaseTime: "s", BaseAmount: "mol",
	BaseTemperature: "K", BaseCurrent: "A", BaseLuminous: "cd",
}

// String writes d in coherent SI base units, for example "mol/(m^3·s)",
// "m^2/s", "1/s", "kg·m^2/s^2", or "1" when d is dimensionless.
//
// Symbols with positive exponents form the numerator and those with
// negative exponents the denominator; within each, symbols appear in the
// order kg, m, mol, K, A, cd, s. Factors are joined by the middle dot "·"
// (U+00B7), powers are written with an ASCII "^", and a denominator of more
// than one factor is put in parentheses. The result parses back with Parse
// to a unit of scale 1 and dimension d.
func (d Dim) String() string {
	var num, den []string
	for _, b := range symbolOrder {
		e := int(d[b])
		switch {
		case e > 0:
			num = append(num, power(baseSymbol[b], e))
		case e < 0:
			den = append(den, power(baseSymbol[b], -e))
		}
	}
	return fraction(num, den)
}

// power writes sym^e, or sym when e == 1.
func power(sym string, e int) string {
	if e == 1 {
		return sym
	}
	return sym + "^" + strconv.Itoa(e)
}

// fraction joins numerator and denominator factors.
func fraction(num, den []string) string {
	n := "1"
	if len(num) > 0 {
		n = strings.Join(num, "·")
	}
	switch len(den) {
	case 0:
		return n
	case 1:
		return n + "/" + den[0]
	}
	return n + "/(" + strings.Join(den, "·") + ")"
}

// dimNames gives the common physical meaning of dimensions that occur in
// diffusion, sorption and reaction models.
var dimNames = map[Dim]string{
	Dimensionless:         "dimensionless",
	Length:                "length",
	Mass:                  "mass",
	Time:                  "time",
	Amount:                "amount of substance",
	Temperature:           "temperature",
	Current:               "electric current",
	LuminousIntensity:     "luminous intensity",
	Area:                  "area",
	Volume:                "volume",
	dim(-1, 0, 0, 0, 0):   "inverse length, e.g. specific surface area",
	Frequency:             "first-order rate constant or frequency",
	Velocity:              "velocity or mass-transfer coefficient",
	Diffusivity:           "diffusivity",
	Concentration:         "concentration",
	MassConcentration:     "mass concentration or density",
	ReactionRate:          "reaction rate",
	MolarFlux:             "molar flux",
	dim(-2, 1, -1, 0, 0):  "mass flux",
	dim(-2, 0, 0, 1, 0):   "amount per area",
	dim(-4, 0, 0, 1, 0):   "concentration gradient",
	dim(0, 0, -1, 1, 0):   "amount flow rate",
	dim(0, 1, -1, 0, 0):   "mass flow rate",
	dim(3, 0, -1, 0, 0):   "volumetric flow rate",
	MolarMass:             "molar mass",
	dim(3, 0, 0, -1, 0):   "molar volume or affinity constant",
	dim(0, -1, 0, 1, 0):   "amount per mass, e.g. sorbed loading",
	dim(3, -1, 0, 0, 0):   "specific volume or distribution coefficient",
	dim(3, 0, -1, -1, 0):  "second-order rate constant",
	dim(0, 0, 0, 0, -1):   "inverse temperature",
	dim(-1, 1, -1, 0, 0):  "dynamic viscosity",
	Force:                 "force",
	Pressure:              "pressure or stress",
	Energy:                "energy",
	Power:                 "power",
	dim(2, 1, -2, -1, 0):  "molar energy, e.g. activation energy",
	dim(2, 1, -2, -1, -1): "molar heat capacity or entropy, e.g. the gas constant",
	dim(2, 0, -2, 0, -1):  "specific heat capacity",
	dim(1, 1, -3, 0, -1):  "thermal conductivity",
	dim(0, 1, -3, 0, -1):  "heat-transfer coefficient",
}

// Describe writes d in SI form followed, when d is a dimension with a common
// physical name, by that name in parentheses: "m^2/s (diffusivity)",
// "mol/(m^3·s) (reaction rate)", "1 (dimensionless)". Other dimensions are
// written in SI form alone.
func (d Dim) Describe() string {
	if name, ok := dimNames[d]; ok {
		return d.String() + " (" + name + ")"
	}
	return d.String()
}
