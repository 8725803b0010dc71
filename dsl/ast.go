package dsl

import "github.com/massline/massline/dsl/diag"

// Node is any node of the syntax tree.
type Node interface {
	// Span returns the source range the node covers.
	Span() diag.Range
}

// Expr is an expression node. The set of expressions is closed.
type Expr interface {
	Node
	exprNode()
}

// Stmt is a statement node. The set of statements is closed.
type Stmt interface {
	Node
	stmtNode()
}

// File is a parsed model file or notebook cell.
type File struct {
	Name     string
	Source   string
	Stmts    []Stmt
	Comments []*Comment
}

// Comment is a "# ..." comment, kept for the formatter.
type Comment struct {
	Range diag.Range
	Text  string // including the leading '#'
}

// Span implements Node.
func (c *Comment) Span() diag.Range { return c.Range }

// ---- expressions ----

type (
	// Number is a numeric literal with an optional unit: 1.5 [mm].
	Number struct {
		Range diag.Range
		Text  string  // the digits as written
		Value float64 // the digits' value, before the unit
		Unit  *Unit   // nil when no unit was written
	}

	// Unit is a unit written in brackets; Text is what lies between them.
	Unit struct {
		Range diag.Range // covers the brackets
		Text  string
	}

	// Ident is a name.
	Ident struct {
		Range diag.Range
		Name  string
	}

	// Path is a dotted reference such as bead.surface or tablet.core.
	Path struct {
		Range diag.Range
		Parts []*Ident
	}

	// Str is a double-quoted string literal.
	Str struct {
		Range diag.Range
		Value string // unquoted
	}

	// Unary is an operator applied to one operand: -x, not x.
	Unary struct {
		Range diag.Range
		Op    string
		X     Expr
	}

	// Binary is an operator between two operands.
	Binary struct {
		Range diag.Range
		Op    string // + - * / ^ < <= > >= == != and or
		X, Y  Expr
	}

	// Call is a function or constructor applied to arguments:
	// sqrt(x), sphere(radius = R), film(coefficient = kf, bulk = c).
	Call struct {
		Range diag.Range
		Fun   *Ident
		Args  []*Arg
	}

	// Arg is one argument of a call, optionally named.
	Arg struct {
		Range diag.Range
		Name  *Ident // nil for a positional argument
		Value Expr
	}

	// Cond is a conditional expression: if c then a else b.
	Cond struct {
		Range          diag.Range
		If, Then, Else Expr
	}

	// Paren is an expression in parentheses (kept for the formatter).
	Paren struct {
		Range diag.Range
		X     Expr
	}

	// BadExpr stands where an expression could not be parsed.
	BadExpr struct {
		Range diag.Range
	}
)

func (*Number) exprNode()  {}
func (*Ident) exprNode()   {}
func (*Path) exprNode()    {}
func (*Str) exprNode()     {}
func (*Unary) exprNode()   {}
func (*Binary) exprNode()  {}
func (*Call) exprNode()    {}
func (*Cond) exprNode()    {}
func (*Paren) exprNode()   {}
func (*BadExpr) exprNode() {}

// Span implements Node.
func (n *Number) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Unit) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Ident) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Path) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Str) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Unary) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Binary) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Call) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Arg) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Cond) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Paren) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *BadExpr) Span() diag.Range { return n.Range }

// String returns the dotted name of a path.
func (p *Path) String() string {
	s := ""
	for i, id := range p.Parts {
		if i > 0 {
			s += "."
		}
		s += id.Name
	}
	return s
}

// ---- statements ----

type (
	// Version is the language version line: massline 1.
	Version struct {
		Range  diag.Range
		Number int
	}

	// Use includes another model file: use "props.mln".
	Use struct {
		Range diag.Range
		Path  *Str
	}

	// Let names a quantity: let R = 1.5 [mm].
	Let struct {
		Range diag.Range
		Name  *Ident
		Value Expr
	}

	// Property is one "key = value" line inside a block.
	Property struct {
		Range diag.Range
		Key   *Ident
		Value Expr
	}

	// Species declares a diffusing substance and its properties.
	Species struct {
		Range diag.Range
		Name  *Ident
		Props []*Property
	}

	// Body declares a particle shape: body bead = sphere(radius = R),
	// optionally split into layers.
	Body struct {
		Range  diag.Range
		Name   *Ident
		Shape  *Call
		Layers []*Layer
	}

	// Layer is one layer of a layered body: layer coat to 2 [mm].
	Layer struct {
		Range diag.Range
		Name  *Ident
		To    Expr
	}

	// Balance states the conservation law of one species in one body or
	// layer: balance dye in bead { source = -k * dye }.
	Balance struct {
		Range   diag.Range
		Species *Ident
		Region  *Path
		Props   []*Property
	}

	// Boundary sets the condition on one boundary, for every species of
	// the body or for one: boundary bead.surface for dye: fixed(1 [mM]).
	// Between layers the place is written core|coat.
	Boundary struct {
		Range     diag.Range
		Place     *Path
		Interface *Ident // second layer after '|', nil otherwise
		Species   *Ident // nil: every species in the body
		Condition *Call
	}

	// Initially sets the starting state: initially bead: dye = 0 [mM].
	Initially struct {
		Range   diag.Range
		Region  *Path
		Species *Ident
		Value   Expr
	}

	// Stage is one period of a staged run whose statements change
	// conditions: stage rinse for 30 [min] { ... }.
	Stage struct {
		Range    diag.Range
		Name     *Ident
		Duration Expr
		Stmts    []Stmt
	}

	// Run requests a transient solution (until, with output times) or a
	// steady state.
	Run struct {
		Range  diag.Range
		Steady bool
		Until  Expr   // nil: the total of the stages
		Every  Expr   // output spacing, or nil
		At     []Expr // explicit output times
		LogN   Expr   // number of log-spaced output times, or nil
		From   Expr   // first log-spaced time
	}

	// Settings sets solver options: settings { rtol = 1e-8 }.
	Settings struct {
		Range diag.Range
		Props []*Property
	}

	// Show asks for results: show uptake(dye), centre(dye).
	Show struct {
		Range diag.Range
		Items []Expr
		At    []Expr // times for profiles
		Scale *Ident // axis scale: linear, log, sqrt
	}

	// Expect is an acceptance check carried by the file:
	// expect time_to(dye, 90 [%]) = 1.7 [h] within 5 [%].
	Expect struct {
		Range     diag.Range
		Subject   Expr
		At        Expr // optional time for time-series results
		Value     Expr
		Tolerance Expr
	}

	// Sweep repeats the model over values of parameters.
	Sweep struct {
		Range diag.Range
		Vars  []*SweepVar
		Stmts []Stmt
	}

	// SweepVar is one swept parameter: R in 1 [mm], 2 [mm] or
	// R from a to b steps n [log].
	SweepVar struct {
		Range  diag.Range
		Name   *Ident
		Values []Expr
		From   Expr
		To     Expr
		Steps  Expr
		Log    bool
	}

	// Fit adjusts parameters to measured data.
	Fit struct {
		Range   diag.Range
		Params  []*FitParam
		Data    *Str
		Columns []*FitColumn
	}

	// FitParam is a fitted parameter with bounds: Deff from a to b.
	FitParam struct {
		Range     diag.Range
		Name      *Ident
		Low, High Expr
	}

	// FitColumn matches a model quantity to a data column:
	// uptake(dye) = "fraction", or time = "t".
	FitColumn struct {
		Range  diag.Range
		Target Expr
		Column *Str
	}

	// Print writes text to the output: print "hello, world".
	Print struct {
		Range diag.Range
		Args  []Expr
	}

	// Reset clears the notebook workspace.
	Reset struct {
		Range diag.Range
	}

	// ExprStmt is a bare expression; in a notebook its value is shown.
	ExprStmt struct {
		Range diag.Range
		X     Expr
	}

	// BadStmt stands where a statement could not be parsed. Keyword is
	// the keyword it starts with, if any, and Name the name it declares
	// when it is a let, species, body or stage whose name could be read;
	// the checker uses them to stay quiet about the statement's uses.
	BadStmt struct {
		Range   diag.Range
		Keyword string
		Name    *Ident
	}
)

func (*Version) stmtNode()   {}
func (*Use) stmtNode()       {}
func (*Let) stmtNode()       {}
func (*Species) stmtNode()   {}
func (*Body) stmtNode()      {}
func (*Balance) stmtNode()   {}
func (*Boundary) stmtNode()  {}
func (*Initially) stmtNode() {}
func (*Stage) stmtNode()     {}
func (*Run) stmtNode()       {}
func (*Settings) stmtNode()  {}
func (*Show) stmtNode()      {}
func (*Expect) stmtNode()    {}
func (*Sweep) stmtNode()     {}
func (*Fit) stmtNode()       {}
func (*Print) stmtNode()     {}
func (*Reset) stmtNode()     {}
func (*ExprStmt) stmtNode()  {}
func (*BadStmt) stmtNode()   {}

// Span implements Node.
func (n *Version) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Use) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Let) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Property) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Species) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Body) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Layer) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Balance) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Boundary) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Initially) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Stage) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Run) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Settings) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Show) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Expect) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Sweep) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *SweepVar) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Fit) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *FitParam) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *FitColumn) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Print) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *Reset) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *ExprStmt) Span() diag.Range { return n.Range }

// Span implements Node.
func (n *BadStmt) Span() diag.Range { return n.Range }
