package script

import (
	"fmt"
	"maps"
	"math"
	"reflect"
	"slices"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
)

// The expression environment is the gate expressions' (docs/expressions.md)
// plus the session's: the last result (value, gate, tla, reverse), target()
// with the assumed-temperature reduction, and the names defined by let.

// refreshEnv rebuilds the environment's variables from the session.
func (in *Interpreter) refreshEnv() {
	if in.env == nil {
		in.env = map[string]any{}
		in.addFunctions()
	}
	c := in.cond
	e := in.env
	e["alt"], e["oat"], e["mach"] = c.AltitudeFt, c.OATC, c.Mach
	e["tat"] = (c.OATC+atmos.KelvinOffset)*(1+0.2*c.Mach*c.Mach) - atmos.KelvinOffset
	isa, err := atmos.ISATemperatureC(c.AltitudeFt)
	if err != nil {
		isa = math.NaN()
	}
	e["isa_dev"] = c.OATC - isa
	e["on_ground"], e["assumed_set"], e["assumed_temp"] = c.OnGround, c.AssumedSet, c.AssumedC
	r := in.last
	e["value"], e["gate"], e["tla"], e["reverse"] = r.value, r.gate, r.tla, r.reverse
	for k, v := range in.names {
		e[k] = v
	}
}

// reserved are the environment's own names, which let may not redefine.
var reserved = map[string]bool{
	"alt": true, "oat": true, "tat": true, "isa_dev": true, "mach": true, "on_ground": true,
	"assumed_set": true, "assumed_temp": true, "value": true, "gate": true, "tla": true,
	"reverse": true, "rating": true, "rating_at": true, "assumed": true, "target": true,
	"bleed": true, "isa_temp": true, "clamp": true, "lerp": true,
}

func (in *Interpreter) addFunctions() {
	e := in.env
	rating := func(name string) (*thrustmap.Rating, error) {
		r, ok := in.profile.Rating(name)
		if !ok {
			return nil, fmt.Errorf("unknown rating %q (the profile has %s)", name, ratingList(in.profile))
		}
		return r, nil
	}
	e["rating"] = func(name string) (float64, error) {
		r, err := rating(name)
		if err != nil {
			return 0, err
		}
		return in.profile.RatingValue(r, in.cond)
	}
	e["rating_at"] = func(name string, alt, oat float64) (float64, error) {
		r, err := rating(name)
		if err != nil {
			return 0, err
		}
		c := in.cond
		c.AltitudeFt, c.OATC = alt, oat
		return in.profile.RatingValue(r, c)
	}
	e["target"] = func(name string) (float64, error) {
		res, err := in.profile.Target(name, in.cond)
		return res.Value, err
	}
	e["assumed"] = func(name string) (float64, error) {
		r, err := rating(name)
		if err != nil {
			return 0, err
		}
		if !r.Assumed() {
			return 0, fmt.Errorf("rating %q is not an assumed-temperature rating", name)
		}
		res, err := in.profile.RatingTarget(r, in.cond)
		return res.Value, err
	}
	e["bleed"] = func(name string) (bool, error) {
		set, err := in.profile.BleedSet(name)
		if err != nil {
			return false, err
		}
		return in.cond.Bleeds&set != 0, nil
	}
	e["isa_temp"] = func(alt float64) (float64, error) { return atmos.ISATemperatureC(alt) }
	e["clamp"] = func(x, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, x)) }
	e["lerp"] = func(a, b, f float64) float64 { return a + (b-a)*f }
}

func ratingList(p *thrustmap.Profile) string {
	var names []string
	for _, r := range p.Ratings() {
		names = append(names, r.Name())
	}
	return strings.Join(names, ", ")
}

// compile returns the program for src, compiled once per environment shape.
func (in *Interpreter) compile(src string) (*vm.Program, error) {
	if p, ok := in.progs[src]; ok {
		return p, nil
	}
	p, err := expr.Compile(src, expr.Env(in.env), expr.MaxNodes(thrustmap.MaxExprNodes*5))
	if err != nil {
		return nil, exprErr(src, err, slices.Collect(maps.Keys(in.env)))
	}
	in.progs[src] = p
	return p, nil
}

// exprErr keeps a compile error's first line and column, with the names of
// the environment (names) for an unknown name and a function's signature
// for a wrong number of arguments.
func exprErr(src string, err error, names []string) error {
	if fe, ok := err.(*file.Error); ok {
		msg, _, _ := strings.Cut(fe.Message, "\n")
		return fmt.Errorf("expression %q: %s (column %d)%s", src, msg, fe.Column+1, thrustmap.ExprHint(msg, names))
	}
	msg, _, _ := strings.Cut(err.Error(), "\n")
	return fmt.Errorf("expression %q: %s%s", src, msg, thrustmap.ExprHint(msg, names))
}

// explain returns "name = value" for each variable of the session that the
// expressions srcs read, in the order first read: what a failed check
// compared. A gate of "" says which gates the lever was between.
func (in *Interpreter) explain(srcs ...string) []string {
	in.refreshEnv()
	var names identifiers
	for _, src := range srcs {
		if tree, err := parser.Parse(src); err == nil {
			ast.Walk(&tree.Node, &names)
		}
	}
	var out []string
	for _, name := range names {
		v, known := in.env[name]
		if !known || reflect.TypeOf(v).Kind() == reflect.Func {
			continue
		}
		line := name + " = " + format(v)
		if name == "gate" && in.last.gate == "" && in.last.between != "" {
			line += " (between " + in.last.between + ")"
		}
		out = append(out, line)
	}
	return out
}

// identifiers collects the names an expression's syntax tree reads, each
// once, in the order met.
type identifiers []string

// Visit records an identifier not seen before.
func (ids *identifiers) Visit(node *ast.Node) {
	if id, ok := (*node).(*ast.IdentifierNode); ok && !slices.Contains(*ids, id.Value) {
		*ids = append(*ids, id.Value)
	}
}

// eval evaluates src in the current session.
func (in *Interpreter) eval(src string) (any, error) {
	p, err := in.compile(src)
	if err != nil {
		return nil, err
	}
	in.refreshEnv()
	out, err := in.machine.Run(p, in.env)
	if err != nil {
		msg, _, _ := strings.Cut(err.Error(), "\n")
		return nil, fmt.Errorf("expression %q: %s", src, msg)
	}
	return out, nil
}

// number evaluates src to a finite number.
func (in *Interpreter) number(src string) (float64, error) {
	out, err := in.eval(src)
	if err != nil {
		return 0, err
	}
	v, ok := toFloat(out)
	if !ok {
		return 0, fmt.Errorf("expression %q is %s, not a number", src, describe(out))
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("expression %q is %g", src, v)
	}
	return v, nil
}

func toFloat(v any) (float64, bool) {
	switch x := v.(type) {
	case float64:
		return x, true
	case int:
		return float64(x), true
	case int64:
		return float64(x), true
	}
	return 0, false
}

func describe(v any) string {
	switch x := v.(type) {
	case string:
		return fmt.Sprintf("the text %q", x)
	case bool:
		return fmt.Sprintf("%v", x)
	case nil:
		return "nothing"
	}
	return fmt.Sprintf("a %T", v)
}

// format prints a value as the shell shows it.
func format(v any) string {
	switch x := v.(type) {
	case float64:
		return fmt.Sprintf("%.6g", x)
	case string:
		return fmt.Sprintf("%q", x)
	}
	return fmt.Sprint(v)
}
