package compile

import (
	"fmt"
	"math"
)

// Env is what a model expression may read when it is evaluated: the time,
// the position in the body and the local concentrations of the species
// (indexed like Model.Species, in mol/m^3).
type Env struct {
	T float64   // time, s
	R float64   // radial (or through-thickness) coordinate, m
	Z float64   // axial coordinate of a short cylinder, m
	C []float64 // concentrations, mol/m^3
}

// op is the operation of an expression node.
type op uint8

const (
	opConst op = iota
	opTime
	opPos
	opAxial
	opConc
	opNeg
	opAdd
	opSub
	opMul
	opDiv
	opPow
	opCall
	opCond
	opLT
	opLE
	opGT
	opGE
	opEQ
	opNE
	opAnd
	opOr
	opNot
)

// Expr is a checked model expression in SI units, ready to evaluate. It
// is immutable once built and safe to share between goroutines.
type Expr struct {
	op   op
	val  float64 // opConst: the value; opConc: unused
	idx  int     // opConc: species index
	fn   string  // opCall: function name
	args []*Expr
}

// Const returns a constant expression.
func Const(v float64) *Expr { return &Expr{op: opConst, val: v} }

// IsConst reports whether e is a constant and its value.
func (e *Expr) IsConst() (float64, bool) {
	if e == nil || e.op != opConst {
		return 0, false
	}
	return e.val, true
}

// Eval evaluates e in env.
func (e *Expr) Eval(env *Env) float64 {
	switch e.op {
	case opConst:
		return e.val
	case opTime:
		return env.T
	case opPos:
		return env.R
	case opAxial:
		return env.Z
	case opConc:
		if e.idx < len(env.C) {
			return env.C[e.idx]
		}
		return math.NaN()
	case opNeg:
		return -e.args[0].Eval(env)
	case opAdd:
		return e.args[0].Eval(env) + e.args[1].Eval(env)
	case opSub:
		return e.args[0].Eval(env) - e.args[1].Eval(env)
	case opMul:
		return e.args[0].Eval(env) * e.args[1].Eval(env)
	case opDiv:
		return e.args[0].Eval(env) / e.args[1].Eval(env)
	case opPow:
		return math.Pow(e.args[0].Eval(env), e.args[1].Eval(env))
	case opCond:
		if e.args[0].Eval(env) != 0 {
			return e.args[1].Eval(env)
		}
		return e.args[2].Eval(env)
	case opNot:
		return b2f(e.args[0].Eval(env) == 0)
	case opAnd:
		return b2f(e.args[0].Eval(env) != 0 && e.args[1].Eval(env) != 0)
	case opOr:
		return b2f(e.args[0].Eval(env) != 0 || e.args[1].Eval(env) != 0)
	case opLT, opLE, opGT, opGE, opEQ, opNE:
		a, b := e.args[0].Eval(env), e.args[1].Eval(env)
		switch e.op {
		case opLT:
			return b2f(a < b)
		case opLE:
			return b2f(a <= b)
		case opGT:
			return b2f(a > b)
		case opGE:
			return b2f(a >= b)
		case opEQ:
			return b2f(a == b)
		default:
			return b2f(a != b)
		}
	case opCall:
		return callFn(e.fn, e.args, env)
	}
	return math.NaN()
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

func callFn(name string, args []*Expr, env *Env) float64 {
	x := args[0].Eval(env)
	switch name {
	case "exp":
		return math.Exp(x)
	case "log", "ln":
		return math.Log(x)
	case "log10":
		return math.Log10(x)
	case "sinh":
		return math.Sinh(x)
	case "cosh":
		return math.Cosh(x)
	case "tanh":
		return math.Tanh(x)
	case "coth":
		return 1 / math.Tanh(x)
	case "sqrt":
		return math.Sqrt(x)
	case "abs":
		return math.Abs(x)
	case "pow":
		return math.Pow(x, args[1].Eval(env))
	case "min":
		for _, a := range args[1:] {
			x = math.Min(x, a.Eval(env))
		}
		return x
	case "max":
		for _, a := range args[1:] {
			x = math.Max(x, a.Eval(env))
		}
		return x
	}
	return math.NaN()
}

// Deps records what an expression depends on besides constants.
type Deps struct {
	Time, Pos, Axial bool
	Species          []bool // by species index
}

// Depends reports what e reads.
func (e *Expr) Depends(nspecies int) Deps {
	d := Deps{Species: make([]bool, nspecies)}
	e.walk(func(x *Expr) {
		switch x.op {
		case opTime:
			d.Time = true
		case opPos:
			d.Pos = true
		case opAxial:
			d.Axial = true
		case opConc:
			if x.idx < nspecies {
				d.Species[x.idx] = true
			}
		}
	})
	return d
}

// Reads reports whether e reads any concentration.
func (d Deps) Reads() bool {
	for _, s := range d.Species {
		if s {
			return true
		}
	}
	return false
}

func (e *Expr) walk(f func(*Expr)) {
	f(e)
	for _, a := range e.args {
		a.walk(f)
	}
}

// Affine is an expression's value written as C0 + Σ Coef[i]·c_i, exact
// when the expression is affine in the concentrations.
type Affine struct {
	C0   float64
	Coef []float64
}

// AffineIn returns e as an affine function of the concentrations, if it
// is one and reads neither time nor position; ok is false otherwise.
func (e *Expr) AffineIn(nspecies int) (a Affine, ok bool) {
	defer func() {
		if recover() != nil {
			ok = false
		}
	}()
	a = e.affine(nspecies)
	for _, c := range a.Coef {
		if math.IsNaN(c) {
			return a, false
		}
	}
	return a, !math.IsNaN(a.C0)
}

type notAffine struct{}

func (e *Expr) affine(n int) Affine {
	zero := func() Affine { return Affine{Coef: make([]float64, n)} }
	isConst := func(a Affine) bool {
		for _, c := range a.Coef {
			if c != 0 {
				return false
			}
		}
		return true
	}
	switch e.op {
	case opConst:
		a := zero()
		a.C0 = e.val
		return a
	case opConc:
		a := zero()
		a.Coef[e.idx] = 1
		return a
	case opNeg:
		a := e.args[0].affine(n)
		a.C0 = -a.C0
		for i := range a.Coef {
			a.Coef[i] = -a.Coef[i]
		}
		return a
	case opAdd, opSub:
		a, b := e.args[0].affine(n), e.args[1].affine(n)
		s := 1.0
		if e.op == opSub {
			s = -1
		}
		a.C0 += s * b.C0
		for i := range a.Coef {
			a.Coef[i] += s * b.Coef[i]
		}
		return a
	case opMul:
		a, b := e.args[0].affine(n), e.args[1].affine(n)
		if !isConst(a) && !isConst(b) {
			panic(notAffine{})
		}
		if isConst(a) {
			a, b = b, a
		}
		k := b.C0
		a.C0 *= k
		for i := range a.Coef {
			a.Coef[i] *= k
		}
		return a
	case opDiv:
		a, b := e.args[0].affine(n), e.args[1].affine(n)
		if !isConst(b) {
			panic(notAffine{})
		}
		a.C0 /= b.C0
		for i := range a.Coef {
			a.Coef[i] /= b.C0
		}
		return a
	}
	// Anything else is affine only when it is constant.
	d := e.Depends(n)
	if d.Time || d.Pos || d.Axial || d.Reads() {
		panic(notAffine{})
	}
	a := zero()
	a.C0 = e.Eval(&Env{})
	return a
}

// String renders the expression for debugging.
func (e *Expr) String() string {
	switch e.op {
	case opConst:
		return fmt.Sprintf("%g", e.val)
	case opTime:
		return "t"
	case opPos:
		return "r"
	case opAxial:
		return "z"
	case opConc:
		return fmt.Sprintf("c%d", e.idx)
	case opNeg:
		return "-" + e.args[0].String()
	case opCall:
		s := e.fn + "("
		for i, a := range e.args {
			if i > 0 {
				s += ", "
			}
			s += a.String()
		}
		return s + ")"
	case opCond:
		return fmt.Sprintf("(if %s then %s else %s)", e.args[0], e.args[1], e.args[2])
	case opNot:
		return "not " + e.args[0].String()
	}
	sym := map[op]string{opAdd: "+", opSub: "-", opMul: "*", opDiv: "/", opPow: "^", opLT: "<", opLE: "<=",
		opGT: ">", opGE: ">=", opEQ: "==", opNE: "!=", opAnd: "and", opOr: "or"}[e.op]
	return "(" + e.args[0].String() + " " + sym + " " + e.args[1].String() + ")"
}

// fold replaces subexpressions without dependencies by constants.
func fold(e *Expr) *Expr {
	if e.op == opConst {
		return e
	}
	for i, a := range e.args {
		e.args[i] = fold(a)
	}
	switch e.op {
	case opTime, opPos, opAxial, opConc:
		return e
	}
	for _, a := range e.args {
		if a.op != opConst {
			return e
		}
	}
	return Const(e.Eval(&Env{}))
}
