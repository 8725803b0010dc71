package compile

import (
	"math"
	"testing"
)

// Expression builders for the tests.
func tc(v float64) *Expr        { return Const(v) }
func tv(i int) *Expr            { return &Expr{op: opConc, idx: i} }
func tr() *Expr                 { return &Expr{op: opPos} }
func tb(o op, a, b *Expr) *Expr { return &Expr{op: o, args: []*Expr{a, b}} }
func tf(fn string, a ...*Expr) *Expr {
	return &Expr{op: opCall, fn: fn, args: a}
}

// TestTapeDerivatives compares the Tape's values with Expr.Eval and its
// gradients with central differences (source: forward-mode automatic
// differentiation, Griewank & Walther, Evaluating Derivatives, 2nd ed.,
// SIAM 2008, ch. 3; the check itself is common practice, no source).
func TestTapeDerivatives(t *testing.T) {
	c0, c1 := tv(0), tv(1)
	exprs := map[string]*Expr{
		"langmuir": tb(opAdd, tb(opMul, tc(0.4), c0), tb(opDiv, tb(opMul, tc(20), c0), tb(opAdd, tc(1), tb(opMul, tc(2), c0)))),
		"exp D":    tb(opMul, tc(1e-9), tf("exp", tb(opMul, tc(0.8), c0))),
		"pow both": tb(opPow, tb(opAdd, c0, tc(1)), tb(opMul, c1, tc(0.5))),
		"pow fn":   tf("pow", tb(opAdd, c1, tc(2)), c0),
		"logs":     tb(opAdd, tf("log", tb(opAdd, c0, tc(0.5))), tf("log10", tb(opMul, c1, tc(3)))),
		"sqrt abs": tb(opMul, tf("sqrt", tb(opAdd, c0, c1)), tf("abs", tb(opSub, c0, tc(2)))),
		"min max":  tb(opAdd, tf("min", c0, c1, tc(0.9)), tf("max", tb(opMul, c0, c1), tc(0.1))),
		"if":       &Expr{op: opCond, args: []*Expr{tb(opLT, c0, tc(0.6)), tb(opMul, c0, c1), tb(opDiv, c1, c0)}},
		"position": tb(opMul, tb(opAdd, tc(1), tb(opMul, tr(), tc(300))), tb(opAdd, tc(1), tb(opMul, c0, c0))),
		"negation": &Expr{op: opNeg, args: []*Expr{tb(opSub, c1, tb(opMul, c0, c0))}},
	}
	points := [][]float64{{0.3, 0.7}, {0.8, 0.2}, {1.7, 2.5}}
	for name, e := range exprs {
		tape := NewTape(e, 2)
		for _, p := range points {
			env := Env{R: 1e-3, C: append([]float64(nil), p...)}
			g := make([]float64, 2)
			v := tape.Eval(&env, g)
			if w := e.Eval(&env); v != w {
				t.Errorf("%s at %v: Tape %.17g, Eval %.17g", name, p, v, w)
			}
			for j := range p {
				h := 1e-6 * math.Max(1, math.Abs(p[j]))
				env.C[j] = p[j] + h
				fp := e.Eval(&env)
				env.C[j] = p[j] - h
				fm := e.Eval(&env)
				env.C[j] = p[j]
				fd := (fp - fm) / (2 * h)
				if math.Abs(fd-g[j]) > 1e-7*math.Max(1, math.Abs(fd)) {
					t.Errorf("%s at %v: ∂/∂c%d = %.12g, finite difference %.12g", name, p, j, g[j], fd)
				}
			}
		}
	}
}

// TestTapeZeroPartials: an infinite partial derivative (√c at c = 0) does
// not turn the structurally zero partials into NaN.
func TestTapeZeroPartials(t *testing.T) {
	e := tb(opMul, tf("pow", tv(0), tc(0.5)), tv(1)) // c0^0.5 · c1
	tape := NewTape(e, 2)
	g := make([]float64, 2)
	v := tape.Eval(&Env{C: []float64{0, 3}}, g)
	if v != 0 || g[1] != 0 || !math.IsInf(g[0], 1) {
		t.Errorf("value %g, gradient %v; want 0 and [+Inf 0]", v, g)
	}
}

// TestTapeNoAllocations: Eval does not allocate.
func TestTapeNoAllocations(t *testing.T) {
	e := tb(opAdd, tb(opMul, tc(0.4), tv(0)), tb(opDiv, tb(opMul, tc(20), tv(0)), tb(opAdd, tc(1), tb(opMul, tc(2), tv(0)))))
	tape := NewTape(e, 1)
	env := Env{C: []float64{0.5}}
	g := make([]float64, 1)
	if a := testing.AllocsPerRun(100, func() { tape.Eval(&env, g) }); a != 0 {
		t.Errorf("Eval allocates %v times", a)
	}
}
