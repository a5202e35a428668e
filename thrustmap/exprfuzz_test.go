package thrustmap

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// exprGen builds a gate expression from a fuzzer's bytes: each byte chooses
// the next piece of the grammar of the gate environment (variables,
// functions, arithmetic, comparisons, logic, ?:), so nearly every input is a
// well-formed expression and the fuzzer explores shapes rather than syntax
// errors. When the bytes run out, leaves are chosen.
type exprGen struct {
	b     []byte
	nodes int
}

func (g *exprGen) next(n int) int {
	if len(g.b) == 0 {
		return 0
	}
	c := int(g.b[0])
	g.b = g.b[1:]
	return c % n
}

// exprGenMaxNodes keeps generated expressions well under MaxExprNodes.
const exprGenMaxNodes = 40

var (
	genVars    = []string{"alt", "oat", "tat", "isa_dev", "mach", "tla", "assumed_temp"}
	genRatings = []string{"'takeoff'", "'climb'", "'continuous'", "'idle'", "'reverse'", "'go-around'", "'cruise'"}
	genOps     = []string{"+", "-", "*", "/", "**"}
	genCmps    = []string{"<", "<=", ">", ">=", "==", "!="}
	genBleeds  = []string{"'engine-anti-ice'", "'wing-anti-ice'", "'packs-off'"}
)

func (g *exprGen) num(depth int) string {
	g.nodes++
	if depth <= 0 || g.nodes > exprGenMaxNodes || len(g.b) == 0 {
		switch g.next(3) {
		case 0:
			return genVars[g.next(len(genVars))]
		case 1:
			return fmt.Sprintf("%g", float64(g.next(200))/4-10)
		}
		return "rating(" + genRatings[g.next(len(genRatings))] + ")"
	}
	d := depth - 1
	switch g.next(12) {
	case 0:
		return genVars[g.next(len(genVars))]
	case 1:
		return fmt.Sprintf("%g", float64(g.next(256))/8-8)
	case 2:
		return "rating(" + genRatings[g.next(len(genRatings))] + ")"
	case 3:
		return "rating_at(" + genRatings[g.next(len(genRatings))] + ", " + g.num(d) + ", " + g.num(d) + ")"
	case 4:
		return "assumed('takeoff')"
	case 5:
		return "(" + g.num(d) + " " + genOps[g.next(len(genOps))] + " " + g.num(d) + ")"
	case 6:
		return "-" + g.num(d)
	case 7:
		return "(" + g.truth(d) + " ? " + g.num(d) + " : " + g.num(d) + ")"
	case 8:
		return []string{"clamp", "lerp"}[g.next(2)] + "(" + g.num(d) + ", " + g.num(d) + ", " + g.num(d) + ")"
	case 9:
		return []string{"max", "min"}[g.next(2)] + "(" + g.num(d) + ", " + g.num(d) + ")"
	case 10:
		return "abs(" + g.num(d) + ")"
	}
	return "isa_temp(" + g.num(d) + ")"
}

func (g *exprGen) truth(depth int) string {
	g.nodes++
	if depth <= 0 || g.nodes > exprGenMaxNodes || len(g.b) == 0 {
		return []string{"on_ground", "assumed_set", "bleed('engine-anti-ice')"}[g.next(3)]
	}
	d := depth - 1
	switch g.next(6) {
	case 0:
		return []string{"on_ground", "assumed_set"}[g.next(2)]
	case 1:
		return "bleed(" + genBleeds[g.next(len(genBleeds))] + ")"
	case 2:
		return "(" + g.num(d) + " " + genCmps[g.next(len(genCmps))] + " " + g.num(d) + ")"
	case 3:
		return "(" + g.truth(d) + " " + []string{"&&", "||", "and", "or"}[g.next(4)] + " " + g.truth(d) + ")"
	case 4:
		return "!" + g.truth(d)
	}
	return "not " + g.truth(d)
}

// FuzzFastExprMatchesVM generates gate expressions over the demo profile's
// environment and requires the allocation-free compiler and expr-lang's own
// VM (an implementation of the language the project did not write) to agree
// at the fuzzed conditions: the same number or truth, or both refusing.
func FuzzFastExprMatchesVM(f *testing.F) {
	p, err := LoadProfile("demo")
	if err != nil {
		f.Fatal(err)
	}
	f.Add([]byte{5, 2, 0, 0, 1, 9}, false, 2000.0, 15.0, 0.2, 30.0, uint8(3), 40.0)
	f.Add([]byte{7, 3, 2, 1, 4, 0, 6, 0, 3, 2}, false, 8000.0, -20.0, 0.6, 47.0, uint8(0), 0.0)
	f.Add([]byte{2, 3, 0, 0, 2, 4, 1, 1}, true, 0.0, 35.0, 0.0, 55.0, uint8(7), 60.0)
	f.Fuzz(func(t *testing.T, prog []byte, wantBool bool, alt, oat, mach, tla float64, flags uint8, assumedC float64) {
		g := &exprGen{b: prog}
		var src string
		if wantBool {
			src = g.truth(6)
		} else {
			src = g.num(6)
		}
		ce, err := compileExpr(p, src, wantBool)
		if err != nil {
			return // refused at load, before either evaluator runs
		}
		c := Conditions{AltitudeFt: alt, OATC: oat, Mach: mach, Bleeds: Bleeds(flags & 7),
			OnGround: flags&8 != 0, AssumedSet: flags&16 != 0, AssumedC: assumedC}
		if checkConditions(c) != nil || !finite(tla) {
			return // the model refuses these conditions before any expression runs
		}
		if (wantBool && ce.truth == nil) || (!wantBool && ce.num == nil) {
			return // outside the fast subset: the VM alone runs it
		}
		vm := *ce
		vm.num, vm.truth = nil, nil
		s := newExprScratch(p)
		s.set(c, tla)
		if wantBool {
			a, errA := s.truth(ce)
			b, errB := s.truth(&vm)
			if (errA == nil) != (errB == nil) || (errA == nil && a != b) {
				t.Fatalf("%s at %+v, TLA %g: fast %v (%v), VM %v (%v)", src, c, tla, a, errA, b, errB)
			}
			return
		}
		a, errA := s.number(ce)
		b, errB := s.number(&vm)
		if (errA == nil) != (errB == nil) {
			t.Fatalf("%s at %+v, TLA %g: fast %v (%v), VM %v (%v)", src, c, tla, a, errA, b, errB)
		}
		if errA == nil && math.Abs(a-b) > 1e-9*math.Max(1, math.Abs(b)) {
			t.Fatalf("%s at %+v, TLA %g: fast %.17g, VM %.17g", src, c, tla, a, b)
		}
	})
}

// TestExprGenShapes: the generator reaches every piece of the grammar, so
// the fuzz target's corpus can cover them all.
func TestExprGenShapes(t *testing.T) {
	var all strings.Builder
	for i := range 3000 {
		prog := make([]byte, 24)
		for j := range prog {
			prog[j] = byte((i*131 + j*17 + i*j) % 251)
		}
		g := &exprGen{b: prog}
		all.WriteString(g.num(6))
		all.WriteString(" ")
		g = &exprGen{b: prog}
		all.WriteString(g.truth(6))
	}
	for _, piece := range []string{"rating_at(", "assumed(", "clamp(", "lerp(", "max(", "min(", "abs(", "isa_temp(", " ? ", "**", "bleed(", "&&", " or ", "not ", "!"} {
		if !strings.Contains(all.String(), piece) {
			t.Errorf("the generator never wrote %q", piece)
		}
	}
}
