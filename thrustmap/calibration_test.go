package thrustmap

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/interp"

	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

func demoSpec() LeverSpec {
	return LeverSpec{ID: 1, RawMin: 0, RawMax: 4095, Fit: grid.Linear,
		Points:   [][2]float64{{240, -18}, {1010, 0}, {2380, 27}, {3020, 40}, {3400, 47}, {3880, 55}},
		Deadband: 2, NoiseSigma: 1.6, MinCaptureDeg: 0.4, MinHysteresisDeg: 0.2}
}

// TestLeverLinearHandWorked: piecewise-linear raw→TLA and back, worked by
// hand: raw 625 is halfway between 240 (−18°) and 1010 (0°), so −9°.
func TestLeverLinearHandWorked(t *testing.T) {
	l, err := NewLeverCalibration(demoSpec())
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		raw, tla float64
		clamped  Clamped
	}{
		{625, -9, 0},
		{1010, 0, 0},
		// 2380 + (3020−2380)·(33.5−27)/13 = 2700 → 33.5°
		{2700, 33.5, 0},
		{100, -18, ClampRaw},               // below the first point: held, reported
		{5000, 55, ClampRaw | ClampDevice}, // beyond the device's 0..4095 too
	}
	for _, tc := range tests {
		tla, cl := l.TLA(tc.raw)
		if math.Abs(tla-tc.tla) > 1e-12 || cl != tc.clamped {
			t.Errorf("TLA(%g) = %g %v, want %g %v", tc.raw, tla, cl.Names(), tc.tla, tc.clamped.Names())
		}
		if tc.clamped == 0 {
			raw, clamped := l.Raw(tc.tla)
			if math.Abs(raw-tc.raw) > 1e-9 || clamped {
				t.Errorf("Raw(%g) = %g %v, want %g", tc.tla, raw, clamped, tc.raw)
			}
		}
	}
	if raw, clamped := l.Raw(70); raw != 3880 || !clamped {
		t.Errorf("Raw(70) = %g %v, want 3880 clamped", raw, clamped)
	}
}

// TestLeverInverted: a lever wired backwards (raw falls as TLA rises) maps
// the same way: mirror the demo points about 4095.
func TestLeverInverted(t *testing.T) {
	s := demoSpec()
	for i := range s.Points {
		s.Points[i][0] = 4095 - s.Points[i][0]
	}
	l, err := NewLeverCalibration(s)
	if err != nil {
		t.Fatal(err)
	}
	if !l.Inverted() {
		t.Error("not reported inverted")
	}
	if tla, _ := l.TLA(4095 - 625); math.Abs(tla+9) > 1e-12 {
		t.Errorf("TLA = %g, want -9", tla)
	}
	if raw, _ := l.Raw(-9); math.Abs(raw-(4095-625)) > 1e-9 {
		t.Errorf("Raw(-9) = %g", raw)
	}
}

// TestLeverMonotoneAgainstGonum: the monotone fit is gonum's
// interp.FritschButland through the points, and its inverse round-trips.
func TestLeverMonotoneAgainstGonum(t *testing.T) {
	s := demoSpec()
	s.Fit = grid.Monotone
	l, err := NewLeverCalibration(s)
	if err != nil {
		t.Fatal(err)
	}
	var fb interp.FritschButland
	xs, ys := []float64{}, []float64{}
	for _, p := range s.Points {
		xs, ys = append(xs, p[0]), append(ys, p[1])
	}
	if err := fb.Fit(xs, ys); err != nil {
		t.Fatal(err)
	}
	for raw := 240.0; raw <= 3880; raw += 7.3 {
		tla, _ := l.TLA(raw)
		if want := fb.Predict(raw); math.Abs(tla-want) > 1e-9 {
			t.Fatalf("TLA(%g) = %.12g, gonum %.12g", raw, tla, want)
		}
		back, _ := l.Raw(tla)
		if math.Abs(back-raw) > 0.01 {
			t.Fatalf("Raw(TLA(%g)) = %g", raw, back)
		}
	}
}

func TestLeverSpecErrors(t *testing.T) {
	tests := []struct {
		name string
		edit func(*LeverSpec)
		want string
	}{
		{"one point", func(s *LeverSpec) { s.Points = s.Points[:1] }, "want at least 2"},
		{"repeated raw", func(s *LeverSpec) { s.Points[2][0] = s.Points[1][0] }, "point 2"},
		{"turns back", func(s *LeverSpec) { s.Points[3][0] = 2000 }, "point 3 (2000, 40) turns back"},
		{"tla turns back", func(s *LeverSpec) { s.Points[4][1] = 30 }, "point 4 (3400, 30) turns back"},
		{"outside device", func(s *LeverSpec) { s.RawMax = 3500 }, "point 5: raw 3880 is outside the device range"},
		{"bad range", func(s *LeverSpec) { s.RawMin = 5000 }, "raw_min"},
		{"deadband", func(s *LeverSpec) { s.Deadband = -1 }, "deadband"},
	}
	for _, tc := range tests {
		s := demoSpec()
		tc.edit(&s)
		_, err := NewLeverCalibration(s)
		if err == nil || !strings.Contains(err.Error(), "lever 1") || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want %q", tc.name, err, tc.want)
		}
	}
}

// TestCalibrationFileRoundTrip: a calibration written and read back is the
// same, the write keeps a backup, and a bad file names its line.
func TestCalibrationFileRoundTrip(t *testing.T) {
	cal, err := LoadCalibration("demo")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "cal.toml")
	if err := cal.WriteFile(path); err != nil {
		t.Fatal(err)
	}
	l2 := NewLeverCalibration
	spec := cal.Lever(1).Spec()
	spec.Points = append(spec.Points, [2]float64{4000, 58})
	extended, err := l2(spec)
	if err != nil {
		t.Fatal(err)
	}
	if err := cal.With(extended).WriteFile(path); err != nil {
		t.Fatal(err)
	}
	back, err := LoadCalibration(path)
	if err != nil {
		t.Fatal(err)
	}
	if got := len(back.Lever(1).Spec().Points); got != 7 {
		t.Errorf("lever 1 has %d points after the edit, want 7", got)
	}
	if len(back.Levers()) != 2 || !back.Lever(2).Inverted() {
		t.Errorf("levers lost or changed: %d", len(back.Levers()))
	}
	old, err := LoadCalibration(path + ".bak")
	if err != nil || len(old.Lever(1).Spec().Points) != 6 {
		t.Errorf("backup: %v", err)
	}

	bad := strings.Replace(string(cal.Encode()), "[1218, 0]", "[1218, 0, 1]", 1)
	if err := os.WriteFile(path, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = LoadCalibration(path)
	var list FileErrors
	if !errors.As(err, &list) || list[0].Key != "lever[0].points[1]" || list[0].Line != 9 {
		t.Errorf("bad point: %v", err)
	}
	bad = strings.Replace(string(cal.Encode()), "[2588, 27]", "[900, 27]", 1)
	_, err = ParseCalibration("c.toml", []byte(bad))
	if !errors.As(err, &list) || list[0].Key != "lever[0].points[2]" || !strings.Contains(err.Error(), "c.toml:9: lever[0].points[2]: lever 1: point 2") {
		t.Errorf("non-monotone point: %v", err)
	}
}

// FuzzParseCalibration: no input panics the parser; what it accepts maps
// every raw count to a finite TLA and back.
func FuzzParseCalibration(f *testing.F) {
	b, ok := EmbeddedCalibrationText("demo")
	if !ok {
		f.Fatal("no embedded demo calibration")
	}
	f.Add(b)
	f.Fuzz(func(t *testing.T, doc []byte) {
		cal, err := ParseCalibration("fuzz.toml", doc)
		if err != nil {
			return
		}
		for _, l := range cal.Levers() {
			for _, raw := range []float64{-1e9, 0, 1000, 1e9} {
				tla, _ := l.TLA(raw)
				back, _ := l.Raw(tla)
				if !finite(tla) || !finite(back) {
					t.Fatalf("lever %d: raw %g → %g → %g", l.ID(), raw, tla, back)
				}
			}
		}
	})
}
