package dsl

import (
	"errors"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"
	"github.com/massline/massline/dsl/diag"
)

// converter turns participle's grammar structs into the AST. Chunks of a
// file parsed on their own (for error recovery) start at a line start, so
// only the line and byte offset need shifting.
type converter struct {
	file       string
	src        string // the whole source; offsets from pos index it
	baseOffset int
	baseLine   int
	diags      diag.List
}

func (c *converter) pos(p lexer.Position) diag.Pos {
	return diag.Pos{Line: p.Line + c.baseLine, Column: p.Column, Offset: p.Offset + c.baseOffset}
}

func (c *converter) rng(a, b lexer.Position) diag.Range {
	return diag.Range{File: c.file, Start: c.pos(a), End: c.pos(b)}
}

// stmts converts a list of statements. A statement that starts on the
// line where the previous one ended is an error (one statement per line):
// both become one BadStmt, so that the checker does not see half of a
// mistake such as "let c = 5 mm".
func (c *converter) stmts(in []*gStmt) []Stmt {
	out := make([]Stmt, 0, len(in))
	for _, g := range in {
		s := c.stmt(g)
		if n := len(out); n > 0 && s.Span().Start.Line == out[n-1].Span().End.Line {
			prev := out[n-1]
			c.sameLine(prev, s)
			bad := &BadStmt{Range: prev.Span().Join(s.Span())}
			if b, ok := prev.(*BadStmt); ok {
				bad.Keyword, bad.Name = b.Keyword, b.Name
			} else {
				bad.Keyword, bad.Name = declared(prev)
			}
			out[n-1] = bad
			continue
		}
		out = append(out, s)
	}
	return out
}

// declared returns the keyword of a statement and the name it declares.
func declared(s Stmt) (string, *Ident) {
	switch s := s.(type) {
	case *Let:
		return "let", s.Name
	case *Species:
		return "species", s.Name
	case *Body:
		return "body", s.Name
	case *Stage:
		return "stage", s.Name
	case *Run:
		return "run", nil
	}
	return "", nil
}

// followers says what must come after the words that continue a
// statement, for the message when one ends a line.
var followers = map[string]string{
	"every": "a time step", "at": "one or more times", "from": "a value", "to": "a value",
	"within": "a tolerance", "until": "an end time", "scale": "linear, log or sqrt",
	"steps": "a number of steps", "in": "a body or values", "for": "a species or a duration",
	"log": "a number of times", "against": "a data file name in quotes",
}

// sameLine reports a statement that starts on the line where prev ends.
func (c *converter) sameLine(prev, s Stmt) {
	r := s.Span()
	if x, ok := s.(*ExprStmt); ok {
		text := c.text(r)
		if id, ok := x.X.(*Ident); ok {
			if what, ok := followers[id.Name]; ok {
				c.diags.Add("syntax", r, "%q must be followed by %s", id.Name, what)
				return
			}
		}
		before := strings.TrimRight(c.text(diag.Range{Start: prev.Span().Start, End: r.Start}), " \t")
		num := trailingNumber(before)
		if num != "" && text != "" && !isDigit(text[0]) && text[0] != '(' && text[0] != '-' {
			c.diags.Add("syntax", r, "a unit is written in brackets right after its number").
				Suggestion = num + " [" + normalizeUnit(text) + "]"
			return
		}
	}
	c.diags.Add("syntax", r, "a new statement cannot start on the same line as the previous one; put each statement on a line of its own")
}

// trailingNumber returns the number literal that ends s, or "".
func trailingNumber(s string) string {
	i := len(s)
	for i > 0 && strings.IndexByte("0123456789.eE+-", s[i-1]) >= 0 {
		i--
	}
	for i < len(s) && !isDigit(s[i]) && s[i] != '.' {
		i++
	}
	num := s[i:]
	if num == "" || !isDigit(num[len(num)-1]) || strictNumberEnd(num) != len(num) {
		return ""
	}
	if i > 0 {
		if r, _ := utf8.DecodeLastRuneInString(s[:i]); r == '_' || unicode.IsLetter(r) || unicode.IsDigit(r) {
			return ""
		}
	}
	return num
}

// text returns the source text of a range.
func (c *converter) text(r diag.Range) string {
	a, b := r.Start.Offset, r.End.Offset
	if a < 0 || b > len(c.src) || a > b {
		return ""
	}
	return c.src[a:b]
}

func (c *converter) ident(g *gIdent) *Ident {
	if g == nil {
		return nil
	}
	return &Ident{Range: c.rng(g.Pos, g.EndPos), Name: g.Name}
}

func (c *converter) str(g *gString) *Str {
	if g == nil {
		return nil
	}
	r := c.rng(g.Pos, g.EndPos)
	if len(g.Value) < 2 || !strings.HasSuffix(g.Value, `"`) || strings.HasSuffix(g.Value, `\"`) && !validQuoted(g.Value) {
		c.diags.Add("syntax", r, "this string is not closed; end it with \" on the same line")
		return &Str{Range: r, Value: strings.TrimPrefix(g.Value, `"`)}
	}
	v, err := strconv.Unquote(g.Value)
	if err != nil {
		c.diags.Add("syntax", r, "the string %s has an invalid escape sequence; write \\\\ for a backslash", g.Value)
		v = strings.Trim(g.Value, `"`)
	}
	return &Str{Range: r, Value: v}
}

func (c *converter) path(g *gPath) *Path {
	if g == nil {
		return nil
	}
	p := &Path{Range: c.rng(g.Pos, g.EndPos)}
	for _, id := range g.Parts {
		p.Parts = append(p.Parts, c.ident(id))
	}
	return p
}

func (c *converter) props(in []*gProp) []*Property {
	out := make([]*Property, 0, len(in))
	for _, p := range in {
		out = append(out, &Property{Range: c.rng(p.Pos, p.EndPos), Key: c.ident(p.Key), Value: c.expr(p.Value)})
	}
	return out
}

func (c *converter) exprs(in []*gExpr) []Expr {
	if len(in) == 0 {
		return nil
	}
	out := make([]Expr, 0, len(in))
	for _, e := range in {
		out = append(out, c.expr(e))
	}
	return out
}

// stmt converts one statement. A statement in which conversion found an
// error (a malformed number, an unclosed string) becomes a BadStmt.
func (c *converter) stmt(s *gStmt) Stmt {
	n := len(c.diags)
	out := c.stmt1(s)
	if len(c.diags) > n {
		if _, isBad := out.(*BadStmt); !isBad {
			kw, name := declared(out)
			return &BadStmt{Range: out.Span(), Keyword: kw, Name: name}
		}
	}
	return out
}

func (c *converter) stmt1(s *gStmt) Stmt {
	r := c.rng(s.Pos, s.EndPos)
	switch {
	case s.Version != nil:
		n, err := strconv.Atoi(s.Version.Number)
		if err != nil || n > 1<<20 {
			c.diags.Add("syntax", r, "the language version must be a whole number, not %s", s.Version.Number)
			return &BadStmt{Range: r, Keyword: "massline"}
		}
		return &Version{Range: r, Number: n}
	case s.Use != nil:
		return &Use{Range: r, Path: c.str(s.Use.Path)}
	case s.Let != nil:
		return &Let{Range: r, Name: c.ident(s.Let.Name), Value: c.expr(s.Let.Value)}
	case s.Species != nil:
		return &Species{Range: r, Name: c.ident(s.Species.Name), Props: c.props(s.Species.Props)}
	case s.Body != nil:
		b := &Body{Range: r, Name: c.ident(s.Body.Name), Shape: c.call(s.Body.Shape)}
		for _, l := range s.Body.Layers {
			b.Layers = append(b.Layers, &Layer{Range: c.rng(l.Pos, l.EndPos), Name: c.ident(l.Name), To: c.expr(l.To)})
		}
		return b
	case s.Balance != nil:
		return &Balance{Range: r, Species: c.ident(s.Balance.Species), Region: c.path(s.Balance.Region), Props: c.props(s.Balance.Props)}
	case s.Boundary != nil:
		g := s.Boundary
		cond := &Call{Range: c.rng(g.Condition.Pos, g.Condition.EndPos), Fun: c.ident(g.Condition.Fun)}
		cond.Args = c.args(g.Condition.Args)
		return &Boundary{Range: r, Place: c.path(g.Place), Interface: c.ident(g.Interface), Species: c.ident(g.Species), Condition: cond}
	case s.Initially != nil:
		return &Initially{Range: r, Region: c.path(s.Initially.Region), Species: c.ident(s.Initially.Species), Value: c.expr(s.Initially.Value)}
	case s.Stage != nil:
		return &Stage{Range: r, Name: c.ident(s.Stage.Name), Duration: c.expr(s.Stage.Duration), Stmts: c.stmts(s.Stage.Stmts)}
	case s.Run != nil:
		g := s.Run
		run := &Run{Range: r, Steady: g.Steady, Until: c.optExpr(g.Until)}
		out := g.Out
		if out == nil {
			out = g.Only
		}
		if out != nil {
			run.Every, run.At, run.LogN, run.From = c.optExpr(out.Every), c.exprs(out.At), c.optExpr(out.LogN), c.optExpr(out.From)
		}
		return run
	case s.Settings != nil:
		return &Settings{Range: r, Props: c.props(s.Settings.Props)}
	case s.Show != nil:
		return &Show{Range: r, Items: c.exprs(s.Show.Items), At: c.exprs(s.Show.At), Scale: c.ident(s.Show.Scale)}
	case s.Expect != nil:
		g := s.Expect
		return &Expect{Range: r, Subject: c.expr(g.Subject), At: c.optExpr(g.At), Value: c.expr(g.Value), Tolerance: c.expr(g.Tolerance)}
	case s.Sweep != nil:
		g := s.Sweep.Var
		v := &SweepVar{Range: c.rng(g.Pos, g.EndPos), Name: c.ident(g.Name), Values: c.exprs(g.Values),
			From: c.optExpr(g.From), To: c.optExpr(g.To), Steps: c.optExpr(g.Steps), Log: g.Log}
		return &Sweep{Range: r, Vars: []*SweepVar{v}, Stmts: c.stmts(s.Sweep.Stmts)}
	case s.Fit != nil:
		f := &Fit{Range: r, Data: c.str(s.Fit.Data)}
		for _, p := range s.Fit.Params {
			f.Params = append(f.Params, &FitParam{Range: c.rng(p.Pos, p.EndPos), Name: c.ident(p.Name), Low: c.expr(p.Low), High: c.expr(p.High)})
		}
		for _, col := range s.Fit.Columns {
			f.Columns = append(f.Columns, &FitColumn{Range: c.rng(col.Pos, col.EndPos), Target: c.expr(col.Target), Column: c.str(col.Column)})
		}
		return f
	case s.Print != nil:
		return &Print{Range: r, Args: c.exprs(s.Print.Args)}
	case s.Reset != nil:
		return &Reset{Range: r}
	case s.Expr != nil:
		return &ExprStmt{Range: r, X: c.expr(s.Expr)}
	}
	return &BadStmt{Range: r}
}

func (c *converter) optExpr(e *gExpr) Expr {
	if e == nil {
		return nil
	}
	return c.expr(e)
}

func (c *converter) expr(e *gExpr) Expr {
	if e == nil {
		return &BadExpr{}
	}
	x := c.and(e.Left)
	for _, op := range e.Rest {
		y := c.and(op.Right)
		x = &Binary{Range: x.Span().Join(y.Span()), Op: op.Op, X: x, Y: y}
	}
	return x
}

func (c *converter) and(e *gAnd) Expr {
	x := c.not(e.Left)
	for _, op := range e.Rest {
		y := c.not(op.Right)
		x = &Binary{Range: x.Span().Join(y.Span()), Op: op.Op, X: x, Y: y}
	}
	return x
}

func (c *converter) not(e *gNot) Expr {
	if e.Not != nil {
		return &Unary{Range: c.rng(e.Pos, e.EndPos), Op: "not", X: c.not(e.Not)}
	}
	return c.cmp(e.Cmp)
}

func (c *converter) cmp(e *gCmp) Expr {
	x := c.add(e.Left)
	if e.Op == "" {
		return x
	}
	y := c.add(e.Right)
	return &Binary{Range: x.Span().Join(y.Span()), Op: e.Op, X: x, Y: y}
}

func (c *converter) add(e *gAdd) Expr {
	x := c.mul(e.Left)
	for _, op := range e.Rest {
		y := c.mul(op.Right)
		x = &Binary{Range: x.Span().Join(y.Span()), Op: op.Op, X: x, Y: y}
	}
	return x
}

func (c *converter) mul(e *gMul) Expr {
	x := c.unary(e.Left)
	for _, op := range e.Rest {
		y := c.unary(op.Right)
		x = &Binary{Range: x.Span().Join(y.Span()), Op: op.Op, X: x, Y: y}
	}
	return x
}

func (c *converter) unary(e *gUnary) Expr {
	if e.X != nil {
		return &Unary{Range: c.rng(e.Pos, e.EndPos), Op: e.Op, X: c.unary(e.X)}
	}
	return c.pow(e.Pow)
}

func (c *converter) pow(e *gPow) Expr {
	x := c.primary(e.Base)
	if e.Exp == nil {
		return x
	}
	y := c.unary(e.Exp)
	return &Binary{Range: x.Span().Join(y.Span()), Op: "^", X: x, Y: y}
}

func (c *converter) primary(e *gPrimary) Expr {
	r := c.rng(e.Pos, e.EndPos)
	switch {
	case e.Number != nil:
		n := &Number{Range: r, Text: e.Number.Digits}
		n.Value = c.number(e.Number)
		if u := e.Number.Unit; u != nil {
			ur := c.rng(u.Pos, u.EndPos)
			text := strings.TrimPrefix(u.Text, "[")
			switch {
			case !strings.HasSuffix(text, "]"):
				c.diags.Add("syntax", ur, "this unit bracket is not closed; write [%s]", strings.TrimSpace(text))
			case strings.TrimSpace(strings.TrimSuffix(text, "]")) == "":
				c.diags.Add("syntax", ur, "the unit brackets are empty; write [1] for a plain number, or leave them out")
			}
			n.Unit = &Unit{Range: ur, Text: strings.TrimSuffix(text, "]")}
		}
		return n
	case e.Cond != nil:
		return &Cond{Range: r, If: c.expr(e.Cond.If), Then: c.expr(e.Cond.Then), Else: c.expr(e.Cond.Else)}
	case e.Call != nil:
		return c.call(e.Call)
	case e.Path != nil:
		p := c.path(e.Path)
		if len(p.Parts) == 1 {
			return p.Parts[0]
		}
		return p
	case e.String != nil:
		return c.str(e.String)
	case e.Paren != nil:
		return &Paren{Range: r, X: c.expr(e.Paren)}
	}
	return &BadExpr{Range: r}
}

// number reads the digits of a number token, reporting a malformed one:
// the lexer lets letters and dots stick to a number so that "3mm" and
// "1.2.3" can be explained here.
func (c *converter) number(g *gNumber) float64 {
	text := g.Digits
	r := c.rng(g.Pos, g.Pos)
	r.End.Offset += len(text)
	r.End.Column += utf8.RuneCountInString(text)
	v, err := strconv.ParseFloat(text, 64)
	if err == nil {
		return v
	}
	if errors.Is(err, strconv.ErrRange) && strictNumberEnd(text) == len(text) {
		c.diags.Add("syntax", r, "the number %s is too large", text)
		return 0
	}
	end := strictNumberEnd(text)
	if end < len(text) {
		rest, _ := utf8.DecodeRuneInString(text[end:])
		if unicode.IsLetter(rest) && !strings.ContainsAny(text[end:], ".") {
			c.diags.Add("syntax", r, "a unit is written in brackets after its number").
				Suggestion = text[:end] + " [" + text[end:] + "]"
			return 0
		}
	}
	c.diags.Add("syntax", r, "%s is not a number", text)
	return 0
}

// strictNumberEnd returns the end of the well-formed number at the start
// of text.
func strictNumberEnd(text string) int {
	j := 0
	for j < len(text) && isDigit(text[j]) {
		j++
	}
	if j < len(text) && text[j] == '.' {
		j++
		for j < len(text) && isDigit(text[j]) {
			j++
		}
	}
	if j < len(text) && (text[j] == 'e' || text[j] == 'E') {
		k := j + 1
		if k < len(text) && (text[k] == '+' || text[k] == '-') {
			k++
		}
		if k < len(text) && isDigit(text[k]) {
			for k < len(text) && isDigit(text[k]) {
				k++
			}
			j = k
		}
	}
	return j
}

// validQuoted reports whether s is a complete quoted string.
func validQuoted(s string) bool {
	_, err := strconv.Unquote(s)
	return err == nil
}

func (c *converter) call(g *gCall) *Call {
	if g == nil {
		return nil
	}
	return &Call{Range: c.rng(g.Pos, g.EndPos), Fun: c.ident(g.Fun), Args: c.args(g.Args)}
}

func (c *converter) args(in []*gArg) []*Arg {
	out := make([]*Arg, 0, len(in))
	for _, a := range in {
		out = append(out, &Arg{Range: c.rng(a.Pos, a.EndPos), Name: c.ident(a.Name), Value: c.expr(a.Value)})
	}
	return out
}
