package engine

import (
	"context"
	"fmt"
	"math"
	"sort"

	"github.com/massline/massline/compile"
	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/compile/fv2"
	"github.com/massline/massline/solvers"
)

// bodySolution is the solution of one body over the whole run, at the
// union of every time any output needs.
type bodySolution struct {
	body  *compile.Body
	disc  *disc
	times []float64   // ascending, starting at 0
	ys    [][]float64 // state at times
	qs    [][]float64 // ledger quadratures at times (accumulated over stages)
	stats solvers.Stats
	cells int
	atol  float64
	// final is the content each species tends to (equilibrium or steady
	// state) under the last stage's conditions; NaN when there is none.
	final map[int]float64
	// steady is the steady state (steady runs only).
	steady []float64
	notes  []string
	// coarse, when set, is the same body on half the cells; values are
	// then Richardson-extrapolated.
	coarse *bodySolution
	peak   map[int]float64 // cache of peakContent
	// set are the settings used, with the grid chosen by resolveGrid.
	set compile.Settings
}

// at returns the index of time t in times (which contains it).
func (s *bodySolution) at(t float64) int {
	i := sort.SearchFloat64s(s.times, t*(1-1e-14))
	if i >= len(s.times) {
		i = len(s.times) - 1
	}
	if i > 0 && math.Abs(s.times[i-1]-t) < math.Abs(s.times[i]-t) {
		i--
	}
	return i
}

// outputTimes collects every time the actions need beyond the run's
// output times.
func outputTimes(m *compile.Model) (times []float64, dense bool) {
	times = append(times, m.Run.Times...)
	var walk func([]compile.Action)
	walk = func(as []compile.Action) {
		for _, a := range as {
			switch a := a.(type) {
			case *compile.Show:
				times = append(times, a.At...)
				for _, it := range a.Items {
					if it.Kind == "time_to" {
						dense = true
					}
				}
			case *compile.Expect:
				if a.At >= 0 {
					times = append(times, a.At)
				}
				if a.Subject.Kind == "time_to" {
					dense = true
				}
			case *compile.Sweep:
				walk(a.Actions)
			}
		}
	}
	walk(m.Actions)
	// Evenly spaced times for smooth plots: dense output makes them cheap.
	for i := 1; i < 240; i++ {
		times = append(times, m.Run.Until*float64(i)/240)
	}
	if dense {
		// Log-spaced times for locating a fraction of uptake; the dense
		// output of the integrator makes them nearly free.
		end := m.Run.Until
		for i := 0; i <= 600; i++ {
			times = append(times, end*math.Pow(10, -7+7*float64(i)/600))
		}
	}
	sort.Float64s(times)
	out := times[:0]
	for _, t := range times {
		if len(out) == 0 || t > out[len(out)-1]*(1+1e-13) {
			out = append(out, t)
		}
	}
	return out, dense
}

// stagePlan is one period with the conditions in force.
type stagePlan struct {
	start, end float64
	conds      map[string]map[int]*compile.Condition
	// restated are the conditions the stage itself sets (a bath restated
	// in a stage starts again from its start value).
	restated map[string]map[int]*compile.Condition
}

func plan(m *compile.Model, b *compile.Body) []stagePlan {
	if len(m.Stages) == 0 {
		return []stagePlan{{start: 0, end: m.Run.Until, conds: b.Conditions}}
	}
	var out []stagePlan
	t := 0.0
	conds := b.Conditions
	for _, st := range m.Stages {
		merged := map[string]map[int]*compile.Condition{}
		for place, bySpecies := range conds {
			merged[place] = map[int]*compile.Condition{}
			for si, c := range bySpecies {
				merged[place][si] = c
			}
		}
		for place, bySpecies := range st.Conditions[b.Name] {
			for si, c := range bySpecies {
				merged[place][si] = c
			}
		}
		out = append(out, stagePlan{start: t, end: t + st.Duration, conds: merged, restated: st.Conditions[b.Name]})
		conds = merged
		t += st.Duration
	}
	return out
}

func solveBody(ctx context.Context, m *compile.Model, b *compile.Body, set compile.Settings) (*bodySolution, error) {
	sol := &bodySolution{body: b, final: map[int]float64{}}
	stages := []stagePlan{{conds: b.Conditions}}
	if !m.Run.Steady {
		stages = plan(m, b)
	}
	var y []float64
	var qOffset []float64
	var times []float64
	if !m.Run.Steady {
		times, _ = outputTimes(m)
	}
	for k, st := range stages {
		if k == 0 {
			// Choose the grid once: every stage must use the same cells.
			set, sol.notes = resolveGrid(m, b, st.conds, set, sol.notes)
			sol.set = set
		}
		disc, err := build(m, b, st.conds, set)
		if err != nil {
			return nil, &Error{Where: b.Def, Msg: "body " + b.Name + ": " + err.Error(), Err: err}
		}
		d := disc.d
		sol.disc = disc
		sol.cells = d.Cells()
		p := d.Problem()
		if y == nil {
			y = d.Y0()
			qOffset = make([]float64, p.NQuad)
		} else {
			resetBaths(disc, y, st.restated)
		}
		atol := set.ATol
		if atol == 0 {
			atol = 1e-9 * concentrationScale(y, b, st.conds)
		}
		sol.atol = atol
		if m.Run.Steady {
			if timeDependent(st.conds) || len(disc.stops) > 0 {
				sol.notes = append(sol.notes, fmt.Sprintf("body %s: the steady state takes time-dependent boundary values and sources at t = 0", b.Name))
			}
			ys, err := d.SteadyState(0, y, nil)
			if err != nil {
				return nil, &Error{Where: m.Run.Def, Msg: "no steady state found: " + err.Error(), Err: err}
			}
			sol.steady = ys
			sol.times = []float64{0}
			sol.ys = [][]float64{ys}
			sol.qs = [][]float64{make([]float64, p.NQuad)}
			break
		}
		// Output times inside this stage (the start is already stored).
		var tout []float64
		for _, t := range times {
			if t > st.start && t <= st.end*(1+1e-14) || k == 0 && t == 0 {
				tout = append(tout, math.Min(t, st.end))
			}
		}
		if len(tout) == 0 || tout[len(tout)-1] < st.end {
			tout = append(tout, st.end)
		}
		sset := &solvers.Settings{RTol: set.RTol, ATol: atol, Stops: disc.stops}
		r, err := solvers.Integrate(ctx, p, st.start, y, tout, sset)
		addSolverStats(&sol.stats, r)
		if err != nil {
			if ctx.Err() != nil {
				return nil, interruptErr(ctx.Err())
			}
			where := m.Run.Def
			msg := fmt.Sprintf("the solver stopped in body %s: %v", b.Name, err)
			if ee := d.EvalError(); ee != nil {
				msg += " (" + ee.Error() + ")"
			}
			return nil, &Error{Where: where, Msg: msg, Err: err}
		}
		for i, t := range tout {
			if k > 0 && i == 0 && t == st.start {
				continue
			}
			q := make([]float64, len(r.Q[i]))
			for j := range q {
				q[j] = r.Q[i][j] + qOffset[j]
			}
			if len(sol.times) > 0 && t <= sol.times[len(sol.times)-1] {
				continue
			}
			sol.times = append(sol.times, t)
			sol.ys = append(sol.ys, r.Y[i])
			sol.qs = append(sol.qs, q)
		}
		y = append([]float64(nil), r.Y[len(r.Y)-1]...)
		for j := range qOffset {
			qOffset[j] += r.Q[len(r.Q)-1][j]
		}
	}
	sol.equilibrium(stages[len(stages)-1], m)
	return sol, nil
}

func addSolverStats(s *solvers.Stats, r *solvers.Result) {
	if r == nil {
		return
	}
	s.Method = r.Stats.Method
	s.Steps += r.Stats.Steps
	s.Rejected += r.Stats.Rejected
	s.FuncEvals += r.Stats.FuncEvals
	s.JacEvals += r.Stats.JacEvals
	s.Factorizations += r.Stats.Factorizations
	s.NewtonIters += r.Stats.NewtonIters
	s.Wall += r.Stats.Wall
}

// equilibrium computes the content each species tends to: a Newton
// steady state of the final stage's system, or, for a closed bath with no
// reaction, the equilibrium that conserves the total amount.
func (s *bodySolution) equilibrium(st stagePlan, m *compile.Model) {
	if s.steady != nil {
		for _, si := range s.body.Species {
			s.final[si] = s.disc.Content(s.steady, si)
		}
		return
	}
	last := s.ys[len(s.ys)-1]
	if s.disc.HasBath() && !hasSources(s.body) {
		for _, si := range s.body.Species {
			s.final[si] = s.bathEquilibrium(last, si, st)
		}
		return
	}
	ys, err := s.disc.d.SteadyState(m.Run.Until, last, nil)
	if err != nil {
		for _, si := range s.body.Species {
			s.final[si] = math.NaN()
		}
		s.notes = append(s.notes, fmt.Sprintf("body %s has no steady state (%v); uptake fractions are not defined", s.body.Name, err))
		return
	}
	for _, si := range s.body.Species {
		s.final[si] = s.disc.Content(ys, si)
	}
}

// resetBaths sets each bath that a stage restates to its start value.
func resetBaths(d *disc, y []float64, restated map[string]map[int]*compile.Condition) {
	for _, bySpecies := range restated {
		for si, c := range bySpecies {
			if c.Kind != compile.Bath {
				continue
			}
			if k := d.k(si); k >= 0 {
				if i := d.d.BathIndex(k); i >= 0 {
					y[i] = c.BathStart
				}
			}
		}
	}
}

// build lowers one body under a stage's conditions and builds its
// discretisation.
func build(m *compile.Model, b *compile.Body, conds map[string]map[int]*compile.Condition, set compile.Settings) (*disc, error) {
	if b.Shape == compile.ShortCylinder {
		low, err := compile.Lower2D(m, b, conds, set)
		if err != nil {
			return nil, err
		}
		d, err := fv2.Build(low.Spec)
		if err != nil {
			return nil, err
		}
		r, z := d.CellCentres()
		return &disc{d: d, species: low.Species, stops: low.Stops,
			geom: cellGeometry{vol: d.CellVolumes(), r: r, z: z, layer: make([]int, d.Cells())}}, nil
	}
	low, err := compile.Lower(m, b, conds, set)
	if err != nil {
		return nil, err
	}
	d, err := fv.Build(low.Spec)
	if err != nil {
		return nil, err
	}
	return &disc{d: d, species: low.Species, geom: fvGeometry(d), stops: low.Stops}, nil
}

// concentrationScale is the size of the concentrations in play: the
// largest starting value, boundary value or bath value; 1 mol/m^3 when
// everything is zero. The default absolute tolerance is a tiny fraction
// of it.
func concentrationScale(y []float64, b *compile.Body, conds map[string]map[int]*compile.Condition) float64 {
	s := 0.0
	for _, v := range y {
		s = math.Max(s, math.Abs(v))
	}
	for _, bySpecies := range conds {
		for _, c := range bySpecies {
			if c.Value != nil && c.Kind != compile.Flux {
				for _, t := range []float64{0} {
					env := compile.Env{T: t}
					s = math.Max(s, math.Abs(c.Value.Eval(&env)))
				}
			}
			s = math.Max(s, math.Abs(c.BathStart))
		}
	}
	if s == 0 || math.IsNaN(s) {
		return 1
	}
	return s
}

func hasSources(b *compile.Body) bool {
	for _, r := range b.Regions {
		for _, bal := range r.Balances {
			if bal.Source != nil {
				return true
			}
		}
	}
	return false
}

// bathEquilibrium is the content of species si when the body and its bath
// have come to equilibrium with no reaction: the total amount (body plus
// bath) is conserved and every layer holds what is in equilibrium with the
// bath through the partitions (fv.Discretization.EquilibriumWithBath,
// which handles nonlinear stores too).
func (s *bodySolution) bathEquilibrium(y []float64, si int, st stagePlan) float64 {
	k := s.disc.k(si)
	if k < 0 {
		return math.NaN()
	}
	return nan(s.disc.d.EquilibriumWithBath(y, k))
}

func outerSide(b *compile.Body) string {
	names := compile.Boundaries(b.Shape)
	return names[len(names)-1]
}

// resolveGrid makes the default grid fine enough at the faces for the
// thinnest boundary layer the model will form: √(D/k) for a first-order
// consumption k, and √(D·t₁) at the first output time t₁. When the user
// set neither cells nor cluster and the cell at a face where something
// crosses is wider than a tenth of that thickness, or fewer than 25 cells
// lie within it, the clustering and the number of cells are raised together (cells growing by at most 10 % from
// one to the next; up to 640 cells); a note says so, or says that the grid
// may still be too coarse. (Ten cells across a boundary layer: our own
// working rule, common practice, no source; at Thiele moduli up to 3·10⁴
// the effectiveness factor then agrees with the closed form to 1e-3, see
// engine/effectiveness_test.go.)
func resolveGrid(m *compile.Model, b *compile.Body, conds map[string]map[int]*compile.Condition, set compile.Settings, notes []string) (compile.Settings, []string) {
	if set.Cells != 0 || set.Cluster != 0 || b.Shape == compile.ShortCylinder {
		return set, notes
	}
	low, err := compile.Lower(m, b, conds, set)
	if err != nil {
		return set, notes
	}
	delta := math.Inf(1)
	t1 := 0.0
	if !m.Run.Steady && len(m.Run.Times) > 1 {
		t1 = m.Run.Times[1]
	}
	for _, l := range low.Spec.Layers {
		for k, D := range l.D {
			if t1 > 0 {
				delta = math.Min(delta, math.Sqrt(D*t1))
			}
			if l.Rate != nil && l.Rate[k][k] < 0 {
				delta = math.Min(delta, math.Sqrt(D/-l.Rate[k][k]))
			}
		}
	}
	if math.IsInf(delta, 1) {
		return set, notes
	}
	// Only faces where something crosses carry boundary layers.
	innerActive := false
	for _, c := range conds[compile.Boundaries(b.Shape)[0]] {
		innerActive = innerActive || (c.Kind != compile.Symmetry && c.Kind != compile.Sealed)
	}
	// probe builds the grid for settings s and returns the width of the
	// cell at the active face(s) and the number of cells within delta of
	// them (the fewest over the active faces).
	probe := func(s compile.Settings) (h float64, n int) {
		l, err := compile.Lower(m, b, conds, s)
		if err != nil {
			return 0, 1 << 30
		}
		d, err := fv.Build(l.Spec)
		if err != nil {
			return 0, 1 << 30
		}
		f := d.Grid.Faces
		last := f[len(f)-1]
		h = last - f[len(f)-2]
		for _, x := range f[:len(f)-1] {
			if last-x < delta {
				n++
			}
		}
		if innerActive {
			h = math.Max(h, f[1]-f[0])
			k := 0
			for _, x := range f[1:] {
				if x-f[0] < delta {
					k++
				}
			}
			n = min(n, k)
		}
		return h, n
	}
	good := func(h float64, n int) bool { return h <= delta/10 && n >= 25 }
	try := set
	h, n := probe(try)
	if good(h, n) || h == 0 {
		return set, notes
	}
	// Raise the clustering and the number of cells together, so that
	// neighbouring cells still grow gently (by at most 10 % from one to
	// the next).
	found := false
search:
	for c := float64(fv.DefaultCluster); c <= 1.3e4; c *= 2 {
		for _, cells := range []int{fv.DefaultCells, 3 * fv.DefaultCells / 2, 2 * fv.DefaultCells, 4 * fv.DefaultCells, 8 * fv.DefaultCells} {
			if math.Pow(c, 1/(0.85*float64(cells))) > 1.1 {
				continue
			}
			try.Cells, try.Cluster = cells, c
			if h, n = probe(try); good(h, n) {
				found = true
				break search
			}
		}
	}
	if !found {
		notes = append(notes, fmt.Sprintf("body %s: the grid does not resolve the thinnest boundary layer (about %.3g m) with ten face cells across it, even refined (cluster %g, %d cells); early or thin-layer values may be inaccurate — check with settings { estimate = on } or more cells", b.Name, delta, try.Cluster, try.Cells))
	} else {
		notes = append(notes, fmt.Sprintf("body %s: grid refined for a boundary layer about %.3g m thick (cluster %g, %d cells)", b.Name, delta, try.Cluster, try.Cells))
	}
	return try, notes
}

// timeDependent reports whether any boundary value reads the time.
func timeDependent(conds map[string]map[int]*compile.Condition) bool {
	for _, bySpecies := range conds {
		for _, c := range bySpecies {
			if c.Value != nil {
				if _, isConst := c.Value.IsConst(); !isConst {
					return true
				}
			}
		}
	}
	return false
}
