package engine

import (
	"time"

	"github.com/massline/massline/dsl/diag"
	"github.com/massline/massline/report"
)

// Caution is the sentence every report carries (one text, kept in
// package report).
var Caution = report.Caution()

// Result is everything one run of a model produced. Values are in SI.
type Result struct {
	Model    ModelInfo  `json:"model"`
	Times    []float64  `json:"times_s"`
	Series   []Series   `json:"series"`
	Profiles []Profile  `json:"profiles"`
	Solver   SolverInfo `json:"solver"`
	Ledger   []Ledger   `json:"ledger"`
	Checks   []Check    `json:"checks,omitempty"`
	Scalars  []Scalar   `json:"scalars,omitempty"`
	// Estimates are error estimates, when asked for.
	Estimates []Estimate `json:"error_estimates,omitempty"`
	// Sweeps are the tables of sweeps: one row per value (per
	// combination of values for nested sweeps).
	Sweeps  []SweepTable `json:"sweeps,omitempty"`
	Caution string       `json:"caution"`
	// Notes are warnings about the run (a grid refined or possibly too
	// coarse, an undefined uptake fraction).
	Notes []string `json:"notes,omitempty"`

	// Outputs are the rendered outputs in the order the model asked for
	// them (tables, plots, printed text); not part of the JSON.
	Outputs []Output `json:"-"`
}

// ModelInfo identifies the model a result came from.
type ModelInfo struct {
	File    string `json:"file"`
	SHA256  string `json:"sha256"`
	Version string `json:"massline_version"`
}

// Series is one quantity against time (at Result.Times).
type Series struct {
	Name    string    `json:"name"`
	Body    string    `json:"body"`
	Species string    `json:"species"`
	Unit    string    `json:"unit"`
	Values  []float64 `json:"values"`
}

// Profile is concentration against position in one body at one time.
type Profile struct {
	Time     float64              `json:"time_s"`
	Body     string               `json:"body"`
	Position []float64            `json:"position_m"`
	Values   map[string][]float64 `json:"values"`
}

// SolverInfo reports the work the integrator did, summed over bodies and
// stages.
type SolverInfo struct {
	Method         string  `json:"method"`
	Cells          int     `json:"cells"`
	RTol           float64 `json:"rtol"`
	ATol           float64 `json:"atol"`
	Steps          int     `json:"steps"`
	Rejected       int     `json:"rejected_steps"`
	FuncEvals      int     `json:"function_evaluations"`
	JacEvals       int     `json:"jacobian_evaluations"`
	Factorizations int     `json:"factorizations"`
	WallSeconds    float64 `json:"wall_time_s"`
	wall           time.Duration
}

// Ledger is the mass balance of one species in one body over the run:
// initial + inflow − consumed = final, per particle (per unit area for a
// slab, per unit length for a cylinder).
type Ledger struct {
	Body     string  `json:"body"`
	Species  string  `json:"species"`
	Unit     string  `json:"unit"`
	Initial  float64 `json:"initial"`
	Inflow   float64 `json:"inflow"`
	Consumed float64 `json:"consumed"`
	Final    float64 `json:"final"`
	// Closure is |initial + inflow − consumed − final| relative to the
	// largest of the terms.
	Closure float64 `json:"closure"`
}

// Check is the outcome of one expect statement.
type Check struct {
	// Where is the expect statement (not in the JSON: Text quotes it).
	Where    diag.Range `json:"-"`
	Text     string     `json:"text"`
	Got      float64    `json:"got"`
	Want     float64    `json:"want"`
	Tol      float64    `json:"tolerance"`
	Relative bool       `json:"relative"`
	Unit     string     `json:"unit"`
	Passed   bool       `json:"passed"`
	// ShownUnit and ShownScale are the unit the expected value was written
	// in and its size in SI, for reports.
	ShownUnit  string  `json:"-"`
	ShownScale float64 `json:"-"`
}

// Scalar is a single computed number (a time to a fraction, an
// effectiveness factor, a steady-state value).
type Scalar struct {
	// Fraction is the fraction of a time_to result (0 otherwise).
	Fraction float64 `json:"fraction,omitempty"`
	// Label is a readable name for tables ("time to 90 % uptake").
	Label   string  `json:"-"`
	shown   bool    // asked for by a show statement
	Name    string  `json:"name"`
	Body    string  `json:"body"`
	Species string  `json:"species"`
	Unit    string  `json:"unit"`
	Value   float64 `json:"value"`
}

// Passed reports whether every expectation held.
func (r *Result) Passed() bool {
	for _, c := range r.Checks {
		if !c.Passed {
			return false
		}
	}
	return true
}

// Find returns the series with the given name, body and species, or nil.
func (r *Result) Find(name, body, species string) *Series {
	for i := range r.Series {
		s := &r.Series[i]
		if s.Name == name && (body == "" || s.Body == body) && s.Species == species {
			return s
		}
	}
	return nil
}

// Estimate is the estimated error of one series over the run: the
// largest over the output times.
type Estimate struct {
	// Case names the swept values the estimate belongs to ("" for the
	// model as written).
	Case     string  `json:"case,omitempty"`
	Body     string  `json:"body"`
	Species  string  `json:"species"`
	Series   string  `json:"series"`
	Unit     string  `json:"unit"`
	Spatial  float64 `json:"spatial"`
	Temporal float64 `json:"temporal"`
	// Extrapolated tells whether the reported series are the Richardson
	// combination (their remaining error is then smaller than Spatial).
	Extrapolated bool `json:"extrapolated"`
}

// SweepTable is the gathered result of a sweep: the swept values in the
// first columns, then the scalar results asked for, in SI units.
type SweepTable struct {
	Title   string      `json:"title"`
	Columns []string    `json:"columns"`
	Units   []string    `json:"units"`
	Rows    [][]float64 `json:"rows"`
}
