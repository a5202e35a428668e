package export

import (
	"bytes"
	_ "embed"
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
	b      *bytes.Buffer

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
	g := &cGen{m: m, p: p, cal: m.Calibration(), prefix: prefix, b: &bytes.Buffer{}, upper: strings.ToUpper(prefix),
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
		want := cNumber
		if e.boolean {
			want = cTruth
		}
		body, err := (&cExprTr{g: g}).expr(e.node, want)
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

// cValue is the kind of value a gate expression's node gives.
type cValue int

const (
	cNumber cValue = iota // a float64, a C double
	cTruth                // a bool, a C int that is 0 or 1
)

func (v cValue) String() string {
	if v == cTruth {
		return "true or false"
	}
	return "a number"
}

// cExprTr translates the expression subset of thrustmap's fastexpr.go into
// fully parenthesised C, in one walk: each node is translated for the kind
// of value its place wants, and a node that gives the other kind, or that
// fastNumber and fastBool do not accept, is refused there.
type cExprTr struct{ g *cGen }

// cVariables are the environment's variables, in the C's evaluation context x.
var cVariables = map[string]struct {
	kind cValue
	code string
}{
	"alt": {cNumber, "x->cond.alt_ft"}, "oat": {cNumber, "x->cond.oat_c"}, "tat": {cNumber, "x->tat"},
	"isa_dev": {cNumber, "x->isa_dev"}, "mach": {cNumber, "x->cond.mach"}, "tla": {cNumber, "x->tla"},
	"assumed_temp": {cNumber, "x->assumed_temp"},
	"on_ground":    {cTruth, "(x->cond.on_ground != 0)"}, "assumed_set": {cTruth, "(x->cond.assumed_set != 0)"},
}

// cOperators are the binary operators: the kind of their operands, the kind
// they give, and their C with the operands for %s.
var cOperators = map[string]struct {
	operands, gives cValue
	format          string
}{
	"+": {cNumber, cNumber, "(%s + %s)"}, "-": {cNumber, cNumber, "(%s - %s)"},
	"*": {cNumber, cNumber, "(%s * %s)"}, "/": {cNumber, cNumber, "(%s / %s)"},
	"**": {cNumber, cNumber, "pow(%s, %s)"}, "^": {cNumber, cNumber, "pow(%s, %s)"},
	"<": {cNumber, cTruth, "(%s < %s)"}, "<=": {cNumber, cTruth, "(%s <= %s)"},
	">": {cNumber, cTruth, "(%s > %s)"}, ">=": {cNumber, cTruth, "(%s >= %s)"},
	"==": {cNumber, cTruth, "(%s == %s)"}, "!=": {cNumber, cTruth, "(%s != %s)"},
	"&&": {cTruth, cTruth, "(%s && %s)"}, "and": {cTruth, cTruth, "(%s && %s)"},
	"||": {cTruth, cTruth, "(%s || %s)"}, "or": {cTruth, cTruth, "(%s || %s)"},
}

// expr is the C of node n as the kind of value want.
func (t *cExprTr) expr(n ast.Node, want cValue) (string, error) {
	code, gives, err := t.node(n, want)
	if err != nil {
		return "", err
	}
	if code == "" || gives != want {
		return "", fmt.Errorf("%s (%s) as %s is outside the subset the C export translates",
			n.String(), strings.TrimPrefix(fmt.Sprintf("%T", n), "*ast."), want)
	}
	return code, nil
}

// node translates n and says which kind of value it gives; code "" when it
// has no translation. want is passed down where a node gives what its
// place wants (the branches of ?:).
func (t *cExprTr) node(n ast.Node, want cValue) (code string, gives cValue, err error) {
	switch n := n.(type) {
	case *ast.IntegerNode:
		return cExprNum(float64(n.Value)), cNumber, nil
	case *ast.FloatNode:
		return cExprNum(n.Value), cNumber, nil
	case *ast.BoolNode:
		return cBool(n.Value), cTruth, nil
	case *ast.ConstantNode:
		switch v := n.Value.(type) {
		case float64:
			return cExprNum(v), cNumber, nil
		case int:
			return cExprNum(float64(v)), cNumber, nil
		case bool:
			return cBool(v), cTruth, nil
		}
	case *ast.IdentifierNode:
		if v, ok := cVariables[n.Value]; ok {
			return v.code, v.kind, nil
		}
	case *ast.UnaryNode:
		kind, format := cNumber, "(-%s)"
		switch n.Operator {
		case "+":
			format = "%s"
		case "!", "not":
			kind, format = cTruth, "(!%s)"
		case "-":
		default:
			return "", want, nil
		}
		x, err := t.expr(n.Node, kind)
		return fmt.Sprintf(format, x), kind, err
	case *ast.BinaryNode:
		op, ok := cOperators[n.Operator]
		if !ok {
			break
		}
		a, err := t.expr(n.Left, op.operands)
		if err != nil {
			return "", want, err
		}
		b, err := t.expr(n.Right, op.operands)
		return fmt.Sprintf(op.format, a, b), op.gives, err
	case *ast.ConditionalNode:
		c, err := t.expr(n.Cond, cTruth)
		if err != nil {
			return "", want, err
		}
		a, err := t.expr(n.Exp1, want)
		if err != nil {
			return "", want, err
		}
		b, err := t.expr(n.Exp2, want)
		return "(" + c + " ? " + a + " : " + b + ")", want, err
	case *ast.CallNode:
		return t.call(n)
	case *ast.BuiltinNode:
		args, err := t.numbers(n.Arguments)
		if err != nil {
			return "", want, err
		}
		switch {
		case n.Name == "abs" && len(args) == 1:
			t.g.uses["abs"] = true
			return "engine__math_abs(" + args[0] + ")", cNumber, nil
		case n.Name == "min" && len(args) == 2:
			t.g.uses["min"] = true
			return "engine__math_min(" + args[0] + ", " + args[1] + ")", cNumber, nil
		case n.Name == "max" && len(args) == 2:
			t.g.uses["max"] = true
			return "engine__math_max(" + args[0] + ", " + args[1] + ")", cNumber, nil
		}
	}
	return "", want, nil
}

// numbers translates arguments that must be numbers.
func (t *cExprTr) numbers(args []ast.Node) ([]string, error) {
	out := make([]string, 0, len(args))
	for _, a := range args {
		s, err := t.expr(a, cNumber)
		if err != nil {
			return nil, err
		}
		out = append(out, s)
	}
	return out, nil
}

// call translates the environment's functions; a name argument must be a
// quoted constant, resolved here.
func (t *cExprTr) call(n *ast.CallNode) (string, cValue, error) {
	id, ok := n.Callee.(*ast.IdentifierNode)
	if !ok {
		return "", cNumber, nil
	}
	args := n.Arguments
	name, named := "", false // the first argument, when a quoted name
	if len(args) > 0 {
		if s, ok := args[0].(*ast.StringNode); ok {
			name, named = s.Value, true
		}
	}
	switch id.Value {
	case "bleed":
		if len(args) != 1 || !named {
			break
		}
		i := slices.Index(t.g.p.Bleeds(), name)
		if i < 0 || i >= thrustmap.MaxBleeds {
			return "0", cTruth, nil // as Bleeds.Has for a bleed the profile lacks
		}
		return fmt.Sprintf("(((x->cond.bleeds >> %d) & 1u) != 0)", i), cTruth, nil
	case "rating", "assumed":
		r := t.g.ratingIndex(name)
		if !named || r < 0 || len(args) != 1 {
			break
		}
		t.g.uses[id.Value] = true
		return fmt.Sprintf("engine__e_%s(x, %d)", id.Value, r), cNumber, nil
	case "rating_at":
		r := t.g.ratingIndex(name)
		f, err := t.numbers(args[min(1, len(args)):])
		if err != nil {
			return "", cNumber, err
		}
		if !named || r < 0 || len(f) != 2 {
			break
		}
		t.g.uses["rating_at"] = true
		return fmt.Sprintf("engine__e_rating_at(x, %d, %s, %s)", r, f[0], f[1]), cNumber, nil
	case "isa_temp", "clamp", "lerp":
		f, err := t.numbers(args)
		if err != nil {
			return "", cNumber, err
		}
		switch {
		case id.Value == "isa_temp" && len(f) == 1:
			t.g.uses["isa_temp"] = true
			return "engine__e_isa_temp(x, " + f[0] + ")", cNumber, nil
		case id.Value == "clamp" && len(f) == 3:
			t.g.uses["min"], t.g.uses["max"] = true, true
			return "engine__math_max(" + f[1] + ", engine__math_min(" + f[2] + ", " + f[0] + "))", cNumber, nil
		case id.Value == "lerp" && len(f) == 3:
			t.g.uses["lerp"] = true
			return "engine__e_lerp(" + f[0] + ", " + f[1] + ", " + f[2] + ")", cNumber, nil
		}
	}
	return "", cNumber, nil
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
	fmt.Fprintf(g.b, format, args...)
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

// cRuntimeHeader and cRuntimeSource are the hand-written C of every
// generated file, with engine_ and ENGINE_ standing for the prefix; their
// #include lines of engine_*.h mark where the generated parts go.
var (
	//go:embed cruntime/engine.h
	cRuntimeHeader string
	//go:embed cruntime/engine_runtime.c
	cRuntimeSource string
)

func (g *cGen) write() {
	g.header()
	parts := g.parts()
	g.runtime("engine.h", cRuntimeHeader, parts)
	g.code("\n#ifndef ENGINE_HEADER_ONLY\n")
	g.runtime("engine_runtime.c", cRuntimeSource, parts)
	g.code("\n#endif /* ENGINE_HEADER_ONLY */\n")
}

// parts are the generated parts of the C, by the name of the file the
// runtime includes them as: the profile's dimensions (in engine.h), the
// features and constants the runtime is built with, the tables, and the gate
// expressions with the gate layout. The default prefix is applied; write
// applies the chosen one.
func (g *cGen) parts() map[string]string {
	return map[string]string{
		"engine_profile.h":  g.part(g.profileMacros),
		"engine_features.h": g.part(g.features),
		"engine_tables.h":   g.part(g.tables),
		"engine_gates.h":    g.part(g.gateCode),
	}
}

// part returns what f writes.
func (g *cGen) part(f func()) string {
	saved := g.b
	g.b = &bytes.Buffer{}
	f()
	s := g.b.String()
	g.b = saved
	return s
}

var cIncludeLine = regexp.MustCompile(`^#include "(engine[A-Za-z0-9_]*\.h)"$`)

// runtime copies a runtime file without its opening comment (the generated
// file has its own), with the prefix applied, the include of engine.h
// dropped (the declarations are above) and the includes of the generated
// parts replaced by them.
func (g *cGen) runtime(name, text string, parts map[string]string) {
	if strings.HasPrefix(text, "/*") {
		end := strings.Index(text, "*/\n")
		if end < 0 {
			panic("export: " + name + ": unterminated opening comment")
		}
		text = text[end+3:]
	}
	for _, line := range strings.SplitAfter(text, "\n") {
		m := cIncludeLine.FindStringSubmatch(strings.TrimSuffix(line, "\n"))
		switch {
		case m == nil:
			g.b.WriteString(g.codeStr(line))
		case m[1] == "engine.h":
		default:
			part, ok := parts[m[1]]
			if !ok {
				panic("export: " + name + " includes " + m[1] + ", which the generator does not write")
			}
			g.b.WriteString(g.codeStr(part))
		}
	}
}

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
	w("")
	w("Interface version 2 (%sAPI_VERSION): the 64-bit bleeds, the bleed", g.upper)
	w("look-up by name (%sbleed_bit), %starget_detail and the flag bits are", g.prefix, g.prefix)
	w("those of thrustmap's C library (thrustmap.h) under this prefix. The code")
	w("after the tables is thrustmap's C runtime (thrustmap/export/cruntime in")
	w("its source), copied in with the prefix applied.")
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

// profileMacros writes the profile's dimensions, declared in engine.h.
func (g *cGen) profileMacros() {
	p := g.p
	g.code("#define ENGINE_NUM_RATINGS %d\n#define ENGINE_NUM_GATES %d\n#define ENGINE_NUM_LEVERS %d\n#define ENGINE_NUM_BLEEDS %d\n",
		len(g.rats), len(g.gates), len(g.geoms)-1, len(p.Bleeds()))
	g.code("#define ENGINE_PARAMETER %s\n#define ENGINE_UNIT %s\n", cString(p.Parameter().String()), cString(p.Parameter().Unit()))
	stops := [2]float64{math.Inf(-1), math.Inf(1)} // no [lever]: no end stops
	if lv := p.Lever(); lv.TLAMinDeg < lv.TLAMaxDeg {
		stops = [2]float64{lv.TLAMinDeg, lv.TLAMaxDeg}
	}
	g.code("#define ENGINE_TLA_MIN_DEG %s /* the lever's end stops */\n#define ENGINE_TLA_MAX_DEG %s\n", cExprNum(stops[0]), cExprNum(stops[1]))
}

// features writes which parts of the runtime the profile needs, and its
// constants (engine_runtime.c lists them).
func (g *cGen) features() {
	p := g.p
	flag := func(name string, on bool) { g.code("#define ENGINE__%s %d\n", name, b2i(on)) }
	g.code("#define ENGINE__FT_TO_M (%s)\n#define ENGINE__KELVIN (%s)\n#define ENGINE__MIN_ALT_FT (%s)\n#define ENGINE__MAX_ALT_FT (%s)\n",
		cNum(atmos.FeetToMeters), cNum(atmos.KelvinOffset), cNum(atmos.MinAltitudeFt), cNum(atmos.MaxAltitudeFt))
	g.code("#define ENGINE__BLEED_MASK ((uint64_t)0x%xu) /* the profile's bleeds */\n", uint64(math.MaxUint64)>>(64-len(p.Bleeds())))
	flag("MONOTONE", g.anyMonotone)
	red, hasRed := p.Redline()
	flag("REDLINE", hasRed)
	if hasRed {
		g.code("#define ENGINE__REDLINE_VALUE (%s)\n", cNum(red))
	}
	a := p.AssumedTemperature()
	assumed := g.anyAssumed && a != nil
	flag("ASSUMED", assumed)
	if assumed {
		g.code("#define ENGINE__TEMP_TOL (%s) /* rule 1's temperature comparisons, deg C */\n", cNum(thrustmap.TemperatureTolC))
		g.code("#define ENGINE__ASSUMED_MAX_C (%s)\n#define ENGINE__MAX_REDUCTION_PCT (%s)\n", cNum(a.MaxC), cNum(a.MaxReductionPct))
	}
	flag("CORNER_ROWS", assumed && g.anyPerAltCorner)
	flag("CORRECTED", assumed && p.Parameter() == thrustmap.N1 && a.Corrected)
	flag("EXPR", g.hasExpr)
	flag("EXPR_TARGET", g.hasTarget)
	flag("EXPR_WHEN", g.hasWhen)
	flag("EXPR_TLA", g.anyTLA)
	for _, f := range []string{"rating", "rating_at", "assumed", "isa_temp", "min", "max", "abs", "lerp"} {
		flag("USE_"+strings.ToUpper(f), g.uses[f])
	}
	g.code("#define ENGINE__IDLE (%d)\n", g.idle)
	flag("INTERLOCK", g.idle >= 0 && p.Lever().ReverseOnGroundOnly)
	g.code("#define ENGINE__ALWAYS 0x%xu\n", g.always)
}

func (g *cGen) tables() {
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

// gateCode writes the gate expressions as C functions, the gates and the
// gate zones each lever sees.
func (g *cGen) gateCode() {
	for _, e := range g.exprs {
		ret := "double"
		if e.boolean {
			ret = "int"
		}
		g.code("\n/* %s */\nstatic %s %s(engine__ctx *x)\n{\n    (void)x;\n    return ", cComment(e.comment), ret, g.codeStr(e.name))
		g.b.WriteString(g.codeStr(e.body))
		g.code(";\n}\n")
	}
	g.code("\n/* name, TLA, rating (-1: none), the most its own target can be, target, when */\nstatic const engine__gate engine__gates[ENGINE_NUM_GATES] = {\n")
	for _, cg := range g.gates {
		most := g.gateMost(cg)
		target, when := "0", "0"
		if cg.target != "" {
			target = g.codeStr(cg.target)
		}
		if cg.when != "" {
			when = g.codeStr(cg.when)
		}
		if g.hasExpr {
			g.code("    {%s, %s, %d, %s, %s, %s},\n", cString(cg.g.Name), cNum(cg.g.TLADeg), cg.rating, cNum(most), target, when)
		} else {
			g.code("    {%s, %s, %d, %s},\n", cString(cg.g.Name), cNum(cg.g.TLADeg), cg.rating, cNum(most))
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

// gateMost bounds the own target gate cg can give, for the runtime's
// shortcut in the raise chain (engine__effective): the largest value of its
// rating's table plus every bleed correction that can add, cut to the
// redline, with a margin far above rounding (a multilinear interpolation
// stays within its points). +Inf where there is no such bound: a target
// expression, or a monotone table, which is left out rather than relying
// on the cubic's exact range.
func (g *cGen) gateMost(cg cGate) float64 {
	if cg.target != "" || cg.rating < 0 {
		return math.Inf(1)
	}
	cr := g.rats[cg.rating]
	most, ok := gridMost(g.grids[cr.table])
	if !ok {
		return math.Inf(1)
	}
	for _, c := range g.corrs[cr.corrFirst : cr.corrFirst+cr.nCo] {
		add := c.delta
		if c.grid >= 0 {
			if add, ok = gridMost(g.grids[c.grid]); !ok {
				return math.Inf(1)
			}
		}
		most += max(add, 0)
	}
	most += 1e-9 * max(1, math.Abs(most))
	if red, ok := g.p.Redline(); ok {
		most = min(most, red)
	}
	return most
}

// gridMost is the largest value a linear table gives, and false for a
// monotone one.
func gridMost(c cGrid) (float64, bool) {
	if c.method != grid.Linear {
		return 0, false
	}
	return slices.Max(c.values), true
}
