package units

import (
	"sort"
	"strconv"
	"strings"
)

// prefix is an SI prefix: its symbol stands for the factor 10^exp.
type prefix struct {
	sym string
	exp int
}

// siPrefixes are the twenty-four SI prefixes. Only those listed in a
// unit's prefixes field may be attached to it.
var siPrefixes = []prefix{
	{"Q", 30}, {"R", 27}, {"Y", 24}, {"Z", 21}, {"E", 18}, {"P", 15},
	{"T", 12}, {"G", 9}, {"M", 6}, {"k", 3}, {"h", 2}, {"da", 1},
	{"d", -1}, {"c", -2}, {"m", -3}, {"µ", -6}, {"n", -9}, {"p", -12},
	{"f", -15}, {"a", -18}, {"z", -21}, {"y", -24}, {"r", -27}, {"q", -30},
}

// microSpellings are the accepted ways to write the micro prefix: the micro
// sign U+00B5 (canonical), the Greek small letter mu U+03BC, and ASCII "u".
var microSpellings = []string{"µ", "μ", "u"}

// baseUnit describes a unit symbol before any prefix.
type baseUnit struct {
	sym      string   // canonical symbol
	alt      []string // other accepted spellings of the same unit
	mant     int64    // the unit is mant × 10^exp10 coherent SI units
	exp10    int
	offset   float64 // added after scaling to reach the SI value; only °C
	dim      Dim
	prefixes string // space-separated prefix symbols this unit accepts
}

// baseUnits is the unit catalogue. Prefixes are allowed only where people
// use them (no "kmin", no "mK").
var baseUnits = []baseUnit{
	{sym: "m", mant: 1, dim: Length, prefixes: "k d c m µ n p"},
	{sym: "s", mant: 1, dim: Time, prefixes: "m µ n"},
	{sym: "min", mant: 60, dim: Time},
	{sym: "h", mant: 3600, dim: Time},
	{sym: "d", mant: 86400, dim: Time},
	{sym: "g", mant: 1, exp10: -3, dim: Mass, prefixes: "k m µ n"},
	{sym: "mol", mant: 1, dim: Amount, prefixes: "k m µ n p"},
	{sym: "L", alt: []string{"l"}, mant: 1, exp10: -3, dim: Volume, prefixes: "d c m µ n"},
	{sym: "M", mant: 1, exp10: 3, dim: Concentration, prefixes: "m µ n p"},
	{sym: "Pa", mant: 1, dim: Pressure, prefixes: "m h k M G"},
	{sym: "bar", mant: 1, exp10: 5, dim: Pressure, prefixes: "m"},
	{sym: "atm", mant: 101325, dim: Pressure},
	{sym: "K", mant: 1, dim: Temperature},
	{sym: "°C", alt: []string{"degC"}, mant: 1, offset: 273.15, dim: Temperature},
	{sym: "N", mant: 1, dim: Force, prefixes: "m k"},
	{sym: "J", mant: 1, dim: Energy, prefixes: "m k M"},
	{sym: "W", mant: 1, dim: Power, prefixes: "m k M"},
	{sym: "A", mant: 1, dim: Current, prefixes: "m µ n"},
	{sym: "cd", mant: 1, dim: LuminousIntensity},
	{sym: "%", mant: 1, exp10: -2},
	{sym: "ppm", mant: 1, exp10: -6},
	{sym: "ppb", mant: 1, exp10: -9},
}

// atom is one resolved unit symbol: a base unit with its prefix.
type atom struct {
	text   string // canonical spelling, e.g. "µmol"
	mant   int64
	exp10  int
	offset float64
	dim    Dim
}

// catalogue is the resolved unit table.
type catalogue struct {
	bySpelling map[string]*atom // every accepted spelling
	names      []string         // sorted keys of bySpelling
	bare       map[string]*baseUnit
	dupes      []string // spellings defined twice (must stay empty)
}

var table = buildTable()

// buildTable expands baseUnits with their prefixes and alternative spellings.
func buildTable() *catalogue {
	c := &catalogue{bySpelling: map[string]*atom{}, bare: map[string]*baseUnit{}}
	exps := map[string]int{}
	for _, p := range siPrefixes {
		exps[p.sym] = p.exp
	}
	add := func(spelling string, a *atom) {
		if _, dup := c.bySpelling[spelling]; dup {
			c.dupes = append(c.dupes, spelling)
			return
		}
		c.bySpelling[spelling] = a
	}
	for i := range baseUnits {
		b := &baseUnits[i]
		syms := append([]string{b.sym}, b.alt...)
		plain := &atom{text: b.sym, mant: b.mant, exp10: b.exp10, offset: b.offset, dim: b.dim}
		for _, s := range syms {
			c.bare[s] = b
			add(s, plain)
		}
		for _, p := range strings.Fields(b.prefixes) {
			a := &atom{text: p + b.sym, mant: b.mant, exp10: b.exp10 + exps[p], dim: b.dim}
			spellings := []string{p}
			if p == "µ" {
				spellings = microSpellings
			}
			for _, ps := range spellings {
				for _, s := range syms {
					add(ps+s, a)
				}
			}
		}
	}
	for s := range c.bySpelling {
		c.names = append(c.names, s)
	}
	sort.Strings(c.names)
	return c
}

// unit makes the Unit of a single atom.
func (a *atom) unit() Unit {
	return Unit{Scale: scaleOf(a.mant, a.exp10), Offset: a.offset, Dim: a.dim, Text: a.text}
}

// scaleOf returns mant × 10^exp10 correctly rounded to float64.
func scaleOf(mant int64, exp10 int) float64 {
	v, _ := strconv.ParseFloat(strconv.FormatInt(mant, 10)+"e"+strconv.Itoa(exp10), 64)
	return v
}

// Lookup resolves a single unit symbol with an optional SI prefix, such as
// "mm", "µmol", "umol", "mL" or "kPa". It does not parse products, powers
// or quotients; use Parse for those. The returned Unit's Text is the
// canonical spelling (micro written with U+00B5, litre with "L").
func Lookup(name string) (Unit, bool) {
	a, ok := table.bySpelling[name]
	if !ok {
		return Unit{}, false
	}
	return a.unit(), true
}

// Names returns every accepted unit spelling, prefixed ones included, in
// sorted order; it is meant for completion. The caller owns the slice.
func Names() []string {
	return append([]string(nil), table.names...)
}

// badPrefix reports, for a name that is not in the table, whether it is a
// known unit carrying a prefix that unit does not take, returning the
// prefix and the unit.
func badPrefix(name string) (p, unit string, ok bool) {
	for _, pr := range siPrefixes {
		spellings := []string{pr.sym}
		if pr.sym == "µ" {
			spellings = microSpellings
		}
		for _, s := range spellings {
			rest, found := strings.CutPrefix(name, s)
			if !found || rest == "" {
				continue
			}
			if _, known := table.bare[rest]; known {
				return s, rest, true
			}
		}
	}
	return "", "", false
}
