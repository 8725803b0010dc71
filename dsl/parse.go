package dsl

import (
	"errors"
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"
	"github.com/massline/massline/dsl/diag"
)

// MaxSourceBytes bounds the size of one source text; larger inputs are
// refused with a diagnostic instead of being parsed.
const MaxSourceBytes = 8 << 20

// Parse parses a model file or notebook cell. It always returns a File;
// statements that could not be parsed appear as *BadStmt, and every
// syntax error is reported, sorted by position. Parse never panics.
func Parse(filename, src string) (f *File, diags diag.List) {
	f = &File{Name: filename, Source: src}
	defer func() {
		if r := recover(); r != nil {
			diags.Add("internal", diag.Range{File: filename, Start: diag.Pos{Line: 1, Column: 1}},
				"the parser failed unexpectedly (%v); please report this model", r)
			f.Stmts = []Stmt{&BadStmt{Range: rangeAt(filename, src, 0, len(src))}}
		}
	}()
	if len(src) > MaxSourceBytes {
		diags.Add("too-large", diag.Range{File: filename, Start: diag.Pos{Line: 1, Column: 1}, End: diag.Pos{Line: 1, Column: 1}},
			"the source is %d bytes; the limit is %d", len(src), MaxSourceBytes)
		f.Stmts = []Stmt{&BadStmt{Range: diag.Range{File: filename, Start: diag.Pos{Line: 1, Column: 1}, End: diag.Pos{Line: 1, Column: 1}}}}
		return f, diags
	}
	if !utf8.ValidString(src) {
		off := firstInvalidUTF8(src)
		diags.Add("syntax", rangeAt(filename, src, off, off+1), "the source is not valid UTF-8 text")
		f.Stmts = []Stmt{&BadStmt{Range: rangeAt(filename, src, 0, len(src))}}
		return f, diags
	}
	if strings.HasPrefix(src, "\ufeff") {
		// A byte-order mark from a Windows editor: read it as blanks (the
		// byte offsets stay the same).
		src = "   " + src[3:]
		f.Source = src
	}
	if off, msg := tooComplex(src); msg != "" {
		diags.Add("too-complex", rangeAt(filename, src, off, off+1), "%s", msg)
		f.Stmts = []Stmt{&BadStmt{Range: rangeAt(filename, src, 0, len(src))}}
		return f, diags
	}
	f.Comments = collectComments(filename, src)
	g, err := fileParser.ParseString(filename, src)
	if err == nil {
		c := &converter{file: filename, src: src}
		f.Stmts = c.stmts(g.Stmts)
		diags.Append(c.diags)
		diags.Sort()
		return f, diags
	}
	// Recovery: parse each top-level statement on its own so that every
	// syntax error in the file is reported, and statements after an error
	// still reach the checker.
	for _, ch := range splitStatements(src) {
		text := src[ch.start:ch.end]
		c := &converter{file: filename, src: src, baseOffset: ch.start, baseLine: ch.line - 1}
		g, err := fileParser.ParseString(filename, text)
		if err != nil {
			diags = append(diags, c.syntaxError(err, text))
			bad := &BadStmt{Range: rangeAt(filename, src, ch.start, trimEnd(src, ch.start, ch.end))}
			c.salvage(bad, tokens(text))
			f.Stmts = append(f.Stmts, bad)
			continue
		}
		f.Stmts = append(f.Stmts, c.stmts(g.Stmts)...)
		diags.Append(c.diags)
	}
	diags.Sort()
	return f, diags
}

// salvage records in a statement that could not be parsed the keyword it
// starts with and, for a declaration, the name it declares, so that the
// checker can stay quiet about later uses of that name.
func (c *converter) salvage(bad *BadStmt, toks []lexer.Token) {
	if len(toks) == 0 || toks[0].Type != tokKeyword {
		return
	}
	bad.Keyword = toks[0].Value
	switch bad.Keyword {
	case "let", "species", "body", "stage":
		if len(toks) > 1 && toks[1].Type == tokIdent {
			bad.Name = c.tokenIdent(toks[1])
		}
	}
}

// tokenIdent makes an identifier from a token of the text being converted.
func (c *converter) tokenIdent(t lexer.Token) *Ident {
	start := c.pos(t.Pos)
	end := start
	end.Offset += len(t.Value)
	end.Column += utf8.RuneCountInString(t.Value)
	return &Ident{Range: diag.Range{File: c.file, Start: start, End: end}, Name: t.Value}
}

// syntaxError converts a participle error into a diagnostic in the
// user's terms. text is the statement (or file) that failed to parse.
func (c *converter) syntaxError(err error, text string) *diag.Diagnostic {
	var ute *participle.UnexpectedTokenError
	var perr participle.Error
	d := &diag.Diagnostic{Severity: diag.Error, Code: "syntax"}
	toks := tokens(text)
	// at sets the subject to the token value at p; an empty value marks a
	// point (the end of the statement).
	at := func(p lexer.Position, value string) {
		start := c.pos(p)
		end := start
		end.Offset += len(value)
		end.Column += utf8.RuneCountInString(value)
		if end.Offset > len(c.src) {
			end = start
		}
		d.Subject = diag.Range{File: c.file, Start: start, End: end}
	}
	// Unbalanced brackets are the likeliest cause of any syntax error in
	// the statement, and participle's view of them is confusing.
	if t, closes, ok := bracketProblem(toks); ok {
		at(t.Pos, t.Value)
		if closes {
			d.Message = fmt.Sprintf("this %q closes nothing", t.Value)
		} else {
			d.Message = fmt.Sprintf("this %q is never closed; add %q", t.Value, closer[t.Value])
			if t.Value == "{" {
				d.Message += " after the last line of the block"
			}
		}
		return d
	}
	switch {
	case errors.As(err, &ute):
		tok := ute.Unexpected
		expect := expectedWords(ute.Message())
		if tok.EOF() {
			p := tok.Pos
			if len(toks) > 0 {
				last := toks[len(toks)-1]
				p = last.Pos
				p.Advance(last.Value)
			}
			at(p, "")
			d.Message = "the statement ends too early"
			if expect != "" {
				d.Message += "; expected " + expect
			}
			return d
		}
		at(tok.Pos, tok.Value)
		switch {
		case tok.Type == tokKeyword && strings.HasPrefix(expect, "a name"):
			d.Message = fmt.Sprintf("%q is a keyword and cannot be used as a name", tok.Value)
		case tok.Type == tokNumber && strings.HasPrefix(expect, "a name"):
			d.Message = fmt.Sprintf("a name must start with a letter or \"_\", not %q", tok.Value)
		case tok.Value == "%":
			d.Message = "a unit is written in brackets right after its number, e.g. 5 [%]"
		case tok.Type == tokStray:
			d.Message = strayMessage(tok.Value)
		default:
			d.Message = "unexpected " + describeToken(tok)
			if expect != "" {
				d.Message += "; expected " + expect
			}
		}
	case errors.As(err, &perr):
		at(perr.Position(), "")
		d.Message = perr.Message()
	default:
		d.Subject = diag.Range{File: c.file, Start: c.pos(lexer.Position{Line: 1, Column: 1})}
		d.Subject.End = d.Subject.Start
		d.Message = err.Error()
	}
	return d
}

var closer = map[string]string{"(": ")", "{": "}"}

// bracketProblem finds the first unbalanced bracket of a statement: a
// closing one that closes nothing (closes is true), or an opening one
// that is never closed, either because a different closer comes first or
// because the text ends.
func bracketProblem(toks []lexer.Token) (tok lexer.Token, closes bool, ok bool) {
	var stack []lexer.Token
	for _, t := range toks {
		if t.Type != tokOp {
			continue
		}
		switch t.Value {
		case "(", "{":
			stack = append(stack, t)
		case ")", "}":
			if len(stack) == 0 {
				return t, true, true
			}
			top := stack[len(stack)-1]
			if closer[top.Value] != t.Value {
				return top, false, true
			}
			stack = stack[:len(stack)-1]
		}
	}
	if len(stack) > 0 {
		return stack[len(stack)-1], false, true
	}
	return lexer.Token{}, false, false
}

// strayMessage explains a character that is not part of the language.
func strayMessage(v string) string {
	r, _ := utf8.DecodeRuneInString(v)
	switch {
	case strings.ContainsRune("²³¹⁰⁴⁵⁶⁷⁸⁹⁻", r):
		return fmt.Sprintf("the character %q is not part of the language; write powers with ^, and units in brackets such as [m^2]", v)
	case r == '!':
		return `the character "!" is not part of the language; write not, or != for "not equal"`
	case r == '\u00a0' || unicode.IsSpace(r):
		return fmt.Sprintf("the character U+%04X is a space that is not allowed here; use an ordinary space", r)
	case r == ']':
		return `this "]" closes no unit bracket`
	case unicode.IsPrint(r):
		return fmt.Sprintf("the character %q is not part of the language", v)
	}
	return fmt.Sprintf("the character U+%04X is not part of the language", r)
}

// expectedWords turns the expectation in participle's message, such as
// `(expected "=" GExpr)`, into words: what should come next.
func expectedWords(msg string) string {
	i := strings.Index(msg, "(expected ")
	if i < 0 {
		return ""
	}
	s := strings.TrimSuffix(msg[i+len("(expected "):], ")")
	s = strings.TrimLeft(s, "( ")
	switch {
	case strings.HasPrefix(s, `"`):
		j := strings.Index(s[1:], `"`)
		if j < 0 {
			return ""
		}
		return s[:j+2]
	case strings.HasPrefix(s, "<"):
		j := strings.IndexByte(s, '>')
		if j < 0 {
			return ""
		}
		return nodeWords[strings.ToLower(s[1:j])]
	}
	j := 0
	for j < len(s) && (s[j] == '_' || s[j] >= 'a' && s[j] <= 'z' || s[j] >= 'A' && s[j] <= 'Z' || s[j] >= '0' && s[j] <= '9') {
		j++
	}
	return nodeWords[strings.ToLower(s[:j])]
}

// nodeWords names the grammar's parts in the user's terms.
var nodeWords = map[string]string{
	"gexpr": "a value", "gand": "a value", "gnot": "a value", "gcmp": "a value", "gadd": "a value",
	"gmul": "a value", "gunary": "a value", "gpow": "a value", "gprimary": "a value", "gnumber": "a number",
	"gident": "a name", "ident": "a name", "gpath": "a body (or body.layer, body.side)",
	"gcondition": "a condition such as fixed(...), film(...) or symmetry",
	"gcall":      "a shape such as sphere(radius = ...)", "gstring": "a quoted string", "string": "a quoted string",
	"gprop": "a property (name = value)", "glayer": "a layer (layer NAME to POSITION)",
	"gstmt": "a statement", "garg": "an argument", "gsweepvar": "the name of a quantity",
	"gfitparam": "the name of a quantity", "gfitcolumn": `a column (result = "column name")`,
	"gunit": "a unit in brackets", "number": "a number",
}

// describeToken names a token for a message: unit [mm], number 2, "x".
func describeToken(tok lexer.Token) string {
	v := tok.Value
	if utf8.RuneCountInString(v) > 40 {
		v = string([]rune(v)[:37]) + "..."
	}
	switch tok.Type {
	case tokUnit:
		return "unit " + v
	case tokString:
		return "string " + v
	case tokNumber:
		return "number " + v
	case tokKeyword:
		return "keyword \"" + v + "\""
	case tokIdent:
		return "name \"" + v + "\""
	}
	return fmt.Sprintf("%q", v)
}

// chunk is one top-level statement's text for error recovery.
type chunk struct {
	start, end, line int
}

// splitStatements cuts src at lines that start a new top-level statement:
// a statement keyword at brace depth zero, or any statement keyword or name
// in the first column (which resynchronises after an unclosed brace).
func splitStatements(src string) []chunk {
	var out []chunk
	cur := chunk{start: 0, line: 1}
	depth := 0
	line := 1
	off := 0
	for off < len(src) {
		nl := strings.IndexByte(src[off:], '\n')
		end := len(src)
		if nl >= 0 {
			end = off + nl + 1
		}
		text := src[off:end]
		word, col0 := firstWord(text)
		startsStmt := false
		if word != "" {
			if statementKeywords[word] && (depth == 0 || col0) {
				startsStmt = true
			} else if col0 && depth == 0 && isNameStart(word) {
				startsStmt = true
			}
		}
		if startsStmt && off > cur.start {
			cur.end = off
			out = append(out, cur)
			cur = chunk{start: off, line: line}
			depth = 0
		}
		depth += braceDelta(text)
		if depth < 0 {
			depth = 0
		}
		off = end
		line++
	}
	cur.end = len(src)
	if cur.end > cur.start {
		out = append(out, cur)
	}
	return out
}

func isNameStart(word string) bool {
	r, _ := utf8.DecodeRuneInString(word)
	return r == '_' || r >= 'A' && r <= 'Z' || r >= 'a' && r <= 'z' || r > 127
}

// firstWord returns the first identifier-like word of a line and whether
// it begins in the first column.
func firstWord(line string) (string, bool) {
	trimmed := strings.TrimLeft(line, " \t")
	col0 := len(trimmed) == len(line)
	end := 0
	for end < len(trimmed) {
		r, size := utf8.DecodeRuneInString(trimmed[end:])
		if !(r == '_' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r > 127) {
			break
		}
		end += size
	}
	return trimmed[:end], col0
}

// braceDelta counts '{' minus '}' outside comments, strings and units.
func braceDelta(line string) int {
	d := 0
	for i := 0; i < len(line); {
		typ, end := scanToken(line, i)
		if typ == tokOp {
			switch line[i] {
			case '{':
				d++
			case '}':
				d--
			}
		}
		i = end
	}
	return d
}

// collectComments finds every comment with its position, using the
// lexer so that a '#' inside a string is not taken for one.
func collectComments(file, src string) []*Comment {
	var out []*Comment
	s := &scanner{src: src, pos: lexer.Position{Line: 1, Column: 1}}
	for {
		t, _ := s.Next()
		if t.EOF() {
			return out
		}
		if t.Type != tokComment {
			continue
		}
		text := strings.TrimRight(t.Value, " \t\r")
		start := diag.Pos{Line: t.Pos.Line, Column: t.Pos.Column, Offset: t.Pos.Offset}
		end := start
		end.Offset += len(text)
		end.Column += utf8.RuneCountInString(text)
		out = append(out, &Comment{Range: diag.Range{File: file, Start: start, End: end}, Text: text})
	}
}

// rangeAt builds a range from byte offsets in src.
func rangeAt(file, src string, start, end int) diag.Range {
	return diag.Range{File: file, Start: posAt(src, start), End: posAt(src, end)}
}

// posAt converts a byte offset in src into a position.
func posAt(src string, off int) diag.Pos {
	off = max(0, min(off, len(src)))
	line := 1 + strings.Count(src[:off], "\n")
	ls := strings.LastIndexByte(src[:off], '\n') + 1
	return diag.Pos{Line: line, Column: 1 + utf8.RuneCountInString(src[ls:off]), Offset: off}
}

// PosAt converts a byte offset in src into a position; it is exported for
// the later phases that locate text inside literals (units, strings).
func PosAt(src string, off int) diag.Pos { return posAt(src, off) }

func trimEnd(src string, start, end int) int {
	for end > start && (src[end-1] == '\n' || src[end-1] == ' ' || src[end-1] == '\t' || src[end-1] == '\r') {
		end--
	}
	return end
}

func firstInvalidUTF8(s string) int {
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size == 1 {
			return i
		}
		i += size
	}
	return 0
}

// Limits on the shape of expressions: the parser and every walk over the
// tree recurse, and Go cannot recover from a stack overflow, so text that
// would nest deeper is refused before it is parsed.
const (
	// MaxNesting is the deepest nesting of parentheses and braces.
	MaxNesting = 200
	// MaxOperators is the largest number of operators in one statement.
	MaxOperators = 10000
)

// tooComplex scans src (outside strings, comments and units) and reports
// the first place where parentheses or braces nest deeper than
// MaxNesting, or where one statement holds more than MaxOperators
// operators.
func tooComplex(src string) (int, string) {
	depth, ops := 0, 0
	lastSignificant := byte('\n')
	for i := 0; i < len(src); i++ {
		ch := src[i]
		switch {
		case ch == '#':
			for i < len(src) && src[i] != '\n' {
				i++
			}
			i--
			continue
		case ch == '"':
			for i++; i < len(src) && src[i] != '"' && src[i] != '\n'; i++ {
				if src[i] == '\\' {
					i++
				}
			}
		case ch == '[':
			for i < len(src) && src[i] != ']' && src[i] != '\n' {
				i++
			}
		case ch == '(' || ch == '{':
			depth++
			if depth > MaxNesting {
				return i, fmt.Sprintf("brackets are nested more than %d deep here; split the expression into named quantities", MaxNesting)
			}
		case ch == ')' || ch == '}':
			depth = max(0, depth-1)
		case strings.IndexByte("+-*/^<>=", ch) >= 0:
			ops++
		case ch == '\n':
			// A statement continues after an operator, a comma or inside
			// brackets; otherwise the count starts again.
			if depth == 0 && strings.IndexByte("+-*/^<>=,(|:", lastSignificant) < 0 {
				ops = 0
			}
		case ch >= 'a' && ch <= 'z':
			j := i
			for j < len(src) && (src[j] >= 'a' && src[j] <= 'z' || src[j] == '_') {
				j++
			}
			switch src[i:j] {
			case "if", "and", "or", "not":
				ops++
			}
			i = j - 1
		}
		if ops > MaxOperators {
			return i, fmt.Sprintf("this statement has more than %d operators; split it into named quantities", MaxOperators)
		}
		if ch != ' ' && ch != '\t' && ch != '\r' && ch != '\n' {
			lastSignificant = ch
		}
	}
	return 0, ""
}
