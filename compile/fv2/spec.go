package fv2

import (
	"fmt"
	"math"

	"github.com/massline/massline/compile/fv"
)

// Spec describes a short cylinder 0 ≤ r ≤ Radius, 0 ≤ z ≤ Length, its
// species, the conditions on its three exterior faces and its starting
// state, for Build. Slices indexed by species must have length NSpecies
// (or be nil where a default is stated).
//
// The balance of species i is
//
//	Capacity_i ∂c_i/∂t = D_i (1/r ∂/∂r(r ∂c_i/∂r) + ∂²c_i/∂z²) + Σ_j Rate[i][j] c_j + Source_i
//
// (plus Kinetics and ExtraSource), with ∂c_i/∂r = 0 on the axis r = 0.
type Spec struct {
	// Radius R and Length L of the cylinder, m (finite, > 0).
	Radius, Length float64
	// NR and NZ are the numbers of cells in r and in z (≥ 2 each). When
	// both are 0 Build shares DefaultCells between the two directions in
	// proportion to R and L (equal cell density in both, at least
	// MinCells and at most MaxAutoCells each way); when one of them is 0
	// it is chosen for the same density as the other. Automatic counts
	// are even, so that the grid with half the cells each way (the same
	// clustering map) is nested in it, as Richardson extrapolation wants.
	NR, NZ int
	// Cluster sets how strongly cells shrink toward the faces that carry
	// a condition (every one but an insulated face): as in package fv,
	// without the uniform share of cells it would be the ratio of the
	// widest to the narrowest cell in a direction clustered at one end.
	// 0 means DefaultCluster; 1 means uniform cells.
	Cluster float64
	// NSpecies is the number of species (≥ 1).
	NSpecies int
	// D is the diffusivity of each species, m²/s (finite, > 0).
	D []float64
	// Capacity is the accumulation factor of each species (porosity plus
	// linear sorption, say), finite and > 0; nil means 1.
	Capacity []float64
	// Rate is the linear kinetics matrix, 1/s: species i gains
	// Σ_j Rate[i][j]·c_j mol/(m³·s). Nil means none.
	Rate [][]float64
	// Source is a constant production rate of each species, mol/(m³·s);
	// nil means none.
	Source []float64
	// Side (r = R), Top (z = L) and Bottom (z = 0) give the condition of
	// each species on that face (length NSpecies each). Allowed kinds are
	// fv.Fixed, fv.Film and fv.Flux (a nil Value is a sealed face), with
	// the meanings of package fv; fv.Symmetry and fv.Bath are refused.
	// The axis r = 0 is always a symmetry line.
	Side, Top, Bottom []fv.Boundary
	// Init gives the starting value of a species at (r, z); each cell
	// starts at the cell average of Init (3×3-point Gauss quadrature with
	// the weight r). Nil means zero everywhere.
	Init func(species int, r, z float64) float64
	// ExtraSource, if not nil, adds a position- and time-dependent
	// production rate in mol/(m³·s), averaged over each cell by 3×3-point
	// Gauss quadrature. It serves manufactured-solution checks.
	ExtraSource func(species int, t, r, z float64) float64
	// Kinetics, if not nil, adds nonlinear local reactions, with the
	// calling convention of fv.Spec.Kinetics: it receives the time, the
	// cell centre (r, z) and the cell's values c (one per species, not to
	// be modified) and must add to rate[i] the production rate of species
	// i in mol/(m³·s); when dRate is not nil it must also add
	// ∂rate_i/∂c_j to dRate[i*NSpecies+j], which arrives zeroed. It must
	// not retain its slices. The rate is taken at the cell centre (the
	// volume centroid in r, the middle in z).
	Kinetics func(t, r, z float64, c, rate, dRate []float64)
}

// Limits on the size of a discretisation: unknowns and band storage.
const (
	maxUnknowns = 1 << 22
	maxBand     = 1 << 26
)

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// validate checks a Spec and returns the first problem found.
func (s *Spec) validate() error {
	if s == nil {
		return fmt.Errorf("fv2: nil Spec")
	}
	if !finite(s.Radius) || !(s.Radius > 0) {
		return fmt.Errorf("fv2: Radius must be finite and > 0, got %g", s.Radius)
	}
	if !finite(s.Length) || !(s.Length > 0) {
		return fmt.Errorf("fv2: Length must be finite and > 0, got %g", s.Length)
	}
	if s.NR < 0 || s.NR == 1 || s.NZ < 0 || s.NZ == 1 {
		return fmt.Errorf("fv2: NR and NZ must be 0 (automatic) or ≥ 2, got %d and %d", s.NR, s.NZ)
	}
	if s.NR > maxUnknowns || s.NZ > maxUnknowns {
		return fmt.Errorf("fv2: too many cells (%d × %d)", s.NR, s.NZ)
	}
	if !finite(s.Cluster) || (s.Cluster != 0 && s.Cluster < 1) {
		return fmt.Errorf("fv2: Cluster must be 0 (default) or ≥ 1, got %g", s.Cluster)
	}
	ns := s.NSpecies
	if ns < 1 {
		return fmt.Errorf("fv2: need at least one species, got %d", ns)
	}
	if ns > maxUnknowns {
		return fmt.Errorf("fv2: too many species (%d)", ns)
	}
	if err := perSpecies("D", s.D, ns, true, func(v float64) bool { return v > 0 }); err != nil {
		return err
	}
	if err := perSpecies("Capacity", s.Capacity, ns, false, func(v float64) bool { return v > 0 }); err != nil {
		return err
	}
	if err := perSpecies("Source", s.Source, ns, false, func(float64) bool { return true }); err != nil {
		return err
	}
	if s.Rate != nil {
		if len(s.Rate) != ns {
			return fmt.Errorf("fv2: Rate must have %d rows, got %d", ns, len(s.Rate))
		}
		for i, row := range s.Rate {
			if len(row) != ns {
				return fmt.Errorf("fv2: Rate row %d must have %d entries, got %d", i, ns, len(row))
			}
			for j, v := range row {
				if !finite(v) {
					return fmt.Errorf("fv2: Rate[%d][%d] is not finite", i, j)
				}
			}
		}
	}
	for _, f := range []struct {
		name string
		bc   []fv.Boundary
	}{{"Side", s.Side}, {"Top", s.Top}, {"Bottom", s.Bottom}} {
		if len(f.bc) != ns {
			return fmt.Errorf("fv2: %s must give one condition per species (%d), got %d", f.name, ns, len(f.bc))
		}
		for sp := range f.bc {
			if err := validateBoundary(&f.bc[sp], f.name, sp); err != nil {
				return err
			}
		}
	}
	return nil
}

func perSpecies(name string, v []float64, ns int, required bool, ok func(float64) bool) error {
	if v == nil && !required {
		return nil
	}
	if len(v) != ns {
		return fmt.Errorf("fv2: %s must have one entry per species (%d), got %d", name, ns, len(v))
	}
	for i, x := range v {
		if !finite(x) || !ok(x) {
			return fmt.Errorf("fv2: %s[%d] = %g is not allowed", name, i, x)
		}
	}
	return nil
}

func validateBoundary(b *fv.Boundary, face string, sp int) error {
	switch b.Kind {
	case fv.Fixed, fv.Film, fv.Flux:
	case fv.Symmetry:
		return fmt.Errorf("fv2: species %d: symmetry is not a condition of the %s face (only the axis is a symmetry line); use Flux with a nil Value for a sealed face", sp, face)
	case fv.Bath:
		return fmt.Errorf("fv2: species %d: a short cylinder cannot have a bath (%s face)", sp, face)
	default:
		return fmt.Errorf("fv2: species %d: unknown %s boundary kind %d", sp, face, int(b.Kind))
	}
	if !finite(b.Partition) || b.Partition < 0 {
		return fmt.Errorf("fv2: species %d: %s partition coefficient must be finite and ≥ 0 (0 means 1), got %g", sp, face, b.Partition)
	}
	if !finite(b.H) || b.H < 0 {
		return fmt.Errorf("fv2: species %d: %s film coefficient must be finite and ≥ 0, got %g", sp, face, b.H)
	}
	if b.Kind == fv.Film && b.H <= 0 {
		return fmt.Errorf("fv2: species %d: %s film needs a film coefficient H > 0", sp, face)
	}
	return nil
}

// active reports whether a condition can drive steep gradients at its face
// (all but an insulated Flux face).
func active(b *fv.Boundary) bool {
	return !(b.Kind == fv.Flux && b.Value == nil)
}

func anyActive(bc []fv.Boundary) bool {
	for i := range bc {
		if active(&bc[i]) {
			return true
		}
	}
	return false
}
