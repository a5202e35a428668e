package thrustmap

import "github.com/expr-lang/expr/ast"

// GateExprAST returns the syntax trees of gate i's target and when
// expressions as expr-lang parsed, type-checked and constant-folded them at
// load, or nil for an expression the gate does not have. It is for tools
// that translate gate expressions into another language (thrustmap export
// c). The trees are the profile's own: read them, never modify them. It
// panics if i is out of range (see Gates).
func (p *Profile) GateExprAST(i int) (target, when ast.Node) {
	ge := p.gateExprs[i]
	if ge.target != nil {
		target = ge.target.program.Node()
	}
	if ge.when != nil {
		when = ge.when.program.Node()
	}
	return target, when
}

// GateExprFast reports whether gate i's target and when expressions were
// compiled to the allocation-free evaluator (false for an expression the
// gate does not have). An expression that was not runs on expr-lang's VM,
// whose semantics a translation cannot promise to reproduce. It panics if i
// is out of range.
func (p *Profile) GateExprFast(i int) (target, when bool) {
	ge := p.gateExprs[i]
	return ge.target != nil && ge.target.num != nil, ge.when != nil && ge.when.truth != nil
}

// GateReduces reports whether gate i's target expression calls assumed(),
// so that the gate commands the assumed-temperature reduction; a gate that
// commands a rating by name commands its full value. It panics if i is out
// of range.
func (p *Profile) GateReduces(i int) bool {
	ge := p.gateExprs[i]
	return ge.target != nil && ge.target.reduces
}
