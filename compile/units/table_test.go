package units

import (
	"slices"
	"testing"
)

func TestPrefixTable(t *testing.T) {
	// source: BIPM, The International System of Units (SI Brochure), 9th ed.,
	// 2019, Table 7 (SI prefixes), for the twenty from yotta to yocto.
	// source: 27th CGPM (2022), Resolution 3, for ronna, quetta, ronto and
	// quecto (from memory).
	want := map[string]int{
		"Q": 30, "R": 27, "Y": 24, "Z": 21, "E": 18, "P": 15, "T": 12, "G": 9,
		"M": 6, "k": 3, "h": 2, "da": 1, "d": -1, "c": -2, "m": -3, "µ": -6,
		"n": -9, "p": -12, "f": -15, "a": -18, "z": -21, "y": -24, "r": -27, "q": -30,
	}
	if len(siPrefixes) != len(want) {
		t.Errorf("prefix table has %d entries, want %d", len(siPrefixes), len(want))
	}
	for _, p := range siPrefixes {
		if e, ok := want[p.sym]; !ok || e != p.exp {
			t.Errorf("prefix %q = 10^%d, want 10^%d (known %v)", p.sym, p.exp, e, ok)
		}
	}
}

// referenceUnits lists every canonical unit spelling with its size in coherent
// SI units. TestCatalogue fails if the table grows a unit not listed here.
var referenceUnits = []struct {
	name   string
	scale  float64
	offset float64
	dim    Dim
}{
	// source: SI Brochure 9th ed. (2019), Table 2 (base units) and Table 7
	// (prefixes: k 1e3, d 1e-1, c 1e-2, m 1e-3, µ 1e-6, n 1e-9, p 1e-12).
	{"m", 1, 0, Length},
	{"km", 1e3, 0, Length},
	{"dm", 1e-1, 0, Length},
	{"cm", 1e-2, 0, Length},
	{"mm", 1e-3, 0, Length},
	{"µm", 1e-6, 0, Length},
	{"nm", 1e-9, 0, Length},
	{"pm", 1e-12, 0, Length},
	{"s", 1, 0, Time},
	{"ms", 1e-3, 0, Time},
	{"µs", 1e-6, 0, Time},
	{"ns", 1e-9, 0, Time},
	// source: SI Brochure 9th ed. (2019), Table 8: 1 min = 60 s,
	// 1 h = 3600 s, 1 d = 86 400 s.
	{"min", 60, 0, Time},
	{"h", 3600, 0, Time},
	{"d", 86400, 0, Time},
	// source: SI Brochure 9th ed. (2019), Table 2 (kilogram) and Sec. 3.2
	// (prefixes attach to the gram: 1 g = 1e-3 kg; section number from
	// memory).
	{"kg", 1, 0, Mass},
	{"g", 1e-3, 0, Mass},
	{"mg", 1e-6, 0, Mass},
	{"µg", 1e-9, 0, Mass},
	{"ng", 1e-12, 0, Mass},
	// source: SI Brochure 9th ed. (2019), Table 2 (mole) and Table 7.
	{"mol", 1, 0, Amount},
	{"kmol", 1e3, 0, Amount},
	{"mmol", 1e-3, 0, Amount},
	{"µmol", 1e-6, 0, Amount},
	{"nmol", 1e-9, 0, Amount},
	{"pmol", 1e-12, 0, Amount},
	// source: SI Brochure 9th ed. (2019), Table 8: 1 L = 1 dm^3 = 1e-3 m^3.
	{"L", 1e-3, 0, Volume},
	{"dL", 1e-4, 0, Volume},
	{"cL", 1e-5, 0, Volume},
	{"mL", 1e-6, 0, Volume},
	{"µL", 1e-9, 0, Volume},
	{"nL", 1e-12, 0, Volume},
	// source: IUPAC, Quantities, Units and Symbols in Physical Chemistry
	// (Green Book), 3rd ed., 2007, Sec. 2.10: M = mol dm^-3 (from memory).
	{"M", 1e3, 0, Concentration},
	{"mM", 1, 0, Concentration},
	{"µM", 1e-3, 0, Concentration},
	{"nM", 1e-6, 0, Concentration},
	{"pM", 1e-9, 0, Concentration},
	// source: SI Brochure 9th ed. (2019), Table 4: Pa = kg m^-1 s^-2,
	// N = kg m s^-2, J = kg m^2 s^-2, W = kg m^2 s^-3 (table number from
	// memory); Table 7 prefixes.
	{"Pa", 1, 0, Pressure},
	{"mPa", 1e-3, 0, Pressure},
	{"hPa", 1e2, 0, Pressure},
	{"kPa", 1e3, 0, Pressure},
	{"MPa", 1e6, 0, Pressure},
	{"GPa", 1e9, 0, Pressure},
	{"N", 1, 0, Force},
	{"mN", 1e-3, 0, Force},
	{"kN", 1e3, 0, Force},
	{"J", 1, 0, Energy},
	{"mJ", 1e-3, 0, Energy},
	{"kJ", 1e3, 0, Energy},
	{"MJ", 1e6, 0, Energy},
	{"W", 1, 0, Power},
	{"mW", 1e-3, 0, Power},
	{"kW", 1e3, 0, Power},
	{"MW", 1e6, 0, Power},
	// source: SI Brochure 8th ed. (2006), Table 8: 1 bar = 0.1 MPa = 1e5 Pa
	// (from memory; the 9th edition no longer lists the bar).
	{"bar", 1e5, 0, Pressure},
	{"mbar", 1e2, 0, Pressure},
	// source: 10th CGPM (1954), Resolution 4: standard atmosphere
	// = 101 325 Pa exactly (from memory).
	{"atm", 101325, 0, Pressure},
	// source: SI Brochure 9th ed. (2019), Table 2 (ampere, candela) and
	// Table 7 (prefixes).
	{"A", 1, 0, Current},
	{"mA", 1e-3, 0, Current},
	{"µA", 1e-6, 0, Current},
	{"nA", 1e-9, 0, Current},
	{"cd", 1, 0, LuminousIntensity},
	// source: SI Brochure 9th ed. (2019), Table 2 (kelvin) and Sec. 2.3.1:
	// t/°C = T/K − 273.15 (section number from memory).
	{"K", 1, 0, Temperature},
	{"°C", 1, 273.15, Temperature},
	// source: SI Brochure 9th ed. (2019), Sec. 5.4.7: % stands for the
	// number 0.01 (section number from memory).
	{"%", 1e-2, 0, Dimensionless},
	// ppm = 1e-6 and ppb = 1e-9 as plain ratios: common practice, no source.
	{"ppm", 1e-6, 0, Dimensionless},
	{"ppb", 1e-9, 0, Dimensionless},
}

func TestCatalogue(t *testing.T) {
	listed := map[string]bool{}
	for _, c := range referenceUnits {
		listed[c.name] = true
		u, ok := Lookup(c.name)
		if !ok {
			t.Errorf("Lookup(%q) failed", c.name)
			continue
		}
		if u.Scale != c.scale || u.Offset != c.offset || u.Dim != c.dim || u.Text != c.name {
			t.Errorf("Lookup(%q) = {Scale %g, Offset %g, Dim %v, Text %q}, want {%g, %g, %v, %q}",
				c.name, u.Scale, u.Offset, u.Dim, u.Text, c.scale, c.offset, c.dim, c.name)
		}
		// A lone symbol parses to the same unit as it looks up.
		if p, err := Parse(c.name); err != nil || p != u {
			t.Errorf("Parse(%q) = %+v, %v; want %+v", c.name, p, err, u)
		}
	}
	for _, n := range Names() {
		u, _ := Lookup(n)
		if u.Text == n && !listed[n] {
			t.Errorf("unit %q is accepted but has no reference value in the catalogue test", n)
		}
	}
}

func TestAlternativeSpellings(t *testing.T) {
	tests := []struct{ spelling, canonical string }{
		{"um", "µm"},
		{"μm", "µm"}, // Greek mu U+03BC
		{"µm", "µm"}, // micro sign U+00B5
		{"us", "µs"},
		{"ug", "µg"},
		{"umol", "µmol"},
		{"μmol", "µmol"},
		{"uM", "µM"},
		{"l", "L"},
		{"ml", "mL"},
		{"ul", "µL"},
		{"μl", "µL"},
		{"dl", "dL"},
		{"degC", "°C"},
	}
	for _, tt := range tests {
		u, ok := Lookup(tt.spelling)
		want, _ := Lookup(tt.canonical)
		if !ok || u != want || u.Text != tt.canonical {
			t.Errorf("Lookup(%q) = %+v, %v; want %+v", tt.spelling, u, ok, want)
		}
	}
}

func TestLookupRejects(t *testing.T) {
	for _, name := range []string{
		"", "kmin", "mK", "Mm", "kh", "k%", "cm2", "mm ", "kg/m", "MM", "sec", "hr", "C", "kbar", "mkg",
	} {
		if u, ok := Lookup(name); ok {
			t.Errorf("Lookup(%q) = %+v, want no unit", name, u)
		}
	}
}

func TestTableHasNoClashes(t *testing.T) {
	c := buildTable()
	if len(c.dupes) > 0 {
		t.Errorf("spellings defined twice: %q", c.dupes)
	}
}

func TestNames(t *testing.T) {
	names := Names()
	if !slices.IsSorted(names) {
		t.Error("Names() is not sorted")
	}
	for _, want := range []string{"mm", "µm", "um", "μm", "mM", "L", "l", "°C", "degC", "%", "ppm"} {
		if !slices.Contains(names, want) {
			t.Errorf("Names() lacks %q", want)
		}
	}
	for _, n := range names {
		if _, ok := Lookup(n); !ok {
			t.Errorf("Names() lists %q but Lookup rejects it", n)
		}
	}
	names[0] = "changed"
	if Names()[0] == "changed" {
		t.Error("Names() shares its slice with the package")
	}
}
