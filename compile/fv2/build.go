package fv2

import (
	"fmt"
	"math"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

// DefaultCells is the total number of cells of a short cylinder whose
// Spec leaves NR and NZ at 0 (about 40 × 40 when L = R).
const DefaultCells = 1600

// DefaultCluster is the default clustering strength (Spec.Cluster), the
// same as package fv's.
const DefaultCluster = fv.DefaultCluster

// MinCells is the fewest cells Build chooses in a direction, and
// MaxAutoCells the most.
const (
	MinCells     = 4
	MaxAutoCells = 400
)

// Discretization is the method-of-lines system of a Spec. The unknowns
// are the cell averages of the concentrations, z-major with the species
// interleaved: index ((j·NR) + i)·NSpecies + s for the cell in column i
// (r) and row j (z). Its methods are safe for concurrent use (given
// Boundary.Value, Init, ExtraSource and Kinetics functions that are); the
// functions of one Problem are not.
type Discretization struct {
	// Grid is the cell layout.
	Grid Grid2D

	ns, nr, nz, nc, n int
	bw                int // lower = upper bandwidth

	dif, cap, invCap []float64 // per species
	src              []float64 // per species
	rate             []float64 // ns×ns, row-major; nil if none

	// Interior faces: the cells (column or row indices, clamped into the
	// body where the weight is zero) and the weights of the difference
	// form G = Σ_{m≠1} w_m (c_m − c_1), c_1 the cell just below the face.
	// r faces carry the amount per unit height and time crossing the face
	// outward, −2π r_f D ∂c/∂r; z faces the flux density upward, −D ∂c/∂z.
	rIdx, zIdx [][4]int  // per face
	rW, zW     []float64 // per face×species: 4 weights (entry 1 unused)
	invVr      []float64 // per column: 1/(π(r₂² − r₁²))
	invDz      []float64 // per row: 1/Δz
	sideF      float64   // 2πR/(π(R² − r_{NR−1}²)): side flux → rate per volume
	axis       closure   // of the axis r = 0 (value from the two nearest columns)
	side       []bnd     // per species
	top        []bnd     // per species
	bottom     []bnd     // per species
	sideA      []float64 // per row: side area 2πR Δz
	totalArea  float64   // 2πRL + 2πR²
	gr, gwr    []float64 // per column: 3 Gauss nodes in r, normalised weights (with r)
	gz, gwz    []float64 // per row: 3 Gauss nodes in z, normalised weights
	midFirst   int       // rows used to interpolate to z = L/2 …
	midW       []float64 // … and their weights
	jac        []float64 // band of the linear part
	extra      func(species int, t, r, z float64) float64
	kin        func(t, r, z float64, c, rate, dRate []float64)
	y0         []float64
}

// bnd is the closure of one exterior face family (side, top or bottom)
// for one species. For Fixed and Film the inward flux density through a
// segment is J = e·(σ K c_ext + a1 c1 + a2 c2), c1 and c2 the averages of
// the two nearest cells along the normal, e = D for Fixed and
// H·D/(H + D σ) for a film (the film and the fitted quadratic solved
// together); for Flux J is the imposed value.
type bnd struct {
	kind  fv.BoundaryKind
	value func(float64) float64
	d, h  float64
	kp    float64
	cl    closure
	e     float64
}

// ext returns the outside value (or imposed flux) at time t.
func (b *bnd) ext(t float64) float64 {
	if b.value == nil {
		return 0
	}
	return b.value(t)
}

// drive returns J0 and the coefficients with J = J0 + k1 c1 + k2 c2 at
// time t.
func (b *bnd) drive(t float64) (j0, k1, k2 float64) {
	switch b.kind {
	case fv.Fixed, fv.Film:
		return b.e * b.cl.sigma * b.kp * b.ext(t), b.e * b.cl.a1, b.e * b.cl.a2
	}
	return b.ext(t), 0, 0
}

// slopes returns k1, k2 of J = J0 + k1 c1 + k2 c2 (zero for Flux).
func (b *bnd) slopes() (k1, k2 float64) {
	if b.kind == fv.Fixed || b.kind == fv.Film {
		return b.e * b.cl.a1, b.e * b.cl.a2
	}
	return 0, 0
}

// flux returns the inward flux density through a segment whose two
// nearest cells hold c1, c2.
func (b *bnd) flux(t, c1, c2 float64) float64 {
	j0, k1, k2 := b.drive(t)
	return j0 + k1*c1 + k2*c2
}

// surface returns the value just inside a segment whose two nearest
// cells hold c1, c2, reconstructed consistently with the condition.
func (b *bnd) surface(t, c1, c2 float64) float64 {
	switch b.kind {
	case fv.Fixed:
		return b.kp * b.ext(t)
	case fv.Film:
		return b.kp*b.ext(t) - b.flux(t, c1, c2)/b.h
	}
	g := b.flux(t, c1, c2) / b.d
	return b.cl.b1*c1 + b.cl.b2*c2 + b.cl.b3*g
}

func makeBnd(bc *fv.Boundary, D float64, cl closure) bnd {
	b := bnd{kind: bc.Kind, value: bc.Value, d: D, h: bc.H, kp: bc.Partition, cl: cl, e: D}
	if b.kp == 0 {
		b.kp = 1
	}
	if b.kind == fv.Film {
		b.e = b.h * D / (b.h + D*cl.sigma)
	}
	return b
}

// cellCounts returns NR and NZ for a Spec (see Spec.NR).
func cellCounts(s *Spec) (nr, nz int) {
	nr, nz = s.NR, s.NZ
	auto := func(v float64) int {
		if !(v < MaxAutoCells) {
			return MaxAutoCells
		}
		return max(MinCells, 2*int(math.Round(v/2)))
	}
	switch {
	case nr == 0 && nz == 0:
		nr = auto(math.Sqrt(DefaultCells * s.Radius / s.Length))
		nz = auto(math.Sqrt(DefaultCells * s.Length / s.Radius))
	case nr == 0:
		nr = auto(float64(nz) * s.Radius / s.Length)
	case nz == 0:
		nz = auto(float64(nr) * s.Length / s.Radius)
	}
	return nr, nz
}

// Build discretises spec. It returns an error, and never panics, on a
// Spec that is incomplete or out of range.
//
// Grid: in r the cells cluster toward the side r = R when some species
// has a condition there other than a sealed face; in z toward the bottom
// and the top under the same rule; the map is that of package fv (see
// Spec.Cluster), so refining keeps it.
func Build(spec *Spec) (*Discretization, error) {
	if err := spec.validate(); err != nil {
		return nil, err
	}
	ns := spec.NSpecies
	nr, nz := cellCounts(spec)
	nc := nr * nz
	if nc > maxUnknowns/ns {
		return nil, fmt.Errorf("fv2: too many unknowns (%d cells × %d species)", nc, ns)
	}
	zreach := 2
	if nz < 3 {
		zreach = 1
	}
	bw := max(zreach*nr*ns, 2*ns)
	if float64(nc*ns)*float64(2*bw+1) > maxBand {
		return nil, fmt.Errorf("fv2: the banded Jacobian of %d × %d cells and %d species is too large; use fewer cells", nr, nz, ns)
	}
	ratio := spec.Cluster
	if ratio == 0 {
		ratio = DefaultCluster
	}
	R, L := spec.Radius, spec.Length
	rf := axisFaces(0, R, nr, false, anyActive(spec.Side), ratio)
	zf := axisFaces(0, L, nz, anyActive(spec.Bottom), anyActive(spec.Top), ratio)
	for i := 1; i <= nr; i++ {
		if !(rf[i] > rf[i-1]) {
			return nil, fmt.Errorf("fv2: cells too thin to resolve near r = %g (reduce NR or Cluster)", rf[i])
		}
	}
	for j := 1; j <= nz; j++ {
		if !(zf[j] > zf[j-1]) {
			return nil, fmt.Errorf("fv2: cells too thin to resolve near z = %g (reduce NZ or Cluster)", zf[j])
		}
	}
	g := Grid2D{NR: nr, NZ: nz, RFaces: rf, ZFaces: zf,
		RCentres: make([]float64, nr), ZCentres: make([]float64, nz),
		Annuli: make([]float64, nr), Heights: make([]float64, nz), Volumes: make([]float64, nc)}
	d := &Discretization{ns: ns, nr: nr, nz: nz, nc: nc, n: nc * ns, bw: bw,
		dif: spec.D, cap: make([]float64, ns), invCap: make([]float64, ns), src: make([]float64, ns),
		invVr: make([]float64, nr), invDz: make([]float64, nz), sideA: make([]float64, nz),
		gr: make([]float64, 3*nr), gwr: make([]float64, 3*nr), gz: make([]float64, 3*nz), gwz: make([]float64, 3*nz),
		extra: spec.ExtraSource, kin: spec.Kinetics}
	for i := range nr {
		a, b := rf[i], rf[i+1]
		g.Annuli[i] = math.Pi * (b - a) * (b + a)
		g.RCentres[i] = cellAverage(true, a, b, func(r float64) float64 { return r })
		d.invVr[i] = 1 / g.Annuli[i]
		mid, half := 0.5*(a+b), 0.5*(b-a)
		den := 0.0
		for q, gq := range gauss3 {
			x := mid + half*gq[0]
			d.gr[3*i+q] = x
			d.gwr[3*i+q] = gq[1] * x
			den += d.gwr[3*i+q]
		}
		for q := range 3 {
			d.gwr[3*i+q] /= den
		}
	}
	for j := range nz {
		a, b := zf[j], zf[j+1]
		g.Heights[j] = b - a
		g.ZCentres[j] = 0.5 * (a + b)
		d.invDz[j] = 1 / g.Heights[j]
		d.sideA[j] = 2 * math.Pi * R * g.Heights[j]
		mid, half := 0.5*(a+b), 0.5*(b-a)
		for q, gq := range gauss3 {
			d.gz[3*j+q] = mid + half*gq[0]
			d.gwz[3*j+q] = gq[1] / 2
		}
	}
	for j := range nz {
		for i := range nr {
			g.Volumes[j*nr+i] = g.Annuli[i] * g.Heights[j]
		}
	}
	for k, v := range g.Volumes {
		if !(v > 0) || math.IsInf(v, 0) || math.IsInf(d.invVr[k%nr], 0) || math.IsInf(d.invDz[k/nr], 0) {
			return nil, fmt.Errorf("fv2: cell (%d, %d) has no representable volume: the body is too small or too large", k%nr, k/nr)
		}
	}
	d.totalArea = 2*math.Pi*R*L + 2*math.Pi*R*R
	d.sideF = 2 * math.Pi * R * d.invVr[nr-1]
	if math.IsInf(d.totalArea, 0) || math.IsInf(d.sideF, 0) {
		return nil, fmt.Errorf("fv2: the body is too large to represent")
	}
	d.Grid = g
	for s := range ns {
		d.cap[s] = 1
		if spec.Capacity != nil {
			d.cap[s] = spec.Capacity[s]
		}
		d.invCap[s] = 1 / d.cap[s]
		if spec.Source != nil {
			d.src[s] = spec.Source[s]
		}
	}
	if spec.Rate != nil {
		d.rate = make([]float64, ns*ns)
		for i, row := range spec.Rate {
			copy(d.rate[i*ns:], row)
		}
	}
	// Interior faces.
	d.rIdx, d.rW = faceStencils(true, rf, spec.D, func(f int) float64 { return -2 * math.Pi * rf[f] })
	d.zIdx, d.zW = faceStencils(false, zf, spec.D, func(int) float64 { return -1 })
	// Exterior faces.
	d.axis = makeClosure(true, 0, rf[1], rf[2])
	clSide := makeClosure(true, R, rf[nr-1], rf[nr-2])
	clTop := makeClosure(false, L, zf[nz-1], zf[nz-2])
	clBottom := makeClosure(false, 0, zf[1], zf[2])
	d.side, d.top, d.bottom = make([]bnd, ns), make([]bnd, ns), make([]bnd, ns)
	for s := range ns {
		d.side[s] = makeBnd(&spec.Side[s], spec.D[s], clSide)
		d.top[s] = makeBnd(&spec.Top[s], spec.D[s], clTop)
		d.bottom[s] = makeBnd(&spec.Bottom[s], spec.D[s], clBottom)
	}
	first, m := stencilAt(zf, L/2)
	d.midFirst, d.midW = first, pointWeights(zf, first, m, L/2)
	// Initial state: cell averages of Init (3×3 Gauss, weight r).
	d.y0 = make([]float64, d.n)
	if spec.Init != nil {
		for j := range nz {
			for i := range nr {
				for s := range ns {
					v := 0.0
					for p := range 3 {
						for q := range 3 {
							v += d.gwz[3*j+p] * d.gwr[3*i+q] * spec.Init(s, d.gr[3*i+q], d.gz[3*j+p])
						}
					}
					if !finite(v) {
						return nil, fmt.Errorf("fv2: Init gives a non-finite value for species %d near (r, z) = (%g, %g)", s, g.RCentres[i], g.ZCentres[j])
					}
					d.y0[(j*nr+i)*ns+s] = v
				}
			}
		}
	}
	d.jac = d.staticJacobian()
	return d, nil
}

// faceStencils returns, for each interior face f = 1..n−1 of one
// direction, the four cells f−2..f+1 (clamped to f−1 where missing) and,
// per species, the weights scale(f)·D_s·ω of the face gradient.
func faceStencils(cyl bool, faces []float64, D []float64, scale func(f int) float64) ([][4]int, []float64) {
	n := len(faces) - 1
	ns := len(D)
	idx := make([][4]int, n+1)
	w := make([]float64, 4*(n+1)*ns)
	for f := 1; f < n; f++ {
		om := faceGradient(cyl, faces, f)
		for m := range 4 {
			c := f - 2 + m
			if c < 0 || c >= n || om[m] == 0 {
				c = f - 1
				om[m] = 0
			}
			idx[f][m] = c
		}
		for s := range ns {
			ws := w[4*(f*ns+s):]
			for m := range 4 {
				ws[m] = scale(f) * D[s] * om[m]
			}
			ws[1] = -(ws[0] + ws[2] + ws[3])
		}
	}
	return idx, w
}

// staticJacobian assembles the band of the linear part of the system:
// diffusion, exterior faces and linear kinetics, with respect to the
// concentrations.
func (d *Discretization) staticJacobian() []float64 {
	J := solvers.NewBand(d.n, d.bw, d.bw)
	ns, nr, nz := d.ns, d.nr, d.nz
	row := nr * ns
	// r faces, in every row.
	for j := range nz {
		for f := 1; f < nr; f++ {
			for s := range ns {
				w := d.rW[4*(f*ns+s):]
				L, R := j*row+(f-1)*ns+s, j*row+f*ns+s
				for m := range 4 {
					if w[m] == 0 {
						continue
					}
					k := j*row + d.rIdx[f][m]*ns + s
					J.Add(L, k, -w[m]*d.invVr[f-1]*d.invCap[s])
					J.Add(R, k, w[m]*d.invVr[f]*d.invCap[s])
				}
			}
		}
	}
	// z faces, in every column.
	for f := 1; f < nz; f++ {
		for i := range nr {
			for s := range ns {
				w := d.zW[4*(f*ns+s):]
				L, R := (f-1)*row+i*ns+s, f*row+i*ns+s
				for m := range 4 {
					if w[m] == 0 {
						continue
					}
					k := d.zIdx[f][m]*row + i*ns + s
					J.Add(L, k, -w[m]*d.invDz[f-1]*d.invCap[s])
					J.Add(R, k, w[m]*d.invDz[f]*d.invCap[s])
				}
			}
		}
	}
	// Exterior faces.
	for s := range ns {
		k1, k2 := d.side[s].slopes()
		if k1 != 0 || k2 != 0 {
			f := d.sideF * d.invCap[s]
			for j := range nz {
				c1, c2 := j*row+(nr-1)*ns+s, j*row+(nr-2)*ns+s
				J.Add(c1, c1, f*k1)
				J.Add(c1, c2, f*k2)
			}
		}
		k1, k2 = d.top[s].slopes()
		if k1 != 0 || k2 != 0 {
			f := d.invDz[nz-1] * d.invCap[s]
			for i := range nr {
				c1, c2 := (nz-1)*row+i*ns+s, (nz-2)*row+i*ns+s
				J.Add(c1, c1, f*k1)
				J.Add(c1, c2, f*k2)
			}
		}
		k1, k2 = d.bottom[s].slopes()
		if k1 != 0 || k2 != 0 {
			f := d.invDz[0] * d.invCap[s]
			for i := range nr {
				c1, c2 := i*ns+s, row+i*ns+s
				J.Add(c1, c1, f*k1)
				J.Add(c1, c2, f*k2)
			}
		}
	}
	// Linear kinetics.
	if d.rate != nil {
		for c := range d.nc {
			for s := range ns {
				for l := range ns {
					if v := d.rate[s*ns+l]; v != 0 {
						J.Add(c*ns+s, c*ns+l, v*d.invCap[s])
					}
				}
			}
		}
	}
	return J.Data
}
