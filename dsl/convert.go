package dsl

import (
	"strconv"
	"strings"

	"github.com/alecthomas/participle/v2/lexer"
	"github.com/massline/massline/dsl/diag"
)

// converter turns participle's grammar structs into the AST. Chunks of a
// file parsed on their own (for error recovery) start at a line start, so
// only the line and byte offset need shifting.
type converter struct {
	file       string
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

func (c *converter) stmts(in []*gStmt) []Stmt {
	out := make([]Stmt, 0, len(in))
	for _, s := range in {
		out = append(out, c.stmt(s))
	}
	return out
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
	v, err := strconv.Unquote(g.Value)
	if err != nil {
		r := c.rng(g.Pos, g.EndPos)
		c.diags.Add("syntax", r, "the string %s has an invalid escape sequence", g.Value)
		v = strings.Trim(g.Value, `"`)
	}
	return &Str{Range: c.rng(g.Pos, g.EndPos), Value: v}
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

func (c *converter) stmt(s *gStmt) Stmt {
	r := c.rng(s.Pos, s.EndPos)
	switch {
	case s.Version != nil:
		n, err := strconv.Atoi(s.Version.Number)
		if err != nil {
			c.diags.Add("syntax", r, "the language version must be a whole number, not %s", s.Version.Number)
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
		return &Run{Range: r, Steady: g.Steady, Until: c.optExpr(g.Until), Every: c.optExpr(g.Every), At: c.exprs(g.At), LogN: c.optExpr(g.LogN), From: c.optExpr(g.From)}
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
		v, err := strconv.ParseFloat(e.Number.Digits, 64)
		if err != nil {
			c.diags.Add("syntax", r, "the number %s is out of range", e.Number.Digits)
		}
		n.Value = v
		if u := e.Number.Unit; u != nil {
			n.Unit = &Unit{Range: c.rng(u.Pos, u.EndPos), Text: u.Text[1 : len(u.Text)-1]}
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
