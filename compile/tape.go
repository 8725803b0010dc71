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
	args [][]int
	// dep tells whether an instruction depends on a concentration; the
	// gradient of one that does not stays zero and is never touched.
	dep []bool
}

// NewTape compiles e for nspecies concentrations.
func NewTape(e *Expr, nspecies int) *Tape {
	t := &Tape{n: nspecies}
	var walk func(x *Expr) int
	walk = func(x *Expr) int {
		var as []int
		dep := x.op == opConc
		for _, a := range x.args {
			k := walk(a)
			as = append(as, k)
			dep = dep || t.dep[k]
		}
		t.code = append(t.code, x)
		t.args = append(t.args, as)
		t.dep = append(t.dep, dep)
		return len(t.code) - 1
	}
	walk(e)
	t.val = make([]float64, len(t.code))
	t.grad = make([]float64, len(t.code)*nspecies)
	return t
}

// partials are the partial derivatives of one instruction's result with
// respect to n of its arguments: ∂v/∂arg[k[m]] = p[m].
type partials struct {
	k [3]int
	p [3]float64
	n int
}

func (q *partials) add(k int, p float64) {
	q.k[q.n], q.p[q.n] = k, p
	q.n++
}

// step computes the value of instruction i (its arguments already done)
// and its local partial derivatives. Every derivative rule lives here;
// Eval and EvalDir only propagate them (forward mode).
func (t *Tape) step(i int, env *Env) (float64, partials) {
	x := t.code[i]
	a := t.args[i]
	var q partials
	switch x.op {
	case opConst:
		return x.val, q
	case opTime:
		return env.T, q
	case opPos:
		return env.R, q
	case opAxial:
		return env.Z, q
	case opConc:
		if x.idx < len(env.C) {
			return env.C[x.idx], q
		}
		return math.NaN(), q
	case opNeg:
		q.add(0, -1)
		return -t.val[a[0]], q
	case opAdd:
		q.add(0, 1)
		q.add(1, 1)
		return t.val[a[0]] + t.val[a[1]], q
	case opSub:
		q.add(0, 1)
		q.add(1, -1)
		return t.val[a[0]] - t.val[a[1]], q
	case opMul:
		x0, x1 := t.val[a[0]], t.val[a[1]]
		q.add(0, x1)
		q.add(1, x0)
		return x0 * x1, q
	case opDiv:
		x0, x1 := t.val[a[0]], t.val[a[1]]
		q.add(0, 1/x1)
		q.add(1, -x0/(x1*x1))
		return x0 / x1, q
	case opPow:
		return powPartials(t.val[a[0]], t.val[a[1]], 0, 1, &q), q
	case opCond:
		if t.val[a[0]] != 0 {
			q.add(1, 1)
			return t.val[a[1]], q
		}
		q.add(2, 1)
		return t.val[a[2]], q
	case opCall:
		return t.callPartials(x.fn, a, &q), q
	}
	// Comparisons and logic: piecewise constant.
	return x.evalLogic(t.val, a), q
}

// powPartials returns x^y and records y·x^(y−1) and ln(x)·x^y (the latter
// only for x > 0) as the partials of arguments kx and ky.
func powPartials(x, y float64, kx, ky int, q *partials) float64 {
	v := math.Pow(x, y)
	if y == 0 {
		return v
	}
	q.add(kx, y*math.Pow(x, y-1))
	if x > 0 {
		q.add(ky, math.Log(x)*v)
	}
	return v
}

func (t *Tape) callPartials(fn string, a []int, q *partials) float64 {
	x := t.val[a[0]]
	switch fn {
	case "exp":
		v := math.Exp(x)
		q.add(0, v)
		return v
	case "log", "ln":
		q.add(0, 1/x)
		return math.Log(x)
	case "log10":
		q.add(0, 1/(x*math.Ln10))
		return math.Log10(x)
	case "sinh":
		q.add(0, math.Cosh(x))
		return math.Sinh(x)
	case "cosh":
		q.add(0, math.Sinh(x))
		return math.Cosh(x)
	case "tanh":
		v := math.Tanh(x)
		q.add(0, 1-v*v)
		return v
	case "coth":
		v := 1 / math.Tanh(x)
		q.add(0, 1-v*v)
		return v
	case "sqrt":
		v := math.Sqrt(x)
		if v > 0 {
			q.add(0, 0.5/v)
		}
		return v
	case "abs":
		if x < 0 {
			q.add(0, -1)
			return -x
		}
		q.add(0, 1)
		return x
	case "pow":
		return powPartials(x, t.val[a[1]], 0, 1, q)
	case "min", "max":
		best := 0
		for k := 1; k < len(a); k++ {
			v := t.val[a[k]]
			if fn == "min" && v < t.val[a[best]] || fn == "max" && v > t.val[a[best]] {
				best = k
			}
		}
		q.add(best, 1)
		return t.val[a[best]]
	}
	return math.NaN()
}

// Eval evaluates the expression at env and writes ∂e/∂c_j into grad
// (length nspecies; may be nil when only the value is wanted, which skips
// the derivatives). It does not allocate.
func (t *Tape) Eval(env *Env, grad []float64) float64 {
	n := t.n
	want := grad != nil
	for i, x := range t.code {
		v, q := t.step(i, env)
		t.val[i] = v
		if !want || !t.dep[i] {
			continue
		}
		g := t.grad[i*n : (i+1)*n]
		clear(g)
		if x.op == opConc {
			if x.idx < n {
				g[x.idx] = 1
			}
			continue
		}
		a := t.args[i]
		for m := 0; m < q.n; m++ {
			if j := a[q.k[m]]; t.dep[j] {
				axpy(g, q.p[m], t.grad[j*n:(j+1)*n])
			}
		}
	}
	last := len(t.code) - 1
	if grad != nil {
		copy(grad, t.grad[last*n:(last+1)*n])
	}
	return t.val[last]
}

// Univariate compiles e, as a function of the position r and the
// concentration x of species j alone, into a Go function that returns the
// value and the derivative with respect to x: forward-mode automatic
// differentiation with dual numbers (value, derivative), the expression
// tree turned into nested closures. Time and the other concentrations read
// as zero. The
// result holds no scratch space, so it is safe for concurrent use and does
// not allocate; it is much faster than a Tape, which carries a gradient
// vector through an interpreter. The derivative rules are those of Eval
// (tested against it), including 0·∞ = 0 for a partial that is
// structurally zero.
func (e *Expr) Univariate(j int) func(r, x float64) (v, dv float64) {
	return e.dual(j)
}

// dmul returns p·d, zero when d is (so that an infinite partial of a
// constant argument does not give NaN).
func dmul(p, d float64) float64 {
	if d == 0 || p == 0 {
		return 0
	}
	return p * d
}

func (e *Expr) dual(j int) func(float64, float64) (float64, float64) {
	var as []func(float64, float64) (float64, float64)
	for _, a := range e.args {
		as = append(as, a.dual(j))
	}
	switch e.op {
	case opConst:
		v := e.val
		return func(float64, float64) (float64, float64) { return v, 0 }
	case opPos:
		return func(r, _ float64) (float64, float64) { return r, 0 }
	case opTime, opAxial:
		return func(float64, float64) (float64, float64) { return 0, 0 }
	case opConc:
		if e.idx == j {
			return func(r, x float64) (float64, float64) { return x, 1 }
		}
		return func(float64, float64) (float64, float64) { return 0, 0 }
	case opNeg:
		a := as[0]
		return func(r, x float64) (float64, float64) { v, d := a(r, x); return -v, -d }
	case opAdd:
		a, b := as[0], as[1]
		return func(r, x float64) (float64, float64) {
			v0, d0 := a(r, x)
			v1, d1 := b(r, x)
			return v0 + v1, d0 + d1
		}
	case opSub:
		a, b := as[0], as[1]
		return func(r, x float64) (float64, float64) {
			v0, d0 := a(r, x)
			v1, d1 := b(r, x)
			return v0 - v1, d0 - d1
		}
	case opMul:
		a, b := as[0], as[1]
		return func(r, x float64) (float64, float64) {
			v0, d0 := a(r, x)
			v1, d1 := b(r, x)
			return v0 * v1, dmul(v1, d0) + dmul(v0, d1)
		}
	case opDiv:
		a, b := as[0], as[1]
		return func(r, x float64) (float64, float64) {
			v0, d0 := a(r, x)
			v1, d1 := b(r, x)
			return v0 / v1, dmul(1/v1, d0) + dmul(-v0/(v1*v1), d1)
		}
	case opPow:
		a, b := as[0], as[1]
		return func(r, x float64) (float64, float64) {
			v0, d0 := a(r, x)
			v1, d1 := b(r, x)
			return dualPow(v0, d0, v1, d1)
		}
	case opCond:
		c, a, b := as[0], as[1], as[2]
		return func(r, x float64) (float64, float64) {
			if v, _ := c(r, x); v != 0 {
				return a(r, x)
			}
			return b(r, x)
		}
	case opCall:
		return dualCall(e.fn, as)
	}
	// Comparisons and logic: piecewise constant.
	return func(r, x float64) (float64, float64) {
		var val [2]float64
		for k, a := range as {
			val[k], _ = a(r, x)
		}
		return e.evalLogic(val[:], logicSlots), 0
	}
}

// logicSlots are the argument slots of a comparison evaluated by dual.
var logicSlots = []int{0, 1}

// dualPow is x^y with the rules of powPartials.
func dualPow(x, dx, y, dy float64) (float64, float64) {
	v := math.Pow(x, y)
	if y == 0 {
		return v, 0
	}
	d := dmul(y*math.Pow(x, y-1), dx)
	if x > 0 {
		d += dmul(math.Log(x)*v, dy)
	}
	return v, d
}

func dualCall(fn string, as []func(float64, float64) (float64, float64)) func(float64, float64) (float64, float64) {
	a := as[0]
	unary := func(f func(x float64) (v, p float64)) func(float64, float64) (float64, float64) {
		return func(r, x float64) (float64, float64) {
			u, du := a(r, x)
			v, p := f(u)
			return v, dmul(p, du)
		}
	}
	switch fn {
	case "exp":
		return unary(func(x float64) (float64, float64) { v := math.Exp(x); return v, v })
	case "log", "ln":
		return unary(func(x float64) (float64, float64) { return math.Log(x), 1 / x })
	case "log10":
		return unary(func(x float64) (float64, float64) { return math.Log10(x), 1 / (x * math.Ln10) })
	case "sinh":
		return unary(func(x float64) (float64, float64) { return math.Sinh(x), math.Cosh(x) })
	case "cosh":
		return unary(func(x float64) (float64, float64) { return math.Cosh(x), math.Sinh(x) })
	case "tanh":
		return unary(func(x float64) (float64, float64) { v := math.Tanh(x); return v, 1 - v*v })
	case "coth":
		return unary(func(x float64) (float64, float64) { v := 1 / math.Tanh(x); return v, 1 - v*v })
	case "sqrt":
		return unary(func(x float64) (float64, float64) {
			v := math.Sqrt(x)
			if v > 0 {
				return v, 0.5 / v
			}
			return v, 0
		})
	case "abs":
		return unary(func(x float64) (float64, float64) {
			if x < 0 {
				return -x, -1
			}
			return x, 1
		})
	case "pow":
		b := as[1]
		return func(r, x float64) (float64, float64) {
			v0, d0 := a(r, x)
			v1, d1 := b(r, x)
			return dualPow(v0, d0, v1, d1)
		}
	case "min", "max":
		isMin := fn == "min"
		return func(r, x float64) (float64, float64) {
			bv, bd := a(r, x)
			for _, f := range as[1:] {
				v, d := f(r, x)
				if isMin && v < bv || !isMin && v > bv {
					bv, bd = v, d
				}
			}
			return bv, bd
		}
	}
	return func(float64, float64) (float64, float64) { return math.NaN(), 0 }
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

// axpy adds a·x to dst. Entries where x is zero are skipped, so that a
// partial derivative that is structurally zero stays zero when a is
// infinite (0·∞ would be NaN): √c at c = 0 has an infinite derivative
// with respect to c but none with respect to the other concentrations.
func axpy(dst []float64, a float64, x []float64) {
	if a == 0 {
		return
	}
	for i, xi := range x {
		if xi != 0 {
			dst[i] += a * xi
		}
	}
}
