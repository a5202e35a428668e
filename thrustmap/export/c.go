package export

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/expr-lang/expr/ast"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// COptions tune the generated C.
type COptions struct {
	// Prefix starts every name the C file declares: functions and types
	// as given, macros in upper case ("engine_" gives engine_target and ENGINE_OK).
	// It must be a C identifier that is not reserved; "" means "engine_".
	Prefix string
}

// DefaultCPrefix is the C prefix used when COptions.Prefix is empty.
const DefaultCPrefix = "engine_"

// ErrCExport is wrapped by every error WriteC returns about a model it
// cannot translate faithfully or an option it cannot use.
var ErrCExport = errors.New("export c")

// WriteC writes one self-contained C99 source file implementing model m:
// its ratings (tables, temperature bases, bleed corrections, redline, the
// assumed-temperature reduction with its thrust limit), its gates (capture,
// hysteresis, the monotone raise chain, the reverse range and interlock, and
// gate expressions translated to C) and, when m has a calibration, its
// levers (raw counts ↔ TLA, deadband). The C needs only <math.h>,
// <stdint.h> and <string.h>, allocates nothing and keeps its state in
// caller-owned structs.
//
// Every table is evaluated on its own points with the Go implementation's
// formulas (multilinear, or the Fritsch–Butland monotone cubic), so nothing
// is resampled. A gate expression outside the subset the Go library
// evaluates without its VM (see thrustmap's fastexpr.go) is an error naming
// the gate, as is anything else the C could not reproduce exactly.
func WriteC(w io.Writer, m *thrustmap.Model, o COptions) error {
	g, err := newCGen(m, o)
	if err != nil {
		return err
	}
	g.write()
	_, err = w.Write(g.b.Bytes())
	return err
}

// cGen gathers what the C file needs from a model, then writes it.
type cGen struct {
	m      *thrustmap.Model
	p      *thrustmap.Profile
	cal    *thrustmap.Calibration
	prefix string // e.g. "engine_"
	upper  string // e.g. "ENGINE_"
	b      bytes.Buffer

	ratings []*thrustmap.Rating
	grids   []cGrid
	rats    []cRating
	corrs   []cCorrection
	gates   []cGate
	geoms   []cGeom
	exprs   []cExprFn
	idle    int
	always  uint32
	anyTLA  bool

	hasExpr, hasTarget, hasWhen              bool
	anyMonotone, anyAssumed, anyPerAltCorner bool
	uses                                     map[string]bool // expression helpers used
}

// cGrid is one table as the C holds it.
type cGrid struct {
	what   string
	method grid.Method
	axes   [grid.NumAxes][]float64
	values []float64
}

// cRating is a rating with the indexes of its grids and corrections.
type cRating struct {
	r              *thrustmap.Rating
	table, thrust  int
	corner         int // 0 none, 1 ISA deviation, 2 one OAT per altitude row
	isaDev         float64
	alts, oats     []float64
	corrFirst, nCo int
}

// cCorrection is one bleed correction: a constant or a grid.
type cCorrection struct {
	bleed int
	delta float64
	grid  int // -1 for a constant
}

// cGate is a gate with its rating index and translated expressions.
type cGate struct {
	g            thrustmap.Gate
	rating       int
	target, when string // C function names, "" when absent
}

// cGeom is the gate geometry one lever sees (calibrated levers first, then
// the profile's own zones), as in thrustmap's Model.
type cGeom struct {
	id                  int
	cal                 *thrustmap.LeverCalibration
	forward, inverse    int
	inverted, monotone  bool
	rawLo, rawHi        float64
	capture, hysteresis []float64
}

// cExprFn is one translated gate expression, written as a C function.
type cExprFn struct {
	name, comment string
	boolean       bool
	body          string
}

var cIdent = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_]*$`)

// newCGen checks the options and gathers the model; every refusal is here.
func newCGen(m *thrustmap.Model, o COptions) (*cGen, error) {
	if m == nil {
		return nil, fmt.Errorf("%w: no model", ErrCExport)
	}
	prefix := o.Prefix
	if prefix == "" {
		prefix = DefaultCPrefix
	}
	if !cIdent.MatchString(prefix) || strings.HasPrefix(prefix, "__") ||
		(prefix[0] == '_' && len(prefix) > 1 && prefix[1] >= 'A' && prefix[1] <= 'Z') {
		return nil, fmt.Errorf("%w: prefix %q: want a C identifier that does not start with __ or _ and a capital", ErrCExport, prefix)
	}
	p := m.Profile()
	g := &cGen{m: m, p: p, cal: m.Calibration(), prefix: prefix, upper: strings.ToUpper(prefix),
		ratings: p.Ratings(), idle: -1, uses: map[string]bool{}}
	for _, r := range g.ratings {
		if err := g.addRating(r); err != nil {
			return nil, err
		}
	}
	gates := p.Gates()
	if len(gates) == 0 || len(gates) > thrustmap.MaxGates {
		return nil, fmt.Errorf("%w: profile %s has %d gates, want 1 to %d", ErrCExport, p.Source(), len(gates), thrustmap.MaxGates)
	}
	lever := p.Lever()
	for i, gt := range gates {
		if err := g.addGate(i, gt); err != nil {
			return nil, err
		}
		if gt.Name == lever.IdleGate && lever.IdleGate != "" {
			g.idle = i
		}
	}
	if g.cal != nil {
		for _, l := range g.cal.Levers() {
			if err := g.addLever(l, gates); err != nil {
				return nil, err
			}
		}
	}
	own := cGeom{id: thrustmap.NoLever, forward: -1, inverse: -1}
	for _, gt := range gates {
		own.capture = append(own.capture, math.Max(gt.CaptureDeg, 0))
		own.hysteresis = append(own.hysteresis, math.Max(gt.HysteresisDeg, 0))
	}
	g.geoms = append(g.geoms, own)
	return g, nil
}

// addGrid records a table and returns its index.
func (g *cGen) addGrid(what string, gr *grid.Grid) int {
	c := cGrid{what: what, method: gr.Method(), values: gr.Values()}
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		c.axes[a] = gr.Axis(a)
	}
	g.anyMonotone = g.anyMonotone || c.method == grid.Monotone
	g.grids = append(g.grids, c)
	return len(g.grids) - 1
}

func (g *cGen) addRating(r *thrustmap.Rating) error {
	cr := cRating{r: r, thrust: -1, corrFirst: len(g.corrs)}
	cr.table = g.addGrid(fmt.Sprintf("rating %q values", r.Name()), r.Table())
	if r.Thrust() != nil {
		cr.thrust = g.addGrid(fmt.Sprintf("rating %q thrust_kn", r.Name()), r.Thrust())
	}
	if err := g.corner(&cr); err != nil {
		return err
	}
	bleeds := g.p.Bleeds()
	for _, k := range r.Corrections() {
		c := cCorrection{bleed: k.Bleed, delta: k.Delta, grid: -1}
		if k.Bleed < 0 || k.Bleed >= len(bleeds) {
			return fmt.Errorf("%w: rating %q: a correction names bleed %d, which the profile does not have", ErrCExport, r.Name(), k.Bleed)
		}
		if k.Grid != nil {
			c.grid = g.addGrid(fmt.Sprintf("correction of rating %q for bleed %q", r.Name(), bleeds[k.Bleed]), k.Grid)
		}
		g.corrs = append(g.corrs, c)
	}
	cr.nCo = len(g.corrs) - cr.corrFirst
	g.anyAssumed = g.anyAssumed || r.Assumed()
	g.rats = append(g.rats, cr)
	return nil
}

// corner takes a rating's flat-rating corner as the library declares it:
// an ISA deviation, or one OAT per altitude row.
func (g *cGen) corner(cr *cRating) error {
	isaDev, alts, oats, ok := cr.r.Corner()
	switch {
	case !ok:
	case oats == nil:
		cr.corner, cr.isaDev = 1, isaDev
	default:
		cr.corner, cr.alts, cr.oats = 2, alts, oats
		g.anyPerAltCorner = true
	}
	return nil
}

func (g *cGen) ratingIndex(name string) int {
	r, ok := g.p.Rating(name)
	if !ok {
		return -1
	}
	return slices.Index(g.ratings, r)
}

func (g *cGen) addGate(i int, gt thrustmap.Gate) error {
	cg := cGate{g: gt, rating: -1}
	if gt.Rating != "" {
		if cg.rating = g.ratingIndex(gt.Rating); cg.rating < 0 {
			return fmt.Errorf("%w: gate %q: rating %q is not in the profile", ErrCExport, gt.Name, gt.Rating)
		}
	}
	target, when := g.p.GateExprAST(i)
	fastTarget, fastWhen := g.p.GateExprFast(i)
	if (target != nil) != (gt.Target != "") || (when != nil) != (gt.When != "") {
		return fmt.Errorf("%w: gate %q: its compiled expressions do not match its source", ErrCExport, gt.Name)
	}
	for _, e := range []struct {
		key, src string
		node     ast.Node
		fast     bool
		boolean  bool
		out      *string
	}{
		{"target", gt.Target, target, fastTarget, false, &cg.target},
		{"when", gt.When, when, fastWhen, true, &cg.when},
	} {
		if e.node == nil {
			continue
		}
		if !e.fast {
			return fmt.Errorf("%w: gate %q: %s %q runs on expr-lang's VM, outside the allocation-free subset the C export translates (numbers, the environment's variables, + - * / **, comparisons, && || !, ?:, rating, rating_at, assumed, bleed, isa_temp, clamp, lerp, min, max, abs)", ErrCExport, gt.Name, e.key, e.src)
		}
		tr := &cExprTr{g: g}
		var body string
		var err error
		if e.boolean {
			body, err = tr.boolean(e.node)
		} else {
			body, err = tr.number(e.node)
		}
		if err != nil {
			return fmt.Errorf("%w: gate %q: %s %q: %v", ErrCExport, gt.Name, e.key, e.src, err)
		}
		node := e.node
		v := &tlaFinder{}
		ast.Walk(&node, v)
		g.anyTLA = g.anyTLA || v.found
		name := fmt.Sprintf("engine__x%d", len(g.exprs))
		g.exprs = append(g.exprs, cExprFn{name: name, boolean: e.boolean, body: body,
			comment: fmt.Sprintf("gate %q %s: %s", gt.Name, e.key, e.src)})
		*e.out = name
		g.hasExpr = true
		g.hasTarget = g.hasTarget || !e.boolean
		g.hasWhen = g.hasWhen || e.boolean
	}
	if when == nil && (target == nil || gt.Rating != "") {
		g.always |= 1 << i
	}
	g.gates = append(g.gates, cg)
	return nil
}

// tlaFinder finds uses of tla, as the library does to decide that gate
// values must be worked out at every lever position.
type tlaFinder struct{ found bool }

func (v *tlaFinder) Visit(node *ast.Node) {
	if id, ok := (*node).(*ast.IdentifierNode); ok && id.Value == "tla" {
		v.found = true
	}
}

func (g *cGen) addLever(l *thrustmap.LeverCalibration, gates []thrustmap.Gate) error {
	s := l.Spec()
	pts := slices.Clone(s.Points)
	slices.SortFunc(pts, func(a, b [2]float64) int {
		switch {
		case a[0] < b[0]:
			return -1
		case a[0] > b[0]:
			return 1
		}
		return 0
	})
	raws := make([]float64, len(pts))
	tlas := make([]float64, len(pts))
	for i, p := range pts {
		raws[i], tlas[i] = p[0], p[1]
	}
	if len(pts) < 2 {
		return fmt.Errorf("%w: lever %d has %d calibration points", ErrCExport, s.ID, len(pts))
	}
	geo := cGeom{id: s.ID, cal: l, inverted: l.Inverted(), monotone: s.Fit == grid.Monotone,
		rawLo: raws[0], rawHi: raws[len(raws)-1]}
	fwd, err := grid.New([grid.NumAxes][]float64{raws, nil, nil}, tlas, s.Fit)
	if err != nil {
		return fmt.Errorf("%w: lever %d: %v", ErrCExport, s.ID, err)
	}
	geo.forward = g.addGrid(fmt.Sprintf("lever %d raw -> TLA (%s fit)", s.ID, s.Fit), fwd)
	ir, it := slices.Clone(raws), slices.Clone(tlas)
	if geo.inverted {
		slices.Reverse(ir)
		slices.Reverse(it)
	}
	inv, err := grid.New([grid.NumAxes][]float64{it, nil, nil}, ir, grid.Linear)
	if err != nil {
		return fmt.Errorf("%w: lever %d: %v", ErrCExport, s.ID, err)
	}
	geo.inverse = g.addGrid(fmt.Sprintf("lever %d TLA -> raw", s.ID), inv)
	for _, gt := range gates {
		geo.capture = append(geo.capture, math.Max(gt.CaptureDeg, s.MinCaptureDeg))
		geo.hysteresis = append(geo.hysteresis, math.Max(gt.HysteresisDeg, s.MinHysteresisDeg))
	}
	// The same zones the model uses for this lever.
	for i := range gates {
		c, h, err := g.m.EffectiveZone(s.ID, i)
		if err == nil && s.ID != thrustmap.NoLever && (c != geo.capture[i] || h != geo.hysteresis[i]) {
			return fmt.Errorf("%w: lever %d gate %q: zone %g/%g does not match the model's %g/%g", ErrCExport, s.ID, gates[i].Name, geo.capture[i], geo.hysteresis[i], c, h)
		}
	}
	g.geoms = append(g.geoms, geo)
	return nil
}

// cExprTr translates the expression subset of thrustmap's fastexpr.go,
// node for node, into fully parenthesised C. It accepts exactly the shapes
// fastNumber and fastBool accept.
type cExprTr struct{ g *cGen }

func (t *cExprTr) number(n ast.Node) (string, error) {
	switch n := n.(type) {
	case *ast.IntegerNode:
		return cExprNum(float64(n.Value)), nil
	case *ast.FloatNode:
		return cExprNum(n.Value), nil
	case *ast.ConstantNode:
		switch v := n.Value.(type) {
		case float64:
			return cExprNum(v), nil
		case int:
			return cExprNum(float64(v)), nil
		}
	case *ast.IdentifierNode:
		if v, ok := map[string]string{
			"alt": "x->cond.alt_ft", "oat": "x->cond.oat_c", "tat": "x->tat", "isa_dev": "x->isa_dev",
			"mach": "x->cond.mach", "tla": "x->tla", "assumed_temp": "x->assumed_temp",
		}[n.Value]; ok {
			return v, nil
		}
	case *ast.UnaryNode:
		x, err := t.number(n.Node)
		if err != nil {
			return "", err
		}
		switch n.Operator {
		case "-":
			return "(-" + x + ")", nil
		case "+":
			return x, nil
		}
	case *ast.BinaryNode:
		a, err := t.number(n.Left)
		if err != nil {
			return "", err
		}
		b, err := t.number(n.Right)
		if err != nil {
			return "", err
		}
		switch n.Operator {
		case "+", "-", "*", "/":
			return "(" + a + " " + n.Operator + " " + b + ")", nil
		case "**", "^":
			return "pow(" + a + ", " + b + ")", nil
		}
	case *ast.ConditionalNode:
		c, err := t.boolean(n.Cond)
		if err != nil {
			return "", err
		}
		a, err := t.number(n.Exp1)
		if err != nil {
			return "", err
		}
		b, err := t.number(n.Exp2)
		if err != nil {
			return "", err
		}
		return "(" + c + " ? " + a + " : " + b + ")", nil
	case *ast.CallNode:
		return t.call(n)
	case *ast.BuiltinNode:
		var args []string
		for _, a := range n.Arguments {
			s, err := t.number(a)
			if err != nil {
				return "", err
			}
			args = append(args, s)
		}
		switch {
		case n.Name == "abs" && len(args) == 1:
			return "fabs(" + args[0] + ")", nil
		case n.Name == "min" && len(args) == 2:
			t.g.uses["min"] = true
			return "engine__math_min(" + args[0] + ", " + args[1] + ")", nil
		case n.Name == "max" && len(args) == 2:
			t.g.uses["max"] = true
			return "engine__math_max(" + args[0] + ", " + args[1] + ")", nil
		}
	}
	return "", unsupported(n, "a number")
}

func (t *cExprTr) call(n *ast.CallNode) (string, error) {
	id, ok := n.Callee.(*ast.IdentifierNode)
	if !ok {
		return "", unsupported(n, "a number")
	}
	args := n.Arguments
	rating := func() int {
		if len(args) == 0 {
			return -1
		}
		if s, ok := args[0].(*ast.StringNode); ok {
			return t.g.ratingIndex(s.Value)
		}
		return -1
	}
	nums := func(from int) ([]string, error) {
		var out []string
		for _, a := range args[from:] {
			s, err := t.number(a)
			if err != nil {
				return nil, err
			}
			out = append(out, s)
		}
		return out, nil
	}
	switch id.Value {
	case "rating", "assumed":
		r := rating()
		if r < 0 || len(args) != 1 {
			break
		}
		t.g.uses[id.Value] = true
		return fmt.Sprintf("engine__e_%s(x, %d)", id.Value, r), nil
	case "rating_at":
		r := rating()
		f, err := nums(min(1, len(args)))
		if err != nil {
			return "", err
		}
		if r < 0 || len(f) != 2 {
			break
		}
		t.g.uses["rating_at"] = true
		return fmt.Sprintf("engine__e_rating_at(x, %d, %s, %s)", r, f[0], f[1]), nil
	case "isa_temp", "clamp", "lerp":
		f, err := nums(0)
		if err != nil {
			return "", err
		}
		switch {
		case id.Value == "isa_temp" && len(f) == 1:
			t.g.uses["isa_temp"] = true
			return "engine__e_isa_temp(x, " + f[0] + ")", nil
		case id.Value == "clamp" && len(f) == 3:
			t.g.uses["min"], t.g.uses["max"] = true, true
			return "engine__math_max(" + f[1] + ", engine__math_min(" + f[2] + ", " + f[0] + "))", nil
		case id.Value == "lerp" && len(f) == 3:
			t.g.uses["lerp"] = true
			return "engine__e_lerp(" + f[0] + ", " + f[1] + ", " + f[2] + ")", nil
		}
	}
	return "", unsupported(n, "a number")
}

func (t *cExprTr) boolean(n ast.Node) (string, error) {
	switch n := n.(type) {
	case *ast.BoolNode:
		return cBool(n.Value), nil
	case *ast.ConstantNode:
		if v, ok := n.Value.(bool); ok {
			return cBool(v), nil
		}
	case *ast.IdentifierNode:
		switch n.Value {
		case "on_ground":
			return "(x->cond.on_ground != 0)", nil
		case "assumed_set":
			return "(x->cond.assumed_set != 0)", nil
		}
	case *ast.UnaryNode:
		if n.Operator == "!" || n.Operator == "not" {
			x, err := t.boolean(n.Node)
			if err != nil {
				return "", err
			}
			return "(!" + x + ")", nil
		}
	case *ast.CallNode:
		id, ok := n.Callee.(*ast.IdentifierNode)
		if !ok || id.Value != "bleed" || len(n.Arguments) != 1 {
			break
		}
		name, ok := n.Arguments[0].(*ast.StringNode)
		if !ok {
			break
		}
		i := slices.Index(t.g.p.Bleeds(), name.Value)
		if i < 0 || i >= thrustmap.MaxBleeds {
			return "0", nil
		}
		return fmt.Sprintf("(((x->cond.bleeds >> %d) & 1u) != 0)", i), nil
	case *ast.BinaryNode:
		switch n.Operator {
		case "&&", "and", "||", "or":
			a, err := t.boolean(n.Left)
			if err != nil {
				return "", err
			}
			b, err := t.boolean(n.Right)
			if err != nil {
				return "", err
			}
			op := "&&"
			if n.Operator == "||" || n.Operator == "or" {
				op = "||"
			}
			return "(" + a + " " + op + " " + b + ")", nil
		}
		a, err := t.number(n.Left)
		if err != nil {
			return "", err
		}
		b, err := t.number(n.Right)
		if err != nil {
			return "", err
		}
		switch n.Operator {
		case "<", "<=", ">", ">=", "==", "!=":
			return "(" + a + " " + n.Operator + " " + b + ")", nil
		}
	case *ast.ConditionalNode:
		c, err := t.boolean(n.Cond)
		if err != nil {
			return "", err
		}
		a, err := t.boolean(n.Exp1)
		if err != nil {
			return "", err
		}
		b, err := t.boolean(n.Exp2)
		if err != nil {
			return "", err
		}
		return "(" + c + " ? " + a + " : " + b + ")", nil
	}
	return "", unsupported(n, "true or false")
}

func unsupported(n ast.Node, want string) error {
	return fmt.Errorf("%s (%s) as %s is outside the subset the C export translates", n.String(), strings.TrimPrefix(fmt.Sprintf("%T", n), "*ast."), want)
}

func cBool(b bool) string {
	if b {
		return "1"
	}
	return "0"
}

// cNum is a C double literal that reads back as exactly v: Go's shortest
// round-trip decimal, which a C compiler rounds correctly.
func cNum(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NAN"
	case math.IsInf(v, 1):
		return "HUGE_VAL"
	case math.IsInf(v, -1):
		return "(-HUGE_VAL)"
	}
	s := strconv.FormatFloat(v, 'g', -1, 64)
	if !strings.ContainsAny(s, ".eE") {
		s += ".0"
	}
	return s
}

// cExprNum is cNum parenthesised when negative, for use inside expressions.
func cExprNum(v float64) string {
	s := cNum(v)
	if strings.HasPrefix(s, "-") {
		return "(" + s + ")"
	}
	return s
}

// cString is a C string literal of s: printable ASCII as is (with " \ and ?
// escaped, the last against trigraphs), every other byte in octal.
func cString(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c == '"' || c == '\\' || c == '?':
			b.WriteByte('\\')
			b.WriteByte(c)
		case c >= 0x20 && c < 0x7f:
			b.WriteByte(c)
		default:
			fmt.Fprintf(&b, "\\%03o", c)
		}
	}
	b.WriteByte('"')
	return b.String()
}

// cComment makes text safe inside a /* */ comment: no comment delimiters,
// no trigraphs, no control characters.
func cComment(s string) string {
	s = strings.Map(func(r rune) rune {
		if r < 0x20 || r == 0x7f {
			return ' '
		}
		return r
	}, s)
	for _, r := range [][2]string{{"*/", "* /"}, {"/*", "/ *"}, {"??", "? ?"}} {
		for strings.Contains(s, r[0]) {
			s = strings.ReplaceAll(s, r[0], r[1])
		}
	}
	return s
}

var cPrefixToken = regexp.MustCompile(`\b(engine|ENGINE)_`)

// code writes C text with the placeholder prefixes engine_ and ENGINE_ replaced by
// the chosen ones; args are inserted afterwards, untouched.
func (g *cGen) code(format string, args ...any) {
	format = cPrefixToken.ReplaceAllStringFunc(format, func(s string) string {
		if s == "ENGINE_" {
			return g.upper
		}
		return g.prefix
	})
	if len(args) == 0 {
		g.b.WriteString(format)
		return
	}
	fmt.Fprintf(&g.b, format, args...)
}

// numbers writes a C initializer list of values, eight to a line.
func (g *cGen) numbers(vs []float64) {
	for i, v := range vs {
		switch {
		case i == 0:
			g.b.WriteString("\n    ")
		case i%8 == 0:
			g.b.WriteString(",\n    ")
		default:
			g.b.WriteString(", ")
		}
		g.b.WriteString(cNum(v))
	}
	g.b.WriteString("\n")
}

func (g *cGen) write() {
	g.header()
	g.declarations()
	g.code("\n#ifndef ENGINE_HEADER_ONLY\n")
	g.code(cTypes)
	g.tables()
	g.code(cGridCode)
	if g.anyMonotone {
		g.code(cCubicCode)
	}
	g.code(cGridAtCode)
	if g.anyMonotone {
		g.code("    if (g->method == 1)\n        return engine__cubic(g, 0, 0, q, seg);\n")
	} else {
		g.code("    (void)seg; /* no monotone table */\n")
	}
	g.code(cGridAtTail)
	g.ratingCode()
	if g.hasExpr {
		g.exprCode()
	}
	g.gateTables()
	g.modelCode()
	g.publicCode()
	g.code("\n#endif /* ENGINE_HEADER_ONLY */\n")
}

// header writes the opening comment: what the file is, where it came from,
// the safety note, the tables, gates and levers.
func (g *cGen) header() {
	p := g.p
	w := func(format string, args ...any) {
		line := strings.TrimRight(cComment(fmt.Sprintf(format, args...)), " ")
		if line == "" {
			g.b.WriteString(" *\n")
			return
		}
		g.b.WriteString(" * " + line + "\n")
	}
	g.b.WriteString("/*\n")
	w("%s: thrust ratings and lever commands for %s", strings.TrimSuffix(g.prefix, "_"), p.Name())
	w("")
	w("Generated by thrustmap (export c) from profile %s", p.Source())
	if g.cal != nil {
		src := g.cal.Source()
		if src == "" {
			src = "(built in memory)"
		}
		w("and calibration %s.", src)
	} else {
		w("without a calibration (no raw lever functions).")
	}
	w("Do not edit: regenerate it from the profile instead.")
	w("")
	w("SIMULATION ONLY. NOT CERTIFIED. Never use this code, its data or its")
	w("results to set thrust on a real aircraft: real thrust settings come from")
	w("the approved flight manual and the engine control.")
	w("")
	w("Parameter %s (%s).", p.Parameter(), p.Parameter().Unit())
	if red, ok := p.Redline(); ok {
		w("Redline ([limits] max) %s: commands above it are cut and flagged LIMITED.", cNumText(red))
	}
	w("")
	w("Ratings (index: name, temperature basis, interpolation, grid):")
	for i, cr := range g.rats {
		r := cr.r
		w("  %d: %s, %s, %s, %s", i, r.Name(), r.Basis(), r.Table().Method(), gridText(g.grids[cr.table]))
		if cr.thrust >= 0 {
			w("     thrust_kn on the same grid")
		}
		switch cr.corner {
		case 1:
			w("     corner ISA%+g", cr.isaDev)
		case 2:
			w("     corner per altitude row (OAT): %s", numsText(cr.oats))
		}
		for k := cr.corrFirst; k < cr.corrFirst+cr.nCo; k++ {
			c := g.corrs[k]
			name := p.Bleeds()[c.bleed]
			if c.grid < 0 {
				w("     bleed %s: %s", name, cNumText(c.delta))
			} else {
				gr := g.grids[c.grid]
				w("     bleed %s: %s grid, %s", name, gr.method, gridText(gr))
			}
		}
	}
	if a := p.AssumedTemperature(); a != nil && g.anyAssumed {
		method := "table"
		if a.Corrected {
			method = "corrected"
		}
		w("")
		w("Assumed temperature (FAA AC 25-13): %s; max %s C; method %s; thrust", strings.Join(a.Ratings, ", "), cNumText(a.MaxC), method)
		w("reduction limit %s %%.", cNumText(a.MaxReductionPct))
	}
	w("")
	w("Gates (index: name, TLA deg, capture/hysteresis deg, command, when):")
	own := g.geoms[len(g.geoms)-1]
	for i, cg := range g.gates {
		cmd := cg.g.Rating
		if cg.g.Target != "" {
			cmd = cg.g.Target
			if cg.g.Rating != "" {
				cmd += " (fallback " + cg.g.Rating + ")"
			}
		}
		when := ""
		if cg.g.When != "" {
			when = ", when " + cg.g.When
		}
		w("  %d: %s, %s, %s/%s, %s%s", i, cg.g.Name, cNumText(cg.g.TLADeg), cNumText(own.capture[i]), cNumText(own.hysteresis[i]), cmd, when)
	}
	if lv := p.Lever(); g.idle >= 0 {
		ground := ""
		if lv.ReverseOnGroundOnly {
			ground = "; reverse in the air holds idle (INTERLOCK)"
		}
		w("Reverse range below gate %s's capture zone%s.", lv.IdleGate, ground)
	}
	if g.cal != nil {
		w("")
		w("Levers (calibration id: fit, points raw -> TLA, device range, deadband,")
		w("capture/hysteresis floors):")
		for _, geo := range g.geoms[:len(g.geoms)-1] {
			s := geo.cal.Spec()
			var pts []string
			for _, pt := range s.Points {
				pts = append(pts, cNumText(pt[0])+" "+cNumText(pt[1]))
			}
			w("  %d: %s, %s, %s..%s, %s counts, %s/%s", s.ID, s.Fit, strings.Join(pts, ", "),
				cNumText(s.RawMin), cNumText(s.RawMax), cNumText(s.Deadband), cNumText(s.MinCaptureDeg), cNumText(s.MinHysteresisDeg))
		}
	}
	w("")
	w("Interpolation: every table above is evaluated on its own points with the")
	w("Go implementation's formulas (multilinear, or the Fritsch-Butland monotone")
	w("cubic applied Mach, temperature, altitude), clamped at the edges. Nothing")
	w("is resampled: the largest interpolation difference from the Go")
	w("implementation is 0. thrustmap's tests measure it on x86-64 over tens of")
	w("thousands of targets and lever commands: identical to the last bit (gate")
	w("expressions with ** aside, where libm's pow and Go's may round the last")
	w("bit apart), and within 1e-9 relative wherever a compiler fuses")
	w("multiply-adds.")
	w("")
	w("Use: compile this file with -lm (C99; it needs only <math.h>, <stdint.h>")
	w("and <string.h> and allocates nothing). To use it from another file, define")
	w("%sHEADER_ONLY and #include it there for the declarations. One", g.upper)
	w("%slever_state per lever per thread, zeroed before first use.", g.prefix)
	g.b.WriteString(" */\n")
}

func cNumText(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func numsText(vs []float64) string {
	var s []string
	for _, v := range vs {
		s = append(s, cNumText(v))
	}
	return strings.Join(s, " ")
}

func gridText(c cGrid) string {
	names := [grid.NumAxes]string{"altitude_ft", "temperature_c", "mach"}
	var parts []string
	for a, xs := range c.axes {
		if xs == nil {
			continue
		}
		parts = append(parts, fmt.Sprintf("%s %d [%s..%s]", names[a], len(xs), cNumText(xs[0]), cNumText(xs[len(xs)-1])))
	}
	if len(parts) == 0 {
		return "one value"
	}
	return strings.Join(parts, " x ")
}

func (g *cGen) declarations() {
	p := g.p
	g.code(cDeclHead)
	g.code("\n#define ENGINE_NUM_RATINGS %d\n#define ENGINE_NUM_GATES %d\n#define ENGINE_NUM_LEVERS %d\n#define ENGINE_NUM_BLEEDS %d\n",
		len(g.rats), len(g.gates), len(g.geoms)-1, len(p.Bleeds()))
	g.code("#define ENGINE_PARAMETER %s\n#define ENGINE_UNIT %s\n", cString(p.Parameter().String()), cString(p.Parameter().Unit()))
	stops := [2]float64{math.Inf(-1), math.Inf(1)} // no [lever]: no end stops
	if lv := p.Lever(); lv.TLAMinDeg < lv.TLAMaxDeg {
		stops = [2]float64{lv.TLAMinDeg, lv.TLAMaxDeg}
	}
	g.code("#define ENGINE_TLA_MIN_DEG %s /* the lever's end stops */\n#define ENGINE_TLA_MAX_DEG %s\n", cNum(stops[0]), cNum(stops[1]))
	g.code(cDeclBody)
}

func (g *cGen) tables() {
	g.code("\n/* ---- tables ---- */\n")
	axisNames := [grid.NumAxes]string{"alt", "temp", "mach"}
	for i, c := range g.grids {
		g.code("\n/* %d: %s */\n", i, cComment(c.what))
		for a, xs := range c.axes {
			if xs == nil {
				continue
			}
			g.code("static const double engine__g%d_%s[%d] = {", i, axisNames[a], len(xs))
			g.numbers(xs)
			g.code("};\n")
		}
		g.code("static const double engine__g%d_v[%d] = {", i, len(c.values))
		g.numbers(c.values)
		g.code("};\n")
	}
	g.code("\nstatic const engine__grid engine__grids[%d] = {\n", len(g.grids))
	for i, c := range g.grids {
		var order, lens, strides, ptrs []string
		stride := 1
		var st [grid.NumAxes]int
		for a := grid.NumAxes - 1; a >= 0; a-- {
			if c.axes[a] != nil {
				st[a] = stride
				stride *= len(c.axes[a])
			}
		}
		for a, xs := range c.axes {
			if xs != nil {
				order = append(order, strconv.Itoa(a))
				ptrs = append(ptrs, fmt.Sprintf("engine__g%d_%s", i, axisNames[a]))
			} else {
				ptrs = append(ptrs, "0")
			}
			lens = append(lens, strconv.Itoa(len(xs)))
			strides = append(strides, strconv.Itoa(st[a]))
		}
		dims := len(order)
		for len(order) < 3 {
			order = append(order, "0")
		}
		method := 0
		if c.method == grid.Monotone {
			method = 1
		}
		g.code("    {%d, %d, {%s}, {%s}, {%s}, {%s}, engine__g%d_v},\n", method, dims,
			strings.Join(order, ", "), g.codeStr(strings.Join(ptrs, ", ")), strings.Join(lens, ", "), strings.Join(strides, ", "), i)
	}
	g.code("};\n")

	// Corners one OAT per altitude row.
	for i, cr := range g.rats {
		if cr.corner == 2 {
			g.code("\nstatic const double engine__corner%d_alt[%d] = {", i, len(cr.alts))
			g.numbers(cr.alts)
			g.code("};\nstatic const double engine__corner%d_oat[%d] = {", i, len(cr.oats))
			g.numbers(cr.oats)
			g.code("};\n")
		}
	}
	g.code("\n/* name, basis, table, thrust, corner, corner ISA deviation, corner rows, assumed, needs ISA, corrections */\n")
	g.code("static const engine__rating engine__ratings[%d] = {\n", len(g.rats))
	for i, cr := range g.rats {
		r := cr.r
		alts, oats := "0", "0"
		if cr.corner == 2 {
			alts, oats = g.codeStr(fmt.Sprintf("engine__corner%d_alt", i)), g.codeStr(fmt.Sprintf("engine__corner%d_oat", i))
		}
		g.code("    {%s, %d, %d, %d, %d, %s, %s, %s, %d, %d, %d, %d, %d},\n",
			cString(r.Name()), int(r.Basis()), cr.table, cr.thrust, cr.corner, cNum(cr.isaDev), alts, oats, len(cr.alts),
			b2i(r.Assumed()), b2i(r.Basis() == thrustmap.ISADev), cr.corrFirst, cr.nCo)
	}
	g.code("};\n")
	g.code("\n/* bleed bit, constant delta, grid (-1: the constant) */\n")
	corrs := g.corrs
	if len(corrs) == 0 {
		corrs = []cCorrection{{bleed: 0, grid: -1}} // C has no empty arrays; no rating refers to it
	}
	g.code("static const engine__correction engine__corrections[%d] = {\n", len(corrs))
	for _, c := range corrs {
		g.code("    {%d, %s, %d},\n", c.bleed, cNum(c.delta), c.grid)
	}
	g.code("};\n")
	g.code("\nstatic const char *const engine__bleed_names[%d] = {", max(1, len(g.p.Bleeds())))
	if len(g.p.Bleeds()) == 0 {
		g.b.WriteString("0")
	}
	for i, n := range g.p.Bleeds() {
		if i > 0 {
			g.b.WriteString(", ")
		}
		g.b.WriteString(cString(n))
	}
	g.code("};\n")
}

// codeStr applies the prefix to a generated fragment.
func (g *cGen) codeStr(s string) string {
	return cPrefixToken.ReplaceAllStringFunc(s, func(t string) string {
		if t == "ENGINE_" {
			return g.upper
		}
		return g.prefix
	})
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

func (g *cGen) ratingCode() {
	g.code(cAtmosCode, cNum(atmos.FeetToMeters), cNum(atmos.KelvinOffset), cNum(atmos.MinAltitudeFt), cNum(atmos.MaxAltitudeFt))
	g.code(cBasisCode)
	if red, ok := g.p.Redline(); ok {
		g.code(cLimitCode, cNum(red), cNum(red))
	} else {
		g.code(cNoLimitCode)
	}
	g.code(cPlainCode)
	a := g.p.AssumedTemperature()
	if g.anyAssumed && a != nil {
		if g.anyPerAltCorner {
			g.code(cInterp1Code)
		}
		g.code(cCornerHead)
		if g.anyPerAltCorner {
			g.code("    case 2:\n        *out = engine__interp1(r->corner_alts, r->corner_oats, r->corner_n, alt);\n        return 1;\n")
		}
		g.code(cCornerTail)
		g.code(cReduceCode, cNum(thrustmap.TemperatureTolC), cNum(a.MaxC), cNum(a.MaxC), cNum(a.MaxReductionPct))
		if g.p.Parameter() == thrustmap.N1 && a.Corrected {
			g.code("    /* Same corrected speed N1/sqrt(theta) as at Ta. */\n    v *= sqrt((oat + ENGINE__KELVIN) / (ta + ENGINE__KELVIN));\n")
		}
		g.code("    return engine__min_builtin(v, full);\n}\n")
	}
	g.code(cTargetHead)
	if g.anyAssumed && a != nil {
		g.code("    if (c->assumed_set && r->assumed)\n        value = engine__reduce(r, c, isa, full, res);\n")
	}
	g.code(cTargetTail)
}

func (g *cGen) exprCode() {
	g.code(cExprHead)
	if g.uses["rating_at"] || g.uses["assumed"] || g.uses["isa_temp"] {
		g.code(cFail)
	}
	if g.uses["min"] {
		g.code(cMathMin)
	}
	if g.uses["max"] {
		g.code(cMathMax)
	}
	if g.uses["lerp"] {
		g.code("\nstatic double engine__e_lerp(double a, double b, double f)\n{\n    return a + (b - a) * f;\n}\n")
	}
	if g.uses["rating"] {
		g.code(cERating)
	}
	if g.uses["rating_at"] {
		g.code(cERatingAt)
	}
	if g.uses["assumed"] {
		g.code(cEAssumed)
	}
	if g.uses["isa_temp"] {
		g.code(cEISATemp)
	}
	for _, e := range g.exprs {
		ret := "double"
		if e.boolean {
			ret = "int"
		}
		g.code("\n/* %s */\nstatic %s %s(engine__ctx *x)\n{\n    (void)x;\n    return ", cComment(e.comment), ret, g.codeStr(e.name))
		g.b.WriteString(g.codeStr(e.body))
		g.code(";\n}\n")
	}
	if g.hasTarget {
		g.code(cExprNumber)
	}
	if g.hasWhen {
		g.code(cExprTruth)
	}
}

func (g *cGen) gateTables() {
	if g.hasExpr {
		g.code(cGateExprType)
	} else {
		g.code(cGateType)
	}
	g.code("\n/* name, TLA, rating (-1: none), target, when */\nstatic const engine__gate engine__gates[ENGINE_NUM_GATES] = {\n")
	for _, cg := range g.gates {
		target, when := "0", "0"
		if cg.target != "" {
			target = g.codeStr(cg.target)
		}
		if cg.when != "" {
			when = g.codeStr(cg.when)
		}
		if g.hasExpr {
			g.code("    {%s, %s, %d, %s, %s},\n", cString(cg.g.Name), cNum(cg.g.TLADeg), cg.rating, target, when)
		} else {
			g.code("    {%s, %s, %d},\n", cString(cg.g.Name), cNum(cg.g.TLADeg), cg.rating)
		}
	}
	g.code("};\n")
	g.code("\n/* calibration id, calibrated, forward grid, inverse grid, inverted, monotone fit,\n   device range, calibrated raw range, deadband, capture and hysteresis per gate */\n")
	g.code("static const engine__geom engine__geoms[%d] = {\n", len(g.geoms))
	for _, geo := range g.geoms {
		var rawMin, rawMax, dead float64
		if geo.cal != nil {
			s := geo.cal.Spec()
			rawMin, rawMax, dead = s.RawMin, s.RawMax, s.Deadband
		}
		caps := make([]string, len(geo.capture))
		hyst := make([]string, len(geo.hysteresis))
		for i := range geo.capture {
			caps[i], hyst[i] = cNum(geo.capture[i]), cNum(geo.hysteresis[i])
		}
		g.code("    {%d, %d, %d, %d, %d, %d, %s, %s, %s, %s, %s,\n     {%s},\n     {%s}},\n",
			geo.id, b2i(geo.cal != nil), geo.forward, geo.inverse, b2i(geo.inverted), b2i(geo.monotone),
			cNum(rawMin), cNum(rawMax), cNum(geo.rawLo), cNum(geo.rawHi), cNum(dead),
			strings.Join(caps, ", "), strings.Join(hyst, ", "))
	}
	g.code("};\n")
}

func (g *cGen) modelCode() {
	lv := g.p.Lever()
	g.code("\n#define ENGINE__IDLE (%d)\n#define ENGINE__ALWAYS 0x%xu\n", g.idle, g.always)
	g.code(cStateCode)
	// own
	g.code(cOwnHead)
	if g.hasTarget {
		g.code(cOwnExpr)
	}
	g.code(cOwnTail)
	g.code(cActiveHead)
	switch {
	case g.hasWhen:
		g.code(cActiveWhen)
	case g.hasTarget:
		g.code("    const engine__gate *g = &engine__gates[i];\n")
	default:
		g.code("    (void)s;\n    (void)i;\n    (void)tla;\n    return 1;\n}\n")
	}
	switch {
	case g.hasTarget:
		g.code(cActiveTarget)
	case g.hasWhen:
		g.code("    return 1;\n}\n")
	}
	g.code(cEffectiveCode, max(g.idle, 0))
	g.code(cCommandHead)
	if g.anyTLA {
		g.code("    } else {\n        /* A gate expression reads tla: work the gates out at every position. */\n        engine__invalidate(s, c);\n")
	}
	g.code(cCommandBody)
	if g.idle >= 0 {
		g.code("    if (tla < engine__gates[ENGINE__IDLE].tla - geo->capture[ENGINE__IDLE]) {\n        out->reverse = 1;\n")
		if lv.ReverseOnGroundOnly {
			g.code(cInterlock)
		}
		g.code("    }\n")
	}
	g.code(cCommandTail)
}

func (g *cGen) publicCode() {
	g.code(cPublicCode)
	if len(g.geoms) > 1 {
		g.code(cLeverCode)
	}
}

// ---- the C, with engine_ and ENGINE_ standing for the chosen prefix ----

const cDeclHead = `
#ifndef ENGINE_DECLARED
#define ENGINE_DECLARED

#include <math.h>
#include <stdint.h>
#include <string.h>
`

const cDeclBody = `#define ENGINE_NO_LEVER (-1) /* CommandAtTLA with the profile's own gate zones */

/* Return codes. */
#define ENGINE_OK 0
#define ENGINE_ERR_CONDITIONS (-1) /* not finite, outside the standard atmosphere, Mach outside 0-5, or below absolute zero */
#define ENGINE_ERR_RATING (-2)     /* no rating of that index */
#define ENGINE_ERR_LEVER (-3)      /* no lever of that id, or a lever without calibration */
#define ENGINE_ERR_INPUT (-4)      /* a raw count or lever angle that is not a finite number */
#define ENGINE_ERR_NO_GATE (-5)    /* no gate is active at these conditions */

/* engine_command.flags and engine_result.flags */
#define ENGINE_FLAG_RAISED 0x1u    /* raised to the effective target of the gate nearer idle */
#define ENGINE_FLAG_LIMITED 0x2u   /* cut to the redline */
#define ENGINE_FLAG_INTERLOCK 0x4u /* reverse selected in the air: holding idle */
#define ENGINE_FLAG_FALLBACK 0x8u  /* a gate expression failed: its rating or the last command was used */

/* .clamped: inputs held at the edge of a table or range */
#define ENGINE_CLAMP_ALTITUDE 0x1u
#define ENGINE_CLAMP_TEMPERATURE 0x2u
#define ENGINE_CLAMP_MACH 0x4u
#define ENGINE_CLAMP_RAW 0x8u     /* raw counts beyond the calibrated points */
#define ENGINE_CLAMP_DEVICE 0x10u /* raw counts beyond the device range */
#define ENGINE_CLAMP_LEVER 0x20u  /* lever angle beyond the end stops: held at the stop */

/* engine_result.reasons: the assumed-temperature rules that acted, in order */
#define ENGINE_REASON_TA_NOT_ABOVE_OAT 0x1u
#define ENGINE_REASON_TA_BELOW_CORNER 0x2u
#define ENGINE_REASON_TA_ABOVE_MAX 0x4u
#define ENGINE_REASON_REDUCTION_LIMITED 0x8u
#define ENGINE_REASON_REDUCTION_NOT_CHECKED 0x10u

typedef struct {
    double alt_ft;    /* pressure altitude, ft */
    double oat_c;     /* outside (static) air temperature, deg C */
    double mach;
    uint64_t bleeds;  /* bit i: bleed i is on (engine_bleed_index) */
    int on_ground;
    int assumed_set;  /* an assumed temperature is selected */
    double assumed_c; /* the assumed temperature, deg C, when assumed_set */
} engine_conditions;

typedef struct {
    double value;
    uint32_t flags;   /* ENGINE_FLAG_LIMITED */
    uint32_t clamped; /* ENGINE_CLAMP_* */
    /* The assumed-temperature method, when evaluated (assumed_set and an assumed-temperature rating). */
    int evaluated;
    int applied;           /* the value was reduced */
    uint32_t reasons;      /* ENGINE_REASON_* */
    double assumed_c;      /* as asked */
    double effective_c;    /* the temperature the value was taken at */
    double value_full;     /* the full rated value at the actual conditions */
    int thrust_checked;    /* the rating has a thrust grid */
    double thrust_reduction_pct;
} engine_result;

typedef struct {
    double tla_deg;
    double value;
    int gate;         /* reported gate (with hysteresis), or -1 */
    int lower, upper; /* gates interpolated between, or -1 inside a capture zone */
    double fraction;  /* between lower's and upper's zone edges, 0 to 1 */
    int reverse;
    uint32_t flags;   /* ENGINE_FLAG_* */
    uint32_t clamped; /* ENGINE_CLAMP_* */
} engine_command;

/* Private: one gate's values at the state's conditions. */
typedef struct {
    int has_own;
    double own;
    uint32_t own_flags, own_clamp;
    double eff;
    uint32_t flags, clamp;
} engine__gate_eval;

/* One lever's state: zero it (or engine_lever_reset) before first use. The
   fields after has_last are a cache of gate values at cond. */
typedef struct {
    double held;
    int holding;
    int gate_plus1;
    double last;
    int has_last;
    int geom_plus1;
    engine_conditions cond;
    int when_failed;
    uint32_t when_known, when_true, own_known, eff_known;
    engine__gate_eval gates[ENGINE_NUM_GATES];
} engine_lever_state;

/* The index of the named rating, or -1. */
int engine_rating_index(const char *name);
/* The name of rating i, or "" when there is none. */
const char *engine_rating_name(int rating);
/* The bit of the named bleed in engine_conditions.bleeds, or -1. */
int engine_bleed_index(const char *name);
/* The name of gate i, or "" when there is none (as for gate -1). */
const char *engine_gate_name(int gate);
/* The rating's target at c: table, reduction (when c->assumed_set and the
   rating is an assumed-temperature rating), bleed corrections, redline. */
int engine_target(int rating, const engine_conditions *c, engine_result *out);
/* Returns a lever state to uncaptured with no held reading. */
void engine_lever_reset(engine_lever_state *s);
/* The command for lever angle tla_deg, with the gate zones of lever id
   (ENGINE_NO_LEVER: the profile's own). */
int engine_command_tla(int lever, engine_lever_state *s, double tla_deg, const engine_conditions *c, engine_command *out);
#if ENGINE_NUM_LEVERS > 0
/* The calibration id of calibrated lever i (0 to ENGINE_NUM_LEVERS-1). */
int engine_lever_id(int i);
/* The command for a raw count of lever id: deadband, calibration, gates. */
int engine_command_raw(int lever, engine_lever_state *s, double raw, const engine_conditions *c, engine_command *out);
/* Raw count -> lever angle; clamped gets ENGINE_CLAMP_RAW and ENGINE_CLAMP_DEVICE. */
int engine_raw_to_tla(int lever, double raw, double *tla_deg, uint32_t *clamped);
/* Lever angle -> raw count, for marking notches; clamped: beyond the calibration. */
int engine_tla_to_raw(int lever, double tla_deg, double *raw, int *clamped);
#endif

#endif /* ENGINE_DECLARED */
`

const cTypes = `
typedef struct {
    int method;           /* 0 linear, 1 monotone */
    int dims;             /* axes present */
    int order[3];         /* the present axes, outermost first */
    const double *axis[3];
    int len[3];           /* 0: axis absent */
    int stride[3];
    const double *values; /* altitude outermost, Mach innermost */
} engine__grid;

typedef struct {
    const char *name;
    int basis;            /* 0 OAT, 1 TAT, 2 ISA_DEV */
    int table, thrust;    /* grid indexes; thrust -1 when none */
    int corner;           /* 0 none, 1 ISA deviation, 2 one OAT per altitude row */
    double corner_isa_dev;
    const double *corner_alts, *corner_oats;
    int corner_n;
    int assumed, needs_isa;
    int corr_first, corr_n;
} engine__rating;

typedef struct {
    int bleed;
    double delta;
    int grid;
} engine__correction;

/* The gate zones one lever sees, and its calibration. */
typedef struct {
    int id;                       /* calibration id, ENGINE_NO_LEVER for the profile's own zones */
    int calibrated;
    int forward, inverse;         /* grids raw -> TLA and TLA -> raw */
    int inverted, monotone;       /* TLA falls as raw rises; monotone fit */
    double raw_min, raw_max;      /* the device range */
    double raw_lo, raw_hi;        /* the calibrated raw range */
    double deadband;              /* counts */
    double capture[ENGINE_NUM_GATES]; /* the profile's, floored by the calibration's */
    double hysteresis[ENGINE_NUM_GATES];
} engine__geom;
`

const cGridCode = `
/* ---- interpolation (thrustmap/grid) ---- */

static double engine__lerp(double a, double b, double f)
{
    return a * (1 - f) + b * f;
}

static int engine__segment(const double *xs, int n, double x)
{
    int lo = 0, hi = n - 2;
    while (lo < hi) {
        int mid = (int)((unsigned)(lo + hi + 1) >> 1);
        if (xs[mid] <= x)
            lo = mid;
        else
            hi = mid - 1;
    }
    return lo;
}
`

const cCubicCode = `
/* Edge derivative of a Fritsch-Butland (gonum interp) monotone cubic. */
static double engine__fb_edge(double de, double di, double he, double h, double f)
{
    double g = (f * de - he * di) / h;
    if (g * de <= 0)
        return 0;
    if (de * di <= 0 && fabs(g) > 3 * fabs(de))
        return 3 * de;
    return g;
}

static double engine__fb_sec(const double *xs, const double *ys, int lo, int j)
{
    return (ys[j + 1 - lo] - ys[j - lo]) / (xs[j + 1] - xs[j]);
}

/* The derivative at node k of xs (n points); ys holds nodes lo.. on. */
static double engine__fb_slope(const double *xs, int n, const double *ys, int lo, int k)
{
    double sp, sn;
    if (n == 2)
        return engine__fb_sec(xs, ys, lo, 0);
    if (k == 0)
        return engine__fb_edge(engine__fb_sec(xs, ys, lo, 0), engine__fb_sec(xs, ys, lo, 1), xs[1] - xs[0], xs[2] - xs[0], xs[1] + xs[2] - 2 * xs[0]);
    if (k == n - 1)
        return engine__fb_edge(engine__fb_sec(xs, ys, lo, n - 2), engine__fb_sec(xs, ys, lo, n - 3), xs[n - 1] - xs[n - 2], xs[n - 1] - xs[n - 3], 2 * xs[n - 1] - xs[n - 3] - xs[n - 2]);
    sp = engine__fb_sec(xs, ys, lo, k - 1);
    sn = engine__fb_sec(xs, ys, lo, k);
    if (sp * sn <= 0)
        return 0;
    return 3 * (xs[k + 1] - xs[k - 1]) /
           ((2 * xs[k + 1] - xs[k - 1] - xs[k]) / sp + (xs[k + 1] + xs[k] - 2 * xs[k - 1]) / sn);
}

static double engine__hermite(const double *xs, int n, const double *ys, int lo, int i, double x)
{
    double y0 = ys[i - lo], y1 = ys[i + 1 - lo], d0, d1, h, dy, a2, a3, dx;
    if (x == xs[i])
        return y0;
    if (x == xs[i + 1])
        return y1;
    d0 = engine__fb_slope(xs, n, ys, lo, i);
    d1 = engine__fb_slope(xs, n, ys, lo, i + 1);
    h = xs[i + 1] - xs[i];
    dy = y1 - y0;
    a2 = (3 * dy - (2 * d0 + d1) * h) / h / h;
    a3 = (-2 * dy + (d0 + d1) * h) / h / h / h;
    dx = x - xs[i];
    return ((a3 * dx + a2) * dx + d0) * dx + y0;
}

/* The monotone interpolant along axis a and the axes inside it. */
static double engine__cubic(const engine__grid *g, int a, int off, const double *q, const int *seg)
{
    const double *xs;
    double ys[4];
    int i, lo, hi, k;
    while (a < 3 && g->len[a] == 0)
        a++;
    if (a == 3)
        return g->values[off];
    xs = g->axis[a];
    i = seg[a];
    lo = i - 1 > 0 ? i - 1 : 0;
    hi = i + 2 < g->len[a] - 1 ? i + 2 : g->len[a] - 1;
    for (k = lo; k <= hi; k++)
        ys[k - lo] = engine__cubic(g, a + 1, off + k * g->stride[a], q, seg);
    return engine__hermite(xs, g->len[a], ys, lo, i, q[a]);
}
`

const cGridAtCode = `
/* The grid at (altitude, temperature, Mach), clamped to its edges; the
   clamped axes are stored in *clamped. */
static double engine__grid_at(const engine__grid *g, double q0, double q1, double q2, uint32_t *clamped)
{
    double q[3], f[3] = {0, 0, 0};
    int seg[3] = {0, 0, 0}, s[3] = {0, 0, 0};
    int base = 0, d;
    uint32_t cl = 0;
    const double *v;
    q[0] = q0;
    q[1] = q1;
    q[2] = q2;
    for (d = 0; d < g->dims; d++) {
        int a = g->order[d], last = g->len[a] - 1, i;
        const double *xs = g->axis[a];
        double x = q[a];
        if (x < xs[0]) {
            x = xs[0];
            cl |= 1u << a;
        } else if (x > xs[last]) {
            x = xs[last];
            cl |= 1u << a;
        }
        i = engine__segment(xs, g->len[a], x);
        seg[a] = i;
        q[a] = x;
        base += i * g->stride[a];
        s[d] = g->stride[a];
        f[d] = (x - xs[i]) / (xs[i + 1] - xs[i]);
    }
    *clamped = cl;
`

const cGridAtTail = `    v = g->values + base;
    switch (g->dims) {
    case 0:
        return v[0];
    case 1:
        return engine__lerp(v[0], v[s[0]], f[0]);
    case 2:
        return engine__lerp(engine__lerp(v[0], v[s[1]], f[1]), engine__lerp(v[s[0]], v[s[0] + s[1]], f[1]), f[0]);
    }
    return engine__lerp(engine__lerp(engine__lerp(v[0], v[s[2]], f[2]), engine__lerp(v[s[1]], v[s[1] + s[2]], f[2]), f[1]),
                    engine__lerp(engine__lerp(v[s[0]], v[s[0] + s[2]], f[2]), engine__lerp(v[s[0] + s[1]], v[s[0] + s[1] + s[2]], f[2]), f[1]),
                    f[0]);
}
`

// cAtmosCode takes feet-to-metres, the kelvin offset and the altitude
// limits of package atmos. The layers are the ICAO standard's, as there.
const cAtmosCode = `
/* ---- standard atmosphere (thrustmap/atmos) and conditions ---- */

#define ENGINE__FT_TO_M (%s)
#define ENGINE__KELVIN (%s)
#define ENGINE__MIN_ALT_FT (%s)
#define ENGINE__MAX_ALT_FT (%s)

/* ISA temperature, deg C, at a pressure altitude inside the model. */
static double engine__isa_c(double alt_ft)
{
    double h = alt_ft * ENGINE__FT_TO_M;
    if (h >= 20000.0)
        return 216.65 + 0.001 * (h - 20000.0) - ENGINE__KELVIN;
    if (h >= 11000.0)
        return 216.65 + 0.0 * (h - 11000.0) - ENGINE__KELVIN;
    return 288.15 + -0.0065 * (h - 0.0) - ENGINE__KELVIN;
}

static int engine__check(const engine_conditions *c)
{
    if (!isfinite(c->alt_ft) || !isfinite(c->oat_c) || !isfinite(c->mach) || (c->assumed_set && !isfinite(c->assumed_c)))
        return ENGINE_ERR_CONDITIONS;
    if (c->alt_ft < ENGINE__MIN_ALT_FT || c->alt_ft > ENGINE__MAX_ALT_FT)
        return ENGINE_ERR_CONDITIONS;
    if (c->mach < 0 || c->mach > 5)
        return ENGINE_ERR_CONDITIONS;
    if (c->oat_c <= -ENGINE__KELVIN || (c->assumed_set && c->assumed_c <= -ENGINE__KELVIN))
        return ENGINE_ERR_CONDITIONS;
    return ENGINE_OK;
}
`

const cBasisCode = `
/* ---- ratings (thrustmap/target.go) ---- */

/* An OAT in the rating's temperature basis. */
static double engine__basis_temp(int basis, double oat, double mach, double isa)
{
    switch (basis) {
    case 1:
        return (oat + ENGINE__KELVIN) * (1 + 0.2 * mach * mach) - ENGINE__KELVIN;
    case 2:
        return oat - isa;
    }
    return oat;
}

static double engine__base(const engine__rating *r, double alt, double oat, double mach, double isa, uint32_t *clamped)
{
    return engine__grid_at(&engine__grids[r->table], alt, engine__basis_temp(r->basis, oat, mach, isa), mach, clamped);
}

/* The corrections of the bleeds on in c, adding clamped axes to *cl. */
static double engine__bleed_correction(const engine__rating *r, const engine_conditions *c, double isa, uint32_t *cl)
{
    double sum = 0.0;
    int i;
    if (c->bleeds == 0)
        return 0;
    for (i = 0; i < r->corr_n; i++) {
        const engine__correction *k = &engine__corrections[r->corr_first + i];
        uint32_t gc = 0;
        if (((c->bleeds >> k->bleed) & 1u) == 0)
            continue;
        if (k->grid < 0) {
            sum += k->delta;
            continue;
        }
        sum += engine__grid_at(&engine__grids[k->grid], c->alt_ft, engine__basis_temp(r->basis, c->oat_c, c->mach, isa), c->mach, &gc);
        *cl |= gc;
    }
    return sum;
}
`

const cLimitCode = `
/* The redline ([limits] max). */
static double engine__limit(double v, uint32_t *flags)
{
    if (v > %s) {
        *flags = ENGINE_FLAG_LIMITED;
        return %s;
    }
    *flags = 0;
    return v;
}
`

const cNoLimitCode = `
/* No redline ([limits] max) is set. */
static double engine__limit(double v, uint32_t *flags)
{
    *flags = 0;
    return v;
}
`

const cPlainCode = `
/* The rating at checked conditions with corrections and redline, no reduction. */
static double engine__plain(const engine__rating *r, const engine_conditions *c, uint32_t *flags, uint32_t *clamped)
{
    double isa = NAN, v;
    uint32_t cl = 0;
    if (r->needs_isa)
        isa = engine__isa_c(c->alt_ft);
    v = engine__base(r, c->alt_ft, c->oat_c, c->mach, isa, &cl);
    if (c->bleeds != 0)
        v += engine__bleed_correction(r, c, isa, &cl);
    *clamped = cl;
    return engine__limit(v, flags);
}
`

const cInterp1Code = `
static double engine__interp1(const double *xs, const double *ys, int n, double x)
{
    int i = 0;
    double f;
    if (x <= xs[0])
        return ys[0];
    if (x >= xs[n - 1])
        return ys[n - 1];
    while (i < n - 2 && xs[i + 1] <= x)
        i++;
    f = (x - xs[i]) / (xs[i + 1] - xs[i]);
    return ys[i] * (1 - f) + ys[i + 1] * f;
}
`

const cCornerHead = `
/* The flat-rating corner as an OAT; 0 when the rating declares none. */
static int engine__corner(const engine__rating *r, double alt, double isa, double *out)
{
    switch (r->corner) {
    case 1:
        *out = isa + r->corner_isa_dev;
        return 1;
`

const cCornerTail = `    }
    (void)alt;
    return 0;
}
`

const cReduceCode = `
static double engine__thrust_at(const engine__rating *r, double alt, double oat, double mach, double isa)
{
    uint32_t cl = 0;
    return engine__grid_at(&engine__grids[r->thrust], alt, engine__basis_temp(r->basis, oat, mach, isa), mach, &cl);
}

/* An OAT from a temperature in the rating's basis. */
static double engine__oat_of(int basis, double t, double mach, double isa)
{
    switch (basis) {
    case 1:
        return (t + ENGINE__KELVIN) / (1 + 0.2 * mach * mach) - ENGINE__KELVIN;
    case 2:
        return t + isa;
    }
    return t;
}

/* The largest temperature in [lo, hi] whose rated thrust is at least lim,
   given thrust(lo) >= lim > thrust(hi): the thrust grid's temperature nodes
   are walked down from hi to the last crossing, which is solved exactly in
   a linear grid and by bisection in a monotone one. */
static double engine__largest_meeting(const engine__rating *r, double lim, double alt, double lo, double hi, double mach, double isa)
{
    const engine__grid *g = &engine__grids[r->thrust];
    double top = hi, f_lo, f_top;
    int i;
    for (i = g->len[1] - 1; i >= 0; i--) {
        double t = engine__oat_of(r->basis, g->axis[1][i], mach, isa);
        if (t >= top)
            continue;
        if (t <= lo)
            break;
        if (engine__thrust_at(r, alt, t, mach, isa) >= lim) {
            lo = t;
            break;
        }
        top = t;
    }
    f_lo = engine__thrust_at(r, alt, lo, mach, isa);
    f_top = engine__thrust_at(r, alt, top, mach, isa);
    if (g->method == 0 && f_lo != f_top) {
        double t = lo + (lim - f_lo) / (f_top - f_lo) * (top - lo);
        while (engine__thrust_at(r, alt, t, mach, isa) < lim && t > lo)
            t = nextafter(t, lo);
        return t;
    }
    for (i = 0; i < 100; i++) {
        double mid = (lo + top) / 2;
        if (mid == lo || mid == top)
            break;
        if (engine__thrust_at(r, alt, mid, mach, isa) >= lim)
            lo = mid;
        else
            top = mid;
    }
    return lo;
}

/* Go's built-in min of two float64s. */
static double engine__min_builtin(double x, double y)
{
    if (isnan(x) || isnan(y))
        return NAN;
    if (x == 0 && y == 0)
        return signbit(x) ? x : y;
    return x < y ? x : y;
}

/* The tolerance of rule 1's temperature comparisons, degrees C. */
#define ENGINE__TEMP_TOL %s

/* Rule 1 at assumed temperature ta: no reduction at or below the OAT, nor at
   or below the corner; records the reason and returns 1 when it acts. */
static int engine__full_rating(double ta, double oat, double corner, int has_corner, engine_result *res)
{
    if (ta <= oat + ENGINE__TEMP_TOL) {
        res->reasons |= ENGINE_REASON_TA_NOT_ABOVE_OAT;
        return 1;
    }
    if (has_corner && ta <= corner + ENGINE__TEMP_TOL) {
        res->reasons |= ENGINE_REASON_TA_BELOW_CORNER;
        return 1;
    }
    return 0;
}

/* The assumed-temperature method (FAA AC 25-13), rule by rule: the table
   value to use before bleed corrections; full is the value at the OAT. */
static double engine__reduce(const engine__rating *r, const engine_conditions *c, double isa, double full, engine_result *res)
{
    double alt = c->alt_ft, oat = c->oat_c, mach = c->mach, ta = c->assumed_c, corner = 0, v;
    uint32_t cl = 0;
    int has_corner = engine__corner(r, alt, isa, &corner);
    res->evaluated = 1;
    res->assumed_c = c->assumed_c;
    res->effective_c = oat;
    res->thrust_checked = r->thrust >= 0;
    /* Rule 1: no reduction at or below the OAT, nor at or below the corner. */
    if (engine__full_rating(ta, oat, corner, has_corner, res))
        return full;
    /* Rule 2: no higher than the maximum assumed temperature; rule 1 then
       applies again at the temperature cut to. */
    if (ta > %s) {
        ta = %s;
        res->reasons |= ENGINE_REASON_TA_ABOVE_MAX;
        if (engine__full_rating(ta, oat, corner, has_corner, res))
            return full;
    }
    /* Rule 3: the thrust reduction limit. */
    if (r->thrust < 0) {
        res->reasons |= ENGINE_REASON_REDUCTION_NOT_CHECKED;
    } else {
        double thrust_full = engine__thrust_at(r, alt, oat, mach, isa);
        double lim = (1 - %s / 100) * thrust_full;
        if (engine__thrust_at(r, alt, ta, mach, isa) < lim) {
            ta = engine__largest_meeting(r, lim, alt, oat, ta, mach, isa);
            res->reasons |= ENGINE_REASON_REDUCTION_LIMITED;
        }
        if (thrust_full > 0)
            res->thrust_reduction_pct = 100 * (1 - engine__thrust_at(r, alt, ta, mach, isa) / thrust_full);
    }
    /* Rule 4: the value at the effective temperature, never above full. */
    res->effective_c = ta;
    res->applied = 1;
    v = engine__base(r, alt, ta, mach, isa, &cl);
    res->clamped |= cl;
`

const cTargetHead = `
static int engine__target_r(const engine__rating *r, const engine_conditions *c, engine_result *res)
{
    double isa = NAN, full, value, corr;
    uint32_t cl = 0, f = 0;
    memset(res, 0, sizeof *res);
    if (engine__check(c) != ENGINE_OK)
        return ENGINE_ERR_CONDITIONS;
    if (r->needs_isa || c->assumed_set)
        isa = engine__isa_c(c->alt_ft);
    full = engine__base(r, c->alt_ft, c->oat_c, c->mach, isa, &cl);
    res->clamped = cl;
    value = full;
`

const cTargetTail = `    corr = engine__bleed_correction(r, c, isa, &res->clamped);
    res->value = engine__limit(value + corr, &res->flags);
    if (res->evaluated)
        res->value_full = engine__limit(full + corr, &f);
    return ENGINE_OK;
}
`

const cExprHead = `
/* ---- gate expressions (thrustmap/expr.go, fastexpr.go) ---- */

typedef struct {
    engine_conditions cond;
    double tla, tat, isa_dev, assumed_temp;
    int err; /* a function failed: the expression fails */
} engine__ctx;

static void engine__ctx_set(engine__ctx *x, const engine_conditions *c, double tla)
{
    x->cond = *c;
    x->tla = tla;
    x->tat = engine__basis_temp(1, c->oat_c, c->mach, 0);
    x->isa_dev = c->oat_c - engine__isa_c(c->alt_ft);
    x->assumed_temp = c->assumed_set ? c->assumed_c : 0;
    x->err = 0;
}
`

const cFail = `
static double engine__fail(engine__ctx *x)
{
    x->err = 1;
    return NAN;
}
`

const cMathMin = `
/* Go's math.Min. */
static double engine__math_min(double x, double y)
{
    if (isinf(x) && x < 0)
        return x;
    if (isinf(y) && y < 0)
        return y;
    if (isnan(x) || isnan(y))
        return NAN;
    if (x == 0 && x == y)
        return signbit(x) ? x : y;
    return x < y ? x : y;
}
`

const cMathMax = `
/* Go's math.Max. */
static double engine__math_max(double x, double y)
{
    if (isinf(x) && x > 0)
        return x;
    if (isinf(y) && y > 0)
        return y;
    if (isnan(x) || isnan(y))
        return NAN;
    if (x == 0 && x == y)
        return signbit(x) ? y : x;
    return x > y ? x : y;
}
`

const cERating = `
/* rating("name"): corrections included, no reduction. */
static double engine__e_rating(engine__ctx *x, int r)
{
    uint32_t f, cl;
    return engine__plain(&engine__ratings[r], &x->cond, &f, &cl);
}
`

const cERatingAt = `
/* rating_at("name", alt, oat) */
static double engine__e_rating_at(engine__ctx *x, int r, double alt, double oat)
{
    engine_conditions c = x->cond;
    uint32_t f, cl;
    c.alt_ft = alt;
    c.oat_c = oat;
    if (engine__check(&c) != ENGINE_OK)
        return engine__fail(x);
    return engine__plain(&engine__ratings[r], &c, &f, &cl);
}
`

const cEAssumed = `
/* assumed("name"): the target with the reduction at the assumed temperature. */
static double engine__e_assumed(engine__ctx *x, int r)
{
    engine_result res;
    if (engine__target_r(&engine__ratings[r], &x->cond, &res) != ENGINE_OK)
        return engine__fail(x);
    return res.value;
}
`

const cEISATemp = `
/* isa_temp(alt) */
static double engine__e_isa_temp(engine__ctx *x, double alt)
{
    if (!isfinite(alt) || alt < ENGINE__MIN_ALT_FT || alt > ENGINE__MAX_ALT_FT)
        return engine__fail(x);
    return engine__isa_c(alt);
}
`

const cExprNumber = `
/* A target: fails on a function's failure or a result that is not finite. */
static int engine__number(const engine_conditions *c, double (*fn)(engine__ctx *), double tla, double *v)
{
    engine__ctx x;
    double r;
    engine__ctx_set(&x, c, tla);
    r = fn(&x);
    if (x.err || !isfinite(r))
        return -1;
    *v = r;
    return 0;
}
`

const cExprTruth = `
/* A when. */
static int engine__truth(const engine_conditions *c, int (*fn)(engine__ctx *), double tla, int *b)
{
    engine__ctx x;
    int r;
    engine__ctx_set(&x, c, tla);
    r = fn(&x);
    if (x.err)
        return -1;
    *b = r;
    return 0;
}
`

const cGateExprType = `
typedef struct {
    const char *name;
    double tla;
    int rating; /* -1: none */
    double (*target)(engine__ctx *);
    int (*when)(engine__ctx *);
} engine__gate;
`

const cGateType = `
typedef struct {
    const char *name;
    double tla;
    int rating;
} engine__gate;
`

const cStateCode = `
/* ---- lever commands (thrustmap/model.go) ---- */

static int engine__same_cond(const engine_conditions *a, const engine_conditions *b)
{
    return a->alt_ft == b->alt_ft && a->oat_c == b->oat_c && a->mach == b->mach && a->bleeds == b->bleeds &&
           !a->on_ground == !b->on_ground && !a->assumed_set == !b->assumed_set && a->assumed_c == b->assumed_c;
}

/* Drops the gate values worked out at other conditions. */
static void engine__invalidate(engine_lever_state *s, const engine_conditions *c)
{
    s->cond = *c;
    s->when_failed = 0;
    s->when_known = s->own_known = s->eff_known = 0;
}
`

const cOwnHead = `
/* Gate i's own target, worked out once per conditions. */
static engine__gate_eval *engine__own(engine_lever_state *s, int i, double tla)
{
    engine__gate_eval *e = &s->gates[i];
    const engine__gate *g = &engine__gates[i];
    uint32_t bit = 1u << i, f = 0;
    if (s->own_known & bit)
        return e;
    s->own_known |= bit;
    memset(e, 0, sizeof *e);
`

const cOwnExpr = `    if (g->target) {
        double v;
        if (engine__number(&s->cond, g->target, tla, &v) == 0) {
            e->own = engine__limit(v, &e->own_flags);
            e->has_own = 1;
            return e;
        }
        e->own_flags = ENGINE_FLAG_FALLBACK;
        if (g->rating < 0) {
            e->own = s->last;
            e->has_own = s->has_last;
            return e;
        }
    }
`

const cOwnTail = `    (void)tla;
    e->own = engine__plain(&engine__ratings[g->rating], &s->cond, &f, &e->own_clamp);
    e->has_own = 1;
    e->own_flags |= f;
    return e;
}
`

const cActiveHead = `
/* Whether gate i takes part at the state's conditions: its when holds and
   it has a target (its own, its fallback rating, or the last command). */
static int engine__active(engine_lever_state *s, int i, double tla)
{
`

const cActiveWhen = `    uint32_t bit = 1u << i;
    const engine__gate *g = &engine__gates[i];
    if (g->when) {
        if ((s->when_known & bit) == 0) {
            int ok = 0;
            s->when_known |= bit;
            if (engine__truth(&s->cond, g->when, tla, &ok) != 0)
                s->when_failed = 1; /* the gate drops out and every command says so */
            if (ok)
                s->when_true |= bit;
            else
                s->when_true &= ~bit;
        }
        if ((s->when_true & bit) == 0)
            return 0;
    }
`

const cActiveTarget = `    if (g->target == 0 || g->rating >= 0)
        return 1;
    return engine__own(s, i, tla)->has_own;
}
`

// cEffectiveCode takes max(idle, 0).
const cEffectiveCode = `
/* Gate gi (active) with its effective target: its own, raised to the
   effective target of the active gate next nearer idle. */
static const engine__gate_eval *engine__effective(engine_lever_state *s, int gi, double tla)
{
    engine__gate_eval *e = &s->gates[gi];
    int base = %d, step = -1, prev = -1, i;
    if (s->eff_known & (1u << gi))
        return e;
    if (gi < base)
        step = 1;
    for (i = gi + step; i >= 0 && ((step < 0 && i >= base) || (step > 0 && i <= base)); i += step) {
        if (((ENGINE__ALWAYS >> i) & 1u) != 0 || engine__active(s, i, tla)) {
            prev = i;
            break;
        }
    }
    engine__own(s, gi, tla);
    e->eff = e->own;
    e->flags = e->own_flags;
    e->clamp = e->own_clamp;
    if (prev >= 0) {
        const engine__gate_eval *p = engine__effective(s, prev, tla);
        if (p->eff > e->own) {
            e->eff = p->eff;
            e->flags = p->flags | ENGINE_FLAG_RAISED;
            e->clamp = p->clamp;
        }
    }
    s->eff_known |= 1u << gi;
    return e;
}
`

const cCommandHead = `
/* The gate logic at lever angle tla with geometry gi; out is zero. */
static int engine__command_at(engine_lever_state *s, int gi, double tla, uint32_t cl, const engine_conditions *c, engine_command *out)
{
    const engine__geom *geo = &engine__geoms[gi];
    const engine__gate_eval *e;
    int zone = -1, lo = -1, hi = -1, rep, i;
    if (s->geom_plus1 != gi + 1) {
        if (engine__check(c) != ENGINE_OK)
            return ENGINE_ERR_CONDITIONS;
        s->geom_plus1 = gi + 1;
        s->gate_plus1 = 0;
        s->has_last = 0;
        engine__invalidate(s, c);
    } else if (!engine__same_cond(&s->cond, c)) {
        if (engine__check(c) != ENGINE_OK)
            return ENGINE_ERR_CONDITIONS;
        engine__invalidate(s, c);
`

const cCommandBody = `    }
    if (tla < ENGINE_TLA_MIN_DEG) {
        tla = ENGINE_TLA_MIN_DEG;
        cl |= ENGINE_CLAMP_LEVER;
    } else if (tla > ENGINE_TLA_MAX_DEG) {
        tla = ENGINE_TLA_MAX_DEG;
        cl |= ENGINE_CLAMP_LEVER;
    }
    out->tla_deg = tla;
    out->clamped = cl;
    out->gate = out->lower = out->upper = -1;

    /* The capture zone the lever is in, or the active gates either side. */
    for (i = 0; i < ENGINE_NUM_GATES; i++) {
        double d;
        if (((ENGINE__ALWAYS >> i) & 1u) == 0 && !engine__active(s, i, tla))
            continue;
        d = tla - engine__gates[i].tla;
        if (fabs(d) <= geo->capture[i]) {
            zone = i;
            break;
        }
        if (d > 0) {
            lo = i;
        } else {
            hi = i;
            break;
        }
    }

    /* The reported gate keeps its capture through the hysteresis band. */
    rep = s->gate_plus1 - 1;
    if (rep >= 0 && (!engine__active(s, rep, tla) || fabs(tla - engine__gates[rep].tla) > geo->capture[rep] + geo->hysteresis[rep]))
        rep = -1;
    if (zone >= 0)
        rep = zone;
    s->gate_plus1 = rep + 1;
    out->gate = rep;

    if (zone >= 0) {
        e = engine__effective(s, zone, tla);
        out->value = e->eff;
        out->flags = e->flags;
        out->clamped = cl | e->clamp;
    } else if (lo >= 0 && hi >= 0) {
        double lo_edge = engine__gates[lo].tla + geo->capture[lo];
        double hi_edge = engine__gates[hi].tla - geo->capture[hi];
        double f = (tla - lo_edge) / (hi_edge - lo_edge);
        const engine__gate_eval *a = engine__effective(s, lo, tla), *b = engine__effective(s, hi, tla);
        out->value = a->eff + (b->eff - a->eff) * f;
        out->flags = a->flags | b->flags;
        out->clamped = cl | a->clamp | b->clamp;
        out->lower = lo;
        out->upper = hi;
        out->fraction = f;
    } else if (lo >= 0) { /* forward of the forwardmost active gate: hold it */
        e = engine__effective(s, lo, tla);
        out->value = e->eff;
        out->flags = e->flags;
        out->clamped = cl | e->clamp;
    } else if (hi >= 0) { /* aft of the aftmost active gate */
        e = engine__effective(s, hi, tla);
        out->value = e->eff;
        out->flags = e->flags;
        out->clamped = cl | e->clamp;
    } else {
        return ENGINE_ERR_NO_GATE;
    }
`

const cInterlock = `        if (!c->on_ground) {
            /* Reverse selected in the air: hold idle. */
            e = engine__effective(s, ENGINE__IDLE, tla);
            out->value = e->eff;
            out->flags = e->flags | ENGINE_FLAG_INTERLOCK;
            out->clamped = cl | e->clamp;
        }
`

const cCommandTail = `    if (s->when_failed)
        out->flags |= ENGINE_FLAG_FALLBACK;
    s->last = out->value;
    s->has_last = 1;
    return ENGINE_OK;
}
`

const cPublicCode = `
/* ---- the API ---- */

int engine_rating_index(const char *name)
{
    int i;
    if (name == 0)
        return -1;
    for (i = 0; i < ENGINE_NUM_RATINGS; i++)
        if (strcmp(engine__ratings[i].name, name) == 0)
            return i;
    return -1;
}

const char *engine_rating_name(int rating)
{
    if (rating < 0 || rating >= ENGINE_NUM_RATINGS)
        return "";
    return engine__ratings[rating].name;
}

int engine_bleed_index(const char *name)
{
    int i;
    if (name == 0)
        return -1;
    for (i = 0; i < ENGINE_NUM_BLEEDS; i++)
        if (strcmp(engine__bleed_names[i], name) == 0)
            return i;
    return -1;
}

const char *engine_gate_name(int gate)
{
    if (gate < 0 || gate >= ENGINE_NUM_GATES)
        return "";
    return engine__gates[gate].name;
}

int engine_target(int rating, const engine_conditions *c, engine_result *out)
{
    if (rating < 0 || rating >= ENGINE_NUM_RATINGS) {
        memset(out, 0, sizeof *out);
        return ENGINE_ERR_RATING;
    }
    return engine__target_r(&engine__ratings[rating], c, out);
}

void engine_lever_reset(engine_lever_state *s)
{
    memset(s, 0, sizeof *s);
}

/* The first geometry of lever id, as thrustmap's Model looks it up. */
static int engine__geom_index(int lever)
{
    int i;
    for (i = 0; i <= ENGINE_NUM_LEVERS; i++)
        if (engine__geoms[i].id == lever)
            return i;
    return -1;
}

int engine_command_tla(int lever, engine_lever_state *s, double tla_deg, const engine_conditions *c, engine_command *out)
{
    int gi = engine__geom_index(lever);
    memset(out, 0, sizeof *out);
    if (gi < 0)
        return ENGINE_ERR_LEVER;
    if (!isfinite(tla_deg))
        return ENGINE_ERR_INPUT;
    return engine__command_at(s, gi, tla_deg, 0, c, out);
}
`

const cLeverCode = `
/* A one-axis table (a lever calibration) at x; *clamped: x was beyond it. */
static double engine__curve_at(const engine__grid *g, double x, int *clamped)
{
    const double *xs = g->axis[0], *ys = g->values;
    int last = g->len[0] - 1, i;
    if (g->method == 1) {
        uint32_t cl = 0;
        double v = engine__grid_at(g, x, 0, 0, &cl);
        *clamped = cl != 0;
        return v;
    }
    if (x <= xs[0]) {
        *clamped = x < xs[0];
        return ys[0];
    }
    if (x >= xs[last]) {
        *clamped = x > xs[last];
        return ys[last];
    }
    i = engine__segment(xs, g->len[0], x);
    *clamped = 0;
    return engine__lerp(ys[i], ys[i + 1], (x - xs[i]) / (xs[i + 1] - xs[i]));
}

int engine_lever_id(int i)
{
    if (i < 0 || i >= ENGINE_NUM_LEVERS)
        return ENGINE_NO_LEVER;
    return engine__geoms[i].id;
}

/* LeverCalibration.TLA */
static double engine__raw_tla(const engine__geom *geo, double raw, uint32_t *cl)
{
    int clamped = 0;
    double tla = engine__curve_at(&engine__grids[geo->forward], raw, &clamped);
    *cl = clamped ? ENGINE_CLAMP_RAW : 0;
    if (raw < geo->raw_min || raw > geo->raw_max)
        *cl |= ENGINE_CLAMP_DEVICE;
    return tla;
}

static int engine__calibrated(int lever)
{
    int i;
    for (i = 0; i < ENGINE_NUM_LEVERS; i++)
        if (engine__geoms[i].id == lever)
            return i;
    return -1;
}

int engine_command_raw(int lever, engine_lever_state *s, double raw, const engine_conditions *c, engine_command *out)
{
    int gi = s->geom_plus1 - 1;
    const engine__geom *geo;
    uint32_t cl = 0;
    double tla;
    memset(out, 0, sizeof *out);
    if (gi < 0 || engine__geoms[gi].id != lever) {
        gi = engine__geom_index(lever);
        if (gi < 0 || !engine__geoms[gi].calibrated)
            return ENGINE_ERR_LEVER;
        s->holding = 0;
    }
    geo = &engine__geoms[gi];
    if (!geo->calibrated)
        return ENGINE_ERR_LEVER;
    if (!isfinite(raw))
        return ENGINE_ERR_INPUT;
    if (!s->holding || fabs(raw - s->held) > geo->deadband) {
        s->held = raw;
        s->holding = 1;
    }
    tla = engine__raw_tla(geo, s->held, &cl);
    if (raw < geo->raw_min || raw > geo->raw_max)
        cl |= ENGINE_CLAMP_DEVICE;
    return engine__command_at(s, gi, tla, cl, c, out);
}

int engine_raw_to_tla(int lever, double raw, double *tla_deg, uint32_t *clamped)
{
    int i = engine__calibrated(lever);
    uint32_t cl = 0;
    if (i < 0)
        return ENGINE_ERR_LEVER;
    if (isnan(raw))
        return ENGINE_ERR_INPUT;
    *tla_deg = engine__raw_tla(&engine__geoms[i], raw, &cl);
    if (clamped)
        *clamped = cl;
    return ENGINE_OK;
}

int engine_tla_to_raw(int lever, double tla_deg, double *raw, int *clamped)
{
    int i = engine__calibrated(lever), cl = 0, ignore = 0;
    const engine__geom *geo;
    double r, lo, hi;
    if (i < 0)
        return ENGINE_ERR_LEVER;
    if (isnan(tla_deg))
        return ENGINE_ERR_INPUT;
    geo = &engine__geoms[i];
    r = engine__curve_at(&engine__grids[geo->inverse], tla_deg, &cl);
    if (!geo->monotone || cl) {
        *raw = r;
        if (clamped)
            *clamped = cl;
        return ENGINE_OK;
    }
    /* Bisect the monotone forward map between the calibrated ends. */
    lo = geo->raw_lo;
    hi = geo->raw_hi;
    while (hi - lo > 1e-3) {
        double mid = (lo + hi) / 2;
        double t = engine__curve_at(&engine__grids[geo->forward], mid, &ignore);
        if ((t < tla_deg) != (geo->inverted != 0))
            lo = mid;
        else
            hi = mid;
    }
    *raw = (lo + hi) / 2;
    if (clamped)
        *clamped = 0;
    return ENGINE_OK;
}
`
