package fv

import (
	"fmt"
	"math"
	"sync/atomic"

	"github.com/massline/massline/solvers"
)

// DefaultCells is the number of cells given to a body whose layers all
// leave Cells at 0 (see Build for how they are shared between layers).
const DefaultCells = 80

// DefaultCluster is the default clustering strength (Spec.Cluster).
const DefaultCluster = 50

// minAutoCells is the fewest cells an automatic layer receives.
const minAutoCells = 6

// Discretization is the method-of-lines system of a Spec. The unknowns are
// the cell averages, species interleaved (index = cell·NSpecies + species),
// followed by one bath value for each species with a Bath outer condition,
// in species order. The cell unknown is the concentration, except for a
// species with a nonlinear store (Layer.Store) in that cell's layer, where
// it is the amount held per unit volume, q (see the package
// documentation; CellValues returns the concentrations in every case). Its
// methods are safe for concurrent use (given store and diffusivity
// functions that are); the functions of one Problem are not.
type Discretization struct {
	// Grid is the cell layout.
	Grid Grid

	geo          Geometry
	ns, nc, n    int
	lower, upper int

	cap, capV []float64 // per cell unknown
	vol       []float64 // per cell
	fw        []float64 // per face×species: 4 flux weights on cells f−2..f+1
	src       []float64 // per cell unknown: constant source
	rates     [][]float64
	inner     []bnd
	outer     []bnd
	bathIdx   []int // per species, −1 without a bath
	jac       []float64
	gr, gw    []float64 // Gauss nodes and normalised weights, 3 per cell
	extra     func(species int, t, r float64) float64
	kin       func(t, r float64, layer int, c, rate, dRate []float64)
	y0        []float64

	// Nonlinear stores and concentration-dependent diffusivities (see
	// nonlinear.go).
	store     []StoreFunc    // per cell unknown; nil where the store is linear
	inv       []storeInverse // per cell unknown: for inverting the store
	hasStore  bool
	varD      bool           // some face has a variable diffusivity
	nonlinear bool           // store, variable D or Kinetics: QuadJac is provided
	fvar      []uint8        // per face×species: faceStatic, faceVar, faceContact
	fwg       []float64      // per face×species: 4 weights −A·ω of a variable same-layer face
	theta     []float64      // per face: weight of cell f−1 when interpolating to the face
	contact   []*contactFace // per face: the geometry of a contact between layers, or nil
	rowW      []float64      // per unknown: W in dy = (net inflow)/W
	layers    []layerData    // per layer, for EquilibriumContent and variable D
	evalErr   atomic.Pointer[error]
}

// Face kinds for the flux of one species.
const (
	faceStatic  uint8 = iota // weights in fw (constant diffusivity)
	faceVar                  // same layer, variable diffusivity
	faceContact              // contact between layers, a variable diffusivity on either side
)

// layerData is what the discretisation keeps of a layer.
type layerData struct {
	d         []float64
	df        []DiffusivityFunc
	store     []StoreFunc
	cap       []float64 // Capacity or representative slope (1 by default)
	partition []float64 // contact partition at the inner face, 1 by default
}

// contactFace is the geometry of a contact: the one-sided closures of the
// two layers and, per species, the partition and resistance.
type contactFace struct {
	left, right bnd
	kp, rc      []float64
}

// bnd is the precomputed closure of one face for one species.
//
// Near the face a quadratic p(z) = p0 − g z + k z² in the distance z from
// the face is fitted to the averages c1, c2 of the two nearest cells
// (averages taken with the geometric weight, so the fit is exact for
// quadratics in r and the face gradient g = ∂c/∂n, n the outward normal, is
// second-order accurate). With p0 given,
//
//	g = a1 (c1 − p0) + a2 (c2 − p0),
//
// and with g given, p0 = b1 c1 + b2 c2 + b3 g. The inward flux is J = D g.
type bnd struct {
	kind   BoundaryKind
	value  func(float64) float64
	d, h   float64 // diffusivity of the face layer, film coefficient
	kp     float64 // partition coefficient
	a1, a2 float64
	b1, b2 float64
	b3     float64
	sigma  float64 // −(a1 + a2) > 0
	e      float64 // J = e (σ K c_ext + a1 c1 + a2 c2) for Fixed, Film, Bath
	k1, k2 int     // indices of the nearest and next cell unknowns
	kb     int     // bath unknown, −1 if none
	area   float64
	vb     float64 // bath volume
	// With a variable diffusivity: the function, the face position and
	// the first unknown of the nearest cell (whose values D is taken at).
	df   DiffusivityFunc
	rb   float64
	base int
}

// variable reports whether the flux through the face depends on a
// variable diffusivity (Fixed, Film and Bath faces with a DiffusivityFunc).
func (b *bnd) variable() bool {
	return b.df != nil && (b.kind == Fixed || b.kind == Film || b.kind == Bath)
}

// eff returns the coefficient e of J = e·(σ K c_ext + a1 c1 + a2 c2) for
// the face diffusivity D: D, or H·D/(H + D·σ) through a film.
func (b *bnd) eff(D float64) float64 {
	if D == b.d {
		return b.e
	}
	if b.h > 0 && (b.kind == Film || b.kind == Bath) {
		return b.h * D / (b.h + D*b.sigma)
	}
	return D
}

// effSlope returns de/dD.
func (b *bnd) effSlope(D float64) float64 {
	if b.h > 0 && (b.kind == Film || b.kind == Bath) {
		q := b.h / (b.h + D*b.sigma)
		return q * q
	}
	return 1
}

// drive returns P with J = e·P for Fixed, Film and Bath faces.
func (b *bnd) drive(t float64, y []float64) float64 {
	if b.kind == Bath {
		return b.sigma*b.kp*y[b.kb] + b.a1*y[b.k1] + b.a2*y[b.k2]
	}
	c := 0.0
	if b.value != nil {
		c = b.value(t)
	}
	return b.sigma*b.kp*c + b.a1*y[b.k1] + b.a2*y[b.k2]
}

// flux returns the inward flux density J (mol/(m²·s)) through the face,
// y holding concentrations, with the diffusivity of the layer.
func (b *bnd) flux(t float64, y []float64) float64 { return b.fluxD(t, y, b.d) }

// fluxD returns the inward flux density with the face diffusivity D.
func (b *bnd) fluxD(t float64, y []float64, D float64) float64 {
	switch b.kind {
	case Flux:
		if b.value == nil {
			return 0
		}
		return b.value(t)
	case Fixed, Film:
		c := 0.0
		if b.value != nil {
			c = b.value(t)
		}
		return b.eff(D) * (b.sigma*b.kp*c + b.a1*y[b.k1] + b.a2*y[b.k2])
	case Bath:
		return b.eff(D) * (b.sigma*b.kp*y[b.kb] + b.a1*y[b.k1] + b.a2*y[b.k2])
	}
	return 0
}

// surface returns the value just inside the face, y holding
// concentrations, with the face diffusivity D.
func (b *bnd) surface(t float64, y []float64, D float64) float64 {
	switch b.kind {
	case Fixed:
		if b.value == nil {
			return 0
		}
		return b.kp * b.value(t)
	case Film:
		c := 0.0
		if b.value != nil {
			c = b.value(t)
		}
		return b.kp*c - b.fluxD(t, y, D)/b.h
	case Bath:
		if b.h > 0 {
			return b.kp*y[b.kb] - b.fluxD(t, y, D)/b.h
		}
		return b.kp * y[b.kb]
	}
	g := b.fluxD(t, y, D) / D
	return b.b1*y[b.k1] + b.b2*y[b.k2] + b.b3*g
}

// Build discretises spec. It returns an error, and never panics, on a
// Spec that is incomplete or out of range.
//
// Cells: a layer with Cells = 0 receives a share of DefaultCells in
// proportion to its thickness divided by √(D/Capacity) of its slowest
// species (so a thin coat of low diffusivity gets its share), and at least
// 6; with a Store or a Diffusivity function, D and Capacity are the
// representative values given in the Layer.
//
// A nonlinear store is checked at the starting values: Build returns an
// error if it is not finite or does not increase there.
//
// Clustering: a face is active if it is the body's outer face, an inner
// face with a condition other than Symmetry or an insulated Flux, or an
// interface between layers. In each layer the cells shrink smoothly toward
// its active faces: their widths grow geometrically with the distance from
// an active face, with a spread set by Spec.Cluster (default
// DefaultCluster), and 15 % of the cells are spread uniformly (see the
// package documentation).
func Build(spec *Spec) (*Discretization, error) {
	if err := spec.validate(); err != nil {
		return nil, err
	}
	ns := spec.NSpecies
	geo := spec.Geometry
	nl := len(spec.Layers)
	ratio := spec.Cluster
	if ratio == 0 {
		ratio = DefaultCluster
	}

	innerBC := spec.InnerBC
	if innerBC == nil {
		innerBC = make([]Boundary, ns)
		if spec.Inner > 0 {
			for i := range innerBC {
				innerBC[i].Kind = Flux
			}
		}
	}
	innerActive := false
	for i := range innerBC {
		if innerBC[i].active() {
			innerActive = true
		}
	}

	// Cells per layer.
	cells := make([]int, nl)
	weights := make([]float64, nl)
	wsum := 0.0
	prev := spec.Inner
	for l := range spec.Layers {
		ly := &spec.Layers[l]
		slow := math.Inf(1)
		for s := 0; s < ns; s++ {
			c := 1.0
			if ly.Capacity != nil {
				c = ly.Capacity[s]
			}
			slow = math.Min(slow, ly.D[s]/c)
		}
		weights[l] = (ly.Outer - prev) / math.Sqrt(slow)
		wsum += weights[l]
		prev = ly.Outer
	}
	total := 0
	for l := range spec.Layers {
		cells[l] = spec.Layers[l].Cells
		if cells[l] == 0 {
			cells[l] = max(minAutoCells, int(math.Round(DefaultCells*weights[l]/wsum)))
		}
		total += cells[l]
	}
	if total > 1<<24 {
		return nil, fmt.Errorf("fv: too many cells (%d)", total)
	}

	// Faces.
	g := Grid{}
	prev = spec.Inner
	for l := range spec.Layers {
		lo := (l == 0 && innerActive) || l > 0
		hi := true // the outer face of the body or an interface
		f := layerFaces(prev, spec.Layers[l].Outer, cells[l], lo, hi, ratio)
		if l == 0 {
			g.Faces = append(g.Faces, f...)
		} else {
			g.Faces = append(g.Faces, f[1:]...)
		}
		for range cells[l] {
			g.Layer = append(g.Layer, l)
		}
		prev = spec.Layers[l].Outer
	}
	nc := total
	for i := 1; i <= nc; i++ {
		if !(g.Faces[i] > g.Faces[i-1]) {
			return nil, fmt.Errorf("fv: cells too thin to resolve near %g (reduce Cells or Cluster)", g.Faces[i])
		}
	}
	for i := 0; i < nc; i++ {
		if v := volume(geo, g.Faces[i], g.Faces[i+1]); !(v > 0) || math.IsInf(v, 0) || math.IsInf(area(geo, g.Faces[i+1]), 0) {
			return nil, fmt.Errorf("fv: cell %d ([%g, %g]) has no representable volume: the body is too small or too large", i, g.Faces[i], g.Faces[i+1])
		}
	}
	g.Areas = make([]float64, nc+1)
	for i, r := range g.Faces {
		g.Areas[i] = area(geo, r)
	}
	g.Volumes = make([]float64, nc)
	g.Centres = make([]float64, nc)
	gr := make([]float64, 3*nc)
	gw := make([]float64, 3*nc)
	for i := 0; i < nc; i++ {
		a, b := g.Faces[i], g.Faces[i+1]
		g.Volumes[i] = volume(geo, a, b)
		g.Centres[i] = cellAverage(geo, a, b, func(r float64) float64 { return r })
		mid, half := 0.5*(a+b), 0.5*(b-a)
		den := 0.0
		for q, gq := range gauss3 {
			r := mid + half*gq[0]
			gr[3*i+q] = r
			gw[3*i+q] = gq[1] * weight(geo, r)
			den += gw[3*i+q]
		}
		for q := range 3 {
			gw[3*i+q] /= den
		}
	}

	d := &Discretization{
		Grid:  g,
		geo:   geo,
		ns:    ns,
		nc:    nc,
		cap:   make([]float64, nc*ns),
		capV:  make([]float64, nc*ns),
		vol:   g.Volumes,
		src:   make([]float64, nc*ns),
		rates: make([][]float64, nl),
		extra: spec.ExtraSource,
		kin:   spec.Kinetics,
		gr:    gr,
		gw:    gw,
	}
	for l := range spec.Layers {
		if r := spec.Layers[l].Rate; r != nil {
			flat := make([]float64, ns*ns)
			for i := range r {
				copy(flat[i*ns:], r[i])
			}
			d.rates[l] = flat
		}
	}
	d.layers = make([]layerData, nl)
	for l := range spec.Layers {
		ly := &spec.Layers[l]
		ld := layerData{d: ly.D, cap: make([]float64, ns), partition: make([]float64, ns)}
		if ly.Diffusivity != nil {
			ld.df = ly.Diffusivity
		} else {
			ld.df = make([]DiffusivityFunc, ns)
		}
		if ly.Store != nil {
			ld.store = ly.Store
		} else {
			ld.store = make([]StoreFunc, ns)
		}
		for s := 0; s < ns; s++ {
			ld.cap[s], ld.partition[s] = 1, 1
			if ly.Capacity != nil {
				ld.cap[s] = ly.Capacity[s]
			}
			if ly.Partition != nil && ly.Partition[s] != 0 {
				ld.partition[s] = ly.Partition[s]
			}
			if ld.store[s] != nil {
				d.hasStore = true
			}
		}
		d.layers[l] = ld
	}
	d.store = make([]StoreFunc, nc*ns)
	d.inv = make([]storeInverse, nc*ns)
	q0 := make([][]float64, nl) // q(0) of each store, NaN if not finite
	for l := range d.layers {
		q0[l] = make([]float64, ns)
		for s, st := range d.layers[l].store {
			if st != nil {
				q, _ := st(0)
				if !finite(q) {
					q = math.NaN()
				}
				q0[l][s] = q
			}
		}
	}
	for i := 0; i < nc; i++ {
		ly := &spec.Layers[g.Layer[i]]
		ld := &d.layers[g.Layer[i]]
		for s := 0; s < ns; s++ {
			k := i*ns + s
			c := ld.cap[s]
			if st := ld.store[s]; st != nil {
				// The unknown is the amount held per unit volume.
				d.store[k] = st
				d.inv[k] = storeInverse{f: st, q0: q0[g.Layer[i]][s], slope: c}
				c = 1
			}
			d.cap[k] = c
			d.capV[k] = c * g.Volumes[i]
			if ly.Source != nil {
				d.src[k] = ly.Source[s]
			}
		}
	}
	// Interior faces: G_f = Σ_j fw[4(f·ns+s)+j] · c_{f−2+j} is the amount
	// crossing face f (between cells f−1 and f) per unit time in +r, when
	// the diffusivities are constant; otherwise G_f is formed at each
	// evaluation (nonlinear.go) and fw stays zero.
	d.fw = make([]float64, 4*(nc+1)*ns)
	d.fvar = make([]uint8, (nc+1)*ns)
	d.contact = make([]*contactFace, nc+1)
	d.theta = make([]float64, nc+1)
	for f := 1; f < nc; f++ {
		L, R := g.Layer[f-1], g.Layer[f]
		rf := g.Faces[f]
		if L == R {
			om := faceGradient(geo, g.Faces, g.Layer, f)
			xl, xr := g.Centres[f-1], g.Centres[f]
			d.theta[f] = (xr - rf) / (xr - xl)
			for s := 0; s < ns; s++ {
				w := d.fw[4*(f*ns+s):]
				if d.layers[L].df[s] != nil {
					d.fvar[f*ns+s] = faceVar
					d.varD = true
					if d.fwg == nil {
						d.fwg = make([]float64, 4*(nc+1)*ns)
					}
					w = d.fwg[4*(f*ns+s):]
					for j := range 4 {
						w[j] = -g.Areas[f] * om[j]
					}
					continue
				}
				D := spec.Layers[L].D[s]
				for j := range 4 {
					w[j] = -g.Areas[f] * D * om[j]
				}
			}
			continue
		}
		// Contact between layers: one-sided quadratic closures on both
		// sides joined by continuity of flux and the contact condition.
		left := makeBnd(geo, &Boundary{Kind: Fixed}, 1, rf, g.Faces[f-1], g.Faces[f-2], 0, 0, 0)
		right := makeBnd(geo, &Boundary{Kind: Fixed}, 1, rf, g.Faces[f+1], g.Faces[f+2], 0, 0, 0)
		cf := &contactFace{left: left, right: right, kp: make([]float64, ns), rc: make([]float64, ns)}
		d.contact[f] = cf
		for s := 0; s < ns; s++ {
			DL, DR := spec.Layers[L].D[s], spec.Layers[R].D[s]
			kp, rc := 1.0, 0.0
			if p := spec.Layers[R].Partition; p != nil && p[s] != 0 {
				kp = p[s]
			}
			if r := spec.Layers[R].Resistance; r != nil {
				rc = r[s]
			}
			cf.kp[s], cf.rc[s] = kp, rc
			if d.layers[L].df[s] != nil || d.layers[R].df[s] != nil {
				d.fvar[f*ns+s] = faceContact
				d.varD = true
				continue
			}
			den := 1/(DR*right.sigma) + kp/(DL*left.sigma) + rc
			c := g.Areas[f] / den
			w := d.fw[4*(f*ns+s):]
			w[0] = -c * kp * left.a2 / left.sigma
			w[1] = -c * kp * left.a1 / left.sigma
			w[2] = c * right.a1 / right.sigma
			w[3] = c * right.a2 / right.sigma
		}
	}
	// Unknowns and bath slots.
	d.n = nc * ns
	d.bathIdx = make([]int, ns)
	for s := 0; s < ns; s++ {
		d.bathIdx[s] = -1
		if spec.OuterBC[s].Kind == Bath {
			d.bathIdx[s] = d.n
			d.n++
		}
	}
	d.lower, d.upper = 2*ns, 2*ns
	// Boundaries.
	d.inner = make([]bnd, ns)
	d.outer = make([]bnd, ns)
	firstLayer, lastLayer := &spec.Layers[0], &spec.Layers[nl-1]
	for s := 0; s < ns; s++ {
		d.inner[s] = makeBnd(geo, &innerBC[s], firstLayer.D[s], g.Faces[0], g.Faces[1], g.Faces[2], s, ns+s, g.Areas[0])
		d.inner[s].kb = -1
		d.outer[s] = makeBnd(geo, &spec.OuterBC[s], lastLayer.D[s], g.Faces[nc], g.Faces[nc-1], g.Faces[nc-2],
			(nc-1)*ns+s, (nc-2)*ns+s, g.Areas[nc])
		d.outer[s].kb = d.bathIdx[s]
		d.inner[s].df, d.inner[s].rb, d.inner[s].base = d.layers[0].df[s], g.Faces[0], 0
		d.outer[s].df, d.outer[s].rb, d.outer[s].base = d.layers[nl-1].df[s], g.Faces[nc], (nc-1)*ns
		if d.inner[s].variable() || d.outer[s].variable() {
			d.varD = true
		}
	}
	d.rowW = make([]float64, d.n)
	copy(d.rowW, d.capV)
	for s := 0; s < ns; s++ {
		if k := d.bathIdx[s]; k >= 0 {
			d.rowW[k] = d.outer[s].vb
		}
	}
	d.nonlinear = d.hasStore || d.varD || d.kin != nil
	// Initial state: cell averages of the starting value, or of the
	// amount held where the store is nonlinear.
	d.y0 = make([]float64, d.n)
	if spec.Init != nil || d.hasStore {
		for i := 0; i < nc; i++ {
			for s := 0; s < ns; s++ {
				k := i*ns + s
				v := 0.0
				for q := range 3 {
					c := 0.0
					if spec.Init != nil {
						c = spec.Init(s, gr[3*i+q])
					}
					if st := d.store[k]; st != nil && finite(c) {
						sq, slope := st(c)
						if !finite(sq) || !(slope > 0) || math.IsInf(slope, 0) {
							return nil, fmt.Errorf("fv: layer %d, species %d: the store at the starting value c = %g is %g with slope %g; it must be finite and increase with c",
								g.Layer[i], s, c, sq, slope)
						}
						c = sq
					}
					v += gw[3*i+q] * c
				}
				if !finite(v) {
					return nil, fmt.Errorf("fv: Init gives a non-finite value for species %d near r = %g", s, g.Centres[i])
				}
				d.y0[k] = v
			}
		}
	}
	for s := 0; s < ns; s++ {
		if k := d.bathIdx[s]; k >= 0 {
			d.y0[k] = spec.OuterBC[s].BathStart
		}
	}
	d.jac = d.staticJacobian()
	return d, nil
}

// makeBnd precomputes the closure of a face at rb whose nearest cell spans
// rb..r1 (or r1..rb) and next cell r1..r2, with unknowns k1, k2.
func makeBnd(geo Geometry, bc *Boundary, D, rb, r1, r2 float64, k1, k2 int, area float64) bnd {
	lo1, hi1 := math.Min(rb, r1), math.Max(rb, r1)
	lo2, hi2 := math.Min(r1, r2), math.Max(r1, r2)
	z := func(p int) func(r float64) float64 {
		return func(r float64) float64 { return math.Pow(math.Abs(r-rb), float64(p)) }
	}
	m11 := cellAverage(geo, lo1, hi1, z(1))
	m21 := cellAverage(geo, lo1, hi1, z(2))
	m12 := cellAverage(geo, lo2, hi2, z(1))
	m22 := cellAverage(geo, lo2, hi2, z(2))
	det := m12*m21 - m11*m22
	b := bnd{
		kind:  bc.Kind,
		value: bc.Value,
		d:     D,
		h:     bc.H,
		kp:    bc.partition(),
		a1:    m22 / det,
		a2:    -m21 / det,
		k1:    k1,
		k2:    k2,
		area:  area,
		vb:    bc.BathVolume,
	}
	b.sigma = -(b.a1 + b.a2)
	d1, d2 := m12-m11, m22-m21
	b.b1 = 1 + m21/d2
	b.b2 = -m21 / d2
	b.b3 = m11 - m21*d1/d2
	b.e = D
	if bc.H > 0 && (bc.Kind == Film || bc.Kind == Bath) {
		b.e = bc.H * D / (bc.H + D*b.sigma)
	}
	return b
}

// staticJacobian assembles the band of the linear part of the system
// (diffusion, contacts, boundaries, baths, linear kinetics).
func (d *Discretization) staticJacobian() []float64 {
	J := solvers.NewBand(d.n, d.lower, d.upper)
	ns, nc := d.ns, d.nc
	for f := 1; f < nc; f++ {
		for s := 0; s < ns; s++ {
			L, R := (f-1)*ns+s, f*ns+s
			w := d.fw[4*(f*ns+s):]
			for j := range 4 {
				c := f - 2 + j
				if c < 0 || c >= nc || w[j] == 0 {
					continue
				}
				k := c*ns + s
				J.Add(L, k, -w[j]/d.capV[L])
				J.Add(R, k, w[j]/d.capV[R])
			}
		}
	}
	for s := 0; s < ns; s++ {
		for _, b := range []*bnd{&d.inner[s], &d.outer[s]} {
			if b.kind != Fixed && b.kind != Film && b.kind != Bath || b.variable() {
				continue
			}
			c := b.area * b.e / d.capV[b.k1]
			J.Add(b.k1, b.k1, c*b.a1)
			J.Add(b.k1, b.k2, c*b.a2)
			if b.kb >= 0 {
				J.Add(b.k1, b.kb, c*b.sigma*b.kp)
				cb := -b.area * b.e / b.vb
				J.Add(b.kb, b.k1, cb*b.a1)
				J.Add(b.kb, b.k2, cb*b.a2)
				J.Add(b.kb, b.kb, cb*b.sigma*b.kp)
			}
		}
	}
	for i := 0; i < nc; i++ {
		r := d.rates[d.Grid.Layer[i]]
		if r == nil {
			continue
		}
		for s := 0; s < ns; s++ {
			k := i*ns + s
			for j := 0; j < ns; j++ {
				if v := r[s*ns+j]; v != 0 {
					J.Add(k, i*ns+j, v/d.cap[k])
				}
			}
		}
	}
	return J.Data
}

// faceGradient returns weights ω on the cells f−2, f−1, f, f+1 such that
// Σ ω_j c_j approximates ∂c/∂r at face f from the cell averages: the mean
// of the derivatives at the face of the quadratics that reproduce the
// averages of cells (f−2, f−1, f) and (f−1, f, f+1), using only cells of
// the face's layer. Each quadratic is exact for quadratic profiles in every
// geometry and on every grid; on a uniform slab grid both reduce to the
// two-point difference. A layer of two cells falls back to the two-point
// difference between centroids (exact for linear profiles).
func faceGradient(geo Geometry, faces []float64, layer []int, f int) [4]float64 {
	nc := len(layer)
	same := func(c int) bool { return c >= 0 && c < nc && layer[c] == layer[f] }
	rf := faces[f]
	mom := func(c int) (float64, float64) {
		a, b := faces[c], faces[c+1]
		m1 := cellAverage(geo, a, b, func(r float64) float64 { return r - rf })
		m2 := cellAverage(geo, a, b, func(r float64) float64 { return (r - rf) * (r - rf) })
		return m1, m2
	}
	var om [4]float64
	fits := 0
	for _, first := range []int{f - 2, f - 1} {
		if !same(first) || !same(first+2) {
			continue
		}
		// Solve c_j = p0 + g m1_j + k m2_j for g by Cramer's rule.
		var m1, m2 [3]float64
		for j := range 3 {
			m1[j], m2[j] = mom(first + j)
		}
		// Direct elimination: differences remove p0.
		d1, e1 := m1[1]-m1[0], m2[1]-m2[0]
		d2, e2 := m1[2]-m1[0], m2[2]-m2[0]
		det := d1*e2 - d2*e1
		// g = ((c1−c0) e2 − (c2−c0) e1) / det
		w0 := (-e2 + e1) / det
		w1 := e2 / det
		w2 := -e1 / det
		base := first - (f - 2)
		om[base] += w0
		om[base+1] += w1
		om[base+2] += w2
		fits++
	}
	if fits == 0 {
		x0 := cellAverage(geo, faces[f-1], faces[f], func(r float64) float64 { return r })
		x1 := cellAverage(geo, faces[f], faces[f+1], func(r float64) float64 { return r })
		om[1], om[2] = -1/(x1-x0), 1/(x1-x0)
		return om
	}
	for j := range om {
		om[j] /= float64(fits)
	}
	return om
}
