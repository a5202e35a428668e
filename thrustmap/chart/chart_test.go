package chart

import (
	"bytes"
	"errors"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// Tests check a chart's structure in its SVG (axis labels, legend entries,
// names, the footer), not its pixels.

func loadProfile(t testing.TB, name string) *thrustmap.Profile {
	t.Helper()
	p, err := thrustmap.LoadProfile(name)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func loadModel(t testing.TB) *thrustmap.Model {
	t.Helper()
	m, err := thrustmap.LoadModel("demo", "demo")
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// svgTexts renders ch as SVG and returns the text of its <text> elements.
func svgTexts(t testing.TB, ch *Chart) []string {
	t.Helper()
	var buf bytes.Buffer
	if err := ch.Render(&buf, "svg"); err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, m := range regexp.MustCompile(`>([^<]*)</text>`).FindAllStringSubmatch(buf.String(), -1) {
		out = append(out, m[1])
	}
	return out
}

func mustContain(t *testing.T, texts []string, want ...string) {
	t.Helper()
	for _, w := range want {
		if !slices.Contains(texts, w) {
			t.Errorf("no text %q in the chart; have %q", w, texts)
		}
	}
}

func count(texts []string, re string) int {
	n := 0
	r := regexp.MustCompile(re)
	for _, s := range texts {
		if r.MatchString(s) {
			n++
		}
	}
	return n
}

func TestRatingChart(t *testing.T) {
	p := loadProfile(t, "demo")
	ch, err := Rating(p, "takeoff", thrustmap.Conditions{})
	if err != nil {
		t.Fatal(err)
	}
	texts := svgTexts(t, ch)
	// The demo takeoff table has 9 altitude rows, −2000 to 14000 ft; its
	// temperature axis is −40 to 70 °C, so the widened OAT axis shows it
	// held at both edges; it declares corner_isa_dev_c.
	mustContain(t, texts, "OAT (°C)", "N1 (%)", "-2000 ft", "8000 ft", "14000 ft", "corner", "clamped: temperature", Footer)
	if n := count(texts, `^-?\d+ ft$`); n != 9 {
		t.Errorf("%d altitude lines in the legend, want 9", n)
	}

	// Chosen altitudes, one line each; a table without a corner has none.
	ch, err = Rating(p, "climb", thrustmap.Conditions{Mach: 0.5}, Altitudes(0, 20000, 35000))
	if err != nil {
		t.Fatal(err)
	}
	texts = svgTexts(t, ch)
	mustContain(t, texts, "0 ft", "20000 ft", "35000 ft")
	if n := count(texts, `^-?\d+ ft$`); n != 3 {
		t.Errorf("%d altitude lines in the legend, want 3", n)
	}
	if slices.Contains(texts, "corner") {
		t.Error("the climb rating declares no corner but the chart marks one")
	}

	// An OAT range inside the table clamps nothing.
	ch, err = Rating(p, "takeoff", thrustmap.Conditions{}, OATRange(-30, 60))
	if err != nil {
		t.Fatal(err)
	}
	if texts = svgTexts(t, ch); count(texts, `^clamped`) != 0 {
		t.Errorf("OAT −30 to 60 °C is inside the table, yet the legend shows clamping: %q", texts)
	}
}

func TestRatingChartParameters(t *testing.T) {
	// The axis label follows the parameter, with its unit.
	for _, tc := range []struct{ profile, rating, label string }{
		{"demo", "takeoff", "N1 (%)"},
		{"demo-epr", "takeoff", "EPR"},
		{"demo-turboprop", "takeoff", "torque (%)"},
	} {
		ch, err := Rating(loadProfile(t, tc.profile), tc.rating, thrustmap.Conditions{})
		if err != nil {
			t.Fatal(err)
		}
		mustContain(t, svgTexts(t, ch), tc.label, "OAT (°C)", "corner", Footer)
	}
}

func TestRatingChartEveryDemoRating(t *testing.T) {
	// Every rating of every embedded profile charts (all bases: OAT, TAT,
	// ISA_DEV; tables with and without axes), with bleeds and an assumed
	// temperature too.
	for _, name := range []string{"demo", "demo-epr", "demo-turboprop"} {
		p := loadProfile(t, name)
		all := thrustmap.Bleeds(1<<len(p.Bleeds()) - 1)
		for _, r := range p.Ratings() {
			for _, c := range []thrustmap.Conditions{
				{Mach: 0.3},
				{Mach: 0.8, Bleeds: all, OnGround: true, AssumedSet: true, AssumedC: 50},
			} {
				ch, err := Rating(p, r.Name(), c)
				if err != nil {
					t.Fatalf("%s %s: %v", name, r.Name(), err)
				}
				if texts := svgTexts(t, ch); count(texts, ` ft$`) == 0 {
					t.Errorf("%s %s: no altitude line", name, r.Name())
				}
			}
		}
	}
}

func TestRatingChartErrors(t *testing.T) {
	p := loadProfile(t, "demo")
	_, err := Rating(p, "warp", thrustmap.Conditions{})
	if !errors.Is(err, thrustmap.ErrUnknownRating) || !strings.Contains(err.Error(), `"warp"`) {
		t.Errorf("unknown rating: %v", err)
	}
	for _, tc := range []struct {
		opt  RatingOption
		want string
	}{
		{OATRange(30, 10), "OAT range 30 to 10"},
		{OATRange(math.NaN(), 10), "OAT range NaN"},
		{OATRange(-300, 10), "above absolute zero"},
		{Altitudes(), "no altitudes"},
		{Altitudes(0, 200000), "altitude 200000 ft is outside"},
	} {
		if _, err := Rating(p, "takeoff", thrustmap.Conditions{}, tc.opt); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("got %v, want an error with %q", err, tc.want)
		}
	}
	if _, err := Rating(p, "takeoff", thrustmap.Conditions{Mach: math.Inf(1)}); err == nil {
		t.Error("Mach +Inf: no error")
	}
	if _, err := Rating(nil, "takeoff", thrustmap.Conditions{}); err == nil {
		t.Error("nil profile: no error")
	}
}

func TestLeverChart(t *testing.T) {
	m := loadModel(t)
	gates := m.Profile().Gates()
	// On the ground with an assumed temperature every demo gate is on.
	ch, err := Lever(m, 1, thrustmap.Conditions{AltitudeFt: 2000, OATC: 20, OnGround: true, AssumedSet: true, AssumedC: 50})
	if err != nil {
		t.Fatal(err)
	}
	texts := svgTexts(t, ch)
	mustContain(t, texts, "raw (counts)", "TLA (°)", "N1 (%)", "reverse", "capture zone", "command", "calibration point", Footer)
	for _, g := range gates {
		mustContain(t, texts, g.Name)
	}
	if count(texts, `\(off\)`) != 0 {
		t.Errorf("a gate is marked off on the ground with an assumed temperature: %q", texts)
	}

	// In the air the demo's reduced-takeoff gate is off, and reverse holds idle.
	ch, err = Lever(m, 2, thrustmap.Conditions{AltitudeFt: 2000, OATC: 20})
	if err != nil {
		t.Fatal(err)
	}
	texts = svgTexts(t, ch)
	mustContain(t, texts, "reduced-takeoff (off)", "gate off at these conditions", "reverse", "reverse range (in the air: holds idle)")
}

func TestLeverChartErrors(t *testing.T) {
	m := loadModel(t)
	if _, err := Lever(m, 9, thrustmap.Conditions{}); err == nil || !strings.Contains(err.Error(), "has no lever 9 (levers: 1, 2)") {
		t.Errorf("unknown lever: %v", err)
	}
	noCal, err := thrustmap.LoadModel("demo", "")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Lever(noCal, 1, thrustmap.Conditions{}); err == nil || !strings.Contains(err.Error(), "no calibration") {
		t.Errorf("no calibration: %v", err)
	}
	if _, err := Lever(m, 1, thrustmap.Conditions{AltitudeFt: 1e6}); err == nil || !strings.Contains(err.Error(), "outside the standard atmosphere") {
		t.Errorf("bad conditions: %v", err)
	}
	if _, err := Lever(nil, 1, thrustmap.Conditions{}); err == nil {
		t.Error("nil model: no error")
	}
}

// demoSweep is an invented recording of lever 1 of the demo calibration,
// analysed and, for ok, matched to the demo profile.
func demoSweep(t testing.TB) ([]input.Sample, sweep.Scan, sweep.Result) {
	t.Helper()
	m := loadModel(t)
	var notches []float64
	for _, pt := range m.Calibration().Lever(1).Spec().Points {
		notches = append(notches, pt[0])
	}
	samples := sweep.Synthesize(sweep.SynthConfig{
		Levers:   []sweep.SynthLever{{ID: 1, Notches: notches, NoiseSigma: 3, Backlash: 10, DeadSpots: [][2]float64{{2000, 2040}}}},
		SampleHz: 200, DwellMs: 1500, CountsPerSec: 600, Passes: 2, Bits: 12, Seed: 1,
	})
	an := sweep.NewAnalyzer(sweep.Options{})
	for _, s := range samples {
		an.Add(s)
	}
	sc, _ := an.Scan(1)
	res, err := sweep.Calibrate(m.Profile(), sc, sweep.CalOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return samples, sc, res
}

func TestSweepChart(t *testing.T) {
	samples, sc, res := demoSweep(t)
	ch, err := Sweep(samples, sc, &res)
	if err != nil {
		t.Fatal(err)
	}
	texts := svgTexts(t, ch)
	mustContain(t, texts, "time (s)", "raw (counts)", "samples", "rest found", "jump", "notch (gate)", Footer)
	for _, n := range res.Notches {
		mustContain(t, texts, n.Gate)
	}

	// Without a match the rests are marked, unnamed.
	ch, err = Sweep(samples, sc, nil)
	if err != nil {
		t.Fatal(err)
	}
	texts = svgTexts(t, ch)
	mustContain(t, texts, "rest reading", "time (s)", Footer)
	for _, n := range res.Notches {
		if slices.Contains(texts, n.Gate) {
			t.Errorf("gate %q named without a calibration result", n.Gate)
		}
	}

	sc.Lever = 7
	if _, err := Sweep(samples, sc, nil); err == nil || !strings.Contains(err.Error(), "no samples of lever 7") {
		t.Errorf("lever not in the recording: %v", err)
	}
}

func TestDecimate(t *testing.T) {
	// A one-sample spike in a long trace survives the reduction.
	in := make(plotter.XYs, 20000)
	for i := range in {
		in[i].X = float64(i)
	}
	in[12345].Y = 1000
	out := decimate(in, 400)
	if len(out) > 400 {
		t.Errorf("%d points, want at most 400", len(out))
	}
	peak := 0.0
	for i, p := range out {
		peak = math.Max(peak, p.Y)
		if i > 0 && p.X < out[i-1].X {
			t.Fatalf("points out of time order at %d", i)
		}
	}
	if peak != 1000 || out[0].X != 0 || out[len(out)-1].X != 19999 {
		t.Errorf("highest point %g (want the spike, 1000), first at %g, last at %g (want 0 and 19999)", peak, out[0].X, out[len(out)-1].X)
	}
}

func TestNiceTicks(t *testing.T) {
	// Labels are round numbers with only the decimals the step needs.
	for _, tc := range []struct {
		lo, hi float64
		want   []string
	}{
		{-45, 75, []string{"-40", "-20", "0", "20", "40", "60"}},
		{0, 4095, []string{"0", "1000", "2000", "3000", "4000"}},
		{1.0, 1.7, []string{"1.0", "1.1", "1.2", "1.3", "1.4", "1.5", "1.6", "1.7"}},
	} {
		var got []string
		for _, tk := range (niceTicks{}).Ticks(tc.lo, tc.hi) {
			if tk.Label != "" {
				got = append(got, tk.Label)
			}
		}
		if !slices.Equal(got, tc.want) {
			t.Errorf("ticks %g to %g: %q, want %q", tc.lo, tc.hi, got, tc.want)
		}
	}
	if ticks := (niceTicks{}).Ticks(1, 1); ticks != nil {
		t.Errorf("empty range: %v", ticks)
	}
}

func TestPNGSize(t *testing.T) {
	p := loadProfile(t, "demo")
	ch, err := Rating(p, "takeoff", thrustmap.Conditions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		w, h vg.Length
		dpi  int
	}{
		{8 * vg.Inch, 5 * vg.Inch, 0},
		{20 * vg.Centimeter, 12 * vg.Centimeter, 150},
	} {
		ch.Width, ch.Height, ch.DPI = tc.w, tc.h, tc.dpi
		var buf bytes.Buffer
		if err := ch.Render(&buf, "png"); err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(&buf)
		if err != nil {
			t.Fatal(err)
		}
		dpi := tc.dpi
		if dpi == 0 {
			dpi = DefaultDPI
		}
		wantW := int(float64(tc.w/vg.Inch)*float64(dpi) + 0.5)
		wantH := int(float64(tc.h/vg.Inch)*float64(dpi) + 0.5)
		if b := img.Bounds(); b.Dx() != wantW || b.Dy() != wantH {
			t.Errorf("PNG %d×%d px, want %d×%d", b.Dx(), b.Dy(), wantW, wantH)
		}
	}
}

func TestWriteFile(t *testing.T) {
	dir := t.TempDir()
	m := loadModel(t)
	ch, err := Lever(m, 1, thrustmap.Conditions{AltitudeFt: 0, OATC: 15})
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"lever.svg", "lever.PNG"} {
		path := filepath.Join(dir, name)
		if err := ch.WriteFile(path); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		isPNG := bytes.HasPrefix(b, []byte("\x89PNG"))
		if isPNG != strings.HasSuffix(name, ".PNG") {
			t.Errorf("%s: wrong format (PNG %v)", name, isPNG)
		}
	}
	if err := ch.WriteFile(filepath.Join(dir, "lever.pdf")); err == nil || !strings.Contains(err.Error(), `lever.pdf: unknown extension ".pdf"`) {
		t.Errorf("pdf: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "lever.pdf")); !os.IsNotExist(err) {
		t.Error("a refused chart left a file")
	}
	if err := ch.WriteFile(filepath.Join(dir, "no-such-dir", "x.svg")); err == nil {
		t.Error("missing directory: no error")
	}
}

func TestRenderErrors(t *testing.T) {
	ch, err := Rating(loadProfile(t, "demo"), "idle", thrustmap.Conditions{})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := ch.Render(&buf, "gif"); err == nil || !strings.Contains(err.Error(), `format "gif"`) {
		t.Errorf("gif: %v", err)
	}
	for _, tc := range []struct {
		w, h vg.Length
		dpi  int
		want string
	}{
		{0, 5 * vg.Inch, 0, "chart width 0in"},
		{5 * vg.Inch, vg.Length(math.NaN()), 0, "chart height NaNin"},
		{200 * vg.Inch, 5 * vg.Inch, 0, "chart width 200in"},
		{5 * vg.Inch, 5 * vg.Inch, -3, "chart DPI -3"},
		{90 * vg.Inch, 90 * vg.Inch, 1200, "megapixels"},
	} {
		c := *ch
		c.Width, c.Height, c.DPI = tc.w, tc.h, tc.dpi
		if err := c.Render(&buf, "png"); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("got %v, want an error with %q", err, tc.want)
		}
	}
	if err := (&Chart{Width: vg.Inch, Height: vg.Inch}).Render(&buf, "svg"); err == nil {
		t.Error("no panels: no error")
	}
}

func TestSmallChart(t *testing.T) {
	// The smallest chart allowed still draws, footer shrunk to fit.
	samples, sc, res := demoSweep(t)
	ch, err := Sweep(samples, sc, &res)
	if err != nil {
		t.Fatal(err)
	}
	ch.Width, ch.Height = vg.Inch, vg.Inch
	mustContain(t, svgTexts(t, ch), Footer)
	if err := ch.Render(&bytes.Buffer{}, "png"); err != nil {
		t.Fatal(err)
	}
}

func BenchmarkRatingSVG(b *testing.B) {
	p := loadProfile(b, "demo")
	for b.Loop() {
		ch, err := Rating(p, "takeoff", thrustmap.Conditions{})
		if err != nil {
			b.Fatal(err)
		}
		if err := ch.Render(&bytes.Buffer{}, "svg"); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkLeverPNG(b *testing.B) {
	m := loadModel(b)
	for b.Loop() {
		ch, err := Lever(m, 1, thrustmap.Conditions{AltitudeFt: 2000, OATC: 20})
		if err != nil {
			b.Fatal(err)
		}
		if err := ch.Render(&bytes.Buffer{}, "png"); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkSweepSVG(b *testing.B) {
	samples, sc, res := demoSweep(b)
	for b.Loop() {
		ch, err := Sweep(samples, sc, &res)
		if err != nil {
			b.Fatal(err)
		}
		if err := ch.Render(&bytes.Buffer{}, "svg"); err != nil {
			b.Fatal(err)
		}
	}
}
