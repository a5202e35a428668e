package thrustmap

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
)

func gatesModel(t testing.TB) *Model {
	t.Helper()
	p, err := LoadProfile("testdata/gates.toml")
	if err != nil {
		t.Fatal(err)
	}
	m, err := NewModel(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// TestGateValuesHandWorked checks the gate rules (docs/methods.md, Gate rules)
// on testdata/gates.toml, whose ratings are constants, so each expected value
// is the arithmetic in its comment.
func TestGateValuesHandWorked(t *testing.T) {
	m := gatesModel(t)
	air := Conditions{AltitudeFt: 1000, OATC: 15}
	ground := air
	ground.OnGround = true
	antiIce, _ := m.Profile().BleedSet("anti-ice")
	withAntiIce := air
	withAntiIce.Bleeds = antiIce
	tests := []struct {
		name         string
		tla          float64
		c            Conditions
		want         float64
		gate         string
		lower, upper string
		fraction     float64
		reverse      bool
		flags        []string
	}{
		// Inside idle's zone (0 ± 1): idle's 20.
		{"idle zone", 0.5, air, 20, "idle", "", "", 0, false, nil},
		// Between idle's edge 1 and climb's edge 18: f = 9/17, 20 + 60·9/17.
		{"between", 10, air, 20 + 60*9.0/17, "", "idle", "climb", 9.0 / 17, false, nil},
		// "reduced" (70) sits above climb (80): raised to 80, also between.
		{"raised zone", 30, air, 80, "reduced", "", "", 0, false, []string{"raised"}},
		{"raised between", 25, air, 80, "", "climb", "reduced", 3.0 / 7, false, []string{"raised"}},
		// In the air "ground" drops out: between reduced (31) and takeoff (43):
		// f = 4/12, 80 + 10/3.
		{"when false", 35, air, 80 + 10.0/3, "", "reduced", "takeoff", 1.0 / 3, false, []string{"raised"}},
		{"when true", 35, ground, 95, "ground", "", "", 0, false, nil},
		// takeoff's expression: rating 90, minus 2 with anti-ice.
		{"expression", 45, air, 90, "takeoff", "", "", 0, false, nil},
		{"expression bleed", 45, withAntiIce, 88, "takeoff", "", "", 0, false, nil},
		// Forward of the last zone (47): held at takeoff's value.
		{"beyond last", 50, air, 90, "", "", "", 0, false, nil},
		// Reverse range below idle's edge −1, on the ground: between reverse
		// (edge −18) and idle (edge −1): f = 8/17, 60 − 40·8/17.
		{"reverse", -10, ground, 60 - 40*8.0/17, "", "reverse", "idle", 8.0 / 17, true, nil},
		{"reverse zone", -20, ground, 60, "reverse", "", "", 0, true, nil},
		// Reverse selected in the air with reverse_on_ground_only: idle, interlock.
		{"interlock", -10, air, 20, "", "reverse", "idle", 8.0 / 17, true, []string{"interlock"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var s LeverState
			cmd, err := m.CommandAtTLA(&s, NoLever, tc.tla, tc.c)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(cmd.Value-tc.want) > 1e-9 {
				t.Errorf("value %.10g, want %.10g", cmd.Value, tc.want)
			}
			if got := m.GateName(cmd.Gate); got != tc.gate {
				t.Errorf("gate %q, want %q", got, tc.gate)
			}
			if lo, hi := m.GateName(cmd.Lower), m.GateName(cmd.Upper); lo != tc.lower || hi != tc.upper || math.Abs(cmd.Fraction-tc.fraction) > 1e-12 {
				t.Errorf("between %q %q %g, want %q %q %g", lo, hi, cmd.Fraction, tc.lower, tc.upper, tc.fraction)
			}
			if cmd.Reverse != tc.reverse {
				t.Errorf("reverse %v", cmd.Reverse)
			}
			if got := cmd.Flags.Names(); !slices.Equal(got, nonNil(tc.flags)) {
				t.Errorf("flags %v, want %v", got, tc.flags)
			}
		})
	}
}

// TestGateHysteresis: climb (20 ± 2, hysteresis 1) is entered at 18.5,
// kept through the band to 17.5 (reported with its interpolation pair), and
// left beyond 17 (capture + hysteresis = 3).
func TestGateHysteresis(t *testing.T) {
	m := gatesModel(t)
	c := Conditions{AltitudeFt: 1000, OATC: 15}
	var s LeverState
	steps := []struct {
		tla   float64
		gate  string
		lower string
	}{
		{15, "", "idle"},
		{18.5, "climb", ""},
		{17.5, "climb", "idle"}, // in the band: gate and pair both reported
		{17.1, "climb", "idle"},
		{16.9, "", "idle"},
		{17.5, "", "idle"}, // re-entry needs the capture zone again
		{18.1, "climb", ""},
	}
	for _, st := range steps {
		cmd, err := m.CommandAtTLA(&s, NoLever, st.tla, c)
		if err != nil {
			t.Fatal(err)
		}
		if m.GateName(cmd.Gate) != st.gate || m.GateName(cmd.Lower) != st.lower {
			t.Errorf("TLA %g: gate %q lower %q, want %q %q", st.tla, m.GateName(cmd.Gate), m.GateName(cmd.Lower), st.gate, st.lower)
		}
	}
}

func demoModel(t testing.TB, profile string) *Model {
	t.Helper()
	m, err := LoadModel(profile, profile)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// TestNoisyLeverAtCaptureEdge: a lever resting on a capture edge with noise
// of σ = 4 counts (Gaussian, seeded) for 10 000 samples never changes its
// reported gate: hysteresis (and the deadband) absorb the noise.
func TestNoisyLeverAtCaptureEdge(t *testing.T) {
	m := demoModel(t, "demo")
	l := m.Calibration().Lever(1)
	c := Conditions{AltitudeFt: 0, OATC: 15}
	for _, gate := range []int{1, 2, 3} { // idle, climb, continuous
		capture, hyst, _ := m.EffectiveZone(1, gate)
		g := m.Profile().Gates()[gate]
		for _, edge := range []struct {
			name string
			tla  float64
		}{
			{"capture edge", g.TLADeg + capture},
			{"hysteresis edge", g.TLADeg + capture + hyst},
		} {
			rest, _ := l.Raw(edge.tla)
			rng := rand.New(rand.NewPCG(uint64(gate), 42))
			var s LeverState
			first, err := m.Command(&s, 1, rest, c)
			if err != nil {
				t.Fatal(err)
			}
			changes := 0
			for range 10000 {
				cmd, err := m.Command(&s, 1, math.Round(rest+4*rng.NormFloat64()), c)
				if err != nil {
					t.Fatal(err)
				}
				if cmd.Gate != first.Gate {
					changes++
					first = cmd
				}
			}
			if changes != 0 {
				t.Errorf("%s %s: %d gate changes in 10000 noisy samples", g.Name, edge.name, changes)
			}
		}
	}
}

// TestSlowSweep: a slow end-to-end sweep and back enters each active gate
// exactly once per pass.
func TestSlowSweep(t *testing.T) {
	m := demoModel(t, "demo")
	l := m.Calibration().Lever(2) // the inverted lever
	c := Conditions{AltitudeFt: 0, OATC: 15, OnGround: true, AssumedSet: true, AssumedC: 40}
	lo, _ := l.Raw(-18)
	hi, _ := l.Raw(55)
	var s LeverState
	pass := func(from, to float64) map[string]int {
		runs := map[string]int{}
		prev := -2
		step := math.Copysign(1, to-from)
		for raw := from; (to-raw)*step >= 0; raw += step {
			cmd, err := m.Command(&s, 2, raw, c)
			if err != nil {
				t.Fatal(err)
			}
			if cmd.Gate != prev && cmd.Gate >= 0 {
				runs[m.GateName(cmd.Gate)]++
			}
			prev = cmd.Gate
		}
		return runs
	}
	for _, dir := range []struct{ from, to float64 }{{lo, hi}, {hi, lo}} {
		runs := pass(dir.from, dir.to)
		for _, g := range m.Profile().Gates() {
			if runs[g.Name] != 1 {
				t.Errorf("pass %g→%g: gate %s entered %d times, want 1", dir.from, dir.to, g.Name, runs[g.Name])
			}
		}
	}
}

// TestForwardCommandNonDecreasing walks TLA in 0.01° steps over the whole
// lever at corners of the demo profiles' envelopes and fails on any
// decrease forward of idle, or any decrease as the lever is pulled back into
// reverse (docs/methods.md, Gate rules: monotone command).
func TestForwardCommandNonDecreasing(t *testing.T) {
	for _, name := range EmbeddedProfiles() {
		m := demoModel(t, name)
		p := m.Profile()
		idle := p.Gates()[m.idle].TLADeg
		for _, alt := range []float64{-2000, 0, 8000, 14000, 25000, 41000} {
			for _, dev := range []float64{-40, 0, 15, 35} {
				for _, ground := range []bool{true, false} {
					isa := isaTemperature(alt)
					c := Conditions{AltitudeFt: alt, OATC: isa + dev, Mach: 0.2, OnGround: ground, AssumedSet: ground, AssumedC: isa + dev + 25}
					var s LeverState
					prev := math.Inf(-1)
					for tla := idle; tla <= p.Lever().TLAMaxDeg; tla += 0.01 {
						cmd, err := m.CommandAtTLA(&s, 1, tla, c)
						if err != nil {
							t.Fatal(err)
						}
						if cmd.Value < prev-1e-9 {
							t.Fatalf("%s alt %g ISA%+g ground %v: command falls at TLA %.2f: %g < %g", name, alt, dev, ground, tla, cmd.Value, prev)
						}
						prev = cmd.Value
					}
					prev = math.Inf(-1)
					for tla := idle; tla >= p.Lever().TLAMinDeg; tla -= 0.01 {
						cmd, _ := m.CommandAtTLA(&s, 1, tla, c)
						if cmd.Value < prev-1e-9 {
							t.Fatalf("%s alt %g ISA%+g: reverse command falls at TLA %.2f: %g < %g", name, alt, dev, tla, cmd.Value, prev)
						}
						prev = cmd.Value
					}
				}
			}
		}
	}
}

// TestReducedTakeoffGate: the demo's reduced-takeoff gate commands the
// assumed-temperature value on the ground with an assumed temperature set,
// and drops out otherwise.
func TestReducedTakeoffGate(t *testing.T) {
	m := demoModel(t, "demo")
	p := m.Profile()
	c := Conditions{AltitudeFt: 500, OATC: 20, OnGround: true, AssumedSet: true, AssumedC: 42}
	want, err := p.Target("takeoff", c)
	if err != nil {
		t.Fatal(err)
	}
	var s LeverState
	cmd, err := m.CommandAtTLA(&s, 1, 47, c)
	if err != nil {
		t.Fatal(err)
	}
	if m.GateName(cmd.Gate) != "reduced-takeoff" || math.Abs(cmd.Value-max(want.Value, continuousAt(t, p, c))) > 1e-9 {
		t.Errorf("gate %q value %g, want reduced-takeoff %g", m.GateName(cmd.Gate), cmd.Value, want.Value)
	}
	c.OnGround = false
	cmd, _ = m.CommandAtTLA(&s, 1, 47, c)
	if cmd.Gate >= 0 || m.GateName(cmd.Lower) != "continuous" || m.GateName(cmd.Upper) != "takeoff" {
		t.Errorf("in the air: gate %q between %q %q", m.GateName(cmd.Gate), m.GateName(cmd.Lower), m.GateName(cmd.Upper))
	}
}

// TestReducedInsideTakeoffGate: the EPR demo applies the reduced takeoff
// inside its forward-stop gate (docs/profile.md, Reduced takeoff): takeoff
// on the ground, the assumed-temperature value with an assumed temperature
// set, go-around in the air. Values worked by hand from the demo-epr tables
// at sea level, OAT 15 °C (ISA): takeoff row 0 ft is flat at 1.520 up to its
// corner (ISA+14), go-around at 1.510; an assumed 45 °C is ISA+30, the
// takeoff table's ISA+30 column: 1.444, with rated thrust 82.9 kN of 98.0 kN
// (15.4 %, inside the 25 % limit), above maximum continuous at ISA (1.440).
func TestReducedInsideTakeoffGate(t *testing.T) {
	m := demoModel(t, "demo-epr")
	ground := Conditions{AltitudeFt: 0, OATC: 15, OnGround: true}
	reduced := ground
	reduced.AssumedSet, reduced.AssumedC = true, 45
	air := reduced
	air.OnGround = false
	for _, tc := range []struct {
		name string
		c    Conditions
		want float64
	}{
		{"takeoff on the ground", ground, 1.520},
		{"reduced inside the gate", reduced, 1.444},
		{"go-around in the air", air, 1.510},
	} {
		var s LeverState
		cmd, err := m.CommandAtTLA(&s, 1, 60, tc.c)
		if err != nil {
			t.Fatal(err)
		}
		if m.GateName(cmd.Gate) != "full-forward" || math.Abs(cmd.Value-tc.want) > 1e-9 || cmd.Flags != 0 {
			t.Errorf("%s: gate %q value %.6g flags %v, want full-forward %.6g", tc.name, m.GateName(cmd.Gate), cmd.Value, cmd.Flags.Names(), tc.want)
		}
	}
}

func continuousAt(t *testing.T, p *Profile, c Conditions) float64 {
	c.AssumedSet = false
	r, err := p.Target("continuous", c)
	if err != nil {
		t.Fatal(err)
	}
	return r.Value
}

// TestExpressionFallback: a target expression that fails at run time falls
// back to the gate's rating, or to the last good command, and says so.
func TestExpressionFallback(t *testing.T) {
	doc := strings.Replace(minimal, `name = "takeoff"
tla_deg = 50
capture_deg = 1.5
rating = "takeoff"`, `name = "takeoff"
tla_deg = 50
capture_deg = 1.5
rating = "takeoff"
target = "isa_temp(alt + 200000)"`, 1)
	doc += `
[[gate]]
name = "bad"
tla_deg = 50
capture_deg = 0
target = "1 / (alt - 1000)"
`
	doc = strings.Replace(doc, "tla_max_deg = 50", "tla_max_deg = 60", 1)
	doc = strings.Replace(doc, "tla_deg = 50\ncapture_deg = 0", "tla_deg = 58\ncapture_deg = 0", 1)
	p, err := ParseProfile("fallback.toml", []byte(doc))
	if err != nil {
		t.Fatal(err)
	}
	m, err := NewModel(p, nil)
	if err != nil {
		t.Fatal(err)
	}
	c := Conditions{AltitudeFt: 0, OATC: 20}
	var s LeverState
	cmd, err := m.CommandAtTLA(&s, NoLever, 50, c)
	if err != nil {
		t.Fatal(err)
	}
	full, _ := p.Target("takeoff", c)
	if cmd.Value != full.Value || cmd.Flags&Fallback == 0 {
		t.Errorf("rating fallback: %g %v, want %g with fallback", cmd.Value, cmd.Flags.Names(), full.Value)
	}
	// "bad" has no rating: at 1000 ft it divides by zero (non-finite) and
	// holds the last good command, 92 at sea level... from takeoff's gate.
	c.AltitudeFt = 1000
	cmd, _ = m.CommandAtTLA(&s, NoLever, 50, c)
	last := cmd.Value
	cmd, err = m.CommandAtTLA(&s, NoLever, 58, c)
	if err != nil || cmd.Value != last || cmd.Flags&Fallback == 0 || !finite(cmd.Value) {
		t.Errorf("last-good fallback: %+v %v, want %g", cmd, err, last)
	}
}

// TestExpressionLoadErrors: expressions are compiled at load; faults name
// the gate's key.
func TestExpressionLoadErrors(t *testing.T) {
	tests := []struct{ expr, key, want string }{
		{`target = "rating('climb')"`, "gate[1].target", `unknown rating`},
		{`target = "altitude * 2"`, "gate[1].target", `unknown name altitude`},
		{`target = "on_ground"`, "gate[1].target", `expected float64`},
		{`target = "assumed('idle')"`, "gate[1].target", "not an assumed-temperature rating"},
		{`target = "bleed('wing') ? 1 : 2"`, "gate[1].target", "unknown bleed"},
		{`target = "rating(oat > 0 ? 'takeoff' : 'idle')"`, "gate[1].target", "quoted rating name"},
		{`target = "` + strings.Repeat("1 + ", 150) + `1"`, "gate[1].target", "exceeds maximum allowed nodes"},
		{`when = "alt"`, "gate[1].when", `expected bool`},
	}
	for _, tc := range tests {
		doc := strings.Replace(minimal, "tla_deg = 50\ncapture_deg = 1.5\nrating = \"takeoff\"", "tla_deg = 50\ncapture_deg = 1.5\nrating = \"takeoff\"\n"+tc.expr, 1)
		_, err := ParseProfile("x.toml", []byte(doc))
		var list FileErrors
		if !errors.As(err, &list) || list[0].Key != tc.key || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: %v, want %s: %q", tc.expr, err, tc.key, tc.want)
		}
	}
}

// TestCalibrationFloors: a calibration's capture floor that makes zones
// overlap is a model error naming the lever and the gates.
func TestCalibrationFloors(t *testing.T) {
	p, _ := LoadProfile("demo")
	spec := demoSpec()
	spec.MinCaptureDeg = 4
	l, _ := NewLeverCalibration(spec)
	cal, _ := NewCalibration(l)
	_, err := NewModel(p, cal)
	if !errors.Is(err, ErrLever) || !strings.Contains(err.Error(), `"continuous" and "reduced-takeoff"`) {
		t.Errorf("err = %v", err)
	}
}

func TestCommandErrors(t *testing.T) {
	m := demoModel(t, "demo")
	var s LeverState
	if _, err := m.Command(&s, 9, 1000, Conditions{}); !errors.Is(err, ErrLever) {
		t.Errorf("unknown lever: %v", err)
	}
	if _, err := m.Command(&s, 1, math.NaN(), Conditions{}); !errors.Is(err, ErrLever) {
		t.Errorf("NaN raw: %v", err)
	}
	if _, err := m.Command(&s, 1, 1000, Conditions{OATC: math.Inf(1)}); !errors.Is(err, ErrConditions) {
		t.Errorf("bad conditions: %v", err)
	}
	// A state used for TLA commands, then asked for raw counts of no lever.
	var tlaOnly LeverState
	m.CommandAtTLA(&tlaOnly, NoLever, 10, Conditions{})
	if _, err := m.Command(&tlaOnly, NoLever, 1000, Conditions{}); !errors.Is(err, ErrLever) {
		t.Errorf("raw counts without a calibration: %v", err)
	}
	cmd, err := m.Command(&s, 1, -50, Conditions{OnGround: true})
	if err != nil || cmd.Clamped&(ClampRaw|ClampDevice) != ClampRaw|ClampDevice || cmd.TLADeg != -18 {
		t.Errorf("raw below the device: %+v %v", cmd, err)
	}
}

// TestDeadband: a reading is held until it moves more than the deadband.
func TestDeadband(t *testing.T) {
	m := demoModel(t, "demo") // deadband 2 counts
	var s LeverState
	c := Conditions{}
	a, _ := m.Command(&s, 1, 2000, c)
	b, _ := m.Command(&s, 1, 2002, c) // within: held
	d, _ := m.Command(&s, 1, 2003, c) // beyond: follows
	if a.TLADeg != b.TLADeg || d.TLADeg == a.TLADeg {
		t.Errorf("deadband: %g %g %g", a.TLADeg, b.TLADeg, d.TLADeg)
	}
}

// TestMultiLeverSplit: each lever has its own calibration and state; the
// split is the spread of their angles.
func TestMultiLeverSplit(t *testing.T) {
	m := demoModel(t, "demo")
	c := Conditions{AltitudeFt: 0, OATC: 15}
	var s1, s2 LeverState
	r1, _ := m.Calibration().Lever(1).Raw(27)
	r2, _ := m.Calibration().Lever(2).Raw(28.5)
	a, _ := m.Command(&s1, 1, r1, c)
	b, _ := m.Command(&s2, 2, r2, c)
	if got := Split(a, b); math.Abs(got-1.5) > 0.01 {
		t.Errorf("split %g, want 1.5", got)
	}
}

// TestHolderReloadRace hammers one holder with readers while a writer swaps
// models; run with -race.
func TestHolderReloadRace(t *testing.T) {
	h := NewHolder(demoModel(t, "demo"))
	var stop atomic.Bool
	var wg sync.WaitGroup
	for g := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var s LeverState
			rng := rand.New(rand.NewPCG(uint64(g), 1))
			for !stop.Load() {
				m := h.Model()
				if _, err := m.Command(&s, 1+g%2, 245+rng.Float64()*3600, Conditions{AltitudeFt: 1000, OATC: 10}); err != nil {
					t.Error(err)
					return
				}
			}
		}()
	}
	for range 20 {
		if err := h.Reload(func() (*Model, error) {
			return LoadModel("demo", "demo")
		}); err != nil {
			t.Fatal(err)
		}
	}
	if err := h.Reload(func() (*Model, error) { return LoadModel("no-such", "") }); err == nil {
		t.Error("a failed reload must report its error")
	}
	stop.Store(true)
	wg.Wait()
	if h.Model() == nil {
		t.Fatal("the model is gone after a failed reload")
	}
}

// TestLeverBeyondEndStops: a calibration that runs past the profile's end
// stops (−18° and 55° on the demo) gives angles held at the stop and
// reported as a lever clamp. Worked by hand on a linear calibration from
// raw 0 at −30° to raw 4000 at 60° (0.0225° a count): raw 2000 is 15°
// (inside), raw 200 is −25.5° (held at −18°), raw 3900 is 57.75° (held at
// 55°).
func TestLeverBeyondEndStops(t *testing.T) {
	p, _ := LoadProfile("demo")
	spec := demoSpec()
	spec.Points = [][2]float64{{0, -30}, {4000, 60}}
	spec.Deadband = 0
	l, err := NewLeverCalibration(spec)
	if err != nil {
		t.Fatal(err)
	}
	cal, _ := NewCalibration(l)
	m, err := NewModel(p, cal)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		raw, tla float64
		clamped  Clamped
	}{
		{2000, 15, 0},
		{200, -18, ClampLever},
		{3900, 55, ClampLever},
	}
	for _, tc := range tests {
		var s LeverState
		cmd, err := m.Command(&s, 1, tc.raw, Conditions{OnGround: true})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(cmd.TLADeg-tc.tla) > 1e-9 || cmd.Clamped&ClampLever != tc.clamped {
			t.Errorf("raw %g: TLA %g clamped %v, want %g %v", tc.raw, cmd.TLADeg, cmd.Clamped.Names(), tc.tla, tc.clamped.Names())
		}
	}
	var s LeverState
	if cmd, _ := m.CommandAtTLA(&s, NoLever, 70, Conditions{}); cmd.TLADeg != 55 || cmd.Clamped&ClampLever == 0 {
		t.Errorf("TLA 70: %g %v, want 55 and a lever clamp", cmd.TLADeg, cmd.Clamped.Names())
	}
}

// TestCommandFrameMatchesCommand: levers commanded through a shared Frame
// give exactly what each gives through Command alone, on every demo (their
// expressions, `when` gates and raise chains) and on models that cannot
// share, over frames of random positions and conditions; and a frame
// allocates nothing.
func TestCommandFrameMatchesCommand(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for _, name := range EmbeddedProfiles() {
		m := demoModel(t, name)
		levers := m.Calibration().Levers()
		alone := make([]LeverState, len(levers))
		framed := make([]LeverState, len(levers))
		for frame := range 3000 {
			oat := -30 + 60*rng.Float64()
			c := Conditions{AltitudeFt: 12000 * rng.Float64(), OATC: oat, Mach: 0.5 * rng.Float64(),
				Bleeds: Bleeds(rng.IntN(4)), OnGround: rng.IntN(2) == 0, AssumedSet: rng.IntN(2) == 0, AssumedC: oat + 40*rng.Float64()}
			if frame%7 == 0 && frame > 0 {
				c.OATC += 1e-9 // a frame at new conditions that differ in the last bits
			}
			var f Frame
			for i, l := range levers {
				spec := l.Spec()
				raw := spec.RawMin + (spec.RawMax-spec.RawMin)*rng.Float64()
				want, errA := m.Command(&alone[i], spec.ID, raw, c)
				got, errB := m.CommandFrame(&f, &framed[i], spec.ID, raw, c)
				if (errA == nil) != (errB == nil) || got != want {
					t.Fatalf("%s frame %d lever %d raw %g at %+v:\nframe %+v %v\nalone %+v %v", name, frame, spec.ID, raw, c, got, errB, want, errA)
				}
			}
			if m.shareable && f.ownKnown == 0 && errorsFree(m, c) {
				t.Fatalf("%s frame %d: the frame carried nothing to the next lever", name, frame)
			}
		}
		t.Logf("%s: gate targets shared between levers: %v", name, m.shareable)
		var f Frame
		var states [2]LeverState
		ids := [2]int{levers[0].ID(), levers[min(1, len(levers)-1)].ID()}
		c := Conditions{AltitudeFt: 1000, OATC: 20, OnGround: true, AssumedSet: true, AssumedC: 45}
		if n := testing.AllocsPerRun(100, func() {
			f = Frame{}
			for i, id := range ids {
				m.CommandFrame(&f, &states[i], id, 2000, c)
			}
		}); n != 0 {
			t.Errorf("%s: %g allocations per frame", name, n)
		}
	}
}

// errorsFree reports whether m commands at c without a `when` failing, the
// case in which a frame carries gate targets.
func errorsFree(m *Model, c Conditions) bool {
	var s LeverState
	_, err := m.CommandAtTLA(&s, NoLever, 0, c)
	return err == nil && !s.whenFailed
}
