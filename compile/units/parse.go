package units

import (
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Error is a problem in a unit text. Offset and End are byte offsets into
// the text given to Parse (End exclusive); Offset == End marks an insertion
// point. Suggestion, when not empty, is a corrected spelling that replaces
// text[Offset:End] (or is inserted there when Offset == End).
type Error struct {
	Offset     int
	End        int
	Msg        string // one sentence in the user's terms, without position
	Suggestion string
}

// Error formats the error with its byte offset and suggestion.
func (e *Error) Error() string {
	s := fmt.Sprintf("units: byte %d: %s", e.Offset, e.Msg)
	switch {
	case e.Suggestion == "":
	case e.Offset == e.End:
		s += fmt.Sprintf(" (insert %q)", e.Suggestion)
	default:
		s += fmt.Sprintf(" (did you mean %q?)", e.Suggestion)
	}
	return s
}

// Parse resolves a unit text, the part written between the brackets in
// "1.5 [mm]", into a Unit. On failure the error is an *Error whose offsets
// are relative to the start of text. The grammar is given in the package
// documentation.
func Parse(text string) (Unit, error) {
	u, err := parse(text)
	if err != nil {
		return Unit{}, err
	}
	return u, nil
}

// ParseAt is Parse for a unit text that starts at byte offset base of a
// larger source: the offsets in a returned *Error are shifted by base.
func ParseAt(text string, base int) (Unit, error) {
	u, err := parse(text)
	if err != nil {
		err.Offset += base
		err.End += base
		return Unit{}, err
	}
	return u, nil
}

func parse(text string) (Unit, *Error) {
	if t := strings.TrimSpace(text); t == "" || t == "-" {
		return One, nil
	}
	p := &parser{sc: scanner{src: text}}
	p.advance()
	v, err := p.parseQuotient()
	if err == nil && p.tok.kind != tEOF {
		err = p.unexpected()
	}
	if err != nil {
		return Unit{}, err
	}
	return p.finish(v)
}

// ---- scanner ----

type tokKind int

const (
	tEOF tokKind = iota
	tBad         // the scanner found an error; it is in parser.scanErr
	tIdent
	tNumber
	tMul
	tDiv
	tPow
	tLParen
	tRParen
	tPlus
	tMinus
)

type token struct {
	kind     tokKind
	pos, end int
	text     string
	// nameEnd, for an identifier directly followed by digits such as
	// "cm2", is where the letters end; otherwise it equals end.
	nameEnd int
}

type scanner struct {
	src string
	pos int
}

const (
	middleDot   = '·' // U+00B7
	dotOperator = '⋅' // U+22C5
)

// superscripts maps superscript digits and signs to their ASCII forms.
var superscripts = map[rune]byte{
	'⁰': '0', '¹': '1', '²': '2', '³': '3', '⁴': '4',
	'⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9',
	'⁻': '-', '⁺': '+',
}

func isIdentRune(r rune) bool { return unicode.IsLetter(r) || r == '°' }

func isDigit(b byte) bool { return '0' <= b && b <= '9' }

// next returns the next token, or an *Error for text no token can start.
func (s *scanner) next() (token, *Error) {
	for s.pos < len(s.src) {
		r, n := utf8.DecodeRuneInString(s.src[s.pos:])
		if !unicode.IsSpace(r) {
			break
		}
		s.pos += n
	}
	start := s.pos
	if start >= len(s.src) {
		return token{kind: tEOF, pos: start, end: start, nameEnd: start}, nil
	}
	tok := func(k tokKind, n int) (token, *Error) {
		s.pos = start + n
		return token{kind: k, pos: start, end: s.pos, text: s.src[start:s.pos], nameEnd: s.pos}, nil
	}
	r, n := utf8.DecodeRuneInString(s.src[start:])
	switch {
	case r == utf8.RuneError && n <= 1:
		return token{}, &Error{Offset: start, End: start + 1, Msg: "invalid UTF-8 byte in unit"}
	case r == '*':
		if strings.HasPrefix(s.src[start:], "**") {
			return token{}, &Error{Offset: start, End: start + 2, Msg: `powers are written with "^", not "**"`, Suggestion: "^"}
		}
		return tok(tMul, n)
	case r == middleDot || r == dotOperator:
		return tok(tMul, n)
	case r == '/':
		return tok(tDiv, n)
	case r == '^':
		return tok(tPow, n)
	case r == '(':
		return tok(tLParen, n)
	case r == ')':
		return tok(tRParen, n)
	case r == '+':
		return tok(tPlus, n)
	case r == '-':
		return tok(tMinus, n)
	case r == '%':
		return s.ident(start, n)
	case r < utf8.RuneSelf && (isDigit(byte(r)) || r == '.' && start+1 < len(s.src) && isDigit(s.src[start+1])):
		return tok(tNumber, numberLen(s.src[start:]))
	case r == '.':
		return token{}, &Error{Offset: start, End: start + 1, Msg: `"." does not multiply units: write "*" or "·"`, Suggestion: "*"}
	case isIdentRune(r):
		i := start
		for i < len(s.src) {
			r, n := utf8.DecodeRuneInString(s.src[i:])
			if !isIdentRune(r) {
				break
			}
			i += n
		}
		return s.ident(start, i-start)
	}
	if _, ok := superscripts[r]; ok {
		var b strings.Builder
		b.WriteByte('^')
		i := start
		for i < len(s.src) {
			r, n := utf8.DecodeRuneInString(s.src[i:])
			c, ok := superscripts[r]
			if !ok {
				break
			}
			b.WriteByte(c)
			i += n
		}
		return token{}, &Error{Offset: start, End: i, Msg: `superscript exponents are not accepted: write "^" and digits`, Suggestion: b.String()}
	}
	return token{}, &Error{Offset: start, End: start + n, Msg: fmt.Sprintf("unexpected character %q in unit", r)}
}

// ident finishes an identifier of n bytes at start, taking in digits that
// follow it directly (with an optional sign), as in "cm2" or "s-1", so that
// the parser can say that "^" is missing.
func (s *scanner) ident(start, n int) (token, *Error) {
	nameEnd := start + n
	i := nameEnd
	if i < len(s.src) && (s.src[i] == '-' || s.src[i] == '+') && i+1 < len(s.src) && isDigit(s.src[i+1]) {
		i++
	}
	if i < len(s.src) && isDigit(s.src[i]) {
		for i < len(s.src) && isDigit(s.src[i]) {
			i++
		}
	} else {
		i = nameEnd
	}
	s.pos = i
	return token{kind: tIdent, pos: start, end: i, text: s.src[start:i], nameEnd: nameEnd}, nil
}

// numberLen returns the length of the decimal number at the start of s:
// digits, an optional fraction and an optional exponent.
func numberLen(s string) int {
	i := 0
	for i < len(s) && isDigit(s[i]) {
		i++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && isDigit(s[i]) {
			i++
		}
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		if j < len(s) && isDigit(s[j]) {
			for j < len(s) && isDigit(s[j]) {
				j++
			}
			i = j
		}
	}
	return i
}

// ---- parser ----

// factor is one unit symbol raised to an integer power.
type factor struct {
	a   *atom
	exp int
}

// value is a partly evaluated unit: its factors in order of first
// appearance (zero powers kept so that order is stable), and its span.
type value struct {
	fs       []factor
	pos, end int
	// powPos is the offset of the "^" of the last term, or -1.
	powPos int
}

type parser struct {
	sc      scanner
	tok     token
	prevEnd int // end of the previous token
	prev    string
	scanErr *Error
	// celsius is the span of the first "°C" seen, if any.
	celsius *Error
	depth   int // parenthesis nesting
}

// maxDepth limits the nesting of parentheses.
const maxDepth = 64

func (p *parser) advance() {
	p.prevEnd = p.tok.end
	p.prev = p.tok.text
	t, err := p.sc.next()
	if err != nil {
		p.scanErr = err
		t = token{kind: tBad, pos: err.Offset, end: err.End}
	}
	p.tok = t
}

// unexpected reports the current token, which cannot continue the unit.
func (p *parser) unexpected() *Error {
	t := p.tok
	switch t.kind {
	case tBad:
		return p.scanErr
	case tIdent, tNumber, tLParen:
		return &Error{Offset: p.prevEnd, End: t.pos, Msg: `missing "*" between units`, Suggestion: "*"}
	case tRParen:
		return &Error{Offset: t.pos, End: t.end, Msg: `unbalanced ")": no matching "("`}
	case tEOF:
		if p.prev == "" {
			return &Error{Offset: t.pos, End: t.end, Msg: "expected a unit"}
		}
		return &Error{Offset: t.pos, End: t.end, Msg: fmt.Sprintf("expected a unit after %q", p.prev)}
	}
	return &Error{Offset: t.pos, End: t.end, Msg: fmt.Sprintf("unexpected %q in unit", t.text)}
}

// parseQuotient parses product { "/" term }. Division is left-associative:
// "J/mol/K" is J/(mol·K). A "*" after a divisor is rejected as ambiguous.
func (p *parser) parseQuotient() (value, *Error) {
	left, err := p.parseProduct()
	if err != nil {
		return left, err
	}
	for p.tok.kind == tDiv {
		p.advance()
		if p.tok.kind == tNumber && left.powPos >= 0 && p.tok.text != "1" {
			return left, &Error{Offset: left.powPos, End: p.tok.end,
				Msg: "exponent must be an integer: fractional powers are not supported"}
		}
		right, err := p.parseTerm()
		if err != nil {
			return left, err
		}
		if p.tok.kind == tMul {
			end := right.end
			for p.tok.kind == tMul {
				p.advance()
				t, err := p.parseTerm()
				if err != nil {
					break
				}
				end = t.end
			}
			return left, &Error{Offset: right.pos, End: end,
				Msg:        `ambiguous "*" after "/": put the whole denominator in parentheses`,
				Suggestion: "(" + p.sc.src[right.pos:end] + ")"}
		}
		if left, err = combine(left, right, -1); err != nil {
			return left, err
		}
		left.powPos = right.powPos
	}
	return left, nil
}

// parseProduct parses term { ("*" | "·") term }.
func (p *parser) parseProduct() (value, *Error) {
	left, err := p.parseTerm()
	if err != nil {
		return left, err
	}
	for p.tok.kind == tMul {
		p.advance()
		right, err := p.parseTerm()
		if err != nil {
			return left, err
		}
		if left, err = combine(left, right, 1); err != nil {
			return left, err
		}
		left.powPos = right.powPos
	}
	return left, nil
}

// parseTerm parses primary [ "^" exponent ].
func (p *parser) parseTerm() (value, *Error) {
	v, err := p.parsePrimary()
	if err != nil || p.tok.kind != tPow {
		return v, err
	}
	caret := p.tok
	p.advance()
	n, end, err := p.parseExponent()
	if err != nil {
		return v, err
	}
	for i := range v.fs {
		v.fs[i].exp *= n
		if abs(v.fs[i].exp) > maxExp {
			return v, &Error{Offset: v.pos, End: end,
				Msg: fmt.Sprintf("exponent overflow: the power of %q exceeds %d", v.fs[i].a.text, maxExp)}
		}
	}
	v.end = end
	v.powPos = caret.pos
	if p.tok.kind == tPow {
		return v, &Error{Offset: p.tok.pos, End: p.tok.end,
			Msg: `repeated "^": use parentheses, as in (m^2)^3`}
	}
	return v, nil
}

// parseExponent parses [ "(" ] [ "+" | "-" ] digits [ ")" ] after a "^" and
// returns the exponent and the end of its text.
func (p *parser) parseExponent() (int, int, *Error) {
	var open *token
	if p.tok.kind == tLParen {
		t := p.tok
		open = &t
		p.advance()
	}
	sign := 1
	switch p.tok.kind {
	case tMinus:
		sign = -1
		p.advance()
	case tPlus:
		p.advance()
	}
	t := p.tok
	switch {
	case t.kind == tBad:
		return 0, 0, p.scanErr
	case t.kind != tNumber:
		return 0, 0, &Error{Offset: t.pos, End: t.end, Msg: `expected an integer exponent after "^"`}
	case strings.Trim(t.text, "0123456789") != "":
		return 0, 0, &Error{Offset: t.pos, End: t.end, Msg: "exponent must be an integer"}
	}
	n, err := strconv.Atoi(t.text)
	if err != nil || n > maxExp {
		return 0, 0, &Error{Offset: t.pos, End: t.end,
			Msg: fmt.Sprintf("exponent overflow: %s exceeds %d", t.text, maxExp)}
	}
	p.advance()
	end := t.end
	if open != nil {
		switch p.tok.kind {
		case tRParen:
			end = p.tok.end
			p.advance()
		case tDiv:
			return 0, 0, &Error{Offset: open.pos, End: p.tok.end,
				Msg: "exponent must be an integer: fractional powers are not supported"}
		case tBad:
			return 0, 0, p.scanErr
		default:
			return 0, 0, &Error{Offset: open.pos, End: open.end, Msg: `unbalanced "(": missing ")"`}
		}
	}
	return sign * n, end, nil
}

// parsePrimary parses a unit symbol, the number 1, or a parenthesised unit.
func (p *parser) parsePrimary() (value, *Error) {
	t := p.tok
	switch t.kind {
	case tIdent:
		a, err := p.resolve(t)
		if err != nil {
			return value{}, err
		}
		p.advance()
		return value{fs: []factor{{a: a, exp: 1}}, pos: t.pos, end: t.end, powPos: -1}, nil
	case tNumber:
		if t.text != "1" {
			return value{}, &Error{Offset: t.pos, End: t.end,
				Msg: fmt.Sprintf("number %s not allowed in a unit: only 1, as in 1/s; put factors in the value", t.text)}
		}
		p.advance()
		return value{pos: t.pos, end: t.end, powPos: -1}, nil
	case tLParen:
		if p.depth++; p.depth > maxDepth {
			return value{}, &Error{Offset: t.pos, End: t.end,
				Msg: fmt.Sprintf("parentheses nested more than %d deep", maxDepth)}
		}
		defer func() { p.depth-- }()
		p.advance()
		if p.tok.kind == tRParen {
			return value{}, &Error{Offset: t.pos, End: p.tok.end, Msg: "empty parentheses"}
		}
		v, err := p.parseQuotient()
		if err != nil {
			return v, err
		}
		switch p.tok.kind {
		case tRParen:
		case tEOF:
			return v, &Error{Offset: t.pos, End: t.end, Msg: `unbalanced "(": missing ")"`}
		default:
			return v, p.unexpected()
		}
		v.pos, v.end, v.powPos = t.pos, p.tok.end, -1
		p.advance()
		return v, nil
	case tDiv:
		if p.prev == "" {
			return value{}, &Error{Offset: t.pos, End: t.pos,
				Msg: `missing numerator before "/": write 1/s for a reciprocal unit`, Suggestion: "1"}
		}
	case tEOF, tBad:
		return value{}, p.unexpected()
	}
	return value{}, &Error{Offset: t.pos, End: t.end, Msg: fmt.Sprintf("expected a unit, found %q", t.text)}
}

// resolve looks up an identifier token.
func (p *parser) resolve(t token) (*atom, *Error) {
	name := p.sc.src[t.pos:t.nameEnd]
	a, ok := table.bySpelling[name]
	if ok && t.nameEnd < t.end {
		digits := p.sc.src[t.nameEnd:t.end]
		return nil, &Error{Offset: t.pos, End: t.end,
			Msg:        fmt.Sprintf("missing \"^\" before the exponent in %q", t.text),
			Suggestion: name + "^" + digits}
	}
	if !ok {
		e := &Error{Offset: t.pos, End: t.nameEnd, Msg: fmt.Sprintf("unknown unit %q", name), Suggestion: Suggest(name)}
		if pre, unit, bad := badPrefix(name); bad {
			e.Msg = fmt.Sprintf("prefix %q is not used with %q", pre, unit)
		}
		return nil, e
	}
	if a.offset != 0 && p.celsius == nil {
		p.celsius = &Error{Offset: t.pos, End: t.end,
			Msg:        fmt.Sprintf("%q must stand alone: in compound units write K (a step of 1 °C is 1 K)", name),
			Suggestion: "K"}
	}
	return a, nil
}

// combine returns v·w^sign, merging powers of the same unit symbol.
func combine(v, w value, sign int) (value, *Error) {
	fs := v.fs
	for _, g := range w.fs {
		found := false
		for i := range fs {
			if fs[i].a.text == g.a.text {
				fs[i].exp += sign * g.exp
				found = true
				if abs(fs[i].exp) > maxExp {
					return v, &Error{Offset: v.pos, End: w.end,
						Msg: fmt.Sprintf("exponent overflow: the power of %q exceeds %d", g.a.text, maxExp)}
				}
				break
			}
		}
		if !found {
			fs = append(fs, factor{a: g.a, exp: sign * g.exp})
		}
	}
	return value{fs: fs, pos: v.pos, end: w.end, powPos: v.powPos}, nil
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}

// finish turns the evaluated factors into a Unit.
func (p *parser) finish(v value) (Unit, *Error) {
	var fs []factor
	for _, f := range v.fs {
		if f.exp != 0 {
			fs = append(fs, f)
		}
	}
	whole := &Error{Offset: v.pos, End: v.end}
	if p.celsius != nil && (len(fs) != 1 || fs[0].exp != 1 || fs[0].a.offset == 0) {
		return Unit{}, p.celsius
	}
	var sum [NumBases]int
	for _, f := range fs {
		for i, e := range f.a.dim {
			sum[i] += f.exp * int(e)
		}
	}
	var d Dim
	for i, e := range sum {
		if abs(e) > maxExp {
			whole.Msg = fmt.Sprintf("exponent overflow: the power of %s in the dimension exceeds %d", baseSymbol[i], maxExp)
			return Unit{}, whole
		}
		d[i] = int8(e)
	}
	scale := scaleOfFactors(fs)
	if scale == 0 || math.IsInf(scale, 0) {
		whole.Msg = "unit scale out of floating-point range"
		return Unit{}, whole
	}
	u := Unit{Scale: scale, Dim: d, Text: canonical(fs)}
	if len(fs) == 1 {
		u.Offset = fs[0].a.offset
	}
	return u, nil
}

// canonical writes factors as numerator/denominator with "·" and "^".
func canonical(fs []factor) string {
	var num, den []string
	for _, f := range fs {
		if f.exp > 0 {
			num = append(num, power(f.a.text, f.exp))
		} else {
			den = append(den, power(f.a.text, -f.exp))
		}
	}
	return fraction(num, den)
}

// scaleOfFactors returns the product of the factors' scales, computed
// exactly and rounded once, so that it does not depend on their order.
func scaleOfFactors(fs []factor) float64 {
	e10, simple := 0, true
	for _, f := range fs {
		e10 += f.exp * f.a.exp10
		if f.a.mant != 1 {
			simple = false
		}
	}
	if simple {
		return scaleOf(1, e10)
	}
	num, den := big.NewInt(1), big.NewInt(1)
	var t big.Int
	for _, f := range fs {
		if f.a.mant == 1 {
			continue
		}
		t.Exp(big.NewInt(f.a.mant), big.NewInt(int64(abs(f.exp))), nil)
		if f.exp > 0 {
			num.Mul(num, &t)
		} else {
			den.Mul(den, &t)
		}
	}
	t.Exp(big.NewInt(10), big.NewInt(int64(abs(e10))), nil)
	if e10 > 0 {
		num.Mul(num, &t)
	} else {
		den.Mul(den, &t)
	}
	v, _ := new(big.Rat).SetFrac(num, den).Float64()
	return v
}
