package thrustmap

import (
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
	m := benchModel(b)
	const frames = 4096
	samples := make([]benchSample, frames)
	for i := range samples {
		k := min(i, frames-i) // a triangle: forward then back
		alt := float64(i) * 11000 / frames
		samples[i] = benchSample{raw: 200 + 3700*float64(k)/(frames/2),
			c: Conditions{AltitudeFt: alt, OATC: 25 - 0.002*alt, Mach: 0.3}}
	}
	benchCommands(b, m, samples)
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

// BenchmarkBaseline is the floor: raw → TLA by a hand-inlined linear search
// over five points, then one bilinear look-up in a 12×12 table, no gates.
func BenchmarkBaseline(b *testing.B) {
	raws := [...]float64{200, 1500, 2400, 3300, 3900}
	tlas := [...]float64{0, 20, 27, 40, 55}
	var alt, temp [12]float64
	var vals [12][12]float64
	for i := range 12 {
		alt[i] = float64(i) * 1000
		temp[i] = -40 + float64(i)*10
		for j := range 12 {
			vals[i][j] = 85 + float64(i)*0.3 + float64(j)*0.5
		}
	}
	samples := benchSamples(1, false)
	b.ReportAllocs()
	b.ResetTimer()
	sum := 0.0
	for n := 0; n < b.N; n++ {
		x := &samples[n&1023]
		k := 0
		for k < 3 && raws[k+1] < x.raw {
			k++
		}
		tla := tlas[k] + (tlas[k+1]-tlas[k])*(x.raw-raws[k])/(raws[k+1]-raws[k])
		i := min(int(x.c.AltitudeFt/1000), 10)
		j := min(int((x.c.OATC+40)/10), 10)
		fa := (x.c.AltitudeFt - alt[i]) / 1000
		ft := (x.c.OATC - temp[j]) / 10
		v := (vals[i][j]*(1-ft)+vals[i][j+1]*ft)*(1-fa) + (vals[i+1][j]*(1-ft)+vals[i+1][j+1]*ft)*fa
		sum += v + tla
	}
	sink = sum
}

// sink keeps benchmark results alive so the compiler cannot drop the work.
var sink float64
