package solvers

// Band is an N×N band matrix with KL sub-diagonals and KU super-diagonals,
// stored by diagonals: element (i, j) with -KL <= j-i <= KU lives at
// Data[i*(KL+KU+1) + (j-i+KL)].
type Band struct {
	N, KL, KU int
	Data      []float64
}

// NewBand returns a zeroed N×N band matrix with the given bandwidths.
func NewBand(n, kl, ku int) *Band {
	return &Band{N: n, KL: kl, KU: ku, Data: make([]float64, n*(kl+ku+1))}
}

// At returns element (i, j); zero outside the band.
func (b *Band) At(i, j int) float64 {
	d := j - i
	if d < -b.KL || d > b.KU {
		return 0
	}
	return b.Data[i*(b.KL+b.KU+1)+d+b.KL]
}

// Set sets element (i, j), which must lie inside the band.
func (b *Band) Set(i, j int, v float64) {
	b.Data[b.index(i, j)] = v
}

// Add adds v to element (i, j), which must lie inside the band.
func (b *Band) Add(i, j int, v float64) {
	b.Data[b.index(i, j)] += v
}

// Zero sets every element to zero.
func (b *Band) Zero() {
	clear(b.Data)
}

func (b *Band) index(i, j int) int {
	d := j - i
	if i < 0 || i >= b.N || j < 0 || j >= b.N || d < -b.KL || d > b.KU {
		panic("solvers: band index out of range")
	}
	return i*(b.KL+b.KU+1) + d + b.KL
}
