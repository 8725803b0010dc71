// Package units parses and resolves the units written in massline model
// files, and does dimensional arithmetic on them.
//
// A model writes a unit in square brackets after a number, as in
// "1.5 [mm]" or "4e-10 [m^2/s]". The language layer hands the text between
// the brackets to Parse (or ParseAt, to shift error offsets into the file)
// and gets back a Unit: a scale to coherent SI units, a Dim (the exponents
// of the seven SI base quantities) and a canonical spelling. Dimension
// checking itself is done by the compiler with Dim values; nothing in this
// package panics on bad input.
//
// # Grammar
//
//	unit     = "" | "-" | "1" | quotient
//	quotient = product { "/" term }
//	product  = term { ( "*" | "·" | "⋅" ) term }
//	term     = primary [ "^" exponent ]
//	primary  = symbol | "1" | "(" quotient ")"
//	exponent = [ "+" | "-" ] digits | "(" [ "+" | "-" ] digits ")"
//	symbol   = [ prefix ] name
//
// Whitespace may surround any operator. The rules, and the choices behind
// them:
//
//   - Empty text, "-" and "1" all mean dimensionless (the unit One, spelled
//     "1").
//   - Multiplication is "*", the middle dot "·" (U+00B7) or the dot operator
//     "⋅" (U+22C5). A full stop "." is not accepted ("N.m" is an error
//     suggesting "*"), because it is easily confused with a decimal point;
//     nor is juxtaposition ("N m" asks for a "*").
//   - Division is left-associative: "J/mol/K" is J/(mol·K). A "*" after a
//     divisor, as in "mol/m^3*s", is rejected as ambiguous with the
//     suggestion "mol/(m^3*s)".
//   - Exponents are integers (|n| ≤ 127), written after "^", possibly
//     negative ("s^-1", "m^(-3)"). Fractional powers, repeated "^" without
//     parentheses, "**", superscript digits ("m²") and exponents written
//     without "^" ("cm2", "s-1") are errors, each suggesting the accepted
//     spelling ("cm^2", "s^-1", ...).
//   - The only number allowed is 1, as in "1/s"; "1000/s" is an error: the
//     factor belongs in the value, not the unit.
//   - Unit symbols are case-sensitive, as in the SI: "mm" is a millimetre,
//     "mM" millimolar, "mPa" a millipascal, "MPa" a megapascal.
//
// # Units
//
// Prefixes are accepted only where they are in common use: k d c m µ n p
// on m; m µ n on s; k m µ n on g; k m µ n p on mol; d c m µ n on L (and l);
// m µ n p on M; m h k M G on Pa; m on bar; m k on N; m k M on J and W;
// m µ n on A.
// The micro prefix may be written "µ" (U+00B5, the canonical spelling),
// "μ" (U+03BC) or "u". Time units other than s, and K, °C, atm, cd, %,
// ppm and ppb, take no prefix ("kmin" is an error naming the prefix).
//
//	m                metre
//	s, min, h, d     second, minute (60 s), hour (3600 s), day (86400 s)
//	g                gram (10^-3 kg); "kg" is the SI base unit
//	mol              mole
//	L, l             litre (10^-3 m^3); canonical spelling "L"
//	M                molar, mol/L (10^3 mol/m^3); "mM" is 1 mol/m^3
//	Pa, bar, atm     pascal, bar (10^5 Pa), standard atmosphere (101325 Pa)
//	K, °C            kelvin; degree Celsius (see below)
//	N, J, W          newton, joule, watt
//	A, cd            ampere, candela (so that every Dim.String parses)
//	%, ppm, ppb      the pure numbers 10^-2, 10^-6 and 10^-9
//
// ppm and ppb are plain ratios: "10 [ppm]" is the number 1e-5, not a mass
// concentration. Write "mg/L" or "mg/kg" when that is meant. A mass
// concentration such as "mg/L" simply has dimension mass/volume; the
// compiler converts it to an amount concentration with a molar mass.
//
// The degree Celsius, written "°C" or "degC", is the only unit with an
// Offset (273.15 K). It must stand alone ("25 [°C]"): in a compound or
// raised to a power it is an error suggesting "K", since a temperature
// step of 1 °C is 1 K.
//
// # Canonical spelling
//
// Parse merges powers of the same symbol ("m*m" is "m^2", "m*s/m" is "s")
// and writes Unit.Text with the symbols of positive power first, in order
// of first appearance, then "/" and those of negative power, joined by "·",
// with a parenthesised denominator when it has more than one factor:
// "mol/m^3/s" becomes "mol/(m^3·s)". Different symbols are never merged:
// "mm/m" stays "mm/m" with Scale 1e-3. Parse(u.Text) returns u again.
//
// Scale is computed exactly (as a rational number) and rounded once to
// float64, so it does not depend on how a unit is written: "cm^2/s" has a
// Scale equal to the literal 1e-4, "mmol/L" exactly 1.
//
// Dim.String writes a dimension in coherent SI base units in the order
// kg, m, mol, K, A, cd, s, numerator before denominator; Dim.Describe adds
// the physical name of common dimensions, such as "m^2/s (diffusivity)".
//
// # Errors
//
// Parse reports the first problem as an *Error carrying the byte span of
// the offending text, a message, and where possible a replacement: an
// unknown symbol gets the closest accepted spelling from Suggest.
package units
