package compile

import (
	gocontext "context"
	"testing"

	"github.com/massline/massline/compile/fv"
	"github.com/massline/massline/solvers"
)

func BenchmarkZZP3(b *testing.B) {
	t := &testing.T{}
	low, err := lowerSource(t, langmuirModel, Settings{})
	if err != nil {
		b.Fatal(err)
	}
	d, _ := fv.Build(low.Spec)
	var it solvers.Integrator
	b.ResetTimer()
	for range b.N {
		r, err := it.Integrate(gocontext.Background(), d.Problem(), 0, d.Y0(), []float64{10, 100, 1000}, &solvers.Settings{RTol: 1e-5, ATol: 1e-8})
		if err != nil {
			b.Fatal(err)
		}
		_ = r
	}
}
