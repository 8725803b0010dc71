package fv

import "math"

// Grid is the cell layout; it is read-only (the discretisation uses these
// slices). Volumes and areas are exact for the geometry:
// per unit face area for a slab (V = Δx, A = 1), per unit length for a
// cylinder (V = π(r₊² − r₋²), A = 2πr), per body for a sphere
// (V = 4π(r₊³ − r₋³)/3, A = 4πr²).
type Grid struct {
	// Faces are the cell faces from the inner to the outer face
	// (len = cells + 1).
	Faces []float64
	// Centres are the volume centroids of the cells, where the cell
	// averages are reported.
	Centres []float64
	// Volumes are the cell volumes.
	Volumes []float64
	// Areas are the face areas (len = cells + 1).
	Areas []float64
	// Layer is the layer index of each cell.
	Layer []int
}

// Cells returns the number of cells.
func (g *Grid) Cells() int { return len(g.Volumes) }

// area returns the face area at r.
func area(geo Geometry, r float64) float64 {
	switch geo {
	case Cylinder:
		return 2 * math.Pi * r
	case Sphere:
		return 4 * math.Pi * r * r
	}
	return 1
}

// volume returns the volume between a < b, in a form free of
// cancellation for thin shells.
func volume(geo Geometry, a, b float64) float64 {
	switch geo {
	case Cylinder:
		return math.Pi * (b - a) * (b + a)
	case Sphere:
		return 4 * math.Pi / 3 * (b - a) * (b*b + a*b + a*a)
	}
	return b - a
}

// gauss3 are the 3-point Gauss–Legendre nodes and weights on [−1, 1]
// (exact for polynomials of degree 5).
var gauss3 = [3][2]float64{
	{-0.7745966692414834, 5.0 / 9},
	{0, 8.0 / 9},
	{0.7745966692414834, 5.0 / 9},
}

// cellAverage returns the volume average over [a, b] of f, by 3-point
// Gauss quadrature with the geometric weight r^ν included in the
// integrand (exact when f is a polynomial of degree ≤ 5 − ν).
func cellAverage(geo Geometry, a, b float64, f func(r float64) float64) float64 {
	mid, half := 0.5*(a+b), 0.5*(b-a)
	num, den := 0.0, 0.0
	for _, g := range gauss3 {
		r := mid + half*g[0]
		w := g[1] * weight(geo, r)
		num += w * f(r)
		den += w
	}
	return num / den
}

// weight is r^ν.
func weight(geo Geometry, r float64) float64 {
	switch geo {
	case Cylinder:
		return r
	case Sphere:
		return r * r
	}
	return 1
}

// uniformShare is the fraction of a clustered layer's cells that are
// spread uniformly (the rest follow the geometric clustering).
const uniformShare = 0.15

// layerFaces returns n+1 faces on [a, b] whose cell density (cells per
// unit length) follows
//
//	ρ(x) ∝ lo/(x − a + z0) + hi/(b − x + z0) + w,   z0 = (b − a)/(ratio − 1),
//
// lo and hi being 1 for a clustered end and 0 otherwise. Near a clustered
// end the widths grow geometrically with the distance from it (what a
// boundary layer growing like √t needs at every depth); the constant w
// spreads uniformShare of the cells evenly so that the far side of the
// layer is not starved. Without w the widths at a single clustered end and
// at the other end would be in the ratio 1 : ratio. The map is fixed for a
// given layer, so refinement keeps it and the scheme's second order.
func layerFaces(a, b float64, n int, lo, hi bool, ratio float64) []float64 {
	f := make([]float64, n+1)
	L := b - a
	ends := 0.0
	if lo {
		ends++
	}
	if hi {
		ends++
	}
	if ratio <= 1 || ends == 0 {
		for i := range f {
			f[i] = a + L*float64(i)/float64(n)
		}
		f[0], f[n] = a, b
		return f
	}
	z0 := 1 / (ratio - 1) // in units of L
	g := math.Log(ratio)
	w := uniformShare / (1 - uniformShare) * ends * g
	F := func(x float64) (float64, float64) {
		v, dv := w*x, w
		if lo {
			v += math.Log((x + z0) / z0)
			dv += 1 / (x + z0)
		}
		if hi {
			v += math.Log((1 + z0) / (1 - x + z0))
			dv += 1 / (1 - x + z0)
		}
		return v, dv
	}
	total, _ := F(1)
	x := 0.0
	for i := 1; i < n; i++ {
		target := total * float64(i) / float64(n)
		// Safeguarded Newton from the previous face (F is increasing).
		lo, hi := x, 1.0
		for it := 0; it < 100; it++ {
			v, dv := F(x)
			if v < target {
				lo = x
			} else {
				hi = x
			}
			nx := x - (v-target)/dv
			if !(nx > lo && nx < hi) {
				nx = 0.5 * (lo + hi)
			}
			if math.Abs(nx-x) <= 1e-15 {
				x = nx
				break
			}
			x = nx
		}
		f[i] = a + L*x
	}
	f[0], f[n] = a, b
	return f
}

// ClusteredFaces returns n+1 faces on [a, b] clustered toward the ends
// marked lo and hi with the given ratio of widest to narrowest cell (1:
// uniform), by the map of layerFaces. Package fv2 uses it for each
// direction of a short cylinder, so both discretisations share one grid
// family.
func ClusteredFaces(a, b float64, n int, lo, hi bool, ratio float64) []float64 {
	return layerFaces(a, b, n, lo, hi, ratio)
}

// CellAverage returns the average of f over the cell [a, b] with the
// geometric weight r^ν of geo (three-point Gauss quadrature).
func CellAverage(geo Geometry, a, b float64, f func(r float64) float64) float64 {
	return cellAverage(geo, a, b, f)
}

// FaceGradient returns the weights on cells f−2 … f+1 of the second-order
// face gradient (see faceGradient); layer gives each cell's layer, and
// only cells of the face's layer are used.
func FaceGradient(geo Geometry, faces []float64, layer []int, f int) [4]float64 {
	return faceGradient(geo, faces, layer, f)
}
