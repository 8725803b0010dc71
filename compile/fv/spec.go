package fv

import (
	"fmt"
	"math"
)

// Geometry is the shape of the body.
type Geometry int

// The one-dimensional geometries. Slab amounts are per unit face area,
// cylinder amounts per unit length, sphere amounts per body.
const (
	// Slab is a plane sheet; the coordinate x runs from Spec.Inner (the
	// mid-plane when the inner boundary is Symmetry) to the outer face.
	Slab Geometry = iota
	// Cylinder is an infinite cylinder or, with Spec.Inner > 0, a tube.
	Cylinder
	// Sphere is a sphere or, with Spec.Inner > 0, a hollow sphere.
	Sphere
)

// String names the geometry.
func (g Geometry) String() string {
	switch g {
	case Slab:
		return "slab"
	case Cylinder:
		return "cylinder"
	case Sphere:
		return "sphere"
	}
	return fmt.Sprintf("Geometry(%d)", int(g))
}

// BoundaryKind says what is imposed at a face of the body.
type BoundaryKind int

// Boundary kinds.
const (
	// Symmetry is zero flux at the centre (r = 0) or the mid-plane of a
	// slab. It is allowed only at the inner face.
	Symmetry BoundaryKind = iota
	// Fixed holds the value just inside the face at Partition × Value(t).
	Fixed
	// Film imposes the inward flux H·(Partition·Value(t) − c_surface).
	Film
	// Flux imposes the inward flux Value(t), in mol/(m²·s); a nil Value is
	// an insulated face.
	Flux
	// Bath couples the outer face to a well-stirred bath of limited volume
	// whose value is an unknown of the system. With H = 0 the face is in
	// equilibrium with the bath (c_surface = Partition·c_bath); with H > 0
	// a film lies between them. Allowed only at the outer face.
	Bath
)

// String names the boundary kind.
func (k BoundaryKind) String() string {
	switch k {
	case Symmetry:
		return "symmetry"
	case Fixed:
		return "fixed"
	case Film:
		return "film"
	case Flux:
		return "flux"
	case Bath:
		return "bath"
	}
	return fmt.Sprintf("BoundaryKind(%d)", int(k))
}

// Boundary is the condition on one species at one face. Concentrations are
// in mol/m³, fluxes in mol/(m²·s), positive into the body.
type Boundary struct {
	Kind BoundaryKind
	// Value gives, as a function of time, the outside value for Fixed and
	// Film (the value inside the body is Partition × Value) or the inward
	// flux for Flux. Nil means zero. Unused by Symmetry and Bath.
	Value func(t float64) float64
	// H is the film coefficient in m/s: required (> 0) for Film, optional
	// for Bath (0 means no film).
	H float64
	// Partition K is the ratio of the value just inside the body to the
	// outside (or bath) value at equilibrium. Zero means 1.
	Partition float64
	// BathVolume is the bath volume per body in m³ (per unit length for a
	// cylinder, per unit face area for a slab); required (> 0) for Bath.
	BathVolume float64
	// BathStart is the bath's value at the start, mol/m³.
	BathStart float64
}

// Layer is one shell of the body, from the previous layer's Outer (or
// Spec.Inner) to its own Outer. Slices indexed by species must have length
// Spec.NSpecies (or be nil where a default is stated).
//
// The balance of species i in a layer is
//
//	Capacity_i ∂c_i/∂t = r^−ν ∂/∂r(r^ν D_i ∂c_i/∂r) + Σ_j Rate[i][j] c_j + Source_i
//
// (plus Spec.Kinetics and Spec.ExtraSource), with ν = 0, 1, 2 for slab,
// cylinder, sphere, and c the concentration that diffuses (in the pore
// fluid, say) in mol/m³. Store replaces Capacity_i c_i by q_i(c_i) and
// Diffusivity replaces D_i by D_i(r, c).
type Layer struct {
	// Outer is the outer coordinate of the layer, m.
	Outer float64
	// Cells is the number of cells; 0 chooses automatically (see Build).
	// A layer needs at least 2 cells.
	Cells int
	// D is the diffusivity of each species, m²/s (> 0); for a species
	// with a Diffusivity function, a representative value (used only to
	// share cells between layers).
	D []float64
	// Capacity is the accumulation factor of each species (porosity plus
	// linear sorption, say); nil means 1 for every species.
	Capacity []float64
	// Rate is the linear kinetics matrix, 1/s: species i gains
	// Σ_j Rate[i][j]·c_j mol/(m³·s) per unit volume of body. Nil means none;
	// a first-order consumption of i at rate constant k is Rate[i][i] = −k.
	Rate [][]float64
	// Source is a constant production rate of each species, mol/(m³·s);
	// nil means none.
	Source []float64
	// Partition gives, for each species, the contact condition at the
	// inner face of this layer: at equilibrium the value on this (outer)
	// side is Partition × the value on the inner side. Nil or zero
	// entries mean 1. Must be unset on the first layer.
	Partition []float64
	// Resistance is the contact resistance at the inner face of this
	// layer, s/m: the flux across the contact is
	// (Partition·c_inner_side − c_outer_side)/Resistance. Nil or zero
	// means none. Must be unset on the first layer.
	Resistance []float64
	// Store, if not nil, gives for each species a nonlinear store: the
	// amount held per unit volume of body as a function of the
	// concentration that diffuses (porosity plus a sorption isotherm, say).
	// A nil entry keeps the linear store Capacity_i·c_i. With a Store the
	// balance is ∂q_i(c_i)/∂t = r^−ν ∂/∂r(r^ν D_i ∂c_i/∂r) + sources, and
	// the unknown of each cell is the amount held q (see the package
	// documentation); Capacity[i], if given, is then only a representative
	// slope used to share cells between layers and to start the inversion
	// c(q). The store must increase with c wherever it is evaluated.
	Store []StoreFunc
	// Diffusivity, if not nil, gives for each species a diffusivity that
	// depends on the position and the local concentrations; a nil entry
	// keeps the constant D[i]. D[i] must still be given (> 0): it is a
	// representative value used only to share cells between layers.
	Diffusivity []DiffusivityFunc
}

// StoreFunc is a nonlinear store: it returns the amount held per unit
// volume of body, q(c) in mol/m³, and its slope dq/dc (> 0), at the
// concentration c. It may be called concurrently when several Problems of
// one Discretization, or its methods, are used at once.
type StoreFunc func(c float64) (q, dqdc float64)

// DiffusivityFunc is a diffusivity that depends on the position r and the
// concentrations c of every species (one per species, in the layer, not to
// be modified). It returns D in m²/s (> 0) and, when dD is not nil, writes
// ∂D/∂c_j into dD[j] (dD arrives zeroed, with one entry per species). It
// must not retain its slices and may be called concurrently like a
// StoreFunc.
type DiffusivityFunc func(r float64, c, dD []float64) float64

// Spec describes a one-dimensional body, its species, conditions and
// starting state, for Build.
type Spec struct {
	Geometry Geometry
	// Inner is the inner coordinate: 0 for a solid cylinder or sphere (and
	// for a slab measured from its mid-plane), > 0 for hollow bodies.
	Inner float64
	// Layers lists the layers from the inside out; at least one.
	Layers []Layer
	// NSpecies is the number of species (≥ 1).
	NSpecies int
	// InnerBC and OuterBC give the condition of each species at the inner
	// and outer face (length NSpecies). A nil InnerBC means Symmetry for
	// every species when Inner = 0 (cylinder, sphere) and an insulated face
	// (Flux with nil Value) otherwise. For a solid cylinder or sphere the
	// inner condition must be Symmetry.
	InnerBC, OuterBC []Boundary
	// Init gives the starting value of a species at position r; each cell
	// starts at the cell average of Init (of the amount held q(Init) where
	// the store is nonlinear). Nil means zero everywhere.
	Init func(species int, r float64) float64
	// Cluster sets how strongly cells shrink toward faces with steep
	// gradients (see Build): without the uniform share of cells it would be
	// the ratio of the widest to the narrowest cell of a layer clustered at
	// one face. 0 means DefaultCluster; 1 means uniform cells.
	Cluster float64
	// ExtraSource, if not nil, adds a position- and time-dependent
	// production rate in mol/(m³·s), averaged over each cell by Gauss
	// quadrature. It serves manufactured-solution checks.
	ExtraSource func(species int, t, r float64) float64
	// Kinetics, if not nil, adds nonlinear local reactions. It receives the
	// time, the cell centre r, the layer index and the cell's values c (one
	// per species, not to be modified) and must add to rate[i] the
	// production rate of species i in mol/(m³·s) (rate may already hold
	// other terms); when dRate is not nil it must also add ∂rate_i/∂c_j to
	// dRate[i*NSpecies+j], which arrives zeroed. It must not retain its
	// slices. The rate is taken at the cell centre.
	Kinetics func(t, r float64, layer int, c, rate, dRate []float64)
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// validate checks a Spec and returns the first problem found.
func (s *Spec) validate() error {
	if s == nil {
		return fmt.Errorf("fv: nil Spec")
	}
	if s.Geometry != Slab && s.Geometry != Cylinder && s.Geometry != Sphere {
		return fmt.Errorf("fv: unknown geometry %d", int(s.Geometry))
	}
	if !finite(s.Inner) || s.Inner < 0 {
		return fmt.Errorf("fv: inner coordinate must be finite and ≥ 0, got %g", s.Inner)
	}
	ns := s.NSpecies
	if ns < 1 {
		return fmt.Errorf("fv: need at least one species, got %d", ns)
	}
	if len(s.Layers) == 0 {
		return fmt.Errorf("fv: need at least one layer")
	}
	if !finite(s.Cluster) || (s.Cluster != 0 && s.Cluster < 1) {
		return fmt.Errorf("fv: Cluster must be 0 (default) or ≥ 1, got %g", s.Cluster)
	}
	prev := s.Inner
	for l := range s.Layers {
		ly := &s.Layers[l]
		if !finite(ly.Outer) || !(ly.Outer > prev) {
			if l == 0 {
				return fmt.Errorf("fv: layer 0: outer coordinate %g must exceed the inner coordinate %g", ly.Outer, prev)
			}
			return fmt.Errorf("fv: layer %d: outer coordinate %g must exceed that of layer %d (%g)", l, ly.Outer, l-1, prev)
		}
		prev = ly.Outer
		if ly.Cells < 0 || ly.Cells == 1 {
			return fmt.Errorf("fv: layer %d: Cells must be 0 (automatic) or ≥ 2, got %d", l, ly.Cells)
		}
		if ly.Cells > 1<<24 {
			return fmt.Errorf("fv: layer %d: too many cells (%d)", l, ly.Cells)
		}
		if err := perSpecies(l, "D", ly.D, ns, true, func(v float64) bool { return v > 0 }); err != nil {
			return err
		}
		if err := perSpecies(l, "Capacity", ly.Capacity, ns, false, func(v float64) bool { return v > 0 }); err != nil {
			return err
		}
		if err := perSpecies(l, "Source", ly.Source, ns, false, func(float64) bool { return true }); err != nil {
			return err
		}
		if err := perSpecies(l, "Partition", ly.Partition, ns, false, func(v float64) bool { return v >= 0 }); err != nil {
			return err
		}
		if err := perSpecies(l, "Resistance", ly.Resistance, ns, false, func(v float64) bool { return v >= 0 }); err != nil {
			return err
		}
		if ly.Store != nil && len(ly.Store) != ns {
			return fmt.Errorf("fv: layer %d: Store must have one entry per species (%d), got %d", l, ns, len(ly.Store))
		}
		if ly.Diffusivity != nil && len(ly.Diffusivity) != ns {
			return fmt.Errorf("fv: layer %d: Diffusivity must have one entry per species (%d), got %d", l, ns, len(ly.Diffusivity))
		}
		if l == 0 && (ly.Partition != nil || ly.Resistance != nil) {
			return fmt.Errorf("fv: layer 0 has no inner neighbour: Partition and Resistance must be unset (use InnerBC)")
		}
		if ly.Rate != nil {
			if len(ly.Rate) != ns {
				return fmt.Errorf("fv: layer %d: Rate must have %d rows, got %d", l, ns, len(ly.Rate))
			}
			for i, row := range ly.Rate {
				if len(row) != ns {
					return fmt.Errorf("fv: layer %d: Rate row %d must have %d entries, got %d", l, i, ns, len(row))
				}
				for j, v := range row {
					if !finite(v) {
						return fmt.Errorf("fv: layer %d: Rate[%d][%d] is not finite", l, i, j)
					}
				}
			}
		}
	}
	if s.OuterBC == nil || len(s.OuterBC) != ns {
		return fmt.Errorf("fv: OuterBC must give one condition per species (%d), got %d", ns, len(s.OuterBC))
	}
	if s.InnerBC != nil && len(s.InnerBC) != ns {
		return fmt.Errorf("fv: InnerBC must be nil or give one condition per species (%d), got %d", ns, len(s.InnerBC))
	}
	solid := s.Inner == 0 && s.Geometry != Slab
	for sp := 0; sp < ns; sp++ {
		if s.InnerBC != nil {
			b := &s.InnerBC[sp]
			if solid && b.Kind != Symmetry {
				return fmt.Errorf("fv: species %d: the inner condition of a solid %v must be symmetry (nothing can cross r = 0), got %v", sp, s.Geometry, b.Kind)
			}
			if b.Kind == Bath {
				return fmt.Errorf("fv: species %d: a bath is allowed only at the outer face", sp)
			}
			if err := b.validate("inner", sp); err != nil {
				return err
			}
		}
		b := &s.OuterBC[sp]
		if b.Kind == Symmetry {
			return fmt.Errorf("fv: species %d: symmetry is allowed only at the inner face; use Flux with a nil Value for an insulated outer face", sp)
		}
		if err := b.validate("outer", sp); err != nil {
			return err
		}
	}
	return nil
}

func perSpecies(l int, name string, v []float64, ns int, required bool, ok func(float64) bool) error {
	if v == nil && !required {
		return nil
	}
	if len(v) != ns {
		return fmt.Errorf("fv: layer %d: %s must have one entry per species (%d), got %d", l, name, ns, len(v))
	}
	for i, x := range v {
		if !finite(x) || !ok(x) {
			return fmt.Errorf("fv: layer %d: %s[%d] = %g is not allowed", l, name, i, x)
		}
	}
	return nil
}

func (b *Boundary) validate(face string, sp int) error {
	if b.Kind < Symmetry || b.Kind > Bath {
		return fmt.Errorf("fv: species %d: unknown %s boundary kind %d", sp, face, int(b.Kind))
	}
	if !finite(b.Partition) || b.Partition < 0 {
		return fmt.Errorf("fv: species %d: %s partition coefficient must be finite and ≥ 0 (0 means 1), got %g", sp, face, b.Partition)
	}
	if !finite(b.H) || b.H < 0 {
		return fmt.Errorf("fv: species %d: %s film coefficient must be finite and ≥ 0, got %g", sp, face, b.H)
	}
	switch b.Kind {
	case Film:
		if b.H <= 0 {
			return fmt.Errorf("fv: species %d: %s film needs a film coefficient H > 0", sp, face)
		}
	case Bath:
		if !finite(b.BathVolume) || b.BathVolume <= 0 {
			return fmt.Errorf("fv: species %d: bath volume must be finite and > 0, got %g", sp, b.BathVolume)
		}
		if !finite(b.BathStart) {
			return fmt.Errorf("fv: species %d: bath starting value must be finite", sp)
		}
	}
	return nil
}

// partition returns K with the zero-means-one default.
func (b *Boundary) partition() float64 {
	if b.Partition == 0 {
		return 1
	}
	return b.Partition
}

// active reports whether the condition can drive steep gradients at its
// face (every kind but Symmetry and an insulated Flux face).
func (b *Boundary) active() bool {
	return !(b.Kind == Symmetry || (b.Kind == Flux && b.Value == nil))
}
