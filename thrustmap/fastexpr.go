package thrustmap

import (
	"math"

	"github.com/expr-lang/expr/ast"
)

// expr-lang's VM keeps its stack as []any, so every number an expression
// loads or computes is boxed on the heap. Gate expressions are evaluated on
// the lever hot path, so the common shapes — numbers, the environment's
// variables and functions, arithmetic, comparisons, logic, ?: and
// min/max/abs — are also compiled here, from the AST expr-lang has parsed,
// type-checked and constant-folded, into a tree of Go closures that
// allocates nothing. Anything else runs on the VM.

// numFn and boolFn evaluate a fast-compiled expression.
type (
	numFn  func(s *exprScratch) float64
	boolFn func(s *exprScratch) bool
)

// fastNumber compiles a float-valued node, or reports false.
func fastNumber(p *Profile, n ast.Node) (numFn, bool) {
	switch n := n.(type) {
	case *ast.IntegerNode:
		v := float64(n.Value)
		return func(*exprScratch) float64 { return v }, true
	case *ast.FloatNode:
		v := n.Value
		return func(*exprScratch) float64 { return v }, true
	case *ast.ConstantNode:
		var v float64
		switch x := n.Value.(type) {
		case float64:
			v = x
		case int:
			v = float64(x)
		default:
			return nil, false
		}
		return func(*exprScratch) float64 { return v }, true
	case *ast.IdentifierNode:
		return numVariable(n.Value)
	case *ast.UnaryNode:
		x, ok := fastNumber(p, n.Node)
		if !ok {
			return nil, false
		}
		switch n.Operator {
		case "-":
			return func(s *exprScratch) float64 { return -x(s) }, true
		case "+":
			return x, true
		}
	case *ast.BinaryNode:
		return fastArithmetic(p, n)
	case *ast.ConditionalNode:
		cond, ok1 := fastBool(p, n.Cond)
		a, ok2 := fastNumber(p, n.Exp1)
		b, ok3 := fastNumber(p, n.Exp2)
		if !ok1 || !ok2 || !ok3 {
			return nil, false
		}
		return func(s *exprScratch) float64 {
			if cond(s) {
				return a(s)
			}
			return b(s)
		}, true
	case *ast.CallNode:
		return fastCall(p, n)
	case *ast.BuiltinNode:
		return fastBuiltin(p, n)
	}
	return nil, false
}

func numVariable(name string) (numFn, bool) {
	switch name {
	case "alt":
		return func(s *exprScratch) float64 { return s.env.Alt }, true
	case "oat":
		return func(s *exprScratch) float64 { return s.env.OAT }, true
	case "tat":
		return func(s *exprScratch) float64 { return s.env.TAT }, true
	case "isa_dev":
		return func(s *exprScratch) float64 { return s.env.ISADev }, true
	case "mach":
		return func(s *exprScratch) float64 { return s.env.Mach }, true
	case "tla":
		return func(s *exprScratch) float64 { return s.env.TLA }, true
	case "assumed_temp":
		return func(s *exprScratch) float64 { return s.env.AssumedTemp }, true
	}
	return nil, false
}

func fastArithmetic(p *Profile, n *ast.BinaryNode) (numFn, bool) {
	a, ok1 := fastNumber(p, n.Left)
	b, ok2 := fastNumber(p, n.Right)
	if !ok1 || !ok2 {
		return nil, false
	}
	switch n.Operator {
	case "+":
		return func(s *exprScratch) float64 { return a(s) + b(s) }, true
	case "-":
		return func(s *exprScratch) float64 { return a(s) - b(s) }, true
	case "*":
		return func(s *exprScratch) float64 { return a(s) * b(s) }, true
	case "/":
		return func(s *exprScratch) float64 { return a(s) / b(s) }, true
	case "**", "^":
		return func(s *exprScratch) float64 { return math.Pow(a(s), b(s)) }, true
	}
	return nil, false
}

// fastCall compiles the environment's functions; a name argument must be a
// quoted constant, resolved here once.
func fastCall(p *Profile, n *ast.CallNode) (numFn, bool) {
	id, ok := n.Callee.(*ast.IdentifierNode)
	if !ok {
		return nil, false
	}
	args := n.Arguments
	nums := func(from int) ([]numFn, bool) {
		var fns []numFn
		for _, a := range args[from:] {
			f, ok := fastNumber(p, a)
			if !ok {
				return nil, false
			}
			fns = append(fns, f)
		}
		return fns, true
	}
	rating := func() *Rating {
		if len(args) == 0 {
			return nil
		}
		if s, ok := args[0].(*ast.StringNode); ok {
			return p.find(s.Value)
		}
		return nil
	}
	switch id.Value {
	case "rating", "assumed":
		r := rating()
		if r == nil || len(args) != 1 {
			return nil, false
		}
		if id.Value == "rating" {
			return func(s *exprScratch) float64 {
				v, _, _ := p.plainValue(r, &s.cond)
				return v
			}, true
		}
		return func(s *exprScratch) float64 {
			var res Result
			if err := p.target(r, s.cond, &res); err != nil {
				return s.fail(err)
			}
			return res.Value
		}, true
	case "rating_at":
		r := rating()
		f, ok := nums(1)
		if r == nil || !ok || len(f) != 2 {
			return nil, false
		}
		return func(s *exprScratch) float64 {
			c := s.cond
			c.AltitudeFt, c.OATC = f[0](s), f[1](s)
			if err := checkConditions(c); err != nil {
				return s.fail(err)
			}
			v, _, _ := p.plainValue(r, &c)
			return v
		}, true
	case "isa_temp", "clamp", "lerp":
		f, ok := nums(0)
		if !ok {
			return nil, false
		}
		switch {
		case id.Value == "isa_temp" && len(f) == 1:
			return func(s *exprScratch) float64 { return s.env.ISATemp(f[0](s)) }, true
		case id.Value == "clamp" && len(f) == 3:
			return func(s *exprScratch) float64 { return math.Max(f[1](s), math.Min(f[2](s), f[0](s))) }, true
		case id.Value == "lerp" && len(f) == 3:
			return func(s *exprScratch) float64 { a := f[0](s); return a + (f[1](s)-a)*f[2](s) }, true
		}
	}
	return nil, false
}

func fastBuiltin(p *Profile, n *ast.BuiltinNode) (numFn, bool) {
	var f []numFn
	for _, a := range n.Arguments {
		x, ok := fastNumber(p, a)
		if !ok {
			return nil, false
		}
		f = append(f, x)
	}
	switch {
	case n.Name == "abs" && len(f) == 1:
		return func(s *exprScratch) float64 { return exprAbs(f[0](s)) }, true
	case n.Name == "min" && len(f) == 2:
		return func(s *exprScratch) float64 { return exprMin(f[0](s), f[1](s)) }, true
	case n.Name == "max" && len(f) == 2:
		return func(s *exprScratch) float64 { return exprMax(f[0](s), f[1](s)) }, true
	}
	return nil, false
}

// exprAbs, exprMin and exprMax are expr-lang's builtins abs, min and max on
// two floats, comparison for comparison (its builtin/lib.go: abs negates
// below zero; max keeps the first unless it is less than the second, min
// unless it is greater), so a NaN or a signed zero comes out as on the VM:
// max(x, NaN) is x, max(NaN, x) is NaN, abs(-0) is -0. Found by
// FuzzFastExprMatchesVM; the generated C (export c) does the same.
func exprAbs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

func exprMin(a, b float64) float64 {
	if a > b {
		return b
	}
	return a
}

func exprMax(a, b float64) float64 {
	if a < b {
		return b
	}
	return a
}

// fastBool compiles a bool-valued node, or reports false.
func fastBool(p *Profile, n ast.Node) (boolFn, bool) {
	switch n := n.(type) {
	case *ast.BoolNode:
		v := n.Value
		return func(*exprScratch) bool { return v }, true
	case *ast.ConstantNode:
		v, ok := n.Value.(bool)
		if !ok {
			return nil, false
		}
		return func(*exprScratch) bool { return v }, true
	case *ast.IdentifierNode:
		switch n.Value {
		case "on_ground":
			return func(s *exprScratch) bool { return s.env.OnGround }, true
		case "assumed_set":
			return func(s *exprScratch) bool { return s.env.AssumedSet }, true
		}
	case *ast.UnaryNode:
		x, ok := fastBool(p, n.Node)
		if ok && (n.Operator == "!" || n.Operator == "not") {
			return func(s *exprScratch) bool { return !x(s) }, true
		}
	case *ast.CallNode:
		id, ok := n.Callee.(*ast.IdentifierNode)
		if !ok || id.Value != "bleed" || len(n.Arguments) != 1 {
			return nil, false
		}
		name, ok := n.Arguments[0].(*ast.StringNode)
		if !ok {
			return nil, false
		}
		i := p.bleedIndex(name.Value)
		return func(s *exprScratch) bool { return s.cond.Bleeds.Has(i) }, true
	case *ast.BinaryNode:
		switch n.Operator {
		case "&&", "and", "||", "or":
			a, ok1 := fastBool(p, n.Left)
			b, ok2 := fastBool(p, n.Right)
			if !ok1 || !ok2 {
				return nil, false
			}
			if n.Operator == "&&" || n.Operator == "and" {
				return func(s *exprScratch) bool { return a(s) && b(s) }, true
			}
			return func(s *exprScratch) bool { return a(s) || b(s) }, true
		}
		a, ok1 := fastNumber(p, n.Left)
		b, ok2 := fastNumber(p, n.Right)
		if !ok1 || !ok2 {
			return nil, false
		}
		switch n.Operator {
		case "<":
			return func(s *exprScratch) bool { return a(s) < b(s) }, true
		case "<=":
			return func(s *exprScratch) bool { return a(s) <= b(s) }, true
		case ">":
			return func(s *exprScratch) bool { return a(s) > b(s) }, true
		case ">=":
			return func(s *exprScratch) bool { return a(s) >= b(s) }, true
		case "==":
			return func(s *exprScratch) bool { return a(s) == b(s) }, true
		case "!=":
			return func(s *exprScratch) bool { return a(s) != b(s) }, true
		}
	case *ast.ConditionalNode:
		cond, ok1 := fastBool(p, n.Cond)
		a, ok2 := fastBool(p, n.Exp1)
		b, ok3 := fastBool(p, n.Exp2)
		if !ok1 || !ok2 || !ok3 {
			return nil, false
		}
		return func(s *exprScratch) bool {
			if cond(s) {
				return a(s)
			}
			return b(s)
		}, true
	}
	return nil, false
}
