package dsl

import (
	"errors"
	"fmt"
	"strings"
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
			f.Stmts = nil
		}
	}()
	if len(src) > MaxSourceBytes {
		diags.Add("too-large", diag.Range{File: filename, Start: diag.Pos{Line: 1, Column: 1}},
			"the source is %d bytes; the limit is %d", len(src), MaxSourceBytes)
		return f, diags
	}
	if !utf8.ValidString(src) {
		off := firstInvalidUTF8(src)
		diags.Add("syntax", rangeAt(filename, src, off, off+1), "the source is not valid UTF-8 text")
		return f, diags
	}
	f.Comments = collectComments(filename, src)
	g, err := fileParser.ParseString(filename, src)
	if err == nil {
		c := &converter{file: filename}
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
		c := &converter{file: filename, baseOffset: ch.start, baseLine: ch.line - 1}
		g, err := fileParser.ParseString(filename, text)
		if err != nil {
			d := c.syntaxError(err, text)
			diags = append(diags, d)
			f.Stmts = append(f.Stmts, &BadStmt{Range: rangeAt(filename, src, ch.start, trimEnd(src, ch.start, ch.end))})
			continue
		}
		f.Stmts = append(f.Stmts, c.stmts(g.Stmts)...)
		diags.Append(c.diags)
	}
	diags.Sort()
	return f, diags
}

// syntaxError converts a participle error into a diagnostic in the
// user's terms.
func (c *converter) syntaxError(err error, text string) *diag.Diagnostic {
	var ute *participle.UnexpectedTokenError
	var lerr *lexer.Error
	var perr participle.Error
	d := &diag.Diagnostic{Severity: diag.Error, Code: "syntax"}
	switch {
	case errors.As(err, &ute):
		tok := ute.Unexpected
		start := c.pos(tok.Pos)
		end := start
		end.Offset += len(tok.Value)
		end.Column += utf8.RuneCountInString(tok.Value)
		d.Subject = diag.Range{File: c.file, Start: start, End: end}
		d.Message = "unexpected " + describeToken(tok)
		if ute.Expect != "" {
			d.Message += "; expected " + friendlyExpect(ute.Expect)
		}
		d.Notes = hintFor(tok)
	case errors.As(err, &lerr):
		start := c.pos(lerr.Pos)
		end := start
		end.Offset++
		end.Column++
		d.Subject = diag.Range{File: c.file, Start: start, End: end}
		d.Message = "cannot read this character: " + lerr.Msg
	case errors.As(err, &perr):
		start := c.pos(perr.Position())
		end := start
		end.Offset++
		end.Column++
		d.Subject = diag.Range{File: c.file, Start: start, End: end}
		d.Message = perr.Message()
	default:
		d.Subject = diag.Range{File: c.file, Start: c.pos(lexer.Position{Line: 1, Column: 1})}
		d.Message = err.Error()
	}
	return d
}

func describeToken(tok lexer.Token) string {
	if tok.EOF() {
		return "end of input"
	}
	v := tok.Value
	if len(v) > 40 {
		v = v[:37] + "..."
	}
	switch {
	case strings.HasPrefix(v, "["):
		return "unit " + v
	case strings.HasPrefix(v, "\""):
		return "string " + v
	case v != "" && (v[0] >= '0' && v[0] <= '9' || v[0] == '.'):
		return "number " + v
	case IsReserved(v):
		return "keyword \"" + v + "\""
	}
	return fmt.Sprintf("%q", v)
}

// friendlyExpect shortens participle's description of what it wanted.
func friendlyExpect(s string) string {
	r := strings.NewReplacer("<ident>", "a name", "<number>", "a number", "<string>", "a string",
		"<unit>", "a unit in brackets", "<keyword>", "a keyword")
	return r.Replace(s)
}

// hintFor adds a note for mistakes people commonly make.
func hintFor(tok lexer.Token) []string {
	switch {
	case tok.Value == "%":
		return []string{"units are written in brackets after the number, e.g. 5 [%]"}
	case tok.Value == "=":
		return nil
	}
	return nil
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
	inStr, inUnit := false, false
	for i := 0; i < len(line); i++ {
		ch := line[i]
		switch {
		case inStr:
			if ch == '\\' {
				i++
			} else if ch == '"' {
				inStr = false
			}
		case inUnit:
			if ch == ']' {
				inUnit = false
			}
		case ch == '#':
			return d
		case ch == '"':
			inStr = true
		case ch == '[':
			inUnit = true
		case ch == '{':
			d++
		case ch == '}':
			d--
		}
	}
	return d
}

// collectComments finds every comment with its position, skipping '#'
// inside strings.
func collectComments(file, src string) []*Comment {
	var out []*Comment
	line, col := 1, 1
	inStr, inUnit := false, false
	for i := 0; i < len(src); {
		r, size := utf8.DecodeRuneInString(src[i:])
		switch {
		case inStr:
			if r == '\\' && i+1 < len(src) && src[i+1] != '\n' {
				i += size
				col++
				r, size = utf8.DecodeRuneInString(src[i:])
			} else if r == '"' || r == '\n' {
				inStr = false
			}
		case inUnit:
			if r == ']' || r == '\n' {
				inUnit = false
			}
		case r == '"':
			inStr = true
		case r == '[':
			inUnit = true
		case r == '#':
			end := strings.IndexByte(src[i:], '\n')
			if end < 0 {
				end = len(src)
			} else {
				end += i
			}
			text := strings.TrimRight(src[i:end], " \t\r")
			out = append(out, &Comment{
				Range: diag.Range{File: file, Start: diag.Pos{Line: line, Column: col, Offset: i},
					End: diag.Pos{Line: line, Column: col + utf8.RuneCountInString(text), Offset: i + len(text)}},
				Text: text,
			})
			col += utf8.RuneCountInString(src[i:end])
			i = end
			continue
		}
		if r == '\n' {
			line++
			col = 1
		} else {
			col++
		}
		i += size
	}
	return out
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
