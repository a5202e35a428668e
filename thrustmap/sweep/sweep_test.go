package sweep

import (
	"errors"
	"math"
	"reflect"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// demoNotches are the true raw counts of lever 1 of the embedded demo
// calibration at the demo profile's end stops and notch gates
// (−18, 0, 27, 40, 47, 55°), so a found calibration can be compared with it.
var demoNotches = []float64{245, 1218, 2588, 3199, 3518, 3880}

func demoProfile(t testing.TB) *thrustmap.Profile {
	t.Helper()
	p, err := thrustmap.LoadProfile("demo")
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func baseConfig(levers ...SynthLever) SynthConfig {
	return SynthConfig{Levers: levers, SampleHz: 200, DwellMs: 1500, CountsPerSec: 600, Passes: 2, Bits: 12, Seed: 1}
}

func analyze(t testing.TB, cfg SynthConfig) *Analyzer {
	t.Helper()
	a := NewAnalyzer(Options{})
	cfg.Visit(a.Add)
	return a
}

func calibrate(t *testing.T, a *Analyzer, lever int) Result {
	t.Helper()
	sc, ok := a.Scan(lever)
	if !ok {
		t.Fatalf("lever %d not seen", lever)
	}
	res, err := Calibrate(demoProfile(t), sc, CalOptions{RawMin: 0, RawMax: 4095, HasRange: true})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// TestNotchAccuracy: on a 12-bit lever with σ = 3 counts, every notch is
// found within 1 count of where the generator put it (the bar).
func TestNotchAccuracy(t *testing.T) {
	for seed := uint64(1); seed <= 5; seed++ {
		cfg := baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3, Taper: 0.2})
		cfg.Seed = seed
		res := calibrate(t, analyze(t, cfg), 1)
		if res.Inverted {
			t.Errorf("seed %d: reported inverted", seed)
		}
		for i, n := range res.Notches {
			if math.Abs(n.Raw-demoNotches[i]) > 1 {
				t.Errorf("seed %d: notch %s at %.2f, truth %.0f", seed, n.Gate, n.Raw, demoNotches[i])
			}
		}
		if s := res.Scan.NoiseSigma; math.Abs(s-3) > 0.3 {
			t.Errorf("seed %d: noise σ %.2f, truth 3", seed, s)
		}
	}
}

// TestBacklash: 10 counts of backlash is found within 2, and the notch is
// the midpoint of the two directions (docs/methods.md, Sweep analysis).
func TestBacklash(t *testing.T) {
	res := calibrate(t, analyze(t, baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3, Backlash: 10})), 1)
	if math.Abs(res.BacklashCounts-10) > 2 {
		t.Errorf("backlash %.2f, truth 10", res.BacklashCounts)
	}
	for i, n := range res.Notches[1 : len(res.Notches)-1] {
		if n.Directions != 2 || math.Abs(n.Raw-demoNotches[i+1]) > 1 {
			t.Errorf("notch %s: %.2f from %d directions, truth %.0f", n.Gate, n.Raw, n.Directions, demoNotches[i+1])
		}
	}
}

// TestDeadSpot: a dead spot of 40 counts on the track is reported at its place.
func TestDeadSpot(t *testing.T) {
	res := calibrate(t, analyze(t, baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3, DeadSpots: [][2]float64{{2000, 2040}}})), 1)
	found := 0
	for _, j := range res.Scan.Jumps {
		lo, hi := math.Min(j.From, j.To), math.Max(j.From, j.To)
		if math.Abs(lo-2000) <= 12 && math.Abs(hi-2040) <= 12 {
			found++
		} else {
			t.Errorf("jump at the wrong place: %+v", j)
		}
	}
	if found == 0 {
		t.Fatal("the dead spot was not reported")
	}
	if !strings.Contains(strings.Join(res.Warnings, "\n"), "dead or scratchy") {
		t.Errorf("no warning: %v", res.Warnings)
	}
	// Without a dead spot, noise and motion make no jumps.
	clean := calibrate(t, analyze(t, baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3})), 1)
	if clean.Scan.JumpCount != 0 {
		t.Errorf("%d jumps on a clean track: %+v", clean.Scan.JumpCount, clean.Scan.Jumps)
	}
}

// TestInvertedAndMultiLever: two levers in one recording, one wired
// backwards; each gets its own calibration, and the inverted one is
// recognised from the notch spacing.
func TestInvertedAndMultiLever(t *testing.T) {
	inv := make([]float64, len(demoNotches))
	for i, r := range demoNotches {
		inv[i] = 4095 - r
	}
	a := analyze(t, baseConfig(
		SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 2},
		SynthLever{ID: 2, Notches: inv, NoiseSigma: 4, Backlash: 6},
	))
	if got := a.Levers(); len(got) != 2 {
		t.Fatalf("levers %v", got)
	}
	r2 := calibrate(t, a, 2)
	if !r2.Inverted {
		t.Fatal("lever 2 not found inverted")
	}
	for i, n := range r2.Notches {
		// An end stop is reached from one side only, so it reads half the
		// backlash (3 counts) short of the notch position.
		tol := 1.5
		if i == 0 || i == len(inv)-1 {
			tol += 3
		}
		if math.Abs(n.Raw-inv[i]) > tol {
			t.Errorf("lever 2 notch %s at %.2f, truth %.0f", n.Gate, n.Raw, inv[i])
		}
	}
	// The calibration puts each gate on its notch: a model built from it
	// reports every notch gate at its found raw count.
	l, err := thrustmap.NewLeverCalibration(r2.Spec)
	if err != nil {
		t.Fatal(err)
	}
	cal, _ := thrustmap.NewCalibration(l)
	m, err := thrustmap.NewModel(demoProfile(t), cal)
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range r2.Notches {
		var s thrustmap.LeverState
		cmd, err := m.Command(&s, 2, math.Round(n.Raw), thrustmap.Conditions{OnGround: true, AssumedSet: true, AssumedC: 40})
		if err != nil {
			t.Fatal(err)
		}
		if want := n.Gate; want != AftStop && want != ForwardStop && m.GateName(cmd.Gate) != want {
			t.Errorf("raw %.0f: gate %q, want %q", n.Raw, m.GateName(cmd.Gate), want)
		}
	}
}

// TestCountMismatch: a recording that skips a notch is a clear error saying
// what was found and what the profile expects.
func TestCountMismatch(t *testing.T) {
	short := []float64{245, 1218, 2588, 3518, 3880} // no rest at continuous
	a := analyze(t, baseConfig(SynthLever{ID: 1, Notches: short, NoiseSigma: 3}))
	sc, _ := a.Scan(1)
	_, err := Calibrate(demoProfile(t), sc, CalOptions{})
	if !errors.Is(err, ErrNotchCount) || !strings.Contains(err.Error(), "rested at 5 places") ||
		!strings.Contains(err.Error(), "expects 6 (full-reverse, idle, climb, continuous, reduced-takeoff, takeoff)") {
		t.Errorf("err = %v", err)
	}
}

// TestPartialPassWarning: a pass that turns back before an end stop is
// reported.
func TestPartialPassWarning(t *testing.T) {
	a := NewAnalyzer(Options{})
	up := baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3})
	up.Passes = 1
	var end int64
	up.Visit(func(s input.Sample) { a.Add(s); end = s.TMs })
	back := baseConfig(SynthLever{ID: 1, Notches: []float64{3880, 3518, 3199}, NoiseSigma: 3})
	back.Seed = 2
	back.Visit(func(s input.Sample) { s.TMs += end + 5; a.Add(s) })
	sc, _ := a.Scan(1)
	res, err := Calibrate(demoProfile(t), sc, CalOptions{RawMin: 0, RawMax: 4095, HasRange: true})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(strings.Join(res.Warnings, "\n"), "turned back at raw 3199") {
		t.Errorf("warnings: %v", res.Warnings)
	}
}

// TestSpecFloors checks the calibration's floors against the rule in
// Calibrate's doc comment, worked by hand from the found noise and notches.
func TestSpecFloors(t *testing.T) {
	res := calibrate(t, analyze(t, baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3})), 1)
	s := res.Spec
	sigma := res.Scan.NoiseSigma
	if s.Deadband != math.Ceil(3*sigma) {
		t.Errorf("deadband %g, want ⌈3·%.3f⌉", s.Deadband, sigma)
	}
	// The steepest span of the demo notches: 47→55° over 3518→3880 counts.
	steep := 8.0 / (3880 - 3518)
	if math.Abs(s.MinCaptureDeg-4*sigma*steep) > 0.01 || math.Abs(s.MinHysteresisDeg-3*sigma*steep) > 0.01 {
		t.Errorf("floors %g %g, want %g %g", s.MinCaptureDeg, s.MinHysteresisDeg, 4*sigma*steep, 3*sigma*steep)
	}
	if s.Fit != grid.Linear || s.RawMin != 0 || s.RawMax != 4095 || len(s.Points) != 6 {
		t.Errorf("spec %+v", s)
	}
}

// TestAddAllocatesNothing: once a lever is seen, samples in motion and at
// rest cost no allocation (memory does not grow with the recording).
func TestAddAllocatesNothing(t *testing.T) {
	a := NewAnalyzer(Options{})
	samples := Synthesize(baseConfig(SynthLever{ID: 1, Notches: []float64{100, 3000}, NoiseSigma: 3}))
	for _, s := range samples[:100] {
		a.Add(s)
	}
	i := 100
	n := testing.AllocsPerRun(1000, func() {
		s := samples[i%len(samples)]
		s.TMs = int64(i) * 5
		// Keep the lever in motion so no dwell closes.
		s.Raw = float64(100 + i%2000)
		a.Add(s)
		i++
	})
	if n != 0 {
		t.Errorf("%g allocations per sample", n)
	}
}

// BenchmarkAnalyze1M analyses a recording of one million samples (two
// levers, many passes). Budget: 0.5 s per op on one core, memory
// independent of the length.
func BenchmarkAnalyze1M(b *testing.B) {
	cfg := baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3, Backlash: 8},
		SynthLever{ID: 2, Notches: demoNotches, NoiseSigma: 3})
	cfg.SampleHz, cfg.Passes = 1000, 60
	samples := Synthesize(cfg)[:1_000_000]
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		a := NewAnalyzer(Options{})
		for _, s := range samples {
			a.Add(s)
		}
		if _, ok := a.Scan(1); !ok {
			b.Fatal("no lever")
		}
	}
}

// TestProgress: the live view of a sweep being recorded. Asking for
// progress while samples arrive does not change the analysis (the scan at
// the end equals that of an analyzer never asked), the rests found grow
// notch by notch as the generator rests the lever in each, and at the end
// they are the generator's notches (within 1 count, as TestNotchAccuracy).
func TestProgress(t *testing.T) {
	cfg := baseConfig(SynthLever{ID: 1, Notches: demoNotches, NoiseSigma: 3})
	cfg.Passes = 1
	samples := Synthesize(cfg)
	watched, quiet := NewAnalyzer(Options{}), NewAnalyzer(Options{})
	maxRests := 0
	for i, s := range samples {
		watched.Add(s)
		quiet.Add(s)
		if i%50 != 0 {
			continue
		}
		p, ok := watched.Progress(1)
		if !ok || p.Samples != int64(i+1) || p.Raw != s.Raw {
			t.Fatalf("sample %d: progress %+v, ok %v", i, p, ok)
		}
		if len(p.Rests) < maxRests {
			t.Fatalf("sample %d: rests fell from %d to %d", i, maxRests, len(p.Rests))
		}
		maxRests = len(p.Rests)
	}
	p, _ := watched.Progress(1)
	if len(p.Rests) != len(demoNotches) {
		t.Fatalf("rests %v, want the %d notches %v", p.Rests, len(demoNotches), demoNotches)
	}
	for i, r := range p.Rests {
		if math.Abs(r-demoNotches[i]) > 1 {
			t.Errorf("rest %d at %.2f, truth %.0f", i, r, demoNotches[i])
		}
	}
	if !p.Resting || p.RawMinSeen > 250 || p.RawMaxSeen < 3875 {
		t.Errorf("end: %+v", p)
	}
	a, _ := watched.Scan(1)
	b, _ := quiet.Scan(1)
	if !reflect.DeepEqual(a, b) {
		t.Errorf("progress changed the analysis:\n%+v\n%+v", a, b)
	}
	if _, ok := watched.Progress(9); ok {
		t.Error("progress of a lever never seen")
	}
}

// TestNoTravel: a lever that only rested in one place gets a message that
// says so, not a notch count.
func TestNoTravel(t *testing.T) {
	a := analyze(t, baseConfig(SynthLever{ID: 1, Notches: []float64{1218, 1218}, NoiseSigma: 3}))
	sc, _ := a.Scan(1)
	_, err := Calibrate(demoProfile(t), sc, CalOptions{})
	if !errors.Is(err, ErrNotchCount) || !strings.Contains(err.Error(), "rested at one place only (raw 1218)") ||
		!strings.Contains(err.Error(), "move it from end stop to end stop") {
		t.Errorf("err = %v", err)
	}
}
