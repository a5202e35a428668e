package thrustmap

import (
	"math"
	"math/rand/v2"
	"testing"
)

// fastCases are expressions the allocation-free evaluator compiles; each is
// cross-checked against expr-lang's own VM (an outside implementation of
// the same language) at random conditions.
var fastCases = []struct {
	src      string
	wantBool bool
}{
	{"rating('takeoff')", false},
	{"assumed('takeoff')", false},
	{"rating('continuous') - 1.5", false},
	{"rating_at('takeoff', alt + 1000, oat - 5)", false},
	{"on_ground ? rating('takeoff') : rating('go-around')", false},
	{"clamp(rating('climb') * 1.01, 80, 98)", false},
	{"lerp(rating('climb'), rating('continuous'), 0.25)", false},
	{"max(rating('climb'), rating('cruise') + 2)", false},
	{"min(abs(isa_dev), 10) / 2 + tat - oat + mach ** 2", false},
	{"isa_temp(alt) + 15", false},
	{"assumed_set ? assumed_temp : -1", false},
	{"tla * 2 - -3", false},
	{"on_ground && assumed_set", true},
	{"!on_ground || bleed('engine-anti-ice')", true},
	{"oat > isa_temp(alt) + 15 and not assumed_set", true},
	{"alt <= 5000 && mach < 0.4 || tat >= 30 && oat != 0 && isa_dev == isa_dev", true},
}

func TestFastExprMatchesVM(t *testing.T) {
	p, err := LoadProfile("demo")
	if err != nil {
		t.Fatal(err)
	}
	s := newExprScratch(p)
	rng := rand.New(rand.NewPCG(11, 12))
	for _, tc := range fastCases {
		ce, err := compileExpr(p, tc.src, tc.wantBool)
		if err != nil {
			t.Fatalf("%s: %v", tc.src, err)
		}
		if (tc.wantBool && ce.truth == nil) || (!tc.wantBool && ce.num == nil) {
			t.Fatalf("%s: not compiled to the fast form", tc.src)
		}
		vm := *ce
		vm.num, vm.truth = nil, nil
		for range 200 {
			oat := -30 + rng.Float64()*60
			c := Conditions{AltitudeFt: rng.Float64() * 12000, OATC: oat, Mach: rng.Float64() * 0.8,
				Bleeds: Bleeds(rng.IntN(8)), OnGround: rng.IntN(2) == 0, AssumedSet: rng.IntN(2) == 0, AssumedC: oat + rng.Float64()*40}
			s.set(c, rng.Float64()*55)
			if tc.wantBool {
				a, errA := s.truth(ce)
				b, errB := s.truth(&vm)
				if a != b || (errA == nil) != (errB == nil) {
					t.Fatalf("%s at %+v: fast %v %v, VM %v %v", tc.src, c, a, errA, b, errB)
				}
				continue
			}
			a, errA := s.number(ce)
			b, errB := s.number(&vm)
			if (errA == nil) != (errB == nil) || (errA == nil && math.Abs(a-b) > 1e-9*math.Max(1, math.Abs(b))) {
				t.Fatalf("%s at %+v: fast %v %v, VM %v %v", tc.src, c, a, errA, b, errB)
			}
		}
	}
}

// TestFastExprAllocatesNothing: the fast forms evaluate without allocating
// (counted, not timed).
func TestFastExprAllocatesNothing(t *testing.T) {
	p, _ := LoadProfile("demo")
	s := newExprScratch(p)
	s.set(Conditions{AltitudeFt: 1000, OATC: 20, OnGround: true, AssumedSet: true, AssumedC: 45}, 47)
	for _, tc := range fastCases {
		ce, _ := compileExpr(p, tc.src, tc.wantBool)
		n := testing.AllocsPerRun(50, func() {
			if tc.wantBool {
				s.truth(ce)
			} else {
				s.number(ce)
			}
		})
		if n != 0 {
			t.Errorf("%s: %g allocations per evaluation", tc.src, n)
		}
	}
}

// TestSlowExprStillRuns: shapes outside the fast subset run on the VM.
func TestSlowExprStillRuns(t *testing.T) {
	p, _ := LoadProfile("demo")
	ce, err := compileExpr(p, "len('abc') + rating('idle') * 0 + 3", false)
	if err != nil {
		t.Fatal(err)
	}
	if ce.num != nil {
		t.Fatal("expected the VM path")
	}
	s := newExprScratch(p)
	s.set(Conditions{}, 0)
	if v, err := s.number(ce); err != nil || v != 6 {
		t.Errorf("got %v %v, want 6", v, err)
	}
}
