package thrustmap

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// benchGatesTOML is a profile of three gates whose ratings are 2-axis 12×12
// linear tables: the shape BenchmarkCommand measures.
func benchGatesTOML() string {
	var b strings.Builder
	b.WriteString("schema = 1\nparameter = \"N1\"\n")
	for k, name := range []string{"idle", "climb", "takeoff"} {
		b.WriteString("[[rating]]\nname = \"" + name + "\"\n")
		b.WriteString("altitude_ft = [0, 1000, 2000, 3000, 4000, 5000, 6000, 7000, 8000, 9000, 10000, 11000]\n")
		b.WriteString("temperature_c = [-40, -30, -20, -10, 0, 10, 20, 30, 40, 50, 60, 70]\nvalues = [\n")
		for i := range 12 {
			b.WriteString("[")
			for j := range 12 {
				if j > 0 {
					b.WriteString(", ")
				}
				b.WriteString(strconv.FormatFloat(25+float64(k)*30+float64(i)*0.3+float64(j)*0.5, 'g', -1, 64))
			}
			b.WriteString("],\n")
		}
		b.WriteString("]\n")
	}
	b.WriteString("[lever]\ntla_min_deg = 0\ntla_max_deg = 55\nidle_gate = \"idle\"\n")
	for k, name := range []string{"idle", "climb", "takeoff"} {
		b.WriteString("[[gate]]\nname = \"" + name + "\"\ntla_deg = " + strconv.Itoa([]int{0, 27, 55}[k]) +
			"\ncapture_deg = 1.5\nhysteresis_deg = 0.5\nrating = \"" + name + "\"\n")
	}
	return b.String()
}

func benchModel(b *testing.B) *Model {
	p, err := ParseProfile("bench.toml", []byte(benchGatesTOML()))
	if err != nil {
		b.Fatal(err)
	}
	l, err := NewLeverCalibration(LeverSpec{ID: 1, RawMin: 0, RawMax: 4095, Fit: grid.Linear,
		Points: [][2]float64{{200, 0}, {1500, 20}, {2400, 27}, {3300, 40}, {3900, 55}}, Deadband: 1})
	if err != nil {
		b.Fatal(err)
	}
	cal, _ := NewCalibration(l)
	m, err := NewModel(p, cal)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

type benchSample struct {
	raw float64
	c   Conditions
}

func benchSamples(seed uint64, fixed bool) []benchSample {
	rng := rand.New(rand.NewPCG(seed, 9))
	out := make([]benchSample, 1024)
	for i := range out {
		out[i].raw = 200 + rng.Float64()*3700
		out[i].c = Conditions{AltitudeFt: 5000, OATC: 15}
		if !fixed {
			out[i].c = Conditions{AltitudeFt: rng.Float64() * 11000, OATC: -40 + rng.Float64()*110}
		}
	}
	return out
}

// BenchmarkCommand is raw → TLA → gate → 2-axis targets as a sim drives
// it: every frame a new lever reading (the lever swept end to end and back)
// and new conditions (a climb, drifting a little each frame), so the gate
// targets are evaluated at every call. Budget: 100 ns/op, 0 allocs/op.
func BenchmarkCommand(b *testing.B) {
	benchCommands(b, benchModel(b), climbSamples())
}

// climbSamples are BenchmarkCommand's samples: the lever swept end to end
// and back while the conditions drift, a new pair every frame.
func climbSamples() []benchSample {
	const frames = 4096
	samples := make([]benchSample, frames)
	for i := range samples {
		k := min(i, frames-i) // a triangle: forward then back
		alt := float64(i) * 11000 / frames
		samples[i] = benchSample{raw: 200 + 3700*float64(k)/(frames/2),
			c: Conditions{AltitudeFt: alt, OATC: 25 - 0.002*alt, Mach: 0.3}}
	}
	return samples
}

// benchCommands feeds samples (a power-of-two count) through one lever
// state, one Command per op.
func benchCommands(b *testing.B, m *Model, samples []benchSample) {
	mask := len(samples) - 1
	var s LeverState
	b.ReportAllocs()
	b.ResetTimer()
	sum := 0.0
	for i := 0; i < b.N; i++ {
		x := &samples[i&mask]
		cmd, err := m.Command(&s, 1, x.raw, x.c)
		if err != nil {
			b.Fatal(err)
		}
		sum += cmd.Value
	}
	sink = sum
}

// BenchmarkCommandRandomConditions is BenchmarkCommand with the lever and
// the conditions jumping at random every call: the worst case, where no
// search can be predicted.
func BenchmarkCommandRandomConditions(b *testing.B) {
	m := benchModel(b)
	samples := benchSamples(1, false)
	benchCommands(b, m, samples)
}

// BenchmarkCommandSteady is the common case in a sim: conditions change far
// more slowly than the lever moves, so the gate targets worked out for the
// last conditions are reused and only the lever is mapped.
func BenchmarkCommandSteady(b *testing.B) {
	m := benchModel(b)
	samples := benchSamples(2, true)
	benchCommands(b, m, samples)
}

// BenchmarkCommandExpr goes through the demo's reduced-takeoff gate, whose
// `when` and target are expressions (an assumed-temperature reduction), with
// new conditions on every call. Budget: 1 µs/op, 1 alloc/op.
func BenchmarkCommandExpr(b *testing.B) {
	m := demoModel(b, "demo")
	raw, _ := m.Calibration().Lever(1).Raw(47)
	rng := rand.New(rand.NewPCG(3, 9))
	conds := make([]Conditions, 1024)
	for i := range conds {
		oat := -10 + rng.Float64()*40
		conds[i] = Conditions{AltitudeFt: rng.Float64() * 8000, OATC: oat, OnGround: true, AssumedSet: true, AssumedC: oat + 5 + rng.Float64()*30}
	}
	var s LeverState
	if cmd, _ := m.Command(&s, 1, raw, conds[0]); m.GateName(cmd.Gate) != "reduced-takeoff" {
		b.Fatalf("not at the reduced-takeoff gate: %+v", cmd)
	}
	b.ReportAllocs()
	b.ResetTimer()
	sum := 0.0
	for i := 0; i < b.N; i++ {
		cmd, err := m.Command(&s, 1, raw, conds[i&1023])
		if err != nil {
			b.Fatal(err)
		}
		sum += cmd.Value
	}
	sink = sum
}

// BenchmarkBaseline is the floor BenchmarkCommand is measured against: the
// same samples (climbSamples) through only the work any implementation must
// do for them, written out by hand for benchModel's profile: the deadband,
// raw → TLA by binary search over the five calibration points, the gate's
// capture zone or the two gates either side (a binary search over the
// gates), their 12×12 look-ups with a binary search on each axis, and the
// blend between the zones' edges. It first checks that it computes exactly
// what Command computes on every sample, so it cannot skip work. Command
// does more on top: `when` checks, the monotone rule (a gate's target is
// raised to that of the gate nearer idle, so that gate is looked up too),
// the reported gate's hysteresis, clamp reports and the redline.
func BenchmarkBaseline(b *testing.B) {
	m := benchModel(b)
	samples := climbSamples()
	f := newBenchFloor()
	var s LeverState
	for i, x := range samples {
		want, err := m.Command(&s, 1, x.raw, x.c)
		if err != nil {
			b.Fatal(err)
		}
		if got := f.command(x.raw, &x.c); got != want.Value {
			b.Fatalf("sample %d (raw %g, %+v): the floor gives %.17g, Command %.17g", i, x.raw, x.c, got, want.Value)
		}
	}
	f.holding = false
	mask := len(samples) - 1
	b.ReportAllocs()
	b.ResetTimer()
	sum := 0.0
	for i := 0; i < b.N; i++ {
		x := &samples[i&mask]
		sum += f.command(x.raw, &x.c)
	}
	sink = sum
}

// benchFloor is benchModel written out by hand: its lever calibration,
// gates (idle, climb, takeoff) and their ratings' tables.
type benchFloor struct {
	raw, tla  [5]float64
	gate      [3]float64 // gate TLAs; every capture zone is ±1.5°
	alt, temp [12]float64
	vals      [3][12][12]float64
	held      float64
	holding   bool
}

func newBenchFloor() *benchFloor {
	f := &benchFloor{
		raw:  [5]float64{200, 1500, 2400, 3300, 3900},
		tla:  [5]float64{0, 20, 27, 40, 55},
		gate: [3]float64{0, 27, 55},
	}
	for i := range 12 {
		f.alt[i] = float64(i) * 1000
		f.temp[i] = -40 + float64(i)*10
	}
	for k := range 3 {
		for i := range 12 {
			for j := range 12 {
				f.vals[k][i][j] = 25 + float64(k)*30 + float64(i)*0.3 + float64(j)*0.5 // as benchGatesTOML
			}
		}
	}
	return f
}

// floorSegment returns i with xs[i] ≤ x ≤ xs[i+1] by binary search; x is
// within the axis.
func floorSegment(xs []float64, x float64) int {
	lo, hi := 0, len(xs)-2
	for lo < hi {
		mid := (lo + hi + 1) >> 1
		if xs[mid] <= x {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo
}

// lookup is gate k's table at c, clamped to its axes.
func (f *benchFloor) lookup(k int, c *Conditions) float64 {
	a := min(max(c.AltitudeFt, f.alt[0]), f.alt[11])
	t := min(max(c.OATC, f.temp[0]), f.temp[11])
	i, j := floorSegment(f.alt[:], a), floorSegment(f.temp[:], t)
	fa := (a - f.alt[i]) / (f.alt[i+1] - f.alt[i])
	ft := (t - f.temp[j]) / (f.temp[j+1] - f.temp[j])
	v := &f.vals[k]
	lo := v[i][j]*(1-ft) + v[i][j+1]*ft
	hi := v[i+1][j]*(1-ft) + v[i+1][j+1]*ft
	return lo*(1-fa) + hi*fa
}

// command is one sample's command value.
func (f *benchFloor) command(raw float64, c *Conditions) float64 {
	const capture = 1.5
	if !f.holding || math.Abs(raw-f.held) > 1 { // deadband: 1 count
		f.held, f.holding = raw, true
	}
	r := min(max(f.held, f.raw[0]), f.raw[4])
	i := floorSegment(f.raw[:], r)
	fr := (r - f.raw[i]) / (f.raw[i+1] - f.raw[i])
	tla := f.tla[i]*(1-fr) + f.tla[i+1]*fr
	tla = min(max(tla, 0), 55) // the end stops
	g := floorSegment(f.gate[:], tla)
	switch {
	case math.Abs(tla-f.gate[g]) <= capture:
		return f.lookup(g, c)
	case math.Abs(tla-f.gate[g+1]) <= capture:
		return f.lookup(g+1, c)
	}
	lo, hi := f.lookup(g, c), f.lookup(g+1, c)
	loEdge, hiEdge := f.gate[g]+capture, f.gate[g+1]-capture
	return lo + (hi-lo)*((tla-loEdge)/(hiEdge-loEdge))
}

// sink keeps benchmark results alive so the compiler cannot drop the work.
var sink float64

// BenchmarkCommandFrame4 commands a quadrant: four levers a frame at the
// conditions of that frame, through one Frame, so the gate targets are
// worked out once a frame. One op is one lever; compare with
// BenchmarkCommandQuadrant (the same levers each on its own) and
// BenchmarkBaseline.
func BenchmarkCommandFrame4(b *testing.B) {
	benchQuadrant(b, quadrantModel(b, benchGatesTOML()), true)
}

// BenchmarkCommandQuadrant is BenchmarkCommandFrame4 without the Frame:
// every lever works out its gate targets itself.
func BenchmarkCommandQuadrant(b *testing.B) {
	benchQuadrant(b, quadrantModel(b, benchGatesTOML()), false)
}

// BenchmarkCommandFrame4Expr and BenchmarkCommandQuadrantExpr are the pair
// above on the EPR demo, whose forward gate is an expression: there the
// frame saves an expression evaluation per lever.
func BenchmarkCommandFrame4Expr(b *testing.B) { benchQuadrant(b, demoQuadrant(b), true) }

// BenchmarkCommandQuadrantExpr: see BenchmarkCommandFrame4Expr.
func BenchmarkCommandQuadrantExpr(b *testing.B) { benchQuadrant(b, demoQuadrant(b), false) }

// quadrantModel is a profile with four levers calibrated alike.
func quadrantModel(b *testing.B, profile string) *Model {
	p, err := ParseProfile("bench.toml", []byte(profile))
	if err != nil {
		b.Fatal(err)
	}
	var levers []*LeverCalibration
	for id := 1; id <= 4; id++ {
		l, err := NewLeverCalibration(LeverSpec{ID: id, RawMin: 0, RawMax: 4095, Fit: grid.Linear,
			Points: [][2]float64{{200, 0}, {1500, 20}, {2400, 27}, {3300, 40}, {3900, 55}}, Deadband: 1})
		if err != nil {
			b.Fatal(err)
		}
		levers = append(levers, l)
	}
	cal, _ := NewCalibration(levers...)
	m, err := NewModel(p, cal)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

// demoQuadrant is the EPR demo with its four levers' built-in calibration.
func demoQuadrant(b *testing.B) *Model {
	m, err := LoadModel("demo-epr", "demo-epr")
	if err != nil {
		b.Fatal(err)
	}
	if n := len(m.Calibration().Levers()); n != 4 {
		b.Fatalf("the EPR demo calibrates %d levers, want 4", n)
	}
	return m
}

func benchQuadrant(b *testing.B, m *Model, framed bool) {
	ids := make([]int, 0, 4)
	for _, l := range m.Calibration().Levers() {
		ids = append(ids, l.ID())
	}
	samples := climbSamples()
	mask := len(samples) - 1
	var states [4]LeverState
	var f Frame
	b.ReportAllocs()
	b.ResetTimer()
	sum := 0.0
	for i := 0; i < b.N; i++ {
		lever := i & 3
		x := &samples[(i>>2)&mask]
		// The levers of a quadrant sit a little apart.
		var cmd LeverCommand
		var err error
		if framed {
			cmd, err = m.CommandFrame(&f, &states[lever], ids[lever], x.raw+float64(lever)*7, x.c)
		} else {
			cmd, err = m.Command(&states[lever], ids[lever], x.raw+float64(lever)*7, x.c)
		}
		if err != nil {
			b.Fatal(err)
		}
		sum += cmd.Value
	}
	sink = sum
}
