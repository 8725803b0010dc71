package compile

import (
	"fmt"
	"math"
	"sort"
	"sync"

	"github.com/massline/massline/compile/fv"
)

// UnsupportedError says that a checked model uses a construct that no
// solver handles yet. The run is refused rather than answered wrongly.
type UnsupportedError struct {
	What string
}

// Error implements error.
func (e *UnsupportedError) Error() string {
	return "not solvable yet: " + e.What
}

// Lowered is a body lowered to the one-dimensional finite-volume
// specification, with the map from the body's local species numbering to
// the model's.
type Lowered struct {
	Spec *fv.Spec
	// Species[k] is the model species index of local species k.
	Species []int
	// Stops are times at which a boundary value or source switches.
	Stops []float64
}

// Local returns the local index of model species si, or -1.
func (l *Lowered) Local(si int) int {
	for k, s := range l.Species {
		if s == si {
			return k
		}
	}
	return -1
}

// Lower turns one body of a checked model, under the given boundary
// conditions (those of a stage), into a finite-volume specification.
// It refuses, with an *UnsupportedError naming the construct, what the
// one-dimensional solver cannot handle.
//
// A diffusivity that depends on the concentrations or the position
// becomes an fv.DiffusivityFunc, and a store that is not affine in the
// concentration an fv.StoreFunc, both evaluated by a Tape with exact
// derivatives. A nonlinear store may depend only on the concentration of
// its own species, and must increase with it: Lower checks its slope over
// the range of concentrations the model starts from and imposes (the
// discretisation checks it again at every evaluation).
func Lower(m *Model, b *Body, conds map[string]map[int]*Condition, set Settings) (*Lowered, error) {
	low := &Lowered{Species: append([]int(nil), b.Species...)}
	ns := len(b.Species)
	spec := &fv.Spec{NSpecies: ns, Inner: b.Inner, Cluster: set.Cluster}
	switch b.Shape {
	case Slab:
		spec.Geometry = fv.Slab
	case Cylinder, HollowCylinder:
		spec.Geometry = fv.Cylinder
	case Sphere, HollowSphere:
		spec.Geometry = fv.Sphere
	default:
		return nil, &UnsupportedError{What: fmt.Sprintf("body %s is a %s, a two-dimensional body", b.Name, b.Shape)}
	}
	cells := splitCells(b, set.Cells)
	var kinetics []*layerKinetics
	for l, r := range b.Regions {
		layer := fv.Layer{Outer: r.Outer, Cells: cells[l], D: make([]float64, ns), Capacity: make([]float64, ns),
			Rate: make([][]float64, ns), Source: make([]float64, ns)}
		var nonlinear []*Expr
		for k, si := range b.Species {
			bal := r.Balances[si]
			sp := m.Species[si]
			d := sp.Diffusivity
			if bal.Diffusivity != nil {
				d = bal.Diffusivity
			}
			if dv, ok := d.IsConst(); ok {
				layer.D[k] = dv
			} else {
				df, rep, err := lowerDiffusivity(m, b, r, si, d)
				if err != nil {
					return nil, err
				}
				if layer.Diffusivity == nil {
					layer.Diffusivity = make([]fv.DiffusivityFunc, ns)
				}
				layer.Diffusivity[k] = df
				layer.D[k] = rep
			}
			layer.Capacity[k] = 1
			if bal.Store != nil {
				if a, ok := bal.Store.AffineIn(len(m.Species)); ok {
					// A linear store: porosity plus linear sorption.
					for j, c := range a.Coef {
						if j != si && c != 0 {
							return nil, &UnsupportedError{What: fmt.Sprintf("the store of %s in %s depends on another species", sp.Name, r.Name)}
						}
					}
					if a.Coef[si] <= 0 {
						return nil, fmt.Errorf("the store of %s in %s must grow with %s (its slope is %g)", sp.Name, r.Name, sp.Name, a.Coef[si])
					}
					layer.Capacity[k] = a.Coef[si]
				} else {
					st, slope, err := lowerStore(m, r, si, bal.Store, conds)
					if err != nil {
						return nil, err
					}
					if layer.Store == nil {
						layer.Store = make([]fv.StoreFunc, ns)
					}
					layer.Store[k] = st
					layer.Capacity[k] = slope
				}
			}
			layer.Rate[k] = make([]float64, ns)
			nonlinear = append(nonlinear, nil)
			if bal.Source == nil {
				continue
			}
			low.Stops = append(low.Stops, bal.Source.TimeStops()...)
			if a, ok := bal.Source.AffineIn(len(m.Species)); ok {
				for j, c := range a.Coef {
					if c == 0 {
						continue
					}
					lj := indexOf(b.Species, j)
					if lj < 0 {
						return nil, fmt.Errorf("the source of %s in %s reads %s, which has no balance in %s", sp.Name, r.Name, m.Species[j].Name, b.Name)
					}
					layer.Rate[k][lj] = c
				}
				layer.Source[k] = a.C0
				continue
			}
			nonlinear[k] = bal.Source
		}
		if l > 0 {
			place := b.Regions[l-1].Layer + "|" + r.Layer
			layer.Partition = make([]float64, ns)
			layer.Resistance = make([]float64, ns)
			for k, si := range b.Species {
				c := conds[place][si]
				if c == nil {
					return nil, fmt.Errorf("the contact %s.%s has no condition for %s", b.Name, place, m.Species[si].Name)
				}
				layer.Partition[k] = c.Partition
				layer.Resistance[k] = c.Resistance
			}
		}
		spec.Layers = append(spec.Layers, layer)
		kinetics = append(kinetics, newLayerKinetics(nonlinear, b.Species, len(m.Species)))
	}
	if anyKinetics(kinetics) {
		spec.Kinetics = kineticsFunc(kinetics, ns)
	}
	names := Boundaries(b.Shape)
	spec.InnerBC = make([]fv.Boundary, ns)
	spec.OuterBC = make([]fv.Boundary, ns)
	for k, si := range b.Species {
		in, out := conds[names[0]][si], conds[names[1]][si]
		if in == nil || out == nil {
			return nil, fmt.Errorf("a boundary of %s has no condition for %s", b.Name, m.Species[si].Name)
		}
		var err error
		if spec.InnerBC[k], err = lowerBC(in, low); err != nil {
			return nil, err
		}
		if spec.OuterBC[k], err = lowerBC(out, low); err != nil {
			return nil, err
		}
	}
	spec.Init = func(k int, r float64) float64 {
		// The starting value of the region that holds r.
		si := b.Species[k]
		for _, reg := range b.Regions {
			if r <= reg.Outer || reg == b.Regions[len(b.Regions)-1] {
				env := Env{R: r}
				return reg.Balances[si].Initial.Eval(&env)
			}
		}
		return 0
	}
	sort.Float64s(low.Stops)
	low.Spec = spec
	return low, nil
}

func indexOf(xs []int, x int) int {
	for i, v := range xs {
		if v == x {
			return i
		}
	}
	return -1
}

// splitCells shares a requested total of cells among the layers in
// proportion to their thickness (at least 2 each); 0 leaves the choice to
// the discretisation.
func splitCells(b *Body, total int) []int {
	out := make([]int, len(b.Regions))
	if total <= 0 {
		return out
	}
	width := b.Outer - b.Inner
	for i, r := range b.Regions {
		out[i] = max(2, int(math.Round(float64(total)*(r.Outer-r.Inner)/width)))
	}
	return out
}

func timeFunc(e *Expr) func(float64) float64 {
	if e == nil {
		return nil
	}
	if v, ok := e.IsConst(); ok {
		return func(float64) float64 { return v }
	}
	return func(t float64) float64 {
		env := Env{T: t}
		return e.Eval(&env)
	}
}

// lowerBC maps a condition to the finite-volume boundary. The film
// coefficient of the language is the fluid-side coefficient kf, with the
// flux kf·(c_bulk − c_s/K); the discretisation writes H·(K·c_bulk − c_s),
// so H = kf/K.
func lowerBC(c *Condition, low *Lowered) (fv.Boundary, error) {
	if c.Value != nil {
		low.Stops = append(low.Stops, c.Value.TimeStops()...)
	}
	switch c.Kind {
	case Symmetry:
		return fv.Boundary{Kind: fv.Symmetry}, nil
	case Sealed:
		return fv.Boundary{Kind: fv.Flux}, nil
	case Fixed:
		return fv.Boundary{Kind: fv.Fixed, Value: timeFunc(c.Value)}, nil
	case Flux:
		return fv.Boundary{Kind: fv.Flux, Value: timeFunc(c.Value)}, nil
	case Film:
		return fv.Boundary{Kind: fv.Film, Value: timeFunc(c.Value), H: c.Coefficient / c.Partition, Partition: c.Partition}, nil
	case Bath:
		return fv.Boundary{Kind: fv.Bath, H: c.Coefficient / c.Partition, Partition: c.Partition,
			BathVolume: c.BathVolume, BathStart: c.BathStart}, nil
	}
	return fv.Boundary{}, fmt.Errorf("the condition %s cannot stand at an outer boundary", c.Kind)
}

// layerKinetics evaluates the nonlinear sources of one layer with exact
// derivatives (forward-mode automatic differentiation).
type layerKinetics struct {
	tapes   []*Tape // per local species; nil when linear
	species []int   // local → model index
	nmodel  int
	env     Env
	grad    []float64
}

func newLayerKinetics(exprs []*Expr, species []int, nmodel int) *layerKinetics {
	lk := &layerKinetics{species: species, nmodel: nmodel, env: Env{C: make([]float64, nmodel)}, grad: make([]float64, nmodel)}
	for _, e := range exprs {
		if e == nil {
			lk.tapes = append(lk.tapes, nil)
			continue
		}
		lk.tapes = append(lk.tapes, NewTape(e, nmodel))
	}
	return lk
}

func anyKinetics(ls []*layerKinetics) bool {
	for _, l := range ls {
		for _, t := range l.tapes {
			if t != nil {
				return true
			}
		}
	}
	return false
}

// kineticsFunc adapts the tapes to the discretisation's callback. The
// callback is called from one goroutine at a time per discretisation.
func kineticsFunc(ls []*layerKinetics, ns int) func(t, r float64, layer int, c, rate, dRate []float64) {
	return func(t, r float64, layer int, c, rate, dRate []float64) {
		lk := ls[layer]
		lk.env.T, lk.env.R = t, r
		for k, si := range lk.species {
			lk.env.C[si] = c[k]
		}
		for k, tape := range lk.tapes {
			if tape == nil {
				continue
			}
			var g []float64
			if dRate != nil {
				g = lk.grad
			}
			rate[k] += tape.Eval(&lk.env, g)
			if dRate != nil {
				for j, sj := range lk.species {
					dRate[k*ns+j] += g[sj]
				}
			}
		}
	}
}

// exprFunc evaluates one model expression by a Tape under a mutex, so
// that the functions handed to the discretisation are safe for concurrent
// use (its output methods and several Problems may run at once). Stores,
// functions of one concentration, use Expr.Univariate instead, which
// needs no scratch space.
type exprFunc struct {
	mu   sync.Mutex
	tape *Tape
	env  Env
	grad []float64
}

func newExprFunc(e *Expr, nmodel int) *exprFunc {
	return &exprFunc{tape: NewTape(e, nmodel), env: Env{C: make([]float64, nmodel)}, grad: make([]float64, nmodel)}
}

// lowerStore turns a store that is not affine into an fv.StoreFunc of the
// concentration of species si, and returns with it a representative
// slope (the secant over the range of concentrations in play) for the
// discretisation's cell sharing and starting guesses. It refuses a store
// that reads position, time or another species, and one that does not
// increase over that range.
func lowerStore(m *Model, r *Region, si int, e *Expr, conds map[string]map[int]*Condition) (fv.StoreFunc, float64, error) {
	sp := m.Species[si]
	nm := len(m.Species)
	deps := e.Depends(nm)
	if deps.Pos || deps.Axial || deps.Time {
		return nil, 0, &UnsupportedError{What: fmt.Sprintf("the store of %s in %s depends on position or time; a nonlinear store may depend only on the concentration %s", sp.Name, r.Name, sp.Name)}
	}
	for j, on := range deps.Species {
		if on && j != si {
			return nil, 0, &UnsupportedError{What: fmt.Sprintf("the store of %s in %s depends on another species (%s); a nonlinear store may depend only on the concentration %s", sp.Name, r.Name, m.Species[j].Name, sp.Name)}
		}
	}
	u := e.Univariate(si)
	st := func(c float64) (float64, float64) { return u(0, c) }
	lo, hi := concentrationRange(r, si, conds)
	// The slope must be positive over the range (checked at 65 points).
	const samples = 64
	for i := 0; i <= samples; i++ {
		c := lo + (hi-lo)*float64(i)/samples
		q, dq := st(c)
		if math.IsInf(dq, 1) && !math.IsInf(q, 0) {
			return nil, 0, &UnsupportedError{What: fmt.Sprintf("the store of %s in %s has an infinite slope at %s = %g mol/m^3 (as c^n with n < 1 has at 0), and the solver needs a finite one to recover the concentration from the amount held", sp.Name, r.Name, sp.Name, c)}
		}
		if math.IsNaN(q) || math.IsInf(q, 0) || math.IsNaN(dq) || math.IsInf(dq, 0) {
			return nil, 0, fmt.Errorf("the store of %s in %s cannot be evaluated at %s = %g mol/m^3 (it gives %g with slope %g)", sp.Name, r.Name, sp.Name, c, q, dq)
		}
		if dq <= 0 {
			return nil, 0, fmt.Errorf("the store of %s in %s must grow with %s: its slope is %g at %s = %g mol/m^3", sp.Name, r.Name, sp.Name, dq, sp.Name, c)
		}
		if hi == lo {
			break
		}
	}
	if hi > lo {
		qlo, _ := st(lo)
		qhi, _ := st(hi)
		return st, (qhi - qlo) / (hi - lo), nil
	}
	_, dq := st(lo)
	return st, dq, nil
}

// concentrationRange returns the smallest and largest concentration of
// species si that the region starts from or a boundary imposes at the
// start or at a switching time (inside the body: the outside value times
// the partition coefficient), with 0 included.
func concentrationRange(r *Region, si int, conds map[string]map[int]*Condition) (lo, hi float64) {
	add := func(v float64) {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return
		}
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if bal := r.Balances[si]; bal != nil && bal.Initial != nil {
		for i := 0; i <= 8; i++ {
			env := Env{R: r.Inner + (r.Outer-r.Inner)*float64(i)/8}
			add(bal.Initial.Eval(&env))
		}
	}
	for _, bySpecies := range conds {
		c := bySpecies[si]
		if c == nil {
			continue
		}
		kp := c.Partition
		if kp == 0 {
			kp = 1
		}
		switch c.Kind {
		case Fixed, Film:
			if c.Value == nil {
				continue
			}
			times := append([]float64{0}, c.Value.TimeStops()...)
			for _, t := range times {
				for _, tt := range []float64{t, math.Nextafter(t, math.Inf(1))} {
					env := Env{T: tt}
					add(kp * c.Value.Eval(&env))
				}
			}
		case Bath:
			add(kp * c.BathStart)
		}
	}
	return lo, hi
}

// lowerDiffusivity turns a diffusivity that depends on the concentrations
// or the position into an fv.DiffusivityFunc, and returns with it its
// value at the middle of the region and the starting concentrations (used
// by the discretisation only to share cells between layers).
func lowerDiffusivity(m *Model, b *Body, r *Region, si int, e *Expr) (fv.DiffusivityFunc, float64, error) {
	sp := m.Species[si]
	nm := len(m.Species)
	deps := e.Depends(nm)
	if deps.Time || deps.Axial {
		return nil, 0, &UnsupportedError{What: fmt.Sprintf("the diffusivity of %s in %s depends on time", sp.Name, r.Name)}
	}
	for j, on := range deps.Species {
		if on && indexOf(b.Species, j) < 0 {
			return nil, 0, fmt.Errorf("the diffusivity of %s in %s reads %s, which has no balance in %s", sp.Name, r.Name, m.Species[j].Name, b.Name)
		}
	}
	species := b.Species
	var reads []int // local indices of the species D reads
	for k, sj := range species {
		if deps.Species[sj] {
			reads = append(reads, k)
		}
	}
	var df fv.DiffusivityFunc
	if len(reads) <= 1 {
		// A function of r and at most one concentration: dual numbers,
		// no scratch space.
		k, j := -1, -1
		if len(reads) == 1 {
			k = reads[0]
			j = species[k]
		}
		u := e.Univariate(j)
		df = func(pos float64, c, dD []float64) float64 {
			x := 0.0
			if k >= 0 {
				x = c[k]
			}
			v, d := u(pos, x)
			if dD != nil && k >= 0 {
				dD[k] = d
			}
			return v
		}
	} else {
		df = tapeDiffusivity(e, nm, species)
	}
	mid := 0.5 * (r.Inner + r.Outer)
	c := make([]float64, len(species))
	for k, sj := range species {
		if bal := r.Balances[sj]; bal != nil && bal.Initial != nil {
			env := Env{R: mid}
			c[k] = bal.Initial.Eval(&env)
		}
	}
	rep := df(mid, c, nil)
	if !(rep > 0) || math.IsInf(rep, 0) {
		return nil, 0, fmt.Errorf("the diffusivity of %s in %s is %g at r = %g m with the starting concentrations; it must be positive", sp.Name, r.Name, rep, mid)
	}
	return df, rep, nil
}

// tapeDiffusivity evaluates a diffusivity that reads several
// concentrations by a Tape (under a mutex), with its gradient.
func tapeDiffusivity(e *Expr, nm int, species []int) fv.DiffusivityFunc {
	x := newExprFunc(e, nm)
	return func(pos float64, c, dD []float64) float64 {
		x.mu.Lock()
		defer x.mu.Unlock()
		x.env.R = pos
		for k, sj := range species {
			x.env.C[sj] = c[k]
		}
		if dD == nil {
			return x.tape.Eval(&x.env, nil)
		}
		v := x.tape.Eval(&x.env, x.grad)
		for k, sj := range species {
			dD[k] = x.grad[sj]
		}
		return v
	}
}
