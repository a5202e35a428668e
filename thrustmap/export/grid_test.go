package export

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

func handWorked(t *testing.T) *thrustmap.Profile {
	t.Helper()
	p, err := thrustmap.LoadProfile("../testdata/handworked.toml")
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestDenseHandWorked: takeoff of testdata/handworked.toml (altitude 0,
// 10000; temperature 0, 30, 50, 70) at steps of 5000 ft and 10 °C.
func TestDenseHandWorked(t *testing.T) {
	p := handWorked(t)
	d, err := DenseRating(p, "takeoff", Steps{AltitudeFt: 5000, Temperature: 10}, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Axes) != 2 || len(d.Axes[0].Points) != 3 || len(d.Axes[1].Points) != 8 {
		t.Fatalf("axes %+v", d.Axes)
	}
	// (5000 ft, 10 °C): rows at 10 °C are 90 + 5/3 and 92 + 5/3 (bilinear
	// by hand), their mean 92.6667.
	if v := d.Values[1*8+1]; math.Abs(v-(91+5.0/3)) > 1e-12 {
		t.Errorf("value %g, want %g", v, 91+5.0/3)
	}
	// The redline (96.5) cuts the 97 at (10000 ft, 30 °C).
	if v := d.Values[2*8+3]; v != 96.5 {
		t.Errorf("redline: %g", v)
	}
	// Every source breakpoint is a grid point, so linear interpolation in
	// the export reproduces the (piecewise bilinear) source everywhere —
	// except where the redline cuts a cell, which is not bilinear.
	cut, err := DenseRating(p, "derate", Steps{Temperature: 10}, 0)
	if err != nil || cut.MaxError > 1e-12 {
		t.Errorf("aligned steps: error %g %v", cut.MaxError, err)
	}
	// Steps that miss the breakpoints lose the kinks: the error is the
	// corner cut, measured.
	coarse, _ := DenseRating(p, "derate", Steps{Temperature: 35}, 0)
	// Points 0, 35, 70 hold 90, 95 − 2·5/20 = 94.5 and 91. At the centre
	// 17.5 the source is 90 + 5·17.5/30 = 92.9167 and the export
	// (90 + 94.5)/2 = 92.25: 2/3 by hand (at 52.5 both give 92.75).
	if math.Abs(coarse.MaxError-2.0/3) > 1e-9 {
		t.Errorf("coarse error %.12g", coarse.MaxError)
	}
}

func TestDenseOutputs(t *testing.T) {
	p := handWorked(t)
	bleeds, _ := p.BleedSet("engine-anti-ice")
	d, err := DenseRating(p, "takeoff", Steps{AltitudeFt: 5000, Temperature: 35}, bleeds)
	if err != nil {
		t.Fatal(err)
	}
	csv := string(d.CSV())
	for _, want := range []string{"# rating takeoff (N1, percent), temperature axis OAT, bleeds engine-anti-ice",
		"# axis altitude_ft: 3 points from 0 to 10000", "altitude_ft,temperature_c,value\n0,0,89\n", "simulation only"} {
		if !strings.Contains(csv, want) {
			t.Errorf("CSV lacks %q:\n%s", want, csv)
		}
	}
	js, err := d.JSON()
	if err != nil {
		t.Fatal(err)
	}
	var back struct {
		Values   [][]float64 `json:"values"`
		MaxError float64     `json:"max_error"`
	}
	if err := json.Unmarshal(js, &back); err != nil || len(back.Values) != 3 || len(back.Values[0]) != 3 || back.Values[0][0] != 89 {
		t.Errorf("JSON %s %v", js, err)
	}
	if _, err := DenseRating(p, "nope", Steps{}, 0); err == nil {
		t.Error("unknown rating accepted")
	}
	if _, err := DenseRating(p, "takeoff", Steps{Temperature: -1}, 0); err == nil {
		t.Error("negative step accepted")
	}
}

// TestLeverLookup: a one-span calibration is reproduced exactly; the demo's
// has its small error at the breakpoints.
func TestLeverLookup(t *testing.T) {
	l, err := thrustmap.NewLeverCalibration(thrustmap.LeverSpec{ID: 3, RawMin: 0, RawMax: 1000, Fit: grid.Linear,
		Points: [][2]float64{{0, -10}, {1000, 40}}})
	if err != nil {
		t.Fatal(err)
	}
	tab, err := LeverLookup(l, 10)
	if err != nil {
		t.Fatal(err)
	}
	// raw 250 → −10 + 50·0.25 = 2.5° by hand; 101 points.
	if len(tab.Raw) != 101 || math.Abs(tab.TLA[25]-2.5) > 1e-12 || tab.MaxErrorDeg > 1e-12 {
		t.Errorf("table %d points, %g, error %g", len(tab.Raw), tab.TLA[25], tab.MaxErrorDeg)
	}
	cal, _ := thrustmap.LoadCalibration("demo")
	demo, _ := LeverLookup(cal.Lever(1), 7)
	if demo.MaxErrorDeg <= 0 || demo.MaxErrorDeg > 0.1 {
		t.Errorf("demo lever error %g", demo.MaxErrorDeg)
	}
	if !strings.Contains(string(demo.CSV()), "raw,tla_deg\n0,-18\n") {
		t.Errorf("CSV:\n%.200s", demo.CSV())
	}
}
