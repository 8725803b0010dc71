package report

import (
	"math"
	"strconv"
	"strings"
)

// DefaultDigits is the number of significant digits used by tables.
const DefaultDigits = 5

// FormatNumber formats v with sig significant digits (sig ≤ 0 means
// DefaultDigits; at most 17), the way a person writes it: trailing zeros
// dropped, plain decimals for moderate magnitudes and a short exponent
// ("1.5e-7", "2.3457e6") when the decimal exponent is below −4 or at least
// sig. NaN and infinities print as "NaN", "Inf" and "-Inf"; negative zero
// prints as "0".
func FormatNumber(v float64, sig int) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "Inf"
	case math.IsInf(v, -1):
		return "-Inf"
	case v == 0:
		return "0"
	}
	sig = clampDigits(sig)
	s := strconv.FormatFloat(v, 'g', sig, 64)
	mant, exp, hasExp := strings.Cut(s, "e")
	mant = trimZeros(mant)
	if !hasExp {
		return mant
	}
	e, _ := strconv.Atoi(exp)
	return mant + "e" + strconv.Itoa(e)
}

func clampDigits(sig int) int {
	if sig <= 0 {
		return DefaultDigits
	}
	if sig > 17 {
		return 17
	}
	return sig
}

// trimZeros removes trailing zeros after a decimal point, and the point
// itself when nothing follows it.
func trimZeros(s string) string {
	if !strings.Contains(s, ".") {
		return s
	}
	s = strings.TrimRight(s, "0")
	return strings.TrimSuffix(s, ".")
}

var superscript = map[rune]rune{
	'0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴',
	'5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻',
}

// PrettyUnit rewrites a unit string for display: integer powers written
// with a caret become superscripts ("m^2/s" → "m²/s", "s^-1" → "s⁻¹") and
// a "*" between factors becomes a middle dot ("mol*m^-3" → "mol·m⁻³").
// Anything it does not recognise is kept as written.
func PrettyUnit(u string) string {
	if !strings.ContainsAny(u, "^*") {
		return u
	}
	var b strings.Builder
	rs := []rune(u)
	for i := 0; i < len(rs); i++ {
		r := rs[i]
		switch r {
		case '*':
			b.WriteRune('·')
		case '^':
			j := i + 1
			if j < len(rs) && rs[j] == '-' {
				j++
			}
			k := j
			for k < len(rs) && rs[k] >= '0' && rs[k] <= '9' {
				k++
			}
			if k == j { // no digits: keep the caret as written
				b.WriteRune(r)
				continue
			}
			for _, d := range rs[i+1 : k] {
				b.WriteRune(superscript[d])
			}
			i = k - 1
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// Label returns "Name [Unit]" with the unit made pretty by PrettyUnit; an
// empty unit or the dimensionless "1" gives the bare name.
func Label(name, unit string) string {
	return label(name, PrettyUnit(unit))
}

func label(name, unit string) string {
	u := strings.TrimSpace(unit)
	if u == "" || u == "1" {
		return name
	}
	if name == "" {
		return "[" + u + "]"
	}
	return name + " [" + u + "]"
}

// formatColumn formats the values of one table column with sig significant
// digits and one style for the whole column: plain decimals with trailing
// zeros dropped when every value reads well that way, otherwise scientific
// notation with sig digits for every value. Non-finite values print as in
// FormatNumber.
func formatColumn(vals []float64, sig int) []string {
	sig = clampDigits(sig)
	out := make([]string, len(vals))
	maxAbs := 0.0
	for _, v := range vals {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			maxAbs = math.Max(maxAbs, math.Abs(v))
		}
	}
	sci := maxAbs >= 1e6 || (maxAbs > 0 && maxAbs < 1e-3)
	if !sci && maxAbs > 0 {
		// Smaller values keep their significant digits down to three
		// decades below the column's largest magnitude; a non-zero
		// value that would round to zero switches the column to
		// scientific notation rather than showing a false zero.
		capDec := max(0, sig-1-int(math.Floor(math.Log10(maxAbs)))) + 3
		for i, v := range vals {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				out[i] = FormatNumber(v, sig)
				continue
			}
			if v == 0 {
				out[i] = "0"
				continue
			}
			dec := sig - 1 - int(math.Floor(math.Log10(math.Abs(v))))
			dec = max(0, min(dec, capDec))
			s := strconv.FormatFloat(v, 'f', dec, 64)
			if f, _ := strconv.ParseFloat(s, 64); f == 0 {
				sci = true
				break
			}
			out[i] = negZero(trimZeros(s))
		}
	}
	if sci {
		for i, v := range vals {
			switch {
			case math.IsNaN(v) || math.IsInf(v, 0):
				out[i] = FormatNumber(v, sig)
			case v == 0:
				out[i] = "0"
			default:
				out[i] = strconv.FormatFloat(v, 'e', sig-1, 64)
			}
		}
	}
	if maxAbs == 0 {
		for i, v := range vals {
			out[i] = FormatNumber(v, sig)
		}
	}
	return out
}

// negZero drops the sign of a formatted negative zero ("-0.0" → "0.0").
func negZero(s string) string {
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		return s[1:]
	}
	return s
}

// splitDecimal splits a formatted number at its decimal point for
// alignment: the part before the point and the rest (starting with the
// point, or empty). Words such as "NaN" have no point.
func splitDecimal(s string) (left, right string) {
	if i := strings.IndexByte(s, '.'); i >= 0 {
		return s[:i], s[i:]
	}
	if i := strings.IndexByte(s, 'e'); i >= 0 && s != "NaN" {
		return s[:i], s[i:]
	}
	return s, ""
}
