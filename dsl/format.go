package dsl

import (
	"strconv"
	"strings"
	"unicode/utf8"
)

// Format returns the canonical layout of a parsed file: one statement per
// line, two-space indentation inside blocks, single spaces around binary
// operators (none around ^), units without spaces inside their brackets,
// "=" aligned in runs of let statements on consecutive lines (a comment on
// a line of its own ends a run), a block with one short property on one
// line and others one property per line, and at most one blank line
// between statements and between the items of a block, kept where the
// source has one (also between a comment and what follows it).
//
// Every comment is kept: a comment on a line of its own stays before the
// item that follows it, and a comment after an item on its line (or after
// a block's opening brace) stays on that line, two spaces after it. A
// comment inside an expression written over several lines moves to the
// line after the statement. Formatting the output again gives the same
// text, and the output parses to the same tree.
//
// Format must be given a file without syntax errors (a *BadStmt is
// written back as its original text).
func Format(f *File) string {
	p := &printer{src: f.Source, comments: f.Comments, limit: len(f.Source) + 1}
	p.stmts(f.Stmts, 0, true)
	p.flushComments(len(f.Source)+1, 0, true)
	out := strings.TrimRight(p.b.String(), "\n")
	if out == "" {
		return ""
	}
	return out + "\n"
}

type printer struct {
	b        strings.Builder
	src      string
	comments []*Comment
	next     int // index of the first comment not yet written
	// limit is the offset of the closing brace of the block being
	// written: a comment after it is not a trailing comment of an item.
	limit int
}

// within runs f with the limit set to the closing brace at end.
func (p *printer) within(end int, f func()) {
	old := p.limit
	p.limit = end
	f()
	p.limit = old
}

// blankBefore reports whether the source has an empty line between the
// end of the text before offset and offset.
func (p *printer) blankBefore(off int) bool {
	i := off
	for i > 0 && (p.src[i-1] == ' ' || p.src[i-1] == '\t') {
		i--
	}
	nl := 0
	for i > 0 {
		c := p.src[i-1]
		if c == '\n' {
			nl++
			if nl >= 2 {
				return true
			}
		} else if c != ' ' && c != '\t' && c != '\r' {
			return false
		}
		i--
	}
	return false
}

// flushComments writes every comment that starts before off, on lines of
// its own at the given indent.
func (p *printer) flushComments(off, indent int, top bool) {
	for p.next < len(p.comments) && p.comments[p.next].Range.Start.Offset < off {
		c := p.comments[p.next]
		if p.b.Len() > 0 && p.blankBefore(c.Range.Start.Offset) && !strings.HasSuffix(p.b.String(), "\n\n") && !strings.HasSuffix(p.b.String(), "{\n") {
			p.b.WriteByte('\n')
		}
		p.b.WriteString(strings.Repeat("  ", indent))
		p.b.WriteString(c.Text)
		p.b.WriteByte('\n')
		p.next++
	}
}

// leading writes the comments before the item at off and keeps a blank
// line between them and the item when the source has one.
func (p *printer) leading(off, indent int) {
	n := p.next
	p.flushComments(off, indent, false)
	if p.next > n && p.blankBefore(off) {
		p.b.WriteByte('\n')
	}
}

// gap writes a blank line before an item of a block (not the first) when
// the source has one before it or before its leading comments.
func (p *printer) gap(i, off int) {
	if i > 0 && p.blankBefore(p.firstOffset(off)) {
		p.b.WriteByte('\n')
	}
}

// openBlock writes " {" for the block of the statement starting at
// start, with a comment that follows the brace on its line.
func (p *printer) openBlock(start int) {
	p.b.WriteString(" {")
	if off := p.braceAfter(start); off >= 0 && p.next < len(p.comments) {
		c := p.comments[p.next]
		if c.Range.Start.Offset > off && strings.Trim(p.src[off+1:c.Range.Start.Offset], " \t\r") == "" {
			p.b.WriteString("  " + c.Text)
			p.next++
		}
	}
	p.b.WriteByte('\n')
}

// braceAfter returns the offset of the first "{" token at or after off,
// or -1.
func (p *printer) braceAfter(off int) int {
	for i := off; i < len(p.src); {
		typ, end := scanToken(p.src, i)
		if typ == tokOp && p.src[i] == '{' {
			return i
		}
		i = end
	}
	return -1
}

// trailing writes a comment that sits on the same line as the end of the
// node ending at endOff, if any.
func (p *printer) trailing(endOff int) {
	if p.next >= len(p.comments) {
		return
	}
	c := p.comments[p.next]
	lineEnd := strings.IndexByte(p.src[min(endOff, len(p.src)):], '\n')
	if lineEnd < 0 {
		lineEnd = len(p.src)
	} else {
		lineEnd += endOff
	}
	if c.Range.Start.Offset >= endOff && c.Range.Start.Offset < lineEnd && c.Range.Start.Offset < p.limit {
		p.b.WriteString("  ")
		p.b.WriteString(c.Text)
		p.next++
	}
}

// hasCommentIn reports whether a comment lies inside [a, b).
func (p *printer) hasCommentIn(a, b int) bool {
	for _, c := range p.comments[p.next:] {
		if c.Range.Start.Offset >= a && c.Range.Start.Offset < b {
			return true
		}
	}
	return false
}

// hasLineCommentIn reports whether a comment on a line of its own starts
// inside [a, b); trailing comments do not count.
func (p *printer) hasLineCommentIn(a, b int) bool {
	for _, c := range p.comments[p.next:] {
		off := c.Range.Start.Offset
		if off >= a && off < b {
			ls := strings.LastIndexByte(p.src[:off], '\n') + 1
			if strings.Trim(p.src[ls:off], " \t\r") == "" {
				return true
			}
		}
	}
	return false
}

func (p *printer) stmts(list []Stmt, indent int, top bool) {
	for i := 0; i < len(list); i++ {
		s := list[i]
		start := s.Span().Start.Offset
		p.gap(i, start)
		p.leading(start, indent)
		// Align "=" across a run of let statements on consecutive lines.
		if _, ok := s.(*Let); ok {
			j := i
			width := 0
			for j < len(list) {
				l, ok := list[j].(*Let)
				if !ok || (j > i && (p.blankBefore(p.firstOffset(l.Range.Start.Offset)) || p.hasLineCommentIn(list[j-1].Span().End.Offset, l.Range.Start.Offset))) {
					break
				}
				width = max(width, utf8.RuneCountInString(l.Name.Name))
				j++
			}
			for k := i; k < j; k++ {
				l := list[k].(*Let)
				if k > i {
					p.leading(l.Range.Start.Offset, indent)
				}
				p.b.WriteString(strings.Repeat("  ", indent))
				p.b.WriteString("let " + l.Name.Name + strings.Repeat(" ", width-utf8.RuneCountInString(l.Name.Name)) + " = " + p.expr(l.Value))
				p.trailing(l.Range.End.Offset)
				p.b.WriteByte('\n')
			}
			i = j - 1
			continue
		}
		p.b.WriteString(strings.Repeat("  ", indent))
		p.stmt(s, indent)
		p.trailing(s.Span().End.Offset)
		p.b.WriteByte('\n')
	}
}

// firstOffset is the offset of the first comment before the statement at
// off that belongs to it, or off.
func (p *printer) firstOffset(off int) int {
	if p.next < len(p.comments) && p.comments[p.next].Range.Start.Offset < off {
		return p.comments[p.next].Range.Start.Offset
	}
	return off
}

func (p *printer) stmt(s Stmt, indent int) {
	w := func(parts ...string) {
		for _, x := range parts {
			p.b.WriteString(x)
		}
	}
	switch s := s.(type) {
	case *Version:
		w("massline ", strconv.Itoa(s.Number))
	case *Use:
		w("use ", strconv.Quote(s.Path.Value))
	case *Let:
		w("let ", s.Name.Name, " = ", p.expr(s.Value))
	case *Species:
		w("species ", s.Name.Name)
		p.props(s.Props, indent, s.Range.Start.Offset)
	case *Body:
		w("body ", s.Name.Name, " = ", p.expr(s.Shape))
		if len(s.Layers) > 0 {
			p.openBlock(s.Shape.Range.End.Offset)
			p.within(s.Range.End.Offset-1, func() {
				for i, l := range s.Layers {
					p.gap(i, l.Range.Start.Offset)
					p.leading(l.Range.Start.Offset, indent+1)
					w(strings.Repeat("  ", indent+1), "layer ", l.Name.Name, " to ", p.expr(l.To))
					p.trailing(l.Range.End.Offset)
					w("\n")
				}
			})
			p.flushComments(s.Range.End.Offset-1, indent+1, false)
			w(strings.Repeat("  ", indent), "}")
		}
	case *Balance:
		w("balance ", s.Species.Name, " in ", s.Region.String())
		p.props(s.Props, indent, s.Range.Start.Offset)
	case *Boundary:
		w("boundary ", s.Place.String())
		if s.Interface != nil {
			w("|", s.Interface.Name)
		}
		if s.Species != nil {
			w(" for ", s.Species.Name)
		}
		w(": ", p.expr(s.Condition))
	case *Initially:
		w("initially ", s.Region.String(), ": ", s.Species.Name, " = ", p.expr(s.Value))
	case *Stage:
		w("stage ", s.Name.Name, " for ", p.expr(s.Duration))
		p.openBlock(s.Duration.Span().End.Offset)
		p.within(s.Range.End.Offset-1, func() { p.stmts(s.Stmts, indent+1, false) })
		p.flushComments(s.Range.End.Offset-1, indent+1, false)
		w(strings.Repeat("  ", indent), "}")
	case *Run:
		w("run")
		if s.Steady {
			w(" steady")
			return
		}
		if s.Until != nil {
			w(" until ", p.expr(s.Until))
		}
		switch {
		case s.Every != nil:
			w(" every ", p.expr(s.Every))
		case len(s.At) > 0:
			w(" at ", p.list(s.At))
		case s.LogN != nil:
			w(" log ", p.expr(s.LogN), " from ", p.expr(s.From))
		}
	case *Settings:
		w("settings")
		if len(s.Props) == 0 {
			w(" {}")
			return
		}
		p.props(s.Props, indent, s.Range.Start.Offset)
	case *Show:
		w("show ", p.list(s.Items))
		if len(s.At) > 0 {
			w(" at ", p.list(s.At))
		}
		if s.Scale != nil {
			w(" scale ", s.Scale.Name)
		}
	case *Expect:
		w("expect ", p.expr(s.Subject))
		if s.At != nil {
			w(" at ", p.expr(s.At))
		}
		w(" = ", p.expr(s.Value), " within ", p.expr(s.Tolerance))
	case *Sweep:
		v := s.Vars[0]
		w("sweep ", v.Name.Name)
		if v.Values != nil {
			w(" in ", p.list(v.Values))
		} else {
			w(" from ", p.expr(v.From), " to ", p.expr(v.To), " steps ", p.expr(v.Steps))
			if v.Log {
				w(" log")
			}
		}
		p.openBlock(v.Range.End.Offset)
		p.within(s.Range.End.Offset-1, func() { p.stmts(s.Stmts, indent+1, false) })
		p.flushComments(s.Range.End.Offset-1, indent+1, false)
		w(strings.Repeat("  ", indent), "}")
	case *Fit:
		w("fit ")
		for i, fp := range s.Params {
			if i > 0 {
				w(", ")
			}
			w(fp.Name.Name, " from ", p.expr(fp.Low), " to ", p.expr(fp.High))
		}
		w(" against ", strconv.Quote(s.Data.Value))
		p.openBlock(s.Data.Range.End.Offset)
		p.within(s.Range.End.Offset-1, func() {
			for i, c := range s.Columns {
				p.gap(i, c.Range.Start.Offset)
				p.leading(c.Range.Start.Offset, indent+1)
				w(strings.Repeat("  ", indent+1), p.expr(c.Target), " = ", strconv.Quote(c.Column.Value))
				p.trailing(c.Range.End.Offset)
				w("\n")
			}
		})
		p.flushComments(s.Range.End.Offset-1, indent+1, false)
		w(strings.Repeat("  ", indent), "}")
	case *Print:
		w("print ", p.list(s.Args))
	case *Reset:
		w("reset")
	case *ExprStmt:
		w(p.expr(s.X))
	case *BadStmt:
		w(strings.TrimSpace(p.src[s.Range.Start.Offset:s.Range.End.Offset]))
	}
}

// props writes a property block: on one line when it has a single short
// property and no comments, else one property per line.
func (p *printer) props(props []*Property, indent int, start int) {
	if len(props) == 0 {
		return
	}
	last := props[len(props)-1].Range.End.Offset
	open := p.braceAfter(start)
	end := p.blockEnd(last)
	if len(props) == 1 && open >= 0 && !p.hasCommentIn(open, end) {
		line := "{ " + props[0].Key.Name + " = " + p.expr(props[0].Value) + " }"
		if utf8.RuneCountInString(line)+utf8.RuneCountInString(p.currentLine()) <= 80 {
			p.b.WriteString(" " + line)
			return
		}
	}
	if open >= 0 {
		p.openBlock(open)
	} else {
		p.b.WriteString(" {\n")
	}
	p.within(end, func() {
		for i, pr := range props {
			p.gap(i, pr.Range.Start.Offset)
			p.leading(pr.Range.Start.Offset, indent+1)
			p.b.WriteString(strings.Repeat("  ", indent+1) + pr.Key.Name + " = " + p.expr(pr.Value))
			p.trailing(pr.Range.End.Offset)
			p.b.WriteByte('\n')
		}
	})
	p.flushComments(end, indent+1, false)
	p.b.WriteString(strings.Repeat("  ", indent) + "}")
}

// blockEnd finds the offset of the closing brace after off.
func (p *printer) blockEnd(off int) int {
	depth := 0
	for i := off; i < len(p.src); {
		typ, end := scanToken(p.src, i)
		if typ == tokOp {
			switch p.src[i] {
			case '{':
				depth++
			case '}':
				if depth == 0 {
					return i
				}
				depth--
			}
		}
		i = end
	}
	return len(p.src)
}

func (p *printer) currentLine() string {
	s := p.b.String()
	i := strings.LastIndexByte(s, '\n')
	return s[i+1:]
}

func (p *printer) list(xs []Expr) string {
	parts := make([]string, len(xs))
	for i, x := range xs {
		parts[i] = p.expr(x)
	}
	return strings.Join(parts, ", ")
}

// precedence of binary operators, higher binds tighter.
var precedence = map[string]int{"or": 1, "and": 2, "<": 4, "<=": 4, ">": 4, ">=": 4, "==": 4, "!=": 4,
	"+": 5, "-": 5, "*": 6, "/": 6, "^": 8}

// expr renders an expression. Parentheses the user wrote are kept (as
// Paren nodes); none are added, since the tree already reflects them.
func (p *printer) expr(e Expr) string {
	switch e := e.(type) {
	case *Number:
		if e.Unit != nil {
			return e.Text + " [" + normalizeUnit(e.Unit.Text) + "]"
		}
		return e.Text
	case *Ident:
		return e.Name
	case *Path:
		return e.String()
	case *Str:
		return strconv.Quote(e.Value)
	case *Unary:
		if e.Op == "not" {
			return "not " + p.expr(e.X)
		}
		return e.Op + p.expr(e.X)
	case *Binary:
		if e.Op == "^" {
			return p.expr(e.X) + "^" + p.expr(e.Y)
		}
		return p.expr(e.X) + " " + e.Op + " " + p.expr(e.Y)
	case *Call:
		if len(e.Args) == 0 && e.Range.End.Offset-e.Range.Start.Offset == len(e.Fun.Name) {
			return e.Fun.Name
		}
		parts := make([]string, len(e.Args))
		for i, a := range e.Args {
			if a.Name != nil {
				parts[i] = a.Name.Name + " = " + p.expr(a.Value)
			} else {
				parts[i] = p.expr(a.Value)
			}
		}
		return e.Fun.Name + "(" + strings.Join(parts, ", ") + ")"
	case *Cond:
		return "if " + p.expr(e.If) + " then " + p.expr(e.Then) + " else " + p.expr(e.Else)
	case *Paren:
		return "(" + p.expr(e.X) + ")"
	case *BadExpr:
		return p.src[e.Range.Start.Offset:e.Range.End.Offset]
	}
	return ""
}

// normalizeUnit removes spaces inside a unit.
func normalizeUnit(s string) string {
	return strings.Join(strings.Fields(s), "")
}
