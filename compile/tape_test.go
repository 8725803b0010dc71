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
	u := e.Univariate(0)
	if a := testing.AllocsPerRun(100, func() { tape.Eval(&env, g); u(0, 0.5) }); a != 0 {
		t.Errorf("Eval and Univariate allocate %v times", a)
	}
}

// TestUnivariateMatchesTape: Univariate gives Eval's value and partial
// derivative for expressions of one concentration, every operation and
// function included.
func TestUnivariateMatchesTape(t *testing.T) {
	c := tv(0)
	exprs := map[string]*Expr{
		"langmuir": tb(opAdd, tb(opMul, tc(0.4), c), tb(opDiv, tb(opMul, tc(20), c), tb(opAdd, tc(1), tb(opMul, tc(2), c)))),
		"pow":      tb(opAdd, tb(opPow, c, tc(0.45)), tf("pow", tc(1.5), c)),
		"pow var":  tb(opPow, tb(opAdd, c, tc(1)), c),
		"funcs": tb(opAdd, tb(opAdd, tf("exp", c), tf("log", tb(opAdd, c, tc(1)))),
			tb(opAdd, tf("log10", tb(opAdd, c, tc(2))), tf("ln", tb(opAdd, c, tc(3))))),
		"hyperbolic": tb(opAdd, tb(opAdd, tf("sinh", c), tf("cosh", c)), tb(opAdd, tf("tanh", c), tf("coth", tb(opAdd, c, tc(1))))),
		"sqrt abs":   tb(opMul, tf("sqrt", c), tf("abs", tb(opSub, c, tc(0.9)))),
		"min max":    tb(opAdd, tf("min", c, tc(0.7), tb(opMul, c, c)), tf("max", tc(0.2), tb(opDiv, tc(1), c))),
		"if":         &Expr{op: opCond, args: []*Expr{tb(opLE, c, tc(0.6)), tb(opMul, c, c), &Expr{op: opNeg, args: []*Expr{c}}}},
		"logic":      tb(opMul, &Expr{op: opNot, args: []*Expr{tb(opAnd, tb(opGT, c, tc(0.3)), tb(opNE, c, tc(1)))}}, c),
		"time and r": tb(opAdd, c, tb(opMul, tr(), tb(opAdd, &Expr{op: opTime}, tc(1)))),
	}
	for name, e := range exprs {
		tape := NewTape(e, 1)
		u := e.Univariate(0)
		for _, x := range []float64{0, 0.1, 0.5, 0.6, 1.3, 2.5} {
			g := make([]float64, 1)
			v := tape.Eval(&Env{R: 2e-3, C: []float64{x}}, g)
			uv, ud := u(2e-3, x)
			same := func(a, b float64) bool {
				return a == b || math.IsNaN(a) && math.IsNaN(b) || math.Abs(a-b) <= 1e-15*math.Abs(b)
			}
			if !same(uv, v) || !same(ud, g[0]) {
				t.Errorf("%s at %g: Univariate %.17g, %.17g; Tape %.17g, %.17g", name, x, uv, ud, v, g[0])
			}
		}
	}
}
