package compile

import (
	"github.com/massline/massline/compile/units"
	"github.com/massline/massline/dsl"
	"github.com/massline/massline/dsl/diag"
)

// Model is a checked model: every name resolved, every number in SI, every
// dimension consistent. It is what the lowering to a discrete system and
// the engine read; it never refers back to syntax except for positions.
type Model struct {
	// Name is the file (or cell) the model came from.
	Name string
	// Source is the text the model was checked from, and Hash its
	// sha256 in hex.
	Source, Hash string
	// Version is the language version the file declares (1 if absent).
	Version    int
	Quantities []*Quantity
	Species    []*Species
	Bodies     []*Body
	Stages     []*Stage
	Run        *Run
	Settings   Settings
	// Actions are the statements that produce output, in source order.
	Actions []Action
	// Info holds what the checker learned about the syntax tree.
	Info *Info
}

// Info holds the checker's side tables, keyed by syntax node (the tree
// itself is never modified).
type Info struct {
	// Dims is the dimension of every checked expression.
	Dims map[dsl.Expr]units.Dim
	// Uses maps each name use to the symbol it refers to.
	Uses map[*dsl.Ident]*Symbol
	// Defs maps each defining name to its symbol.
	Defs map[*dsl.Ident]*Symbol
}

// SymbolKind says what a name refers to.
type SymbolKind int

// Kinds of symbol.
const (
	QuantitySym SymbolKind = iota
	SpeciesSym
	BodySym
	BuiltinSym
)

// String names the kind in words.
func (k SymbolKind) String() string {
	return [...]string{"quantity", "species", "body", "built-in"}[k]
}

// Symbol is a named thing of the model.
type Symbol struct {
	Name string
	Kind SymbolKind
	Def  diag.Range
	Dim  units.Dim
	// Doc is a one-line description for inspection in a notebook.
	Doc string
	Q   *Quantity
	S   *Species
	B   *Body
}

// Quantity is a named value (a let statement).
type Quantity struct {
	Name  string
	Def   diag.Range
	Dim   units.Dim
	Expr  *Expr
	Value float64 // the SI value when the quantity is constant
	Const bool
	// Unit is the unit the user wrote when the value was one literal; it
	// is used to show the value back in the user's terms.
	Unit string
}

// Species is a diffusing substance.
type Species struct {
	Name  string
	Index int
	Def   diag.Range
	// Diffusivity is the effective diffusivity in the body, m^2/s, after
	// porosity and tortuosity have been applied (D·ε/τ).
	Diffusivity *Expr
	MolarMass   float64 // kg/mol, 0 when not given
	Porosity    float64 // 0 when not given
	Tortuosity  float64 // 0 when not given
}

// Shape is the geometry of a body.
type Shape int

// Shapes of bodies.
const (
	Slab Shape = iota
	Cylinder
	Sphere
	HollowCylinder
	HollowSphere
	ShortCylinder
)

// String returns the keyword of the shape.
func (s Shape) String() string {
	return [...]string{"slab", "cylinder", "sphere", "hollow_cylinder", "hollow_sphere", "short_cylinder"}[s]
}

// Body is a particle: its shape, its regions (one, or one per layer),
// and the conditions on its boundaries.
type Body struct {
	Name  string
	Def   diag.Range
	Shape Shape
	// Inner and Outer bound the diffusion coordinate (Inner is 0 for a
	// solid body); Length is the length of a short cylinder.
	Inner, Outer, Length float64
	Regions              []*Region
	// Conditions maps a boundary name (see Boundaries) to the condition
	// for each species index present in the body.
	Conditions map[string]map[int]*Condition
	// Species lists the indices of the species that have a balance here.
	Species []int
}

// Region is one layer of a body (or the whole body), with the balance of
// each species in it.
type Region struct {
	Name         string // "bead" or "tablet.coat"
	Layer        string // "" for an unlayered body
	Inner, Outer float64
	Balances     map[int]*Balance
}

// Balance is accumulation = diffusion + source for one species in one
// region.
type Balance struct {
	Def diag.Range
	// Diffusivity overrides the species' diffusivity when not nil.
	Diffusivity *Expr
	// Source is the volumetric production rate, mol/(m^3·s); nil is zero.
	Source *Expr
	// Store is the total amount held per unit volume as a function of the
	// local concentration (porosity, sorption); nil means the
	// concentration itself.
	Store *Expr
	// Initial is the starting concentration; it may depend on position.
	Initial *Expr
}

// CondKind is the kind of a boundary condition.
type CondKind int

// Kinds of boundary condition.
const (
	Symmetry CondKind = iota
	Sealed
	Fixed
	Film
	Flux
	Bath
	Contact
)

// String returns the keyword of the condition.
func (k CondKind) String() string {
	return [...]string{"symmetry", "sealed", "fixed", "film", "flux", "bath", "contact"}[k]
}

// Condition is one boundary condition for one species.
type Condition struct {
	Kind CondKind
	Def  diag.Range
	// Value is the fixed surface value (mol/m^3), the imposed inward flux
	// (mol/(m^2·s)) or the film's bulk value (mol/m^3); it may depend on
	// time.
	Value *Expr
	// Coefficient is the film coefficient, m/s (film, or a bath's film;
	// 0 when the bath has none).
	Coefficient float64
	// Partition K: concentration in the body at the surface = K × the
	// concentration outside (or in the outer layer = K × the inner layer
	// at a contact). Default 1.
	Partition float64
	// Resistance is a contact resistance, s/m (0: none).
	Resistance float64
	// BathVolume is the bath volume per particle, m^3 (for a slab per unit
	// face area, m; for a cylinder per unit length, m^2).
	BathVolume float64
	// BathStart is the bath's starting concentration, mol/m^3.
	BathStart float64
	// Particles is the number of particles sharing the bath, when given.
	Particles float64
}

// Stage is one period of a staged run.
type Stage struct {
	Name     string
	Def      diag.Range
	Duration float64 // s
	// Conditions replaces body conditions during the stage:
	// body name → boundary → species → condition.
	Conditions map[string]map[string]map[int]*Condition
}

// Run is what to compute: a transient to Until with output Times, or a
// steady state.
type Run struct {
	Def    diag.Range
	Steady bool
	Until  float64   // s
	Times  []float64 // output times, s, ascending, starting at 0
}

// Settings are solver settings; zero values mean the defaults.
type Settings struct {
	// RTol and ATol are the integrator's relative and absolute (mol/m^3)
	// tolerances.
	RTol, ATol float64
	// Cells is the total number of cells across the body.
	Cells int
	// Method names the time integrator.
	Method string
	// Cluster is the ratio of the widest to the narrowest cell of the
	// grid (1: uniform).
	Cluster float64
	// Extrapolate combines solutions on two grids by Richardson
	// extrapolation (settings key extrapolate = on).
	Extrapolate bool
	// Estimate reports estimates of the spatial and temporal error
	// (settings key estimate = on).
	Estimate bool
}

// Action is a statement that produces output when the model runs.
type Action interface {
	Span() diag.Range
	action()
}

// Result names something to compute from a solution: uptake of dye in
// bead, the time to 90 % uptake, a profile.
type Result struct {
	Def     diag.Range
	Kind    string // uptake, release, mean, centre, surface, flux, bath, profile, time_to, effectiveness, ledger, map, content
	Species int    // index, -1 when not applicable
	Body    string
	// Fraction is the fraction for time_to.
	Fraction float64
	Dim      units.Dim
}

// Show asks for results to be shown.
type Show struct {
	Def   diag.Range
	Items []*Result
	At    []float64 // s; profile times
	Scale string    // linear, log, sqrt
}

// Expect is an acceptance check.
type Expect struct {
	Def      diag.Range
	Subject  *Result
	At       float64 // s; <0 when not given
	Value    float64
	Tol      float64
	Relative bool
	Text     string // the statement as written, for reports
	Unit     string // the unit the value was written in, for reports
	Scale    float64
}

// Print writes text.
type Print struct {
	Def   diag.Range
	Parts []PrintPart
}

// PrintPart is a piece of a print statement: literal text or a value.
type PrintPart struct {
	Text  string
	Value *Expr
	Dim   units.Dim
	Unit  string
}

// Eval shows the value of a bare expression (a notebook cell's last line).
type Eval struct {
	Def   diag.Range
	Text  string
	Value float64
	Dim   units.Dim
	Unit  string
}

// Reset clears the notebook workspace.
type Reset struct{ Def diag.Range }

// Sweep runs the model over values of one parameter.
type Sweep struct {
	Def     diag.Range
	Param   string
	Values  []float64 // SI
	Unit    string
	Actions []Action
}

// Fit adjusts parameters to data.
type Fit struct {
	Def    diag.Range
	Params []FitParam
	Data   string // path, resolved relative to the model file
	Time   Column
	Series []FitSeries
}

// FitParam is one fitted parameter with its bounds (SI).
type FitParam struct {
	Name      string
	Low, High float64
}

// Column is a column of a data file with the scale that converts its
// values to SI.
type Column struct {
	Name  string
	Scale float64
}

// FitSeries pairs a model result with a data column.
type FitSeries struct {
	Result *Result
	Column Column
}

func (s *Show) action()   {}
func (s *Expect) action() {}
func (s *Print) action()  {}
func (s *Eval) action()   {}
func (s *Reset) action()  {}
func (s *Sweep) action()  {}
func (s *Fit) action()    {}

// Span implements Action.
func (s *Show) Span() diag.Range { return s.Def }

// Span implements Action.
func (s *Expect) Span() diag.Range { return s.Def }

// Span implements Action.
func (s *Print) Span() diag.Range { return s.Def }

// Span implements Action.
func (s *Eval) Span() diag.Range { return s.Def }

// Span implements Action.
func (s *Reset) Span() diag.Range { return s.Def }

// Span implements Action.
func (s *Sweep) Span() diag.Range { return s.Def }

// Span implements Action.
func (s *Fit) Span() diag.Range { return s.Def }
