package compile

import (
	"fmt"
	"math"
	"sort"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/compile/fv2"
)

// Lowered2D is a short cylinder lowered to the two-dimensional
// finite-volume specification of package fv2, with the map from the
// body's local species numbering to the model's.
type Lowered2D struct {
	Spec *fv2.Spec
	// Species[k] is the model species index of local species k.
	Species []int
	// Stops are times at which a boundary value or source switches.
	Stops []float64
}

// Local returns the local index of model species si, or -1.
func (l *Lowered2D) Local(si int) int { return indexOf(l.Species, si) }

// Lower2D turns a short cylinder of a checked model, under the given
// boundary conditions (those of a stage), into a specification for
// fv2.Build: the balance on the r–z rectangle 0 ≤ r ≤ R, 0 ≤ z ≤ L with
// the axis a symmetry line and the conditions of the side (r = R), the
// top (z = L) and the bottom (z = 0).
//
// Sources affine in the concentrations become the Rate matrix and
// constant Source; any other source (one that reads r, z or t, say) goes
// through fv2.Spec.Kinetics, evaluated by a Tape with exact derivatives.
// A linear store becomes the Capacity. Film coefficients are converted as
// in Lower (H = kf/K).
//
// It refuses, with an *UnsupportedError, what the two-dimensional solver
// cannot handle yet: a nonlinear store (sorption isotherm), a diffusivity
// that is not constant, and a layered short cylinder.
//
// Settings.Cells is the total number of cells: NR and NZ are chosen in
// proportion to R and L (equal cell density in both directions), NR ≈
// √(cells·R/L) and NZ ≈ √(cells·L/R) rounded to even numbers, at least 4
// each; 0 leaves the choice to fv2.Build (about fv2.DefaultCells in the
// same proportion).
func Lower2D(m *Model, b *Body, conds map[string]map[int]*Condition, set Settings) (*Lowered2D, error) {
	if b.Shape != ShortCylinder {
		return nil, fmt.Errorf("body %s is a %s, not a short cylinder (lower it with Lower)", b.Name, b.Shape)
	}
	if len(b.Regions) != 1 {
		return nil, &UnsupportedError{What: fmt.Sprintf("body %s is a layered short cylinder", b.Name)}
	}
	r := b.Regions[0]
	ns := len(b.Species)
	low := &Lowered2D{Species: append([]int(nil), b.Species...)}
	spec := &fv2.Spec{Radius: b.Outer, Length: b.Length, NSpecies: ns, Cluster: set.Cluster,
		D: make([]float64, ns), Capacity: make([]float64, ns), Rate: make([][]float64, ns), Source: make([]float64, ns)}
	nonlinear := make([]*Expr, ns)
	for k, si := range b.Species {
		sp := m.Species[si]
		bal := r.Balances[si]
		if bal == nil {
			return nil, fmt.Errorf("%s has no balance in %s", sp.Name, b.Name)
		}
		d := sp.Diffusivity
		if bal.Diffusivity != nil {
			d = bal.Diffusivity
		}
		dv, ok := d.IsConst()
		if !ok {
			return nil, &UnsupportedError{What: fmt.Sprintf("the diffusivity of %s in the short cylinder %s is not constant; a short cylinder needs a constant diffusivity", sp.Name, b.Name)}
		}
		spec.D[k] = dv
		spec.Capacity[k] = 1
		if bal.Store != nil {
			a, ok := bal.Store.AffineIn(len(m.Species))
			if !ok {
				return nil, &UnsupportedError{What: fmt.Sprintf("the store of %s in the short cylinder %s is not linear (a sorption isotherm); a short cylinder needs a linear store", sp.Name, b.Name)}
			}
			for j, c := range a.Coef {
				if j != si && c != 0 {
					return nil, &UnsupportedError{What: fmt.Sprintf("the store of %s in %s depends on another species", sp.Name, b.Name)}
				}
			}
			if a.Coef[si] <= 0 {
				return nil, fmt.Errorf("the store of %s in %s must grow with %s (its slope is %g)", sp.Name, b.Name, sp.Name, a.Coef[si])
			}
			spec.Capacity[k] = a.Coef[si]
		}
		spec.Rate[k] = make([]float64, ns)
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
					return nil, fmt.Errorf("the source of %s in %s reads %s, which has no balance in %s", sp.Name, b.Name, m.Species[j].Name, b.Name)
				}
				spec.Rate[k][lj] = c
			}
			spec.Source[k] = a.C0
			continue
		}
		for j, on := range bal.Source.Depends(len(m.Species)).Species {
			if on && indexOf(b.Species, j) < 0 {
				return nil, fmt.Errorf("the source of %s in %s reads %s, which has no balance in %s", sp.Name, b.Name, m.Species[j].Name, b.Name)
			}
		}
		nonlinear[k] = bal.Source
	}
	if lk := newLayerKinetics(nonlinear, b.Species, len(m.Species)); anyKinetics([]*layerKinetics{lk}) {
		spec.Kinetics = kinetics2D(lk, ns)
	}
	// Conditions: the axis is a symmetry line; the faces map as in Lower.
	tmp := &Lowered{}
	spec.Side = make([]fv.Boundary, ns)
	spec.Top = make([]fv.Boundary, ns)
	spec.Bottom = make([]fv.Boundary, ns)
	for k, si := range b.Species {
		if c := conds["axis"][si]; c != nil && c.Kind != Symmetry {
			return nil, fmt.Errorf("the axis of %s must have the condition symmetry for %s, not %s", b.Name, m.Species[si].Name, c.Kind)
		}
		for _, f := range []struct {
			name string
			dst  []fv.Boundary
		}{{"side", spec.Side}, {"top", spec.Top}, {"bottom", spec.Bottom}} {
			c := conds[f.name][si]
			if c == nil {
				return nil, fmt.Errorf("the %s of %s has no condition for %s", f.name, b.Name, m.Species[si].Name)
			}
			if c.Kind == Symmetry || c.Kind == Bath || c.Kind == Contact {
				return nil, fmt.Errorf("the %s of the short cylinder %s cannot have the condition %s", f.name, b.Name, c.Kind)
			}
			bc, err := lowerBC(c, tmp)
			if err != nil {
				return nil, err
			}
			f.dst[k] = bc
		}
	}
	low.Stops = append(low.Stops, tmp.Stops...)
	spec.Init = func(k int, r, z float64) float64 {
		e := b.Regions[0].Balances[b.Species[k]].Initial
		if e == nil {
			return 0
		}
		env := Env{R: r, Z: z}
		return e.Eval(&env)
	}
	if set.Cells > 0 {
		cells := float64(set.Cells)
		spec.NR = cellsAlong(cells * b.Outer / b.Length)
		spec.NZ = cellsAlong(cells * b.Length / b.Outer)
	}
	sort.Float64s(low.Stops)
	low.Spec = spec
	return low, nil
}

// cellsAlong returns √v rounded to an even number (so that halving NR
// and NZ gives a nested grid), at least 4 and at most 1<<20 (a grid that
// large is then refused by fv2.Build with a clear message).
func cellsAlong(v float64) int {
	n := 2 * math.Round(math.Sqrt(v)/2)
	if !(n < 1<<20) {
		return 1 << 20
	}
	return max(4, int(n))
}

// kinetics2D adapts the tapes of a short cylinder's nonlinear sources to
// fv2's callback: the axial position z is read as well as t and r. Like
// kineticsFunc, it is called from one goroutine at a time per
// discretisation.
func kinetics2D(lk *layerKinetics, ns int) func(t, r, z float64, c, rate, dRate []float64) {
	inner := kineticsFunc([]*layerKinetics{lk}, ns)
	return func(t, r, z float64, c, rate, dRate []float64) {
		lk.env.Z = z
		inner(t, r, 0, c, rate, dRate)
	}
}
