package compile

import (
	"fmt"
	"math"
	"sort"

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
			dv, ok := d.IsConst()
			if !ok {
				return nil, &UnsupportedError{What: fmt.Sprintf("the diffusivity of %s in %s depends on concentration or position", sp.Name, r.Name)}
			}
			layer.D[k] = dv
			layer.Capacity[k] = 1
			if bal.Store != nil {
				a, ok := bal.Store.AffineIn(len(m.Species))
				if !ok {
					return nil, &UnsupportedError{What: fmt.Sprintf("the store of %s in %s is not linear in the concentration (a nonlinear sorption isotherm)", sp.Name, r.Name)}
				}
				for j, c := range a.Coef {
					if j != si && c != 0 {
						return nil, &UnsupportedError{What: fmt.Sprintf("the store of %s in %s depends on another species", sp.Name, r.Name)}
					}
				}
				if a.Coef[si] <= 0 {
					return nil, fmt.Errorf("the store of %s in %s must grow with %s (its slope is %g)", sp.Name, r.Name, sp.Name, a.Coef[si])
				}
				layer.Capacity[k] = a.Coef[si]
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
