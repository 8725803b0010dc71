package fv2

import (
	"math"

	"github.com/massline/massline/compile/fv"
)

// Grid2D is the cell layout; it is read-only (the discretisation uses
// these slices). Cell (i, j) spans RFaces[i]..RFaces[i+1] in r and
// ZFaces[j]..ZFaces[j+1] in z; cells are numbered z-major, k = j·NR + i.
type Grid2D struct {
	// NR and NZ are the numbers of cells in r and z.
	NR, NZ int
	// RFaces (NR+1 values, from 0 to R) and ZFaces (NZ+1 values, from 0
	// to L) are the cell faces.
	RFaces, ZFaces []float64
	// RCentres are the volume centroids in r of the annular columns,
	// ∫r² dr / ∫r dr over each; ZCentres the middles of the rows.
	RCentres, ZCentres []float64
	// Annuli are the areas π(r₂² − r₁²) of the columns' cross-sections
	// (the areas of the faces between rows); Heights the row heights Δz.
	Annuli, Heights []float64
	// Volumes are the cell volumes π(r₂² − r₁²)·Δz, indexed j·NR + i.
	Volumes []float64
}

// Cells returns the number of cells, NR·NZ.
func (g *Grid2D) Cells() int { return g.NR * g.NZ }

// gauss3 are the 3-point Gauss–Legendre nodes and weights on [−1, 1]
// (exact for polynomials of degree 5).
var gauss3 = [3][2]float64{
	{-0.7745966692414834, 5.0 / 9},
	{0, 8.0 / 9},
	{0.7745966692414834, 5.0 / 9},
}

// cellAverage returns the average over [a, b] of f with the weight r
// (cyl) or 1, by 3-point Gauss quadrature (exact for polynomials of
// degree ≤ 4 in the cylinder, ≤ 5 in the slab).
func cellAverage(cyl bool, a, b float64, f func(x float64) float64) float64 {
	return fv.CellAverage(geometry(cyl), a, b, f)
}

// geometry is the fv geometry whose weight a direction uses: r in the
// radial direction, 1 along the axis.
func geometry(cyl bool) fv.Geometry {
	if cyl {
		return fv.Cylinder
	}
	return fv.Slab
}

// axisFaces returns n+1 faces on [a, b] clustered toward the ends marked
// lo and hi: the grid map of package fv (fv.ClusteredFaces), so that a
// direction of the short cylinder with one clustered end has exactly the
// faces of an fv layer with the same cells and Cluster.
func axisFaces(a, b float64, n int, lo, hi bool, ratio float64) []float64 {
	return fv.ClusteredFaces(a, b, n, lo, hi, ratio)
}

// faceGradient returns weights ω on the cells f−2, f−1, f, f+1 (of n
// cells between the given faces) such that Σ ω_j c_j approximates the
// derivative at face f from the cell averages: the mean of the derivatives
// at the face of the quadratics that reproduce the averages (weight r in
// the cylinder) of cells (f−2, f−1, f) and (f−1, f, f+1), where they
// exist. Each quadratic is exact for quadratic profiles on every grid; on
// a uniform slab grid both reduce to the two-point difference. With two
// cells only, the two-point difference between centroids. This is the
// flux stencil of package fv, in one direction.
func faceGradient(cyl bool, faces []float64, f int) [4]float64 {
	return fv.FaceGradient(geometry(cyl), faces, make([]int, len(faces)-1), f)
}

// closure holds the geometric coefficients of a boundary face of one
// direction: near the face a quadratic p(x) = p0 − g x + k x² in the
// distance x from the face is fitted to the averages c1, c2 of the two
// nearest cells (weight r in the cylinder), so that with p0 given the
// outward derivative g = ∂c/∂n is
//
//	g = a1 (c1 − p0) + a2 (c2 − p0),
//
// and with g given p0 = b1 c1 + b2 c2 + b3 g (as in package fv).
type closure struct {
	a1, a2, b1, b2, b3, sigma float64
}

// makeClosure returns the closure of the face at xb whose nearest cell
// spans xb..x1 (or x1..xb) and next cell x1..x2.
func makeClosure(cyl bool, xb, x1, x2 float64) closure {
	lo1, hi1 := math.Min(xb, x1), math.Max(xb, x1)
	lo2, hi2 := math.Min(x1, x2), math.Max(x1, x2)
	z := func(p int) func(r float64) float64 {
		return func(r float64) float64 { return math.Pow(math.Abs(r-xb), float64(p)) }
	}
	m11 := cellAverage(cyl, lo1, hi1, z(1))
	m21 := cellAverage(cyl, lo1, hi1, z(2))
	m12 := cellAverage(cyl, lo2, hi2, z(1))
	m22 := cellAverage(cyl, lo2, hi2, z(2))
	det := m12*m21 - m11*m22
	c := closure{a1: m22 / det, a2: -m21 / det}
	c.sigma = -(c.a1 + c.a2)
	d1, d2 := m12-m11, m22-m21
	c.b1 = 1 + m21/d2
	c.b2 = -m21 / d2
	c.b3 = m11 - m21*d1/d2
	return c
}

// pointWeights returns weights w on the cells first..first+len(w)−1 of a
// slab-weighted direction such that Σ w_m c_m is the value at x of the
// polynomial of degree len(w)−1 that reproduces the averages c_m of those
// cells (exact for such polynomials). At most 4 cells.
func pointWeights(faces []float64, first, m int, x float64) []float64 {
	// Moments M[c][p] = average over cell c of ((z − x)/h)^p.
	h := faces[first+m] - faces[first]
	var M [4][4]float64
	for c := range m {
		a, b := (faces[first+c]-x)/h, (faces[first+c+1]-x)/h
		for p := range m {
			q := float64(p + 1)
			M[c][p] = (math.Pow(b, q) - math.Pow(a, q)) / (q * (b - a))
		}
	}
	// Solve Mᵀ w = e0 by Gaussian elimination with partial pivoting.
	var A [4][5]float64
	for p := range m {
		for c := range m {
			A[p][c] = M[c][p]
		}
	}
	A[0][m] = 1
	for col := range m {
		piv := col
		for r := col + 1; r < m; r++ {
			if math.Abs(A[r][col]) > math.Abs(A[piv][col]) {
				piv = r
			}
		}
		A[col], A[piv] = A[piv], A[col]
		for r := col + 1; r < m; r++ {
			f := A[r][col] / A[col][col]
			for c := col; c <= m; c++ {
				A[r][c] -= f * A[col][c]
			}
		}
	}
	w := make([]float64, m)
	for r := m - 1; r >= 0; r-- {
		s := A[r][m]
		for c := r + 1; c < m; c++ {
			s -= A[r][c] * w[c]
		}
		w[r] = s / A[r][r]
	}
	return w
}

// stencilAt chooses the cells whose averages give the value at x, for
// pointWeights: the four cells around x when x lies on a face (a cubic,
// symmetric about the face), otherwise the cell holding x and its two
// neighbours, shifted inside the range.
func stencilAt(faces []float64, x float64) (first, m int) {
	n := len(faces) - 1
	span := faces[n] - faces[0]
	// The face nearest to x.
	f := 0
	for i := range faces {
		if math.Abs(faces[i]-x) < math.Abs(faces[f]-x) {
			f = i
		}
	}
	if math.Abs(faces[f]-x) <= 1e-9*span && f > 0 && f < n {
		m = min(4, n)
		first = f - m/2
	} else {
		m = min(3, n)
		c := 0
		for c < n-1 && faces[c+1] <= x {
			c++
		}
		first = c - m/2
	}
	first = max(0, min(first, n-m))
	return first, m
}
