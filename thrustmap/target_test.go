package thrustmap

import (
	"bytes"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strconv"
	"sync"
	"testing"
)

func loadHandWorked(t testing.TB) *Profile {
	t.Helper()
	p, err := LoadProfile("testdata/handworked.toml")
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// sqrtRatio is √(T1/T2) with both temperatures in °C converted to kelvin,
// written out so the tests state the √θ factor of the corrected method.
func sqrtRatio(t1C, t2C float64) float64 { return math.Sqrt((t1C + 273.15) / (t2C + 273.15)) }

// TestTargetHandWorked checks table look-ups, temperature bases, corrections
// and the redline against values worked by hand from testdata/handworked.toml.
func TestTargetHandWorked(t *testing.T) {
	p := loadHandWorked(t)
	both, err := p.BleedSet("engine-anti-ice", "packs-off")
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name    string
		rating  string
		c       Conditions
		want    float64
		clamped []string
		flags   []string
	}{
		// Node (0 ft, 30 °C) of the takeoff table.
		{"node", "takeoff", Conditions{AltitudeFt: 0, OATC: 30}, 95, nil, nil},
		// Bilinear: (5000 ft, 15 °C) is the centre of cell [0,10000]×[0,30]:
		// (90 + 95 + 92 + 97)/4 = 93.5.
		{"bilinear", "takeoff", Conditions{AltitudeFt: 5000, OATC: 15}, 93.5, nil, nil},
		// Corrections at 5000 ft, 0 °C: base (90+92)/2 = 91; anti-ice −1.0;
		// packs-off grid halfway between 0.2 and 0.6 = 0.4 → 90.4.
		{"both bleeds", "takeoff", Conditions{AltitudeFt: 5000, OATC: 0, Bleeds: both}, 90.4, nil, nil},
		// Redline 96.5 cuts the 97 at (10000 ft, 30 °C).
		{"redline", "takeoff", Conditions{AltitudeFt: 10000, OATC: 30}, 96.5, nil, []string{"limited"}},
		// Clamped: −20 °C is below the 0 °C column, 12000 ft above the top row.
		{"clamped", "takeoff", Conditions{AltitudeFt: 12000, OATC: -20}, 92, []string{"altitude", "temperature"}, nil},
		// TAT basis: OAT −30 °C at Mach 0.8 → TAT = 243.15·(1 + 0.2·0.64) − 273.15
		// = 1.1232 °C; 80 + 8·(1.1232+40)/80 = 84.11232.
		{"TAT basis", "climb", Conditions{AltitudeFt: 35000, OATC: -30, Mach: 0.8}, 84.11232, nil, nil},
		// ISA_DEV basis: ISA at 5000 ft is 15 − 6.5·1.524 = 5.094 °C (ICAO lapse
		// rate, 1 ft = 0.3048 m); OAT 20 → ISA+14.906; 70 + 4·(34.906/40) = 73.4906.
		{"ISA_DEV basis", "cruise-isa", Conditions{AltitudeFt: 5000, OATC: 20}, 73.4906, nil, nil},
		// A table without axes is one number at any condition.
		{"no axes", "idle", Conditions{AltitudeFt: 41000, OATC: -56.5, Mach: 0.8}, 22.5, nil, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := p.Target(tc.rating, tc.c)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(res.Value-tc.want) > 1e-9 {
				t.Errorf("value = %.10g, want %.10g", res.Value, tc.want)
			}
			if got := res.Clamped.Names(); !slices.Equal(got, nonNil(tc.clamped)) {
				t.Errorf("clamped = %v, want %v", got, tc.clamped)
			}
			if got := res.Flags.Names(); !slices.Equal(got, nonNil(tc.flags)) {
				t.Errorf("flags = %v, want %v", got, tc.flags)
			}
			if res.Parameter != N1 || res.Unit() != "percent" {
				t.Errorf("parameter %v unit %s", res.Parameter, res.Unit())
			}
		})
	}
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

// TestAssumedTemperatureRules checks each rule of the assumed-temperature
// method (after FAA AC 25-13, 1988; docs/methods.md, Assumed-temperature
// method) in order, with values
// worked by hand from testdata/handworked.toml (takeoff corner ISA+15, i.e.
// 30 °C OAT at sea level; max_c 70; 25 % reduction limit).
func TestAssumedTemperatureRules(t *testing.T) {
	p := loadHandWorked(t)
	tests := []struct {
		name        string
		rating      string
		alt, oat    float64
		ta          float64
		want        float64
		effective   float64
		applied     bool
		reasons     []string
		thrustRedPc float64 // NaN: not checked
		full        float64
	}{
		{
			// Rule 1: Ta ≤ OAT. Full rating at 40 °C: 95 + (93−95)·0.5 = 94.
			name: "ta not above oat", rating: "takeoff", oat: 40, ta: 35,
			want: 94, effective: 40, reasons: []string{"ta_not_above_oat"}, thrustRedPc: 0, full: 94,
		},
		{
			// Rule 1: Ta ≤ corner (30 °C at sea level). Full at 10 °C:
			// 90 + 5·10/30 = 91.6667.
			name: "ta below corner", rating: "takeoff", oat: 10, ta: 25,
			want: 90 + 5.0/3, effective: 10, reasons: []string{"ta_below_corner"}, thrustRedPc: 0, full: 90 + 5.0/3,
		},
		{
			// Reduction within the limit: thrust(45) = 100 − 20·15/20 = 85 kN,
			// 15 % below 100; value at 45: 95 − 2·15/20 = 93.5, times
			// √(283.15/318.15) for the same corrected N1.
			name: "reduced", rating: "takeoff", oat: 10, ta: 45,
			want: 93.5 * sqrtRatio(10, 45), effective: 45, applied: true, thrustRedPc: 15, full: 90 + 5.0/3,
		},
		{
			// Rule 3: thrust(60) = 70 kN < 75 (75 % of 100). On the segment
			// 50–70 °C thrust = 80 − (T − 50), so the limit holds up to T = 55;
			// value at 55: 93 − 2·5/20 = 92.5, times √(283.15/328.15).
			name: "reduction limited", rating: "takeoff", oat: 10, ta: 60,
			want: 92.5 * sqrtRatio(10, 55), effective: 55, applied: true, reasons: []string{"reduction_limited"}, thrustRedPc: 25, full: 90 + 5.0/3,
		},
		{
			// Rule 2 then rule 3: 80 → 70 (max_c), then limited to 55 as above.
			name: "above max", rating: "takeoff", oat: 10, ta: 80,
			want: 92.5 * sqrtRatio(10, 55), effective: 55, applied: true, reasons: []string{"ta_above_max", "reduction_limited"}, thrustRedPc: 25, full: 90 + 5.0/3,
		},
		{
			// At 10 000 ft (ISA −4.812 °C, corner 10.188 °C): OAT 0, Ta 40.
			// thrust(0) = 90; floor 67.5; thrust(40) = 90 − 20·10/20 = 80: no
			// limit; value at 40: 97 − 2·10/20 = 96, × √(273.15/313.15).
			name: "at altitude", rating: "takeoff", alt: 10000, oat: 0, ta: 40,
			want: 96 * sqrtRatio(0, 40), effective: 40, applied: true, thrustRedPc: 100 * (1 - 80.0/90), full: 92,
		},
		{
			// Rule 2 then rule 1, reasons in the order they acted: Ta 80 is
			// cut to max_c 70, which is not above OAT 70: full rating, 91.
			name: "cut to max, not above oat", rating: "takeoff", oat: 70, ta: 80,
			want: 91, effective: 70, reasons: []string{"ta_above_max", "ta_not_above_oat"}, thrustRedPc: 0, full: 91,
		},
		{
			// Exactly at the corner, as typed: ISA at 2000 ft is
			// 15 − 6.5 K/km × 0.6096 km = 11.0376 °C (ICAO Doc 7488/3 lapse
			// rate), so the corner is 26.0376 °C. Full at OAT 10: 91.6667 on
			// the sea-level row, 93.6667 at 10 000 ft; a fifth of the way up,
			// 91.6667 + 0.2 × 2 = 92.0667.
			name: "at the corner", rating: "takeoff", alt: 2000, oat: 10, ta: 26.0376,
			want: 92 + 1.0/15, effective: 10, reasons: []string{"ta_below_corner"}, thrustRedPc: 0, full: 92 + 1.0/15,
		},
		{
			// A tenth of a degree above the corner is a reduction (the
			// tolerance is a micro-degree). Thrust is flat to 30 °C on both
			// rows (98 kN here), so 0 % reduction; the table at 26.1376 is
			// 90 + 5·26.1376/30 + 0.4 = 94.7563, × √(283.15/299.2876) =
			// 92.166, above full: held at full.
			name: "just above the corner", rating: "takeoff", alt: 2000, oat: 10, ta: 26.1376,
			want: 92 + 1.0/15, effective: 26.1376, applied: true, thrustRedPc: 0, full: 92 + 1.0/15,
		},
		{
			// No thrust grid: the limit cannot be checked. Ta 50 on "derate":
			// 93 × √(283.15/323.15).
			name: "not checked", rating: "derate", oat: 10, ta: 50,
			want: 93 * sqrtRatio(10, 50), effective: 50, applied: true, reasons: []string{"reduction_not_checked"}, thrustRedPc: math.NaN(), full: 90 + 5.0/3,
		},
		{
			// Never above full: "derate" has no corner, so Ta 20 over OAT 0
			// reduces, but 93.333·√(273.15/293.15) = 90.09 > full 90 → 90.
			name: "never above full", rating: "derate", oat: 0, ta: 20,
			want: 90, effective: 20, applied: true, reasons: []string{"reduction_not_checked"}, thrustRedPc: math.NaN(), full: 90,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res, err := p.Target(tc.rating, Conditions{AltitudeFt: tc.alt, OATC: tc.oat, AssumedSet: true, AssumedC: tc.ta})
			if err != nil {
				t.Fatal(err)
			}
			r := res.Reduction
			if !r.Evaluated || r.AssumedC != tc.ta {
				t.Fatalf("reduction not evaluated: %+v", r)
			}
			if math.Abs(res.Value-tc.want) > 1e-9 {
				t.Errorf("value = %.10g, want %.10g", res.Value, tc.want)
			}
			if math.Abs(r.EffectiveC-tc.effective) > 1e-9 {
				t.Errorf("effective = %.10g, want %.10g", r.EffectiveC, tc.effective)
			}
			if r.Applied != tc.applied {
				t.Errorf("applied = %v, want %v", r.Applied, tc.applied)
			}
			if got := r.ReasonNames(); !slices.Equal(got, nonNil(tc.reasons)) {
				t.Errorf("reasons = %v, want %v", got, tc.reasons)
			}
			if math.IsNaN(tc.thrustRedPc) {
				if r.ThrustChecked {
					t.Errorf("thrust checked without a thrust grid")
				}
			} else if !r.ThrustChecked || math.Abs(r.ThrustReductionPct-tc.thrustRedPc) > 1e-9 {
				t.Errorf("thrust reduction = %v %.10g %%, want %.10g %%", r.ThrustChecked, r.ThrustReductionPct, tc.thrustRedPc)
			}
			if math.Abs(r.ValueFull-tc.full) > 1e-9 {
				t.Errorf("value_full = %.10g, want %.10g", r.ValueFull, tc.full)
			}
			if res.Value > r.ValueFull+1e-12 {
				t.Errorf("reduced %g above full %g", res.Value, r.ValueFull)
			}
		})
	}
}

// TestAssumedMaxBelowCorner: when max_c lies below the corner, the cut to
// max_c leads back to rule 1 — at or below the corner rated thrust is flat,
// so the full rating, with the reasons in the order the rules acted. The
// hand-worked profile with max_c 25 against its 30 °C sea-level corner
// (ISA+15): OAT 10, Ta 40 → 25 → full, 90 + 5·10/30 = 91.6667.
func TestAssumedMaxBelowCorner(t *testing.T) {
	text, err := os.ReadFile("testdata/handworked.toml")
	if err != nil {
		t.Fatal(err)
	}
	p, err := ParseProfile("max-below-corner.toml", bytes.Replace(text, []byte("max_c = 70"), []byte("max_c = 25"), 1))
	if err != nil {
		t.Fatal(err)
	}
	res, err := p.Target("takeoff", Conditions{OATC: 10, AssumedSet: true, AssumedC: 40})
	if err != nil {
		t.Fatal(err)
	}
	r := res.Reduction
	if r.Applied || math.Abs(res.Value-(90+5.0/3)) > 1e-9 || r.EffectiveC != 10 {
		t.Errorf("value %.10g applied %v effective %g, want the full 91.6667 at OAT 10", res.Value, r.Applied, r.EffectiveC)
	}
	if got, want := r.ReasonNames(), []string{"ta_above_max", "ta_below_corner"}; !slices.Equal(got, want) {
		t.Errorf("reasons %v, want %v", got, want)
	}
}

// TestAssumedLimitAC2513 checks the 25 % limit of FAA AC 25-13 on the demo
// profile: wherever the reduction is limited, the thrust at the effective
// temperature is 75 % of the full-rating thrust (within rounding), and never
// below it anywhere.
func TestAssumedLimitAC2513(t *testing.T) {
	p, err := LoadProfile("demo")
	if err != nil {
		t.Fatal(err)
	}
	r, _ := p.Rating("takeoff")
	limited := 0
	for alt := -2000.0; alt <= 14000; alt += 1000 {
		for oat := -30.0; oat <= 50; oat += 5 {
			for ta := oat + 1; ta <= 80; ta += 3 {
				res, err := p.Target("takeoff", Conditions{AltitudeFt: alt, OATC: oat, AssumedSet: true, AssumedC: ta})
				if err != nil {
					t.Fatal(err)
				}
				red := res.Reduction
				if red.ThrustReductionPct > 25+1e-9 {
					t.Fatalf("alt %g OAT %g Ta %g: thrust reduced %g %% > 25 %%", alt, oat, ta, red.ThrustReductionPct)
				}
				if red.Reasons&ReductionLimited != 0 {
					limited++
					if math.Abs(red.ThrustReductionPct-25) > 1e-6 {
						t.Fatalf("alt %g OAT %g Ta %g: limited at %g %%, want 25 %%", alt, oat, ta, red.ThrustReductionPct)
					}
					isa := 15 - 0.0019812*alt
					if r.thrustAt(alt, red.EffectiveC+0.01, 0, isa) >= 0.75*r.thrustAt(alt, oat, 0, isa) {
						t.Fatalf("alt %g OAT %g Ta %g: %g is not the largest temperature meeting the limit", alt, oat, ta, red.EffectiveC)
					}
				}
			}
		}
	}
	if limited == 0 {
		t.Fatal("the limit never bound: the test checks nothing")
	}
}

func TestTargetErrors(t *testing.T) {
	p := loadHandWorked(t)
	if _, err := p.Target("nope", Conditions{}); !errors.Is(err, ErrUnknownRating) {
		t.Errorf("unknown rating: %v", err)
	}
	bad := []Conditions{
		{AltitudeFt: math.NaN()},
		{OATC: math.Inf(1)},
		{Mach: -0.1},
		{OATC: -300},
		{AltitudeFt: 200000}, // above the 32 km of the standard atmosphere
		{AssumedSet: true, AssumedC: math.NaN()},
	}
	for _, c := range bad {
		if _, err := p.Target("takeoff", c); !errors.Is(err, ErrConditions) {
			t.Errorf("%+v: err = %v, want ErrConditions", c, err)
		}
	}
}

// TestTargetNeverNaN: random conditions far outside every grid give finite
// values or an error, never NaN or a panic.
func TestTargetNeverNaN(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, name := range EmbeddedProfiles() {
		p, err := LoadProfile(name)
		if err != nil {
			t.Fatal(err)
		}
		for range 5000 {
			c := Conditions{
				AltitudeFt: -20000 + rng.Float64()*130000,
				OATC:       -100 + rng.Float64()*200,
				Mach:       rng.Float64() * 3,
				Bleeds:     Bleeds(rng.Uint64()),
				AssumedSet: rng.IntN(2) == 0,
				AssumedC:   -100 + rng.Float64()*200,
			}
			for _, r := range p.Ratings() {
				res, err := p.RatingTarget(r, c)
				if err == nil && (math.IsNaN(res.Value) || math.IsInf(res.Value, 0)) {
					t.Fatalf("%s %s at %+v: %g", name, r.Name(), c, res.Value)
				}
			}
		}
	}
}

// TestConcurrentTargets runs many goroutines on one profile; run with -race.
func TestConcurrentTargets(t *testing.T) {
	p, err := LoadProfile("demo")
	if err != nil {
		t.Fatal(err)
	}
	want, _ := p.Target("takeoff", Conditions{AltitudeFt: 3000, OATC: 25, AssumedSet: true, AssumedC: 50})
	var wg sync.WaitGroup
	for g := range 8 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range 2000 {
				c := Conditions{AltitudeFt: float64(i % 14000), OATC: float64(g*5 - 10), Mach: 0.2}
				for _, r := range p.Ratings() {
					if _, err := p.RatingTarget(r, c); err != nil {
						t.Error(err)
						return
					}
				}
			}
			got, _ := p.Target("takeoff", Conditions{AltitudeFt: 3000, OATC: 25, AssumedSet: true, AssumedC: 50})
			if got != want {
				t.Errorf("result changed under concurrency: %+v vs %+v", got, want)
			}
		}()
	}
	wg.Wait()
}

// BenchmarkTarget is the figure: a 2-axis linear 12×12 table at
// random in-grid conditions. Budget: 50 ns/op, 0 allocs/op.
func BenchmarkTarget(b *testing.B) {
	p, err := ParseProfile("bench", []byte(bench12x12TOML()))
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(7, 8))
	cs := make([]Conditions, 1024)
	for i := range cs {
		cs[i] = Conditions{AltitudeFt: rng.Float64() * 11000, OATC: -40 + rng.Float64()*110}
	}
	b.ReportAllocs()
	b.ResetTimer()
	sum := 0.0
	for i := 0; i < b.N; i++ {
		res, err := p.Target("takeoff", cs[i&1023])
		if err != nil {
			b.Fatal(err)
		}
		sum += res.Value
	}
	_ = sum
}

// BenchmarkTargetAssumed is a reduced takeoff on the demo profile, where the
// thrust limit binds (a segment walk and a solve).
func BenchmarkTargetAssumed(b *testing.B) {
	p, err := LoadProfile("demo")
	if err != nil {
		b.Fatal(err)
	}
	c := Conditions{AltitudeFt: 2000, OATC: 10, AssumedSet: true, AssumedC: 68}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := p.Target("takeoff", c); err != nil {
			b.Fatal(err)
		}
	}
}

func bench12x12TOML() string {
	s := "schema = 1\nparameter = \"N1\"\n[[rating]]\nname = \"takeoff\"\n" +
		"altitude_ft = [0, 1000, 2000, 3000, 4000, 5000, 6000, 7000, 8000, 9000, 10000, 11000]\n" +
		"temperature_c = [-40, -30, -20, -10, 0, 10, 20, 30, 40, 50, 60, 70]\nvalues = [\n"
	for i := range 12 {
		s += "["
		for j := range 12 {
			if j > 0 {
				s += ", "
			}
			s += strconv.FormatFloat(85+float64(i)*0.3+float64(j)*0.5, 'g', -1, 64)
		}
		s += "],\n"
	}
	return s + "]\n"
}

// FuzzTarget: any conditions give a finite value or an ErrConditions error,
// never NaN or a panic, on every rating of every embedded profile.
func FuzzTarget(f *testing.F) {
	f.Add(2000.0, 20.0, 0.0, 50.0, uint64(0), true)
	f.Add(-20000.0, -300.0, 6.0, 1e9, ^uint64(0), true)
	f.Add(41000.0, -56.5, 0.85, 0.0, uint64(5), false)
	var profiles []*Profile
	for _, name := range EmbeddedProfiles() {
		p, err := LoadProfile(name)
		if err != nil {
			f.Fatal(err)
		}
		profiles = append(profiles, p)
	}
	f.Fuzz(func(t *testing.T, alt, oat, mach, ta float64, bleeds uint64, assumed bool) {
		c := Conditions{AltitudeFt: alt, OATC: oat, Mach: mach, Bleeds: Bleeds(bleeds), AssumedSet: assumed, AssumedC: ta}
		for _, p := range profiles {
			for _, r := range p.Ratings() {
				res, err := p.RatingTarget(r, c)
				if err != nil {
					if !errors.Is(err, ErrConditions) {
						t.Fatalf("%s: unexpected error %v", r.Name(), err)
					}
					continue
				}
				if !finite(res.Value) || (res.Reduction.Evaluated && !finite(res.Reduction.EffectiveC)) {
					t.Fatalf("%s at %+v: %+v", r.Name(), c, res)
				}
			}
		}
	})
}
