package compile

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"unicode/utf8"

	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// LanguageVersion is the newest version of the language this compiler
// reads. A file declares the version it was written for with its first
// line, "massline 1".
const LanguageVersion = 1

// Options controls Check. A nil *Options means the defaults.
type Options struct {
	// Previous are earlier chunks of a notebook whose declarations are in
	// scope. Their output statements (show, expect, print…) are not run
	// again; only those of the checked file are.
	Previous []*dsl.File
	// Redefine allows a declaration in the checked file to replace one of
	// an earlier chunk (notebook semantics); each replacement is reported
	// as a note. Within one file, a second declaration is always an error.
	Redefine bool
	// ReadFile reads an included file; nil means os.ReadFile. Paths are
	// resolved relative to the including file's directory.
	ReadFile func(path string) ([]byte, error)
	// Override replaces the values of constant quantities (let
	// statements) by name, in SI units; sweeps and fits use it. A name
	// that is not a constant quantity is ignored.
	Override map[string]float64
	// Lenient skips the completeness checks (missing balances, boundary
	// conditions and starting values), for a notebook cell that only
	// declares things while the model is being built.
	Lenient bool
	// Sources, when not nil, receives the text of every file the checker
	// read (the model and its includes), so that diagnostics in included
	// files can be rendered with their source lines.
	Sources diag.Sources
}

// decl is one declaration with the chunk it came from.
type decl struct {
	stmt  dsl.Stmt
	chunk int
	file  *dsl.File
}

type checker struct {
	opts    *Options
	m       *Model
	diags   diag.List
	sources map[string]string

	lets      map[string]*decl
	letOrder  []string
	letState  map[string]int // 0 unvisited, 1 visiting, 2 done
	quantity  map[string]*Quantity
	species   map[string]*Species
	specDecl  map[string]*decl
	bodies    map[string]*Body
	bodyDecl  map[string]*decl
	balances  []*decl
	bounds    []*decl
	initials  []*decl
	stages    []*decl
	runDecl   *decl
	settings  []*decl
	actions   []*decl
	current   int // index of the checked chunk
	seen      map[string]*decl
	symbols   map[string]*Symbol
	visiting  []string
	included  map[string]bool
	versionAt *decl
	failed    map[string]bool // boundaries whose condition had an error
	// massSpecies is the species whose molar mass converts mass
	// concentrations in the statement being checked; -1 for none.
	massSpecies int
	runFailed   bool
	// broken holds the names declared by statements that could not be
	// parsed; uses of them are not reported again.
	broken map[string]bool
	// hasBad is set when some statement could not be parsed: the
	// completeness checks are then skipped, since the missing piece may
	// be in the broken statement.
	hasBad bool
	// balFailed holds the bodies some balance statement of which had an
	// error; their completeness is not checked.
	balFailed map[string]bool
	// bodyFailed is set when a body had an error.
	bodyFailed bool
	// including is the chain of files being included, for cycles.
	including []string
	// sweeping holds the quantities of the enclosing sweeps.
	sweeping []string
}

// Check resolves names, checks dimensions and completeness of a parsed
// model file (or notebook cell), and returns the checked Model together
// with every diagnostic, sorted by position. The Model is nil when there
// are errors, and when f holds statements that could not be parsed (whose
// errors the parser reported).
func Check(f *dsl.File, opts *Options) (m *Model, diags diag.List) {
	name := ""
	if f != nil {
		name = f.Name
	}
	defer func() {
		if r := recover(); r != nil {
			diags = append(diags, &diag.Diagnostic{Severity: diag.Error, Code: "internal",
				Subject: diag.Range{File: name, Start: diag.Pos{Line: 1, Column: 1}, End: diag.Pos{Line: 1, Column: 1}},
				Message: fmt.Sprintf("the checker failed unexpectedly (%v); please report this model", r)})
			m = nil
		}
	}()
	if f == nil {
		f = &dsl.File{}
	}
	if opts == nil {
		opts = &Options{}
	}
	c := &checker{massSpecies: -1,
		opts: opts, sources: map[string]string{},
		lets: map[string]*decl{}, letState: map[string]int{}, quantity: map[string]*Quantity{},
		species: map[string]*Species{}, specDecl: map[string]*decl{},
		bodies: map[string]*Body{}, bodyDecl: map[string]*decl{},
		seen: map[string]*decl{}, symbols: map[string]*Symbol{}, included: map[string]bool{}, failed: map[string]bool{},
		broken: map[string]bool{}, balFailed: map[string]bool{},
	}
	c.m = &Model{Name: f.Name, Source: f.Source, Hash: canonicalHash(f, opts.Previous), Version: LanguageVersion,
		Info: &Info{Dims: map[dsl.Expr]units.Dim{}, Uses: map[*dsl.Ident]*Symbol{}, Defs: map[*dsl.Ident]*Symbol{}}}
	for i, p := range opts.Previous {
		c.collect(p, i, p.Stmts)
	}
	c.current = len(opts.Previous)
	c.including = []string{filepath.Clean(f.Name)}
	c.collect(f, c.current, f.Stmts)
	c.defineBuiltins()
	c.checkLets()
	c.checkSpecies()
	c.checkBodies()
	c.checkBalances()
	c.checkBoundaries()
	c.checkInitials()
	c.checkStages()
	if !opts.Lenient && !c.hasBad {
		c.checkCompleteness()
	}
	c.checkRun()
	c.checkSettings()
	c.checkActions()
	c.diags.Sort()
	if opts.Sources != nil {
		for name, text := range c.sources {
			opts.Sources[name] = text
		}
	}
	if c.diags.HasErrors() || c.hasBad {
		// A statement that could not be parsed (reported by the parser)
		// leaves the model incomplete: no model is returned.
		return nil, c.diags
	}
	return c.m, c.diags
}

// Sources returns the text of f for rendering its diagnostics; the texts
// of included files are collected through Options.Sources.
func Sources(f *dsl.File) diag.Sources {
	return diag.Sources{f.Name: f.Source}
}

// ---- collection ----

func (c *checker) collect(f *dsl.File, chunk int, stmts []dsl.Stmt) {
	c.sources[f.Name] = f.Source
	for _, s := range stmts {
		d := &decl{stmt: s, chunk: chunk, file: f}
		switch s := s.(type) {
		case *dsl.Version:
			if c.versionAt != nil && c.versionAt.file == f {
				c.diags.Add("duplicate", s.Range, "the language version is already given").
					Notes = []string{"first given at " + c.versionAt.stmt.Span().String()}
				continue
			}
			c.versionAt = d
			if s.Number < 1 || s.Number > LanguageVersion {
				c.diags.Add("version", s.Range, "this file is written for language version %d; this massline reads version %d", s.Number, LanguageVersion)
			} else if first := firstStmt(stmts); first != dsl.Stmt(s) {
				c.diags.Add("version", s.Range, "the language version line must come first in the file")
			}
			c.m.Version = s.Number
		case *dsl.Use:
			c.include(f, chunk, s)
		case *dsl.Let:
			if c.declare("name:"+s.Name.Name, s.Name.Name, s.Name.Range, d) {
				if _, ok := c.lets[s.Name.Name]; !ok {
					c.letOrder = append(c.letOrder, s.Name.Name)
				}
				c.lets[s.Name.Name] = d
				delete(c.specDecl, s.Name.Name)
				delete(c.bodyDecl, s.Name.Name)
			}
		case *dsl.Species:
			if c.declare("name:"+s.Name.Name, s.Name.Name, s.Name.Range, d) {
				c.specDecl[s.Name.Name] = d
				c.dropLet(s.Name.Name)
				delete(c.bodyDecl, s.Name.Name)
			}
		case *dsl.Body:
			if c.declare("name:"+s.Name.Name, s.Name.Name, s.Name.Range, d) {
				c.bodyDecl[s.Name.Name] = d
				c.dropLet(s.Name.Name)
				delete(c.specDecl, s.Name.Name)
			}
		case *dsl.Balance:
			if c.declare("balance:"+s.Species.Name+"@"+s.Region.String(), "balance of "+s.Species.Name+" in "+s.Region.String(), s.Range, d) {
				c.balances = replaceDecl(c.balances, d, func(o *decl) bool {
					b := o.stmt.(*dsl.Balance)
					return b.Species.Name == s.Species.Name && b.Region.String() == s.Region.String()
				})
			}
		case *dsl.Boundary:
			c.bounds = append(c.bounds, d)
		case *dsl.Initially:
			if c.declare("initially:"+s.Species.Name+"@"+s.Region.String(), "starting value of "+s.Species.Name+" in "+s.Region.String(), s.Range, d) {
				c.initials = replaceDecl(c.initials, d, func(o *decl) bool {
					b := o.stmt.(*dsl.Initially)
					return b.Species.Name == s.Species.Name && b.Region.String() == s.Region.String()
				})
			}
		case *dsl.Stage:
			if c.declare("stage:"+s.Name.Name, "stage "+s.Name.Name, s.Name.Range, d) {
				c.stages = replaceDecl(c.stages, d, func(o *decl) bool { return o.stmt.(*dsl.Stage).Name.Name == s.Name.Name })
			}
		case *dsl.Run:
			if c.runDecl != nil && c.runDecl.chunk == chunk {
				c.diags.Add("duplicate", s.Range, "a second run statement; a model has one").
					Notes = []string{"the first is at " + c.runDecl.stmt.Span().String()}
			} else {
				c.runDecl = d
			}
		case *dsl.Settings:
			c.settings = append(c.settings, d)
		case *dsl.BadStmt:
			// Already reported by the parser: remember what it declared.
			if chunk == c.currentChunkIndex() || !c.opts.Redefine {
				c.hasBad = true
			}
			if s.Name != nil {
				c.broken[s.Name.Name] = true
			}
			if s.Keyword == "run" {
				c.runFailed = true
			}
		default:
			if chunk == c.currentChunkIndex() {
				c.actions = append(c.actions, d)
			}
		}
	}
}

// firstStmt returns the first statement of a file that is not a
// statement that failed to parse.
func firstStmt(stmts []dsl.Stmt) dsl.Stmt {
	for _, s := range stmts {
		if _, bad := s.(*dsl.BadStmt); !bad {
			return s
		}
	}
	return nil
}

// currentChunkIndex is the chunk whose actions run; during collection of
// the previous chunks it is not yet set, so compare with their count.
func (c *checker) currentChunkIndex() int { return len(c.opts.Previous) }

func replaceDecl(list []*decl, d *decl, same func(*decl) bool) []*decl {
	for i, o := range list {
		if same(o) {
			list[i] = d
			return list
		}
	}
	return append(list, d)
}

func (c *checker) dropLet(name string) {
	if _, ok := c.lets[name]; ok {
		delete(c.lets, name)
		for i, n := range c.letOrder {
			if n == name {
				c.letOrder = append(c.letOrder[:i], c.letOrder[i+1:]...)
				break
			}
		}
	}
}

// declare records a declaration under key. It reports a duplicate within
// one chunk; across chunks it allows the replacement when redefinition is
// on (with a note), else reports it.
func (c *checker) declare(key, what string, r diag.Range, d *decl) bool {
	if prev, ok := c.seen[key]; ok {
		if prev.chunk != d.chunk && c.opts.Redefine {
			if d.chunk == c.currentChunkIndex() {
				n := c.diags.Add("redefined", r, "%s redefined (it was defined at %s)", what, prev.stmt.Span())
				n.Severity = diag.Note
			}
			c.seen[key] = d
			return true
		}
		c.diags.Add("duplicate", r, "%s is already defined", what).
			Notes = []string{"first defined at " + prev.stmt.Span().String()}
		return false
	}
	if strings.HasPrefix(key, "name:") && dsl.IsReserved(strings.TrimPrefix(key, "name:")) {
		c.diags.Add("reserved", r, "%q is a keyword and cannot be used as a name", strings.TrimPrefix(key, "name:"))
		return false
	}
	if strings.HasPrefix(key, "name:") && builtinNames[strings.TrimPrefix(key, "name:")] != "" {
		c.diags.Add("reserved", r, "%q is the built-in %s and cannot be redefined", strings.TrimPrefix(key, "name:"), builtinNames[strings.TrimPrefix(key, "name:")])
		return false
	}
	c.seen[key] = d
	return true
}

var builtinNames = map[string]string{
	"t": "time", "r": "position (distance from the centre)", "z": "axial position",
	"pi": "number π",
}

// include reads another file and collects its declarations. A name
// defined both in the included file and in the including file is an error
// (no silent shadowing).
func (c *checker) include(f *dsl.File, chunk int, u *dsl.Use) {
	path := u.Path.Value
	if !filepath.IsAbs(path) {
		path = filepath.Join(filepath.Dir(f.Name), path)
	}
	path = filepath.Clean(path)
	for i, p := range c.including {
		if p == path {
			chain := append(append([]string(nil), c.including[i:]...), path)
			for j := range chain {
				chain[j] = filepath.Base(chain[j])
			}
			c.diags.Add("include", u.Path.Range, "%q includes itself (%s)", u.Path.Value, strings.Join(chain, " → "))
			return
		}
	}
	if c.included[path] {
		return
	}
	c.included[path] = true
	read := c.opts.ReadFile
	if read == nil {
		read = readRegularFile
	}
	b, err := read(path)
	if err != nil {
		var pe *os.PathError
		msg := err.Error()
		if errors.As(err, &pe) {
			msg = pe.Err.Error()
		}
		c.diags.Add("include", u.Path.Range, "cannot read the included file %q: %s", u.Path.Value, msg)
		return
	}
	inc, ds := dsl.Parse(path, string(b))
	c.diags.Append(ds)
	c.sources[path] = inc.Source
	bad := false
	for _, s := range inc.Stmts {
		switch s.(type) {
		case *dsl.Let, *dsl.Species, *dsl.Use, *dsl.Version, *dsl.BadStmt:
		default:
			c.diags.Add("include", s.Span(), "an included file may hold only let, species and use statements (shared property sets)")
			bad = true
		}
	}
	if bad {
		c.hasBad = true
		return
	}
	c.including = append(c.including, path)
	c.collect(inc, chunk, inc.Stmts)
	c.including = c.including[:len(c.including)-1]
}

// readRegularFile reads a file for an include or a data file. It refuses
// what is not a regular file (a device, a pipe, a directory) and files
// larger than dsl.MaxSourceBytes, which no model or data file needs.
func readRegularFile(path string) ([]byte, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer fh.Close()
	st, err := fh.Stat()
	if err != nil {
		return nil, err
	}
	if !st.Mode().IsRegular() {
		return nil, errors.New("not a regular file")
	}
	if st.Size() > dsl.MaxSourceBytes {
		return nil, fmt.Errorf("the file is %d bytes; the limit is %d", st.Size(), dsl.MaxSourceBytes)
	}
	return io.ReadAll(io.LimitReader(fh, dsl.MaxSourceBytes+1))
}

// ---- symbols ----

func (c *checker) defineBuiltins() {
	c.symbols["t"] = &Symbol{Name: "t", Kind: BuiltinSym, Dim: units.Time, Doc: "time since the start of the run"}
	c.symbols["r"] = &Symbol{Name: "r", Kind: BuiltinSym, Dim: units.Length, Doc: "distance from the centre (slab: from the mid-plane)"}
	c.symbols["z"] = &Symbol{Name: "z", Kind: BuiltinSym, Dim: units.Length, Doc: "axial position in a short cylinder, from its bottom face"}
	c.symbols["pi"] = &Symbol{Name: "pi", Kind: BuiltinSym, Dim: units.Dimensionless, Doc: "the number π"}
	// Species are numbered in declaration order.
	names := make([]string, 0, len(c.specDecl))
	for n := range c.specDecl {
		names = append(names, n)
	}
	sort.Slice(names, func(i, j int) bool { return declBefore(c.specDecl[names[i]], c.specDecl[names[j]]) })
	for i, n := range names {
		s := c.specDecl[n].stmt.(*dsl.Species)
		sp := &Species{Name: n, Index: i, Def: s.Name.Range}
		c.species[n] = sp
		c.m.Species = append(c.m.Species, sp)
		sym := &Symbol{Name: n, Kind: SpeciesSym, Def: s.Name.Range, Dim: units.Concentration, S: sp,
			Doc: "species " + n + ": its local concentration"}
		c.symbols[n] = sym
		c.m.Info.Defs[s.Name] = sym
	}
	for n, d := range c.bodyDecl {
		s := d.stmt.(*dsl.Body)
		sym := &Symbol{Name: n, Kind: BodySym, Def: s.Name.Range, Doc: "body " + n}
		c.symbols[n] = sym
		c.m.Info.Defs[s.Name] = sym
	}
	for _, n := range c.letOrder {
		s := c.lets[n].stmt.(*dsl.Let)
		sym := &Symbol{Name: n, Kind: QuantitySym, Def: s.Name.Range}
		c.symbols[n] = sym
		c.m.Info.Defs[s.Name] = sym
	}
}

func declBefore(a, b *decl) bool {
	if a.chunk != b.chunk {
		return a.chunk < b.chunk
	}
	if a.file.Name != b.file.Name {
		return a.file.Name < b.file.Name
	}
	return a.stmt.Span().Start.Offset < b.stmt.Span().Start.Offset
}

// ---- quantities ----

func (c *checker) checkLets() {
	for _, n := range c.letOrder {
		c.quantityOf(n)
	}
	for _, n := range c.letOrder {
		if q := c.quantity[n]; q != nil {
			c.m.Quantities = append(c.m.Quantities, q)
		}
	}
}

// quantityOf checks a let on first use (lets may refer to lets defined
// later in the file) and detects cycles.
func (c *checker) quantityOf(name string) *Quantity {
	switch c.letState[name] {
	case 2:
		return c.quantity[name]
	case 1:
		d := c.lets[name].stmt.(*dsl.Let)
		cycle := append(append([]string(nil), c.visiting...), name)
		c.diags.Add("cycle", d.Name.Range, "%s is defined in terms of itself (%s)", name, strings.Join(cycle, " → "))
		return nil
	}
	d, ok := c.lets[name]
	if !ok {
		return nil
	}
	c.letState[name] = 1
	c.visiting = append(c.visiting, name)
	s := d.stmt.(*dsl.Let)
	e, dim, ok := c.expr(s.Value, &context{what: "a quantity", time: true, pos: true, axial: true, conc: true})
	c.visiting = c.visiting[:len(c.visiting)-1]
	c.letState[name] = 2
	if !ok {
		return nil
	}
	q := &Quantity{Name: name, Def: s.Name.Range, Dim: dim, Expr: e}
	if v, isConst := e.IsConst(); isConst {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			c.diags.Add("range", s.Value.Span(), "%s evaluates to %g (a division by zero, or a function outside its domain?)", name, v)
			c.letState[name] = 2
			return nil
		}
		q.Value, q.Const = v, true
		if ov, ok := c.opts.Override[name]; ok {
			q.Value, q.Expr = ov, Const(ov)
		}
	}
	if n, isNum := s.Value.(*dsl.Number); isNum && n.Unit != nil {
		q.Unit = strings.TrimSpace(n.Unit.Text)
	}
	c.quantity[name] = q
	sym := c.symbols[name]
	sym.Q, sym.Dim = q, dim
	sym.Doc = fmt.Sprintf("quantity %s, %s", name, dim.Describe())
	return q
}

// ---- expressions ----

// context says what an expression may read and how to name the place in
// messages.
type context struct {
	what             string
	time, pos, axial bool
	conc             bool
	results          bool // result functions such as uptake(dye)
	strings          bool
}

// expr checks an expression and compiles it. ok is false when an error
// was reported (callers then stay quiet to avoid cascades).
func (c *checker) expr(e dsl.Expr, ctx *context) (*Expr, units.Dim, bool) {
	x, d, ok := c.expr1(e, ctx)
	if ok {
		c.m.Info.Dims[e] = d
		x = fold(x)
	}
	return x, d, ok
}

func (c *checker) expr1(e dsl.Expr, ctx *context) (*Expr, units.Dim, bool) {
	switch e := e.(type) {
	case *dsl.Number:
		return c.number(e)
	case *dsl.Paren:
		return c.expr(e.X, ctx)
	case *dsl.Ident:
		return c.name(e, ctx)
	case *dsl.Path:
		c.diags.Add("syntax", e.Range, "%s names a place, not a value", e.String())
		return nil, units.Dim{}, false
	case *dsl.Str:
		c.diags.Add("type", e.Range, "a string is not allowed here; %s needs a value with units", ctx.what)
		return nil, units.Dim{}, false
	case *dsl.Unary:
		x, d, ok := c.expr(e.X, ctx)
		if !ok {
			return nil, d, false
		}
		if e.Op == "not" {
			return &Expr{op: opNot, args: []*Expr{x}}, units.Dimensionless, true
		}
		if e.Op == "+" {
			return x, d, true
		}
		return &Expr{op: opNeg, args: []*Expr{x}}, d, true
	case *dsl.Binary:
		return c.binary(e, ctx)
	case *dsl.Cond:
		cond, _, ok1 := c.expr(e.If, ctx)
		a, da, ok2 := c.expr(e.Then, ctx)
		b, db, ok3 := c.expr(e.Else, ctx)
		if !ok1 || !ok2 || !ok3 {
			return nil, da, false
		}
		if da != db {
			c.diags.Add("dimension", e.Else.Span(), "the two branches of if have different dimensions: %s after then, %s after else",
				da.Describe(), db.Describe())
			return nil, da, false
		}
		return &Expr{op: opCond, args: []*Expr{cond, a, b}}, da, true
	case *dsl.Call:
		return c.call(e, ctx)
	case *dsl.BadExpr:
		return nil, units.Dim{}, false
	}
	c.diags.Add("syntax", e.Span(), "this expression is not allowed here")
	return nil, units.Dim{}, false
}

// number converts a literal with its unit to SI.
func (c *checker) number(n *dsl.Number) (*Expr, units.Dim, bool) {
	if n.Unit == nil {
		return Const(n.Value), units.Dimensionless, true
	}
	u, ok := c.unit(n.Unit)
	if !ok {
		return nil, units.Dim{}, false
	}
	return Const(u.Convert(n.Value)), u.Dim, true
}

// unit parses a bracketed unit and reports errors at the exact place
// inside the brackets.
func (c *checker) unit(u *dsl.Unit) (units.Unit, bool) {
	got, err := units.Parse(u.Text)
	if err == nil {
		return got, true
	}
	var ue *units.Error
	r := u.Range
	d := &diag.Diagnostic{Severity: diag.Error, Code: "unit", Subject: r, Message: err.Error()}
	if errors.As(err, &ue) {
		base := u.Range.Start.Offset + 1 // after '['
		src := c.sources[u.Range.File]
		start, end := base+ue.Offset, base+max(ue.End, ue.Offset+1)
		if src != "" && end <= len(src) {
			d.Subject = diag.Range{File: r.File, Start: dsl.PosAt(src, start), End: dsl.PosAt(src, end)}
		}
		d.Message = ue.Msg
		if ue.Suggestion != "" {
			d.Suggestion = ue.Suggestion
		}
	}
	c.diags = append(c.diags, d)
	return units.Unit{}, false
}

func (c *checker) name(id *dsl.Ident, ctx *context) (*Expr, units.Dim, bool) {
	sym, ok := c.symbols[id.Name]
	if !ok {
		if c.broken[id.Name] {
			return nil, units.Dim{}, false
		}
		d := c.diags.Add("unknown-name", id.Range, "%q is not defined", id.Name)
		d.Suggestion = c.suggestName(id.Name)
		return nil, units.Dim{}, false
	}
	c.m.Info.Uses[id] = sym
	switch sym.Kind {
	case BuiltinSym:
		switch id.Name {
		case "t":
			if !ctx.time {
				c.diags.Add("context", id.Range, "time t cannot appear in %s, which must not change in time", ctx.what)
				return nil, sym.Dim, false
			}
			return &Expr{op: opTime}, sym.Dim, true
		case "r":
			if !ctx.pos {
				c.diags.Add("context", id.Range, "position r cannot appear in %s; it may appear in starting values, sources and diffusivities", ctx.what)
				return nil, sym.Dim, false
			}
			return &Expr{op: opPos}, sym.Dim, true
		case "z":
			if !ctx.axial {
				c.diags.Add("context", id.Range, "axial position z cannot appear in %s", ctx.what)
				return nil, sym.Dim, false
			}
			return &Expr{op: opAxial}, sym.Dim, true
		case "pi":
			return Const(math.Pi), units.Dimensionless, true
		}
	case SpeciesSym:
		if !ctx.conc {
			c.diags.Add("context", id.Range, "%s is a species; its concentration can appear only in a balance or a diffusivity, not in %s", id.Name, ctx.what)
			return nil, sym.Dim, false
		}
		return &Expr{op: opConc, idx: sym.S.Index}, units.Concentration, true
	case BodySym:
		c.diags.Add("type", id.Range, "%s is a body, not a value", id.Name)
		return nil, sym.Dim, false
	}
	q := c.quantityOf(id.Name)
	if q == nil {
		return nil, units.Dim{}, false
	}
	deps := q.Expr.Depends(len(c.m.Species))
	switch {
	case deps.Time && !ctx.time:
		c.diags.Add("context", id.Range, "%s changes with time t, which is not allowed in %s", id.Name, ctx.what)
		return nil, q.Dim, false
	case deps.Pos && !ctx.pos:
		c.diags.Add("context", id.Range, "%s depends on position r, which is not allowed in %s", id.Name, ctx.what)
		return nil, q.Dim, false
	case deps.Axial && !ctx.axial:
		c.diags.Add("context", id.Range, "%s depends on the axial position z, which is not allowed in %s", id.Name, ctx.what)
		return nil, q.Dim, false
	case deps.Reads() && !ctx.conc:
		c.diags.Add("context", id.Range, "%s depends on a concentration, which is not allowed in %s", id.Name, ctx.what)
		return nil, q.Dim, false
	}
	return q.Expr, q.Dim, true
}

func (c *checker) suggestName(name string) string {
	var cands []string
	for n := range c.symbols {
		cands = append(cands, n)
	}
	return Closest(name, cands)
}

var binOps = map[string]op{"+": opAdd, "-": opSub, "*": opMul, "/": opDiv, "^": opPow,
	"<": opLT, "<=": opLE, ">": opGT, ">=": opGE, "==": opEQ, "!=": opNE, "and": opAnd, "or": opOr}

func (c *checker) binary(e *dsl.Binary, ctx *context) (*Expr, units.Dim, bool) {
	x, dx, ok1 := c.expr(e.X, ctx)
	y, dy, ok2 := c.expr(e.Y, ctx)
	if !ok1 || !ok2 {
		return nil, dx, false
	}
	out := &Expr{op: binOps[e.Op], args: []*Expr{x, y}}
	switch e.Op {
	case "+", "-", "<", "<=", ">", ">=", "==", "!=":
		if (e.Op == "+" || e.Op == "-") && (offsetUnit(e.X) || offsetUnit(e.Y)) {
			c.diags.Add("unit", c.opRange(e), "a temperature in °C is a point on a scale, not an amount: write a difference in K (10 [K], not 10 [°C]), or convert first")
			return nil, dx, false
		}
		if dx != dy {
			verb := map[string]string{"+": "add", "-": "subtract"}[e.Op]
			if verb == "" {
				verb = "compare"
			}
			c.diags.Add("dimension", c.opRange(e), "cannot %s %s and %s", verb, dx.Describe(), dy.Describe()).
				Notes = []string{fmt.Sprintf("left: %s; right: %s", dx, dy)}
			return nil, dx, false
		}
		if e.Op == "+" || e.Op == "-" {
			return out, dx, true
		}
		return out, units.Dimensionless, true
	case "and", "or":
		return out, units.Dimensionless, true
	case "*":
		d, ok := dx.MulChecked(dy)
		if !ok {
			c.diags.Add("dimension", c.opRange(e), "the dimension of this product is out of range")
			return nil, dx, false
		}
		return out, d, true
	case "/":
		d, ok := dx.DivChecked(dy)
		if !ok {
			c.diags.Add("dimension", c.opRange(e), "the dimension of this quotient is out of range")
			return nil, dx, false
		}
		return out, d, true
	case "^":
		if !dy.IsZero() {
			c.diags.Add("dimension", e.Y.Span(), "an exponent must be dimensionless, not %s", dy.Describe())
			return nil, dx, false
		}
		if dx.IsZero() {
			return out, dx, true
		}
		n, isConst := y.IsConst()
		if !isConst || n != math.Trunc(n) {
			if isConst && n*2 == math.Trunc(n*2) {
				if d, ok := dx.Root(2); ok {
					d, ok = d.Pow(int(n * 2))
					if ok {
						return out, d, true
					}
				}
			}
			c.diags.Add("dimension", e.Y.Span(), "a quantity with dimension %s can be raised only to a constant whole power (or half of one where the dimension allows it)", dx.Describe())
			return nil, dx, false
		}
		d, ok := dx.Pow(int(n))
		if !ok {
			c.diags.Add("dimension", e.Y.Span(), "the dimension of this power is out of range")
			return nil, dx, false
		}
		return out, d, true
	}
	return nil, dx, false
}

// opRange finds the operator of a binary expression in the source text.
func (c *checker) opRange(e *dsl.Binary) diag.Range {
	src := c.sources[e.Range.File]
	a, b := e.X.Span().End.Offset, e.Y.Span().Start.Offset
	if src != "" && a >= 0 && b <= len(src) && a < b {
		if i := strings.Index(src[a:b], e.Op); i >= 0 {
			return diag.Range{File: e.Range.File, Start: dsl.PosAt(src, a+i), End: dsl.PosAt(src, a+i+len(e.Op))}
		}
	}
	return e.Range
}

// funcs lists the mathematical functions and their argument counts
// (-1: two or more).
var funcs = map[string]int{"exp": 1, "log": 1, "ln": 1, "log10": 1, "sqrt": 1, "abs": 1, "pow": 2, "min": -1, "max": -1,
	"sinh": 1, "cosh": 1, "tanh": 1, "coth": 1}

// ResultFuncs lists the result functions a show, expect or fit may name,
// with a one-line description.
var ResultFuncs = map[string]string{
	"uptake":        "fraction of the final (equilibrium) uptake reached: M(t)/M(∞), from 0 to 1",
	"release":       "fraction of the releasable amount that has left the body, from 0 to 1",
	"mean":          "volume-averaged concentration in the body",
	"centre":        "concentration at the centre (inner face for hollow bodies)",
	"surface":       "concentration just inside the outer surface",
	"flux":          "flux into the body through its outer surface, per unit area",
	"bath":          "concentration in the well-stirred bath",
	"content":       "amount held in the body (per particle; per unit area for a slab; per unit length for a cylinder)",
	"profile":       "concentration against position at chosen times",
	"map":           "concentration over position and time, as a coloured map",
	"time_to":       "time at which uptake (or release) reaches a fraction: time_to(dye, 90 [%])",
	"effectiveness": "effectiveness factor: mean reaction rate over the rate at surface conditions",
	"ledger":        "the mass ledger: initial + inflow − consumed = final",
}

func (c *checker) call(e *dsl.Call, ctx *context) (*Expr, units.Dim, bool) {
	name := e.Fun.Name
	n, ok := funcs[name]
	if !ok {
		if _, isResult := ResultFuncs[name]; isResult {
			c.diags.Add("context", e.Range, "%s(...) is a result; it can appear only in show, expect and fit statements", name)
			return nil, units.Dim{}, false
		}
		var cands []string
		for f := range funcs {
			cands = append(cands, f)
		}
		c.diags.Add("unknown-name", e.Fun.Range, "%q is not a function", name).Suggestion = Closest(name, cands)
		return nil, units.Dim{}, false
	}
	for _, a := range e.Args {
		if a.Name != nil {
			c.diags.Add("argument", a.Name.Range, "%s takes no named arguments", name)
			return nil, units.Dim{}, false
		}
	}
	if n > 0 && len(e.Args) != n || n < 0 && len(e.Args) < 2 {
		want := map[int]string{1: "one argument", 2: "two arguments", -1: "two or more arguments"}[n]
		c.diags.Add("argument", e.Range, "%s takes %s, not %d", name, want, len(e.Args))
		return nil, units.Dim{}, false
	}
	args := make([]*Expr, len(e.Args))
	dims := make([]units.Dim, len(e.Args))
	okAll := true
	for i, a := range e.Args {
		var ok bool
		args[i], dims[i], ok = c.expr(a.Value, ctx)
		okAll = okAll && ok
	}
	if !okAll {
		return nil, units.Dim{}, false
	}
	out := &Expr{op: opCall, fn: name, args: args}
	switch name {
	case "exp", "log", "ln", "log10", "sinh", "cosh", "tanh", "coth":
		if !dims[0].IsZero() {
			c.diags.Add("dimension", e.Args[0].Range, "%s needs a dimensionless argument, not %s; divide by a reference value", name, dims[0].Describe())
			return nil, units.Dim{}, false
		}
		return out, units.Dimensionless, true
	case "sqrt":
		d, ok := dims[0].Root(2)
		if !ok {
			c.diags.Add("dimension", e.Args[0].Range, "the square root of %s has no dimension with whole exponents", dims[0].Describe())
			return nil, units.Dim{}, false
		}
		return out, d, true
	case "abs":
		return out, dims[0], true
	case "pow":
		if !dims[1].IsZero() {
			c.diags.Add("dimension", e.Args[1].Range, "an exponent must be dimensionless, not %s", dims[1].Describe())
			return nil, units.Dim{}, false
		}
		if dims[0].IsZero() {
			return out, dims[0], true
		}
		k, isConst := args[1].IsConst()
		if !isConst || k != math.Trunc(k) {
			c.diags.Add("dimension", e.Args[1].Range, "a quantity with dimension %s can be raised only to a constant whole power", dims[0].Describe())
			return nil, units.Dim{}, false
		}
		d, ok := dims[0].Pow(int(k))
		if !ok {
			c.diags.Add("dimension", e.Range, "the dimension of this power is out of range")
			return nil, units.Dim{}, false
		}
		return out, d, true
	default: // min, max
		for i := 1; i < len(dims); i++ {
			if dims[i] != dims[0] {
				c.diags.Add("dimension", e.Args[i].Range, "%s needs arguments of one dimension: %s and %s", name, dims[0].Describe(), dims[i].Describe())
				return nil, units.Dim{}, false
			}
		}
		return out, dims[0], true
	}
}

// want checks an expression against an expected dimension and reports a
// mismatch naming both, in words, at the expression.
func (c *checker) want(e dsl.Expr, ctx *context, dim units.Dim, role string) (*Expr, bool) {
	x, d, ok := c.expr(e, ctx)
	if !ok {
		return nil, false
	}
	if d == units.MassConcentration && dim == units.Concentration && c.massSpecies >= 0 {
		// A mass concentration (mg/L) converts to a molar one with the
		// species' molar mass.
		sp := c.m.Species[c.massSpecies]
		if sp.MolarMass > 0 {
			return fold(&Expr{op: opDiv, args: []*Expr{x, Const(sp.MolarMass)}}), true
		}
		c.diags.Add("dimension", e.Span(), "%s is a mass concentration; give species %s a molar_mass to convert it, or write a molar concentration", role, sp.Name)
		return nil, false
	}
	if d != dim {
		d := c.diags.Add("dimension", e.Span(), "%s must be %s, but this is %s", role, dim.Describe(), d.Describe())
		if dim == units.Concentration {
			d.Notes = append(d.Notes, "a mass concentration (e.g. mg/L) is accepted where the statement names one species that has a molar_mass")
		}
		return nil, false
	}
	return x, true
}

// constant checks a constant expression of the given dimension and
// returns its value.
func (c *checker) constant(e dsl.Expr, dim units.Dim, role string) (float64, bool) {
	x, ok := c.want(e, &context{what: role}, dim, role)
	if !ok {
		return 0, false
	}
	v, isConst := x.IsConst()
	if !isConst {
		c.diags.Add("context", e.Span(), "%s must be a constant", role)
		return 0, false
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		c.diags.Add("range", e.Span(), "%s evaluates to %g", role, v)
		return 0, false
	}
	return v, true
}

// positive checks a constant that must be > 0.
func (c *checker) positive(e dsl.Expr, dim units.Dim, role string) (float64, bool) {
	v, ok := c.constant(e, dim, role)
	if ok && v <= 0 {
		c.diags.Add("range", e.Span(), "%s must be positive, not %s", role, c.shown(e, v, dim))
		return v, false
	}
	return v, ok
}

// shown writes the value of e for a message: as the user wrote it when e
// is a literal number (possibly negated), else in SI units.
func (c *checker) shown(e dsl.Expr, v float64, d units.Dim) string {
	if e == nil {
		return formatSI(v, d)
	}
	x := e
	if u, ok := x.(*dsl.Unary); ok && (u.Op == "-" || u.Op == "+") {
		x = u.X
	}
	if _, ok := x.(*dsl.Number); ok {
		r := e.Span()
		if t := c.text(r.Start.Offset, r.End.Offset, r.File); t != "" {
			return strings.Join(strings.Fields(t), " ")
		}
	}
	return formatSI(v, d)
}

func formatSI(v float64, d units.Dim) string {
	if d.IsZero() {
		return fmt.Sprintf("%g", v)
	}
	return fmt.Sprintf("%g %s", v, d)
}

// Closest returns the candidate closest to name by edit distance
// (case-insensitive), or "" when none is close enough to be a likely typo.
func Closest(name string, cands []string) string {
	best, bestD := "", 1<<30
	ln := strings.ToLower(name)
	sort.Strings(cands)
	for _, cand := range cands {
		d := editDistance(ln, strings.ToLower(cand))
		if d < bestD {
			best, bestD = cand, d
		}
	}
	limit := 1 + utf8.RuneCountInString(name)/4
	if bestD <= limit && best != name {
		return best
	}
	return ""
}

// editDistance is the optimal-string-alignment distance between a and b,
// counted in characters: insertions, deletions, substitutions and
// transpositions of two adjacent characters each cost one.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	d := make([][]int, len(ra)+1)
	for i := range d {
		d[i] = make([]int, len(rb)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(ra); i++ {
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+cost)
			if i > 1 && j > 1 && ra[i-1] == rb[j-2] && ra[i-2] == rb[j-1] {
				d[i][j] = min(d[i][j], d[i-2][j-2]+1)
			}
		}
	}
	return d[len(ra)][len(rb)]
}

// canonicalHash is the sha256 of the model's canonical form: the syntax
// trees of the earlier cells (if any) and of the file, written as
// S-expressions, so that a change of layout or comments keeps the hash and
// a change of meaning does not. A file with statements that did not parse
// hashes its raw text.
func canonicalHash(f *dsl.File, previous []*dsl.File) string {
	h := sha256.New()
	for _, p := range append(append([]*dsl.File(nil), previous...), f) {
		text := p.Source
		bad := false
		for _, s := range p.Stmts {
			if _, ok := s.(*dsl.BadStmt); ok {
				bad = true
			}
		}
		if !bad {
			// The syntax tree as an S-expression: no layout, no comments.
			text = dsl.SExprFile(p)
		}
		h.Write([]byte(text))
		h.Write([]byte{0})
	}
	return hex.EncodeToString(h.Sum(nil))
}

// offsetUnit reports whether e is a number written in a unit with an
// offset (°C), which cannot be added or subtracted as it stands.
func offsetUnit(e dsl.Expr) bool {
	n, ok := e.(*dsl.Number)
	if !ok || n.Unit == nil {
		return false
	}
	u, err := units.Parse(n.Unit.Text)
	return err == nil && u.Offset != 0
}
