package dsl

import (
	"fmt"
	"strconv"
	"strings"
)

// SExpr renders a node as an S-expression without positions, for golden
// tests of the tree's shape: (let R (num 1.5 [mm])).
func SExpr(n Node) string {
	var b strings.Builder
	sexpr(&b, n)
	return b.String()
}

// SExprFile renders every statement of f, one per line.
func SExprFile(f *File) string {
	var b strings.Builder
	for _, s := range f.Stmts {
		sexpr(&b, s)
		b.WriteByte('\n')
	}
	return b.String()
}

func sexpr(b *strings.Builder, n Node) {
	w := func(parts ...any) {
		b.WriteByte('(')
		for i, p := range parts {
			if i > 0 {
				b.WriteByte(' ')
			}
			switch v := p.(type) {
			case nil:
				b.WriteString("_")
			case Node:
				if isNil(v) {
					b.WriteString("_")
				} else {
					sexpr(b, v)
				}
			case []Expr:
				b.WriteByte('[')
				for j, e := range v {
					if j > 0 {
						b.WriteByte(' ')
					}
					sexpr(b, e)
				}
				b.WriteByte(']')
			case []*Property:
				b.WriteByte('{')
				for j, e := range v {
					if j > 0 {
						b.WriteByte(' ')
					}
					sexpr(b, e)
				}
				b.WriteByte('}')
			case []Stmt:
				b.WriteByte('{')
				for j, e := range v {
					if j > 0 {
						b.WriteByte(' ')
					}
					sexpr(b, e)
				}
				b.WriteByte('}')
			default:
				fmt.Fprint(b, v)
			}
		}
		b.WriteByte(')')
	}
	switch n := n.(type) {
	case *Number:
		if n.Unit != nil {
			w("num", n.Text, "["+normalizeUnit(n.Unit.Text)+"]")
		} else {
			w("num", n.Text)
		}
	case *Ident:
		b.WriteString(n.Name)
	case *Path:
		b.WriteString(n.String())
	case *Str:
		b.WriteString(strconv.Quote(n.Value))
	case *Unary:
		w(n.Op, n.X)
	case *Binary:
		w(n.Op, n.X, n.Y)
	case *Call:
		parts := []any{"call", n.Fun}
		for _, a := range n.Args {
			parts = append(parts, a)
		}
		w(parts...)
	case *Arg:
		if n.Name != nil {
			w("=", n.Name, n.Value)
		} else {
			sexpr(b, n.Value)
		}
	case *Cond:
		w("if", n.If, n.Then, n.Else)
	case *Paren:
		w("paren", n.X)
	case *BadExpr:
		b.WriteString("(bad-expr)")
	case *Version:
		w("massline", n.Number)
	case *Use:
		w("use", n.Path)
	case *Let:
		w("let", n.Name, n.Value)
	case *Property:
		w("=", n.Key, n.Value)
	case *Species:
		w("species", n.Name, n.Props)
	case *Body:
		parts := []any{"body", n.Name, n.Shape}
		for _, l := range n.Layers {
			parts = append(parts, l)
		}
		w(parts...)
	case *Layer:
		w("layer", n.Name, n.To)
	case *Balance:
		w("balance", n.Species, n.Region, n.Props)
	case *Boundary:
		w("boundary", n.Place, n.Interface, n.Species, n.Condition)
	case *Initially:
		w("initially", n.Region, n.Species, n.Value)
	case *Stage:
		w("stage", n.Name, n.Duration, n.Stmts)
	case *Run:
		if n.Steady {
			w("run", "steady")
		} else {
			w("run", n.Until, n.Every, n.At, n.LogN, n.From)
		}
	case *Settings:
		w("settings", n.Props)
	case *Show:
		w("show", n.Items, n.At, n.Scale)
	case *Expect:
		w("expect", n.Subject, n.At, n.Value, n.Tolerance)
	case *Sweep:
		parts := []any{"sweep"}
		for _, v := range n.Vars {
			parts = append(parts, v)
		}
		parts = append(parts, n.Stmts)
		w(parts...)
	case *SweepVar:
		if n.Values != nil {
			w("in", n.Name, n.Values)
		} else {
			w("range", n.Name, n.From, n.To, n.Steps, n.Log)
		}
	case *Fit:
		parts := []any{"fit"}
		for _, p := range n.Params {
			parts = append(parts, p)
		}
		parts = append(parts, n.Data)
		for _, c := range n.Columns {
			parts = append(parts, c)
		}
		w(parts...)
	case *FitParam:
		w("param", n.Name, n.Low, n.High)
	case *FitColumn:
		w("column", n.Target, n.Column)
	case *Print:
		w("print", n.Args)
	case *Reset:
		b.WriteString("(reset)")
	case *ExprStmt:
		w("expr", n.X)
	case *BadStmt:
		b.WriteString("(bad-stmt)")
	default:
		fmt.Fprintf(b, "(?%T)", n)
	}
}

// isNil reports whether a Node interface holds a nil pointer.
func isNil(n Node) bool {
	switch v := n.(type) {
	case nil:
		return true
	case *Ident:
		return v == nil
	case *Path:
		return v == nil
	case *Call:
		return v == nil
	case *Str:
		return v == nil
	}
	return false
}
