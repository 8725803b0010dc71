package compile

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/dsl"
)

func (c *checker) checkActions() {
	c.m.Actions = c.actionList(c.actions, false)
}

func (c *checker) actionList(ds []*decl, inSweep bool) []Action {
	var out []Action
	for _, d := range ds {
		if a := c.action(d, inSweep); a != nil {
			out = append(out, a)
		}
	}
	return out
}

func (c *checker) action(d *decl, inSweep bool) Action {
	switch s := d.stmt.(type) {
	case *dsl.Show:
		return c.show(s)
	case *dsl.Expect:
		return c.expect(s)
	case *dsl.Print:
		return c.print(s)
	case *dsl.Reset:
		if inSweep {
			c.diags.Add("sweep", s.Range, "reset cannot appear inside a sweep")
			return nil
		}
		return &Reset{Def: s.Range}
	case *dsl.ExprStmt:
		e, dim, ok := c.expr(s.X, &context{what: "a value to show"})
		if !ok {
			return nil
		}
		v, _ := e.IsConst()
		ev := &Eval{Def: s.Range, Text: strings.TrimSpace(c.text(s.Range.Start.Offset, s.Range.End.Offset, s.Range.File)), Value: v, Dim: dim}
		if id, isIdent := s.X.(*dsl.Ident); isIdent {
			if q := c.quantity[id.Name]; q != nil {
				ev.Unit = q.Unit
			}
		}
		return ev
	case *dsl.Sweep:
		return c.sweep(s)
	case *dsl.Fit:
		if inSweep {
			c.diags.Add("sweep", s.Range, "fit cannot appear inside a sweep")
			return nil
		}
		return c.fit(s, d.file)
	case *dsl.Stage, *dsl.Let, *dsl.Species, *dsl.Body, *dsl.Balance, *dsl.Boundary, *dsl.Initially, *dsl.Run, *dsl.Settings, *dsl.Use, *dsl.Version:
		c.diags.Add("sweep", s.Span(), "a sweep may hold only show, expect, print and sweep statements")
		return nil
	}
	return nil
}

func (c *checker) text(a, b int, file string) string {
	src := c.sources[file]
	if a < 0 || b > len(src) || a > b {
		return ""
	}
	return src[a:b]
}

// result checks a result call such as uptake(dye) or time_to(bead.dye, 0.9).
func (c *checker) result(e dsl.Expr) (*Result, bool) {
	call, ok := e.(*dsl.Call)
	if !ok {
		c.diags.Add("result", e.Span(), "expected a result such as uptake(dye), centre(dye) or profile(dye)")
		return nil, false
	}
	kind := call.Fun.Name
	if _, known := ResultFuncs[kind]; !known {
		var cands []string
		for k := range ResultFuncs {
			cands = append(cands, k)
		}
		sort.Strings(cands)
		c.diags.Add("unknown-result", call.Fun.Range, "%q is not a result; results are %s", kind, strings.Join(cands, ", ")).
			Suggestion = Closest(kind, cands)
		return nil, false
	}
	r := &Result{Def: call.Range, Kind: kind, Species: -1}
	if c.m.Run == nil {
		if c.runFailed || c.hasBad {
			return nil, false
		}
		c.diags.Add("result", call.Range, "%s(...) needs a run statement (run until ... or run steady)", kind)
		return nil, false
	}
	if kind == "ledger" && len(call.Args) == 0 {
		return r, true
	}
	want := 1
	if kind == "time_to" {
		want = 2
	}
	if len(call.Args) != want {
		c.diags.Add("argument", call.Range, "%s takes %s, e.g. %s", kind, map[int]string{1: "one argument", 2: "two arguments"}[want], resultExample(kind))
		return nil, false
	}
	// The species, optionally with its body: dye or bead.dye.
	var spID *dsl.Ident
	var body *Body
	switch a := call.Args[0].Value.(type) {
	case *dsl.Ident:
		spID = a
	case *dsl.Path:
		if len(a.Parts) != 2 {
			c.diags.Add("argument", a.Range, "write the species as dye or body.dye")
			return nil, false
		}
		b, ok := c.bodies[a.Parts[0].Name]
		if !ok {
			name := a.Parts[0].Name
			if _, declared := c.bodyDecl[name]; declared || c.broken[name] {
				return nil, false
			}
			var cands []string
			for n := range c.bodyDecl {
				cands = append(cands, n)
			}
			c.diags.Add("unknown-name", a.Parts[0].Range, "%q is not a body", name).Suggestion = Closest(name, cands)
			return nil, false
		}
		body, spID = b, a.Parts[1]
	default:
		c.diags.Add("argument", call.Args[0].Range, "the first argument of %s must be a species, e.g. %s", kind, resultExample(kind))
		return nil, false
	}
	sp, ok := c.speciesRef(spID)
	if !ok {
		return nil, false
	}
	r.Species = sp.Index
	if body == nil {
		var holders []string
		for _, b := range c.m.Bodies {
			if containsInt(b.Species, sp.Index) {
				holders = append(holders, b.Name)
				body = b
			}
		}
		if len(holders) > 1 {
			c.diags.Add("ambiguous", spID.Range, "%s diffuses in %s; name the body, e.g. %s.%s", sp.Name, strings.Join(holders, " and "), holders[0], sp.Name)
			return nil, false
		}
		if body == nil {
			return nil, false // reported by completeness
		}
	} else if !containsInt(body.Species, sp.Index) {
		c.diags.Add("argument", spID.Range, "%s has no balance in %s", sp.Name, body.Name)
		return nil, false
	}
	r.Body = body.Name
	switch kind {
	case "effectiveness":
		hasSource := false
		for _, reg := range body.Regions {
			if bal := reg.Balances[sp.Index]; bal != nil && bal.Source != nil {
				hasSource = true
			}
		}
		if !hasSource {
			if c.failed["source:"+body.Name+":"+sp.Name] {
				return nil, false
			}
			c.diags.Add("result", call.Range, "effectiveness(...) compares reaction rates, but %s has no source in %s", sp.Name, body.Name)
			return nil, false
		}
		r.Dim = units.Dimensionless
	case "uptake", "release":
		r.Dim = units.Dimensionless
	case "time_to":
		v, ok := c.constant(call.Args[1].Value, units.Dimensionless, "a fraction")
		if !ok {
			return nil, false
		}
		if v <= 0 || v >= 1 {
			c.diags.Add("range", call.Args[1].Value.Span(), "the fraction must lie strictly between 0 and 1 (0 and 100 %%), not %g", v)
			return nil, false
		}
		r.Fraction, r.Dim = v, units.Time
	case "flux":
		r.Dim = units.MolarFlux
	case "content":
		switch body.Shape {
		case Slab:
			r.Dim = units.Amount.Div(units.Area)
		case Cylinder, HollowCylinder:
			r.Dim = units.Amount.Div(units.Length)
		default:
			r.Dim = units.Amount
		}
	case "bath":
		hasBath := false
		for _, cond := range body.Conditions[outerName(body)] {
			hasBath = hasBath || cond.Kind == Bath
		}
		if !hasBath {
			if c.failed[body.Name+"."+outerName(body)] || c.failed[body.Name+".*"] {
				return nil, false
			}
			c.diags.Add("result", call.Range, "%s has no bath around it", body.Name)
			return nil, false
		}
		r.Dim = units.Concentration
	default:
		r.Dim = units.Concentration
	}
	if c.m.Run.Steady {
		switch kind {
		case "uptake", "release", "time_to", "map", "bath":
			c.diags.Add("result", call.Range, "%s(...) needs a transient run; this model asks for a steady state", kind)
			return nil, false
		}
	}
	return r, true
}

func outerName(b *Body) string {
	names := Boundaries(b.Shape)
	if b.Shape == ShortCylinder {
		return "side"
	}
	return names[len(names)-1]
}

func resultExample(kind string) string {
	if kind == "time_to" {
		return "time_to(dye, 90 [%])"
	}
	return kind + "(dye)"
}

func (c *checker) show(s *dsl.Show) Action {
	sh := &Show{Def: s.Range, Scale: "linear"}
	ok := true
	for _, it := range s.Items {
		r, good := c.result(it)
		if good {
			sh.Items = append(sh.Items, r)
		}
		ok = ok && good
	}
	if len(s.At) > 0 {
		profiles := false
		for _, it := range sh.Items {
			profiles = profiles || it.Kind == "profile" || it.Kind == "map"
		}
		switch {
		case c.m.Run != nil && c.m.Run.Steady:
			c.diags.Add("result", s.At[0].Span().Join(s.At[len(s.At)-1].Span()), "a steady state has no times; leave out `at`")
			return nil
		case !profiles && ok:
			c.diags.Add("result", s.At[0].Span().Join(s.At[len(s.At)-1].Span()), "`at` gives the times of profiles, but this show has no profile(...)")
			return nil
		}
	}
	for _, a := range s.At {
		v, good := c.constant(a, units.Time, "a profile time")
		if good && c.m.Run != nil && !c.m.Run.Steady && (v < 0 || v > c.m.Run.Until*(1+1e-12)) {
			c.diags.Add("range", a.Span(), "the time %s lies outside the run (0 to %s)", fmtTime(v), fmtTime(c.m.Run.Until))
			good = false
		}
		sh.At = append(sh.At, v)
		ok = ok && good
	}
	if s.Scale != nil {
		switch s.Scale.Name {
		case "linear", "log", "sqrt":
			sh.Scale = s.Scale.Name
		default:
			c.diags.Add("setting", s.Scale.Range, "the scale must be linear, log or sqrt").Suggestion = Closest(s.Scale.Name, []string{"linear", "log", "sqrt"})
			ok = false
		}
	}
	if !ok {
		return nil
	}
	return sh
}

func (c *checker) expect(s *dsl.Expect) Action {
	r, ok := c.result(s.Subject)
	if !ok {
		return nil
	}
	ex := &Expect{Def: s.Range, Subject: r, At: -1, Text: strings.TrimSpace(c.text(s.Range.Start.Offset, s.Range.End.Offset, s.Range.File)), Scale: 1}
	switch r.Kind {
	case "profile", "map", "ledger":
		c.diags.Add("result", s.Subject.Span(), "expect needs a single number; %s(...) gives many", r.Kind)
		return nil
	case "time_to", "effectiveness":
		if s.At != nil {
			c.diags.Add("result", s.At.Span(), "%s(...) is one number for the whole run; leave out `at`", r.Kind)
			return nil
		}
	default:
		if c.m.Run != nil && c.m.Run.Steady && s.At != nil {
			c.diags.Add("result", s.At.Span(), "a steady state has no times; leave out `at`")
			return nil
		}
		if c.m.Run != nil && !c.m.Run.Steady {
			if s.At == nil {
				ex.At = c.m.Run.Until
			} else {
				v, ok := c.constant(s.At, units.Time, "the time of a check")
				if !ok {
					return nil
				}
				if v < 0 || v > c.m.Run.Until*(1+1e-12) {
					c.diags.Add("range", s.At.Span(), "the time %s lies outside the run (0 to %s)", fmtTime(v), fmtTime(c.m.Run.Until))
					return nil
				}
				ex.At = v
			}
		}
	}
	v, ok := c.want(s.Value, &context{what: "an expected value"}, r.Dim, "the expected value of "+r.Kind+"(...)")
	if !ok {
		return nil
	}
	ex.Value, _ = v.IsConst()
	if n, isNum := s.Value.(*dsl.Number); isNum && n.Unit != nil {
		if u, err := units.Parse(n.Unit.Text); err == nil {
			ex.Unit, ex.Scale = u.Text, u.Scale
		}
	}
	if n, isNum := s.Tolerance.(*dsl.Number); isNum && n.Unit != nil && strings.TrimSpace(n.Unit.Text) == "%" {
		ex.Relative = true
		ex.Tol = n.Value / 100
	} else {
		t, ok := c.want(s.Tolerance, &context{what: "a tolerance"}, r.Dim, "an absolute tolerance (or a relative one in [%])")
		if !ok {
			return nil
		}
		ex.Tol, _ = t.IsConst()
	}
	if ex.Tol < 0 {
		c.diags.Add("range", s.Tolerance.Span(), "a tolerance cannot be negative")
		return nil
	}
	return ex
}

func (c *checker) print(s *dsl.Print) Action {
	p := &Print{Def: s.Range}
	for _, a := range s.Args {
		if str, isStr := a.(*dsl.Str); isStr {
			p.Parts = append(p.Parts, PrintPart{Text: str.Value})
			continue
		}
		e, dim, ok := c.expr(a, &context{what: "a printed value"})
		if !ok {
			return nil
		}
		part := PrintPart{Value: e, Dim: dim}
		if id, isIdent := a.(*dsl.Ident); isIdent {
			if q := c.quantity[id.Name]; q != nil {
				part.Unit = q.Unit
			}
		}
		if n, isNum := a.(*dsl.Number); isNum && n.Unit != nil {
			part.Unit = strings.TrimSpace(n.Unit.Text) // show a literal in the unit it was written in
		}
		p.Parts = append(p.Parts, part)
	}
	return p
}

// MaxSweepPoints bounds the number of values one sweep may take.
const MaxSweepPoints = 100000

func (c *checker) sweep(s *dsl.Sweep) Action {
	v := s.Vars[0]
	q := c.quantityOf(v.Name.Name)
	if q == nil {
		if _, isLet := c.lets[v.Name.Name]; !isLet {
			d := c.diags.Add("unknown-name", v.Name.Range, "%q is not a quantity defined with let; only those can be swept", v.Name.Name)
			var cands []string
			for n := range c.lets {
				cands = append(cands, n)
			}
			d.Suggestion = Closest(v.Name.Name, cands)
		}
		return nil
	}
	if in := c.inputs(q.Name); !q.Const || len(in) > 0 {
		c.diags.Add("sweep", v.Name.Range, "%s is computed from other values; sweep %s instead", q.Name, inputsText(in))
		return nil
	}
	for _, outer := range c.sweeping {
		if outer == q.Name {
			c.diags.Add("sweep", v.Name.Range, "%s is already swept by an enclosing sweep", q.Name)
			return nil
		}
	}
	sw := &Sweep{Def: s.Range, Param: q.Name, Unit: q.Unit}
	role := "a value of " + q.Name
	if v.Values != nil {
		for _, e := range v.Values {
			x, ok := c.constant(e, q.Dim, role)
			if !ok {
				return nil
			}
			sw.Values = append(sw.Values, x)
		}
	} else {
		lo, ok1 := c.constant(v.From, q.Dim, role)
		hi, ok2 := c.constant(v.To, q.Dim, role)
		nf, ok3 := c.constant(v.Steps, units.Dimensionless, "a number of steps")
		if !ok1 || !ok2 || !ok3 {
			return nil
		}
		if nf < 2 || nf != math.Trunc(nf) || nf > MaxSweepPoints {
			c.diags.Add("range", v.Steps.Span(), "the number of steps must be a whole number from 2 to %d", MaxSweepPoints)
			return nil
		}
		if v.Log && (lo <= 0 || hi <= 0) {
			c.diags.Add("range", v.From.Span(), "a log-spaced sweep needs positive bounds")
			return nil
		}
		n := int(nf)
		for i := 0; i < n; i++ {
			f := float64(i) / float64(n-1)
			if v.Log {
				sw.Values = append(sw.Values, lo*math.Pow(hi/lo, f))
			} else {
				sw.Values = append(sw.Values, lo+(hi-lo)*f)
			}
		}
	}
	var inner []*decl
	for _, st := range s.Stmts {
		inner = append(inner, &decl{stmt: st})
	}
	c.sweeping = append(c.sweeping, q.Name)
	sw.Actions = c.actionList(inner, true)
	c.sweeping = c.sweeping[:len(c.sweeping)-1]
	return sw
}

func (c *checker) fit(s *dsl.Fit, f *dsl.File) Action {
	ft := &Fit{Def: s.Range}
	if c.m.Run != nil && c.m.Run.Steady {
		c.diags.Add("fit", s.Range, "a fit compares the model with measurements over time; this model asks for a steady state")
		return nil
	}
	seen := map[string]*dsl.FitParam{}
	for _, p := range s.Params {
		if prev, dup := seen[p.Name.Name]; dup {
			c.diags.Add("duplicate", p.Name.Range, "%s is fitted twice", p.Name.Name).Notes = []string{"first at " + prev.Range.String()}
			return nil
		}
		seen[p.Name.Name] = p
		q := c.quantityOf(p.Name.Name)
		if q == nil {
			if _, isLet := c.lets[p.Name.Name]; !isLet && !c.broken[p.Name.Name] {
				var cands []string
				for n := range c.lets {
					cands = append(cands, n)
				}
				c.diags.Add("unknown-name", p.Name.Range, "%q is not a quantity defined with let; only those can be fitted", p.Name.Name).
					Suggestion = Closest(p.Name.Name, cands)
			}
			return nil
		}
		if in := c.inputs(q.Name); !q.Const || len(in) > 0 {
			c.diags.Add("fit", p.Name.Range, "%s is computed from other values; fit %s instead", q.Name, inputsText(in))
			return nil
		}
		lo, ok1 := c.constant(p.Low, q.Dim, "a lower bound of "+q.Name)
		hi, ok2 := c.constant(p.High, q.Dim, "an upper bound of "+q.Name)
		if !ok1 || !ok2 {
			return nil
		}
		if lo >= hi {
			c.diags.Add("range", p.Range, "the lower bound of %s must be below the upper bound", q.Name)
			return nil
		}
		if q.Value < lo || q.Value > hi {
			c.diags.Add("range", p.Range, "the starting value of %s (%g %s) lies outside its bounds", q.Name, q.Value, q.Dim)
			return nil
		}
		ft.Params = append(ft.Params, FitParam{Name: q.Name, Low: lo, High: hi})
	}
	path := s.Data.Value
	if !filepath.IsAbs(path) {
		path = filepath.Join(filepath.Dir(f.Name), path)
	}
	ft.Data = path
	header, err := readCSVHeader(path, c.opts.ReadFile)
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		c.diags.Add("data", s.Data.Range, "cannot read the data file %q: %v", s.Data.Value, err)
		return nil
	}
	cols := map[string]units.Unit{}
	var names []string
	for i, h := range header {
		name, unitText, hasUnit := strings.Cut(h, "[")
		name = strings.TrimSpace(name)
		u := units.One
		if hasUnit {
			unitText = strings.TrimSuffix(strings.TrimSpace(unitText), "]")
			var err error
			u, err = units.Parse(unitText)
			if err != nil {
				msg := err.Error()
				var ue *units.Error
				if errors.As(err, &ue) {
					msg = ue.Msg
					if ue.Suggestion != "" && ue.Offset != ue.End {
						msg += fmt.Sprintf(" (did you mean %q?)", ue.Suggestion)
					}
				}
				c.diags.Add("data", s.Data.Range, "column %d (%s) of %s has a unit that cannot be read: %s", i+1, name, s.Data.Value, msg)
				return nil
			}
		}
		cols[name] = u
		names = append(names, name)
	}
	for _, col := range s.Columns {
		u, ok := cols[col.Column.Value]
		if !ok {
			c.diags.Add("data", col.Column.Range, "%s has no column %q; its columns are %s", s.Data.Value, col.Column.Value, strings.Join(names, ", ")).
				Suggestion = Closest(col.Column.Value, names)
			return nil
		}
		if id, isIdent := col.Target.(*dsl.Ident); isIdent && id.Name == "time" {
			if u.Dim != units.Time {
				c.diags.Add("dimension", col.Column.Range, "the time column must hold a time, but its unit %s is %s", u.Text, u.Dim.Describe())
				return nil
			}
			ft.Time = Column{Name: col.Column.Value, Scale: u.Scale}
			continue
		}
		r, ok := c.result(col.Target)
		if !ok {
			return nil
		}
		switch r.Kind {
		case "profile", "map", "ledger", "time_to", "effectiveness":
			c.diags.Add("fit", col.Target.Span(), "a fit compares time series; %s(...) is not one", r.Kind)
			return nil
		}
		scale := u.Scale
		if u.Dim == units.MassConcentration && r.Dim == units.Concentration && r.Species >= 0 && c.m.Species[r.Species].MolarMass > 0 {
			// A column in mg/L converts with the species' molar mass.
			scale /= c.m.Species[r.Species].MolarMass
		} else if r.Dim != u.Dim {
			c.diags.Add("dimension", col.Column.Range, "column %q holds %s, but %s(...) is %s", col.Column.Value, u.Dim.Describe(), r.Kind, r.Dim.Describe())
			return nil
		}
		ft.Series = append(ft.Series, FitSeries{Result: r, Column: Column{Name: col.Column.Value, Scale: scale}})
	}
	if ft.Time.Name == "" {
		c.diags.Add("fit", s.Range, "say which column holds the time: time = \"t\"")
		return nil
	}
	if len(ft.Series) == 0 {
		c.diags.Add("fit", s.Range, "match at least one result to a column, e.g. uptake(dye) = \"fraction\"")
		return nil
	}
	return ft
}

// readCSVHeader reads the first record of a CSV file: from the file
// itself (a regular file; the header must lie in its first MiB) or
// through read when the options give one.
func readCSVHeader(path string, read func(string) ([]byte, error)) ([]string, error) {
	if read == nil {
		fh, err := os.Open(path)
		if err != nil {
			return nil, err
		}
		defer fh.Close()
		if st, err := fh.Stat(); err != nil || !st.Mode().IsRegular() {
			return nil, errors.New("not a regular file")
		}
		return firstRecord(io.LimitReader(fh, 1<<20))
	}
	b, err := read(path)
	if err != nil {
		return nil, err
	}
	return firstRecord(strings.NewReader(string(b)))
}

func firstRecord(r io.Reader) ([]string, error) {
	// A byte-order mark from a spreadsheet export goes before anything
	// else, so that a comment or blank first line is still recognised.
	br := bufio.NewReader(r)
	if b, err := br.Peek(3); err == nil && string(b) == "\ufeff" {
		br.Discard(3)
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	rec, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("no header line: %v", err)
	}
	if len(rec) > 0 {
		rec[0] = strings.TrimPrefix(rec[0], "\ufeff") // a byte-order mark from a spreadsheet export
	}
	if len(rec) == 1 && strings.Contains(rec[0], ";") {
		return nil, fmt.Errorf("the file is not comma-separated (its header uses ';'); save it as CSV with commas")
	}
	return rec, nil
}

// inputs returns the quantities the let called name refers to directly,
// in the order they are written.
func (c *checker) inputs(name string) []string {
	d, ok := c.lets[name]
	if !ok {
		return nil
	}
	var out []string
	seen := map[string]bool{}
	walkExpr(d.stmt.(*dsl.Let).Value, func(e dsl.Expr) {
		if id, ok := e.(*dsl.Ident); ok && !seen[id.Name] {
			if sym := c.symbols[id.Name]; sym != nil && sym.Kind == QuantitySym {
				seen[id.Name] = true
				out = append(out, id.Name)
			}
		}
	})
	return out
}

// inputsText names the inputs of a computed quantity for a message.
func inputsText(in []string) string {
	switch len(in) {
	case 0:
		return "one of its inputs"
	case 1:
		return in[0]
	}
	return "one of its inputs (" + strings.Join(in, ", ") + ")"
}

// walkExpr calls f for e and every expression inside it.
func walkExpr(e dsl.Expr, f func(dsl.Expr)) {
	if e == nil {
		return
	}
	f(e)
	switch e := e.(type) {
	case *dsl.Unary:
		walkExpr(e.X, f)
	case *dsl.Binary:
		walkExpr(e.X, f)
		walkExpr(e.Y, f)
	case *dsl.Paren:
		walkExpr(e.X, f)
	case *dsl.Cond:
		walkExpr(e.If, f)
		walkExpr(e.Then, f)
		walkExpr(e.Else, f)
	case *dsl.Call:
		for _, a := range e.Args {
			walkExpr(a.Value, f)
		}
	}
}
