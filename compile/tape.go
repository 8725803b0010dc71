package compile

import "math"

// Tape is an expression flattened for fast repeated evaluation with
// forward-mode automatic differentiation: Eval returns the value and the
// exact partial derivatives with respect to the concentrations. A Tape
// owns scratch space, so one Tape must not be used by two goroutines at
// once; make one per goroutine with NewTape.
//
// Forward mode carries, beside each intermediate value v, its gradient
// ∂v/∂c; every operation applies the chain rule (A. Griewank and
// A. Walther, Evaluating Derivatives, 2nd ed., SIAM 2008, ch. 3).
type Tape struct {
	code []*Expr // postorder
	n    int     // number of concentrations
	val  []float64
	grad []float64 // len(code) × n, the gradient of each instruction's result
	slot []int     // result slot of each instruction's arguments
	args [][]int
}

// NewTape compiles e for nspecies concentrations.
func NewTape(e *Expr, nspecies int) *Tape {
	t := &Tape{n: nspecies}
	index := map[*Expr]int{}
	var walk func(x *Expr) int
	walk = func(x *Expr) int {
		var as []int
		for _, a := range x.args {
			as = append(as, walk(a))
		}
		t.code = append(t.code, x)
		t.args = append(t.args, as)
		index[x] = len(t.code) - 1
		return len(t.code) - 1
	}
	walk(e)
	t.val = make([]float64, len(t.code))
	t.grad = make([]float64, len(t.code)*nspecies)
	return t
}

// Eval evaluates the expression at env and writes ∂e/∂c_j into grad
// (length nspecies; may be nil when only the value is wanted).
func (t *Tape) Eval(env *Env, grad []float64) float64 {
	n := t.n
	for i, x := range t.code {
		g := t.grad[i*n : (i+1)*n]
		clear(g)
		a := t.args[i]
		ga := func(k int) []float64 { return t.grad[a[k]*n : (a[k]+1)*n] }
		va := func(k int) float64 { return t.val[a[k]] }
		var v float64
		switch x.op {
		case opConst:
			v = x.val
		case opTime:
			v = env.T
		case opPos:
			v = env.R
		case opAxial:
			v = env.Z
		case opConc:
			if x.idx < len(env.C) {
				v = env.C[x.idx]
			} else {
				v = math.NaN()
			}
			if x.idx < n {
				g[x.idx] = 1
			}
		case opNeg:
			v = -va(0)
			axpy(g, -1, ga(0))
		case opAdd:
			v = va(0) + va(1)
			axpy(g, 1, ga(0))
			axpy(g, 1, ga(1))
		case opSub:
			v = va(0) - va(1)
			axpy(g, 1, ga(0))
			axpy(g, -1, ga(1))
		case opMul:
			v = va(0) * va(1)
			axpy(g, va(1), ga(0))
			axpy(g, va(0), ga(1))
		case opDiv:
			v = va(0) / va(1)
			axpy(g, 1/va(1), ga(0))
			axpy(g, -va(0)/(va(1)*va(1)), ga(1))
		case opPow:
			v = t.pow(g, va(0), va(1), ga(0), ga(1))
		case opCond:
			if va(0) != 0 {
				v = va(1)
				axpy(g, 1, ga(1))
			} else {
				v = va(2)
				axpy(g, 1, ga(2))
			}
		case opCall:
			v = t.call(x.fn, a, g)
		default: // comparisons and logic: piecewise constant
			v = x.evalLogic(t.val, a)
		}
		t.val[i] = v
	}
	last := len(t.code) - 1
	if grad != nil {
		copy(grad, t.grad[last*n:(last+1)*n])
	}
	return t.val[last]
}

// axpy adds a·x to dst. Entries where x is zero are skipped, so that a
// partial derivative that is structurally zero stays zero when a is
// infinite (0·∞ would be NaN): √c at c = 0 has an infinite derivative
// with respect to c but none with respect to the other concentrations.
func axpy(dst []float64, a float64, x []float64) {
	if a == 0 {
		return
	}
	for i := range dst {
		if x[i] != 0 {
			dst[i] += a * x[i]
		}
	}
}

// pow differentiates x^y: y·x^(y−1)·dx + ln(x)·x^y·dy.
func (t *Tape) pow(g []float64, x, y float64, gx, gy []float64) float64 {
	v := math.Pow(x, y)
	if y == 0 {
		return v
	}
	axpy(g, y*math.Pow(x, y-1), gx)
	if x > 0 {
		nz := false
		for _, d := range gy {
			nz = nz || d != 0
		}
		if nz {
			axpy(g, math.Log(x)*v, gy)
		}
	}
	return v
}

func (t *Tape) call(fn string, a []int, g []float64) float64 {
	n := t.n
	x := t.val[a[0]]
	gx := t.grad[a[0]*n : (a[0]+1)*n]
	switch fn {
	case "exp":
		v := math.Exp(x)
		axpy(g, v, gx)
		return v
	case "log", "ln":
		axpy(g, 1/x, gx)
		return math.Log(x)
	case "log10":
		axpy(g, 1/(x*math.Ln10), gx)
		return math.Log10(x)
	case "sinh":
		axpy(g, math.Cosh(x), gx)
		return math.Sinh(x)
	case "cosh":
		axpy(g, math.Sinh(x), gx)
		return math.Cosh(x)
	case "tanh":
		v := math.Tanh(x)
		axpy(g, 1-v*v, gx)
		return v
	case "coth":
		v := 1 / math.Tanh(x)
		axpy(g, 1-v*v, gx)
		return v
	case "sqrt":
		v := math.Sqrt(x)
		if v > 0 {
			axpy(g, 0.5/v, gx)
		}
		return v
	case "abs":
		if x < 0 {
			axpy(g, -1, gx)
			return -x
		}
		axpy(g, 1, gx)
		return x
	case "pow":
		return t.pow(g, x, t.val[a[1]], gx, t.grad[a[1]*n:(a[1]+1)*n])
	case "min", "max":
		best := 0
		for k := 1; k < len(a); k++ {
			v := t.val[a[k]]
			if fn == "min" && v < t.val[a[best]] || fn == "max" && v > t.val[a[best]] {
				best = k
			}
		}
		axpy(g, 1, t.grad[a[best]*n:(a[best]+1)*n])
		return t.val[a[best]]
	}
	return math.NaN()
}

// evalLogic evaluates comparisons and logical operators from the values
// of the arguments.
func (e *Expr) evalLogic(val []float64, a []int) float64 {
	x := val[a[0]]
	switch e.op {
	case opNot:
		return b2f(x == 0)
	}
	y := val[a[1]]
	switch e.op {
	case opLT:
		return b2f(x < y)
	case opLE:
		return b2f(x <= y)
	case opGT:
		return b2f(x > y)
	case opGE:
		return b2f(x >= y)
	case opEQ:
		return b2f(x == y)
	case opNE:
		return b2f(x != y)
	case opAnd:
		return b2f(x != 0 && y != 0)
	case opOr:
		return b2f(x != 0 || y != 0)
	}
	return math.NaN()
}

// TimeStops returns the times at which e switches: the constants that
// time t is compared with. The integrator lands on them exactly.
func (e *Expr) TimeStops() []float64 {
	var out []float64
	e.walk(func(x *Expr) {
		switch x.op {
		case opLT, opLE, opGT, opGE, opEQ, opNE:
			a, b := x.args[0], x.args[1]
			if a.op == opTime && b.op == opConst {
				out = append(out, b.val)
			} else if b.op == opTime && a.op == opConst {
				out = append(out, a.val)
			}
		}
	})
	return out
}
