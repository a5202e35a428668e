package thrustmap

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/vm"

	"github.com/thrustmap/thrustmap/thrustmap/atmos"
)

// MaxExprNodes caps the size of a gate expression, so a profile cannot make
// every lever frame evaluate something huge.
const MaxExprNodes = 200

// exprEnv is the typed environment of gate expressions and the shell
// (docs/expressions.md). Its functions are bound once, when a scratch is made, to the
// scratch's own profile and conditions, so evaluating allocates only what the
// expression VM boxes.
type exprEnv struct {
	Alt         float64 `expr:"alt"`
	OAT         float64 `expr:"oat"`
	TAT         float64 `expr:"tat"`
	ISADev      float64 `expr:"isa_dev"`
	Mach        float64 `expr:"mach"`
	TLA         float64 `expr:"tla"`
	OnGround    bool    `expr:"on_ground"`
	AssumedSet  bool    `expr:"assumed_set"`
	AssumedTemp float64 `expr:"assumed_temp"`

	Bleed    func(name string) bool                      `expr:"bleed"`
	Rating   func(name string) float64                   `expr:"rating"`
	RatingAt func(name string, alt, oat float64) float64 `expr:"rating_at"`
	Assumed  func(name string) float64                   `expr:"assumed"`
	ISATemp  func(alt float64) float64                   `expr:"isa_temp"`
	Clamp    func(x, lo, hi float64) float64             `expr:"clamp"`
	Lerp     func(a, b, f float64) float64               `expr:"lerp"`
}

// nameArgs are the environment functions whose first argument names
// something in the profile; it must be a quoted constant, checked at load.
var nameArgs = map[string]string{"rating": "rating", "rating_at": "rating", "assumed": "rating", "bleed": "bleed"}

// exprScratch is what evaluating expressions needs per caller: a VM, an
// environment and the first error a function met. It is not safe for
// concurrent use; each lever state owns one.
type exprScratch struct {
	vm      vm.VM
	env     exprEnv
	profile *Profile
	cond    Conditions
	err     error
}

func newExprScratch(p *Profile) *exprScratch {
	s := &exprScratch{profile: p}
	fail := s.fail
	rating := func(name string) *Rating {
		r := p.find(name)
		if r == nil {
			fail(fmt.Errorf("%w %q", ErrUnknownRating, name))
		}
		return r
	}
	s.env = exprEnv{
		Bleed: func(name string) bool {
			i := p.bleedIndex(name)
			return i >= 0 && s.cond.Bleeds.Has(i)
		},
		Rating: func(name string) float64 {
			r := rating(name)
			if r == nil {
				return math.NaN()
			}
			v, err := p.RatingValue(r, s.cond)
			if err != nil {
				return fail(err)
			}
			return v
		},
		RatingAt: func(name string, alt, oat float64) float64 {
			r := rating(name)
			if r == nil {
				return math.NaN()
			}
			c := s.cond
			c.AltitudeFt, c.OATC = alt, oat
			v, err := p.RatingValue(r, c)
			if err != nil {
				return fail(err)
			}
			return v
		},
		Assumed: func(name string) float64 {
			r := rating(name)
			if r == nil {
				return math.NaN()
			}
			var res Result
			if err := p.target(r, s.cond, &res); err != nil {
				return fail(err)
			}
			return res.Value
		},
		ISATemp: func(alt float64) float64 {
			t, err := atmos.ISATemperatureC(alt)
			if err != nil {
				return fail(err)
			}
			return t
		},
		Clamp: func(x, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, x)) },
		Lerp:  func(a, b, f float64) float64 { return a + (b-a)*f },
	}
	return s
}

// fail records the first error a function meets and returns NaN, which the
// caller turns into the error.
func (s *exprScratch) fail(err error) float64 {
	if s.err == nil {
		s.err = err
	}
	return math.NaN()
}

// set loads conditions and a TLA into the environment; the conditions must
// have passed checkConditions.
func (s *exprScratch) set(c Conditions, tla float64) {
	s.cond = c
	e := &s.env
	e.Alt, e.OAT, e.Mach, e.TLA = c.AltitudeFt, c.OATC, c.Mach, tla
	e.TAT = basisTemp(TAT, c.OATC, c.Mach, 0)
	e.ISADev = c.OATC - isaTemperature(c.AltitudeFt)
	e.OnGround, e.AssumedSet, e.AssumedTemp = c.OnGround, c.AssumedSet, c.AssumedC
	if !c.AssumedSet {
		e.AssumedTemp = 0
	}
}

// number evaluates a float-valued expression; a run-time error or a
// non-finite result is an error.
func (s *exprScratch) number(ce *compiledExpr) (float64, error) {
	s.err = nil
	var v float64
	if ce.num != nil {
		v = ce.num(s)
	} else {
		out, err := s.vm.Run(ce.program, &s.env)
		if err != nil {
			return 0, err
		}
		var ok bool
		if v, ok = out.(float64); !ok {
			return 0, fmt.Errorf("result is %T, not a number", out)
		}
	}
	if s.err != nil {
		return 0, s.err
	}
	if !finite(v) {
		return 0, fmt.Errorf("result is %g", v)
	}
	return v, nil
}

// truth evaluates a bool-valued expression.
func (s *exprScratch) truth(ce *compiledExpr) (bool, error) {
	s.err = nil
	var b bool
	if ce.truth != nil {
		b = ce.truth(s)
	} else {
		out, err := s.vm.Run(ce.program, &s.env)
		if err != nil {
			return false, err
		}
		var ok bool
		if b, ok = out.(bool); !ok {
			return false, fmt.Errorf("result is %T, not true or false", out)
		}
	}
	if s.err != nil {
		return false, s.err
	}
	return b, nil
}

// compiledExpr is a compiled expression and what the model needs to know of it.
type compiledExpr struct {
	source  string
	program *vm.Program
	num     numFn  // the allocation-free form of a number, or nil: run program
	truth   boolFn // the allocation-free form of a `when`, or nil: run program
	usesTLA bool   // must be evaluated at every lever position, not once per conditions
	reduces bool   // calls assumed(): commands the assumed-temperature reduction
}

// compileExpr compiles src against the environment; wantBool selects a
// `when` (true/false) rather than a target (a number). Names given to rating,
// rating_at, assumed and bleed must be quoted constants the profile declares.
func compileExpr(p *Profile, src string, wantBool bool) (*compiledExpr, error) {
	opts := []expr.Option{expr.Env(exprEnv{}), expr.MaxNodes(MaxExprNodes), expr.Patch(floatLiterals{})}
	if wantBool {
		opts = append(opts, expr.AsBool())
	} else {
		opts = append(opts, expr.AsFloat64())
	}
	prog, err := expr.Compile(src, opts...)
	if err != nil {
		return nil, exprError(err)
	}
	ce := &compiledExpr{source: src, program: prog}
	v := &nameChecker{profile: p}
	node := prog.Node()
	ast.Walk(&node, v)
	if v.err != nil {
		return nil, v.err
	}
	ce.usesTLA, ce.reduces = v.usesTLA, v.reduces
	if wantBool {
		ce.truth, _ = fastBool(p, node)
	} else {
		ce.num, _ = fastNumber(p, node)
	}
	return ce, nil
}

// floatLiterals makes every integer literal of a gate expression a float
// literal: every number of the environment is a float64, and expr-lang's VM
// refuses an int where a function takes a float64 when the type checker
// cannot see it statically (clamp(x, on_ground ? oat : -10, alt) fails at
// run time with "reflect: Call using int as type float64"), while the
// allocation-free evaluator takes it. Found by FuzzFastExprMatchesVM.
type floatLiterals struct{}

// Visit replaces an integer literal by the same number as a float.
func (floatLiterals) Visit(node *ast.Node) {
	if n, ok := (*node).(*ast.IntegerNode); ok {
		ast.Patch(node, &ast.FloatNode{Value: float64(n.Value)})
	}
}

// exprError keeps the first line of a compile error and its column, with
// the names of the environment for an unknown name and a function's
// signature for a wrong number of arguments.
func exprError(err error) error {
	var fe *file.Error
	if errors.As(err, &fe) {
		msg, _, _ := strings.Cut(fe.Message, "\n")
		hint := ExprHint(msg, exprNames())
		if fe.Column > 0 {
			return fmt.Errorf("%s (column %d)%s", msg, fe.Column+1, hint)
		}
		return errors.New(msg + hint)
	}
	msg, _, _ := strings.Cut(err.Error(), "\n")
	return errors.New(msg + ExprHint(msg, exprNames()))
}

// nameChecker walks a compiled expression: it finds uses of tla and checks
// the names given to the profile's functions.
type nameChecker struct {
	profile *Profile
	usesTLA bool
	reduces bool // assumed() is called
	err     error
}

func (v *nameChecker) Visit(node *ast.Node) {
	switch n := (*node).(type) {
	case *ast.IdentifierNode:
		if n.Value == "tla" {
			v.usesTLA = true
		}
	case *ast.CallNode:
		id, ok := n.Callee.(*ast.IdentifierNode)
		if !ok || v.err != nil {
			return
		}
		if id.Value == "assumed" {
			v.reduces = true
		}
		kind, ok := nameArgs[id.Value]
		if !ok || len(n.Arguments) == 0 {
			return
		}
		s, ok := n.Arguments[0].(*ast.StringNode)
		if !ok {
			v.err = fmt.Errorf("%s(...) needs a quoted %s name as its first argument", id.Value, kind)
			return
		}
		p := v.profile
		switch {
		case kind == "bleed" && p.bleedIndex(s.Value) < 0:
			v.err = fmt.Errorf("bleed(%q): unknown bleed (the profile has %s)", s.Value, listOrNone(p.bleeds))
		case kind == "rating" && p.byName[s.Value] == nil:
			v.err = fmt.Errorf("%s(%q): unknown rating (the profile has %s)", id.Value, s.Value, listOrNone(ratingNames(p)))
		case id.Value == "assumed" && !p.byName[s.Value].assumed:
			v.err = fmt.Errorf("assumed(%q): not an assumed-temperature rating (see [assumed_temperature])", s.Value)
		}
	}
}
