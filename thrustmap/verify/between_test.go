package verify

import (
	"math"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/interp"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// climbAxes and climbValues are a climb EPR table against TAT and Mach
// (values[altitude][TAT][Mach]), invented; the embedded EPR demo carried
// these numbers when the review found its bump, and the test keeps its own
// copy so reshaping the demo does not change the test.
var (
	climbAlts  = []float64{-1000, 0, 10000, 20000, 30000, 39000}
	climbTATs  = []float64{-50, -30, -10, 10, 30, 50, 70}
	climbMachs = []float64{0.3, 0.6, 0.8}
	climbRows  = [][][3]float64{
		{{1.379, 1.388, 1.394}, {1.379, 1.388, 1.394}, {1.379, 1.388, 1.394}, {1.379, 1.388, 1.394}, {1.379, 1.388, 1.394}, {1.317, 1.382, 1.394}, {1.260, 1.313, 1.376}},
		{{1.389, 1.398, 1.404}, {1.389, 1.398, 1.404}, {1.389, 1.398, 1.404}, {1.389, 1.398, 1.404}, {1.389, 1.398, 1.404}, {1.320, 1.384, 1.404}, {1.262, 1.315, 1.377}},
		{{1.462, 1.471, 1.477}, {1.462, 1.471, 1.477}, {1.462, 1.471, 1.477}, {1.462, 1.471, 1.477}, {1.379, 1.449, 1.477}, {1.310, 1.368, 1.435}, {1.254, 1.301, 1.356}},
		{{1.499, 1.508, 1.514}, {1.499, 1.508, 1.514}, {1.499, 1.508, 1.514}, {1.409, 1.479, 1.514}, {1.335, 1.392, 1.458}, {1.274, 1.321, 1.375}, {1.224, 1.263, 1.307}},
		{{1.519, 1.528, 1.534}, {1.518, 1.528, 1.534}, {1.424, 1.491, 1.534}, {1.347, 1.402, 1.465}, {1.284, 1.329, 1.380}, {1.233, 1.269, 1.311}, {1.191, 1.221, 1.255}},
		{{1.528, 1.537, 1.543}, {1.466, 1.536, 1.543}, {1.382, 1.439, 1.504}, {1.313, 1.359, 1.412}, {1.256, 1.294, 1.338}, {1.209, 1.241, 1.276}, {1.172, 1.197, 1.226}},
	}
)

// climbGrid is the climb table on three axes, or its slice at Mach 0.3 on
// altitude and TAT.
func climbGrid(t testing.TB, threeAxes bool, m grid.Method) *grid.Grid {
	t.Helper()
	var vals []float64
	for _, row := range climbRows {
		for _, cell := range row {
			if threeAxes {
				vals = append(vals, cell[:]...)
			} else {
				vals = append(vals, cell[0])
			}
		}
	}
	machs := climbMachs
	if !threeAxes {
		machs = nil
	}
	g, err := grid.New([grid.NumAxes][]float64{climbAlts, climbTATs, machs}, vals, m)
	if err != nil {
		t.Fatal(err)
	}
	return g
}

// fbLine fits gonum's interp.FritschButland to (xs, ys) and predicts at x.
func fbLine(t testing.TB, xs, ys []float64, x float64) float64 {
	t.Helper()
	var fb interp.FritschButland
	if err := fb.Fit(xs, ys); err != nil {
		t.Fatal(err)
	}
	return fb.Predict(x)
}

// gonumAt evaluates a monotone grid independently of package grid: gonum's
// interp.FritschButland along Mach for every (altitude, temperature) line,
// then along temperature for every altitude, then along altitude — the order
// docs/methods.md (Interpolation) states. Every axis must have three or
// more points (gonum's fit needs them).
func gonumAt(t testing.TB, g *grid.Grid, q [grid.NumAxes]float64) float64 {
	t.Helper()
	alts, temps := g.Axis(grid.Altitude), g.Axis(grid.Temperature)
	rowAt := func(i int) float64 {
		ys := make([]float64, len(temps))
		for j := range temps {
			if !g.Has(grid.Mach) {
				ys[j] = g.Node([grid.NumAxes]int{i, j, 0})
				continue
			}
			ms := make([]float64, g.Points(grid.Mach))
			for k := range ms {
				ms[k] = g.Node([grid.NumAxes]int{i, j, k})
			}
			ys[j] = fbLine(t, g.Axis(grid.Mach), ms, q[grid.Mach])
		}
		return fbLine(t, temps, ys, q[grid.Temperature])
	}
	col := make([]float64, len(alts))
	for i := range alts {
		col[i] = rowAt(i)
	}
	return fbLine(t, alts, col, q[grid.Altitude])
}

// TestLatticeMatchesAt: the lattice, filled one axis at a time, holds at
// every sample exactly what grid.At gives there, for both methods and for
// two and three axes.
func TestLatticeMatchesAt(t *testing.T) {
	for _, tc := range []struct {
		name  string
		three bool
		m     grid.Method
	}{
		{"monotone, 3 axes", true, grid.Monotone},
		{"monotone, 2 axes", false, grid.Monotone},
		{"linear, 3 axes", true, grid.Linear},
		{"linear, 2 axes", false, grid.Linear},
	} {
		g := climbGrid(t, tc.three, tc.m)
		l, err := newLattice(g)
		if err != nil {
			t.Fatal(err)
		}
		if l.k != cellSamples[0] {
			t.Errorf("%s: %d samples a cell, want %d", tc.name, l.k, cellSamples[0])
		}
		var idx [grid.NumAxes]int
		for idx[0] = 0; idx[0] < l.dim[0]; idx[0]++ {
			for idx[1] = 0; idx[1] < l.dim[1]; idx[1]++ {
				for idx[2] = 0; idx[2] < l.dim[2]; idx[2]++ {
					want, _ := g.At(l.point(idx))
					if got := l.v[l.index(idx)]; got != want {
						t.Fatalf("%s: at %v the lattice holds %v, At gives %v", tc.name, l.point(idx), got, want)
					}
				}
			}
		}
	}
}

// TestLatticeShrinks: a table too large for the sample budget is sampled
// with fewer points a cell, not left out.
func TestLatticeShrinks(t *testing.T) {
	n := 40
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = float64(i)
	}
	g, err := grid.New([grid.NumAxes][]float64{xs, xs, nil}, make([]float64, n*n), grid.Monotone)
	if err != nil {
		t.Fatal(err)
	}
	l, err := newLattice(g)
	if err != nil {
		t.Fatal(err)
	}
	// 40 + 39·5 = 235 a side is 55 225 points, within 60 000: five a cell.
	if l.k != 5 || len(l.v) != 235*235 {
		t.Errorf("40×40: %d a cell, %d samples; want 5, %d", l.k, len(l.v), 235*235)
	}
	g, _ = grid.New([grid.NumAxes][]float64{xs, xs, xs[:10]}, make([]float64, n*n*10), grid.Monotone)
	if l, _ = newLattice(g); l.k != 1 {
		// with five: 235·235·55, with two: 118·118·28 = 389 872, both over
		// 60 000; with one: 79·79·19 = 118 579, the last resort.
		t.Errorf("40×40×10: %d a cell, want 1", l.k)
	}
}

// TestMonotoneBump: tables where the tensor product of monotone cubics
// turns between grid lines (found, and its size confirmed by gonum) and
// tables where it must not.
func TestMonotoneBump(t *testing.T) {
	// The review's case, cross-checked by direct evaluation with gonum's
	// interp.FritschButland along each axis (gonumAt): the climb slice at
	// Mach 0.3 at 6666.7 ft gives 1.44233, 1.44960, 1.44195 at OAT −30,
	// −4.36, 10 °C, although rows 0 and 10000 ft are flat or falling along
	// TAT (1.389 ×5 then falling; 1.462 ×4 then falling). On the table's
	// TAT axis those are TAT = (OAT + 273.15)·(1 + 0.2·0.3²) − 273.15
	// (docs/methods.md, Total air temperature): −25.62, 0.48, 15.10 °C.
	g2 := climbGrid(t, false, grid.Monotone)
	for _, p := range []struct{ oat, want float64 }{{-30, 1.44233}, {-4.36, 1.44960}, {10, 1.44195}} {
		q := [grid.NumAxes]float64{6666.7, (p.oat+273.15)*1.018 - 273.15, 0}
		fb := gonumAt(t, g2, q)
		at, _ := g2.At(q)
		if math.Abs(fb-p.want) > 5e-6 || math.Abs(at-fb) > 1e-12 {
			t.Errorf("OAT %g: gonum %.6f, grid %.6f; the review gives %.5f", p.oat, fb, at, p.want)
		}
	}

	tests := []struct {
		name string
		g    *grid.Grid
		// the axes that must show a bump, each at least min in size
		want map[grid.Axis]float64
	}{
		// Rising 0.00727 from TAT −25.62 to 0.48 °C at 6666.7 ft (above): at
		// least that much, less what the samples at sixths of a cell miss.
		{"climb at Mach 0.3, monotone", g2, map[grid.Axis]float64{grid.Temperature: 0.0070}},
		{"climb, three axes, monotone", climbGrid(t, true, grid.Monotone), map[grid.Axis]float64{grid.Temperature: 0.0070, grid.Mach: 0.0005}},
		// Rows 0 and 1 flat along the temperature axis, row 2 dipping at
		// T 2. Worked by hand from the Hermite form on the altitude segment
		// 0…1 (values 0 and 1, so at 0.5 the value is
		// 0.5 + 0.125·d0 − 0.125·d1) with gonum's Fritsch–Butland slopes:
		// at row 1 the secants are 1 and 1, so d1 = 1, except at T 2,
		// where the secant above is 0 and d1 = 0; at the bottom edge
		// d0 = (3·1 − s1)/2, so 1, and 1.5 at T 2. The value at 0.5 is
		// 0.5 at T 1 and 0.6875 at T 2 — a rise of 0.1875, the largest
		// among the samples at sixths, where rows 0 and 1 are flat.
		{"flat rows, a dip beyond them", flatRows(t), map[grid.Axis]float64{grid.Temperature: 0.1875 - 1e-12}},
		// Multilinear interpolation along an axis is a convex combination,
		// with weights that do not change along it, of the grid lines around
		// the point: where they all fall, it falls. No bump.
		{"climb at Mach 0.3, linear", climbGrid(t, false, grid.Linear), nil},
		{"climb, three axes, linear", climbGrid(t, true, grid.Linear), nil},
		// f = a(alt) + b(T): Fritsch–Butland slopes depend on differences of
		// the values only, so the tensor product is FB(a)(alt) + FB(b)(T)
		// (worked by hand from the slope formula), monotone along each axis
		// everywhere although a and b change slope sharply. No bump.
		{"additive, monotone", additive(t), nil},
	}
	for _, tc := range tests {
		l, err := newLattice(tc.g)
		if err != nil {
			t.Fatal(err)
		}
		got := l.bumps(tolerance(tc.g.Values()))
		var axes []grid.Axis
		for _, b := range got {
			axes = append(axes, b.axis)
			min, ok := tc.want[b.axis]
			if !ok {
				t.Errorf("%s: a bump along %s: %+v", tc.name, b.axis, b)
				continue
			}
			if b.size < min {
				t.Errorf("%s: along %s the bump is %.6g, want at least %.6g", tc.name, b.axis, b.size, min)
			}
			// The size and the direction are the interpolant's own, as
			// gonum evaluates it, and the move is along the axis alone.
			from, to := gonumAt(t, tc.g, b.from), gonumAt(t, tc.g, b.to)
			if math.Abs(math.Abs(to-from)-b.size) > 1e-12 || math.Abs(to-b.vTo) > 1e-12 || math.Abs(from-b.vFrom) > 1e-12 {
				t.Errorf("%s: along %s: reported %.9g → %.9g (size %.9g), gonum %.9g → %.9g", tc.name, b.axis, b.vFrom, b.vTo, b.size, from, to)
			}
			for a := range grid.NumAxes {
				if a != b.axis && b.from[a] != b.to[a] {
					t.Errorf("%s: along %s the move changes %s too: %v → %v", tc.name, b.axis, a, b.from, b.to)
				}
			}
		}
		for a := range tc.want {
			if !slices.Contains(axes, a) {
				t.Errorf("%s: no bump along %s; got %+v", tc.name, a, got)
			}
		}
	}

	// The hand-worked numbers of the flat rows: 0.5 at (0.5, T 1) to
	// 0.6875 at (0.5, T 2).
	fl, _ := newLattice(flatRows(t))
	if got := fl.bumps(1e-6); len(got) != 1 || got[0].from != [grid.NumAxes]float64{0.5, 1, 0} || got[0].to != [grid.NumAxes]float64{0.5, 2, 0} ||
		math.Abs(got[0].vFrom-0.5) > 1e-12 || math.Abs(got[0].vTo-0.6875) > 1e-12 || got[0].dataDir != 0 {
		t.Errorf("flat rows: got %+v, want 0.5 at (0.5, 1) rising to 0.6875 at (0.5, 2) where the data are flat", got)
	}

	// The largest rise along TAT in the cell −10…10 °C at 6666.7 ft, from
	// a dense scan with gonum alone; the check's samples at sixths of each
	// cell come within 10 % of it and never above it.
	dense := 0.0
	low := math.Inf(1)
	for i := 0; i <= 600; i++ {
		v := gonumAt(t, g2, [grid.NumAxes]float64{20000.0 / 3, -10 + 20*float64(i)/600, 0})
		low = math.Min(low, v)
		dense = math.Max(dense, v-low)
	}
	l, _ := newLattice(g2)
	b := l.bumps(tolerance(g2.Values()))[0]
	if b.axis != grid.Temperature || b.size > dense+1e-12 || b.size < 0.9*dense {
		t.Errorf("bump along %s of %.6g; a dense scan at 6666.7 ft finds %.6g", b.axis, b.size, dense)
	}
}

// flatRows is a table whose rows 0 and 1 are flat along the temperature
// axis and whose row 2 dips at its middle point.
func flatRows(t *testing.T) *grid.Grid {
	g, err := grid.New([grid.NumAxes][]float64{{0, 1, 2}, {0, 1, 2, 3, 4}, nil}, []float64{
		0, 0, 0, 0, 0,
		1, 1, 1, 1, 1,
		2, 2, 1, 2, 2,
	}, grid.Monotone)
	if err != nil {
		t.Fatal(err)
	}
	return g
}

// additive is f = a(alt) + b(T) on a monotone grid, a rising and b
// falling, each with sharp changes of slope.
func additive(t *testing.T) *grid.Grid {
	alts := []float64{0, 2000, 4000, 8000, 12000}
	temps := []float64{-40, -10, 0, 15, 30, 50}
	a := []float64{0, 0.01, 0.2, 0.21, 0.5}
	b := []float64{1.5, 1.5, 1.5, 1.45, 1.2, 1.19}
	var vals []float64
	for _, x := range a {
		for _, y := range b {
			vals = append(vals, x+y)
		}
	}
	g, err := grid.New([grid.NumAxes][]float64{alts, temps, nil}, vals, grid.Monotone)
	if err != nil {
		t.Fatal(err)
	}
	return g
}

// cornerProfile is a small EPR profile whose takeoff rating has the given
// temperature lines (TOML).
func cornerProfile(t *testing.T, rating string) *thrustmap.Rating {
	t.Helper()
	text := `schema = 1
name = "corner test engine (invented)"
parameter = "EPR"

[[rating]]
name = "takeoff"
` + rating
	p, err := thrustmap.ParseProfile("corner.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	rt, _ := p.Rating("takeoff")
	return rt
}

// TestCornerCut: between altitude rows whose corners sit on different OAT
// columns, linear interpolation cuts the flat region; with the corner on
// one column at every altitude it does not.
func TestCornerCut(t *testing.T) {
	tests := []struct {
		name   string
		rating string
		ok     bool
		want   cut
	}{
		{
			// The review's case, worked by hand. Row 0 ft is flat 1.520 to
			// its corner 29 °C; row 2000 ft is flat 1.539 to its corner
			// 25 °C and 1.518 at 29 °C. At the fraction f of the way up, the
			// corner is 29 − 4f °C; at 25 °C the value is
			// (1−f)·1.520 + f·1.539, at the corner
			// (1−f)·1.520 + f·(1.539 − 0.021·(1−f)), a drop of 0.021·f·(1−f),
			// largest at f = ½: 1000 ft, 1.52950 at 25 °C, 1.52425 at the
			// corner 27 °C, a drop of 0.00525.
			"OAT columns, a corner per row", `
temperature = "OAT"
altitude_ft = [0, 2000]
temperature_c = [-40, 25, 29, 40]
corner_c = [29, 25]
values = [
  [1.520, 1.520, 1.520, 1.466],
  [1.539, 1.539, 1.518, 1.464],
]`, true, cut{drop: 0.00525, alt: 1000, corner: 27, tFrom: 25, tTo: 27, vFrom: 1.52950, vTo: 1.52425, rows: [2]float64{0, 2000}, rowCorners: [2]float64{29, 25}},
		},
		{
			// The same rows on an ISA_DEV axis with the corner at ISA+10 on a
			// column: between the rows, at any ISA deviation up to +10, the
			// value is a weighted mean of two flat values. No cut.
			"ISA_DEV, corner on a column", `
temperature = "ISA_DEV"
altitude_ft = [0, 2000]
temperature_c = [-40, 0, 10, 25]
corner_isa_dev_c = 10
values = [
  [1.520, 1.520, 1.520, 1.466],
  [1.539, 1.539, 1.539, 1.464],
]`, false, cut{},
		},
		{
			// OAT columns and the same corner on every row: as above.
			"OAT columns, one corner", `
temperature = "OAT"
altitude_ft = [0, 2000, 4000]
temperature_c = [-40, 25, 29, 40]
corner_c = [25, 25, 25]
values = [
  [1.520, 1.520, 1.500, 1.466],
  [1.539, 1.539, 1.518, 1.464],
  [1.555, 1.555, 1.530, 1.460],
]`, false, cut{},
		},
		{
			// Falling below its own corner is the row's fault
			// (falls_below_corner), not interpolation's.
			"a row that falls itself", `
temperature = "OAT"
altitude_ft = [0, 2000]
temperature_c = [-40, 25, 29, 40]
corner_c = [29, 25]
values = [
  [1.520, 1.510, 1.520, 1.466],
  [1.539, 1.539, 1.518, 1.464],
]`, false, cut{},
		},
	}
	for _, tc := range tests {
		got, ok := cornerCut(cornerProfile(t, tc.rating))
		if ok != tc.ok {
			t.Errorf("%s: found %v (%+v), want %v", tc.name, ok, got, tc.ok)
			continue
		}
		w := tc.want
		for _, d := range [][2]float64{{got.drop, w.drop}, {got.alt, w.alt}, {got.corner, w.corner}, {got.tFrom, w.tFrom}, {got.tTo, w.tTo}, {got.vFrom, w.vFrom}, {got.vTo, w.vTo},
			{got.rows[0], w.rows[0]}, {got.rows[1], w.rows[1]}, {got.rowCorners[0], w.rowCorners[0]}, {got.rowCorners[1], w.rowCorners[1]}} {
			if math.Abs(d[0]-d[1]) > 1e-9 {
				t.Errorf("%s: got %+v, want %+v", tc.name, got, w)
				break
			}
		}
	}
}

// TestBetweenMessages: the findings name the place in the table's own
// terms and say what to do.
func TestBetweenMessages(t *testing.T) {
	var r Report
	checkGridBump(&r, "climb", climbGrid(t, false, grid.Monotone), thrustmap.TAT, tolerance(climbGrid(t, false, grid.Monotone).Values()))
	if len(r.Warnings) != 1 {
		t.Fatalf("want one warning, got %+v", r.Warnings)
	}
	f := r.Warnings[0]
	for _, s := range []string{"climb, along TAT at 6667 ft", "rises by 0.00728", "TAT -10.0 °C", "0 and 10000 ft", "fall or stay flat", "not jointly", `interpolation = "linear"`} {
		if !strings.Contains(f.Where+": "+f.Message, s) {
			t.Errorf("%q does not say %q", f.Where+": "+f.Message, s)
		}
	}
	// corner_cut: the advice follows whether the corner moves along the
	// axis between the rows around the worst place.
	for _, tc := range []struct {
		name, rating string
		say, not     []string
	}{
		{"OAT columns, a corner per row", `
temperature = "OAT"
altitude_ft = [0, 2000]
temperature_c = [-40, 25, 29, 40]
corner_c = [29, 25]
values = [
  [1.520, 1.520, 1.520, 1.466],
  [1.539, 1.539, 1.518, 1.464],
]`, []string{"takeoff, 1000 ft", "1.5295 at OAT 25.0 °C", "1.52425 at OAT 27.0 °C", "by 0.00525", "corner there is OAT 27.0 °C",
			"moves from OAT 29.0 °C at 0 ft to OAT 25.0 °C at 2000 ft", "ISA_DEV axis with corner_isa_dev_c", "closer altitude rows"}, nil},
		// ISA at 4000 ft is 7.0752 °C (288.15 K − 6.5 K/km · 1.2192 km),
		// so the corners are ISA+15 and ISA+10, each on a column.
		{"ISA_DEV columns, a corner per row", `
temperature = "ISA_DEV"
altitude_ft = [0, 4000]
temperature_c = [-30, 0, 10, 15, 30]
corner_c = [30, 17.0752]
values = [
  [1.500, 1.500, 1.500, 1.500, 1.450],
  [1.500, 1.500, 1.500, 1.480, 1.440],
]`, []string{"moves from ISA+15.0 °C at 0 ft to ISA+10.0 °C at 4000 ft", "no choice of columns", "closer altitude rows"}, []string{"ISA_DEV axis with"}},
		{"ISA_DEV columns, the corner between two", `
temperature = "ISA_DEV"
altitude_ft = [0, 4000]
temperature_c = [-30, 0, 15, 30]
corner_isa_dev_c = 10
values = [
  [1.520, 1.520, 1.500, 1.450],
  [1.540, 1.540, 1.520, 1.470],
]`, []string{"a temperature column at the corner (ISA+10.0 °C) keeps it"}, []string{"moves from", "ISA_DEV axis with"}},
	} {
		r = Report{}
		checkCornerCut(&r, cornerProfile(t, tc.rating))
		if len(r.Warnings) != 1 {
			t.Errorf("%s: want one warning, got %+v", tc.name, r.Warnings)
			continue
		}
		msg := r.Warnings[0].Where + ": " + r.Warnings[0].Message
		for _, s := range tc.say {
			if !strings.Contains(msg, s) {
				t.Errorf("%s: %q does not say %q", tc.name, msg, s)
			}
		}
		for _, s := range tc.not {
			if strings.Contains(msg, s) {
				t.Errorf("%s: %q says %q", tc.name, msg, s)
			}
		}
	}
}

// BenchmarkMonotoneBump samples the three-axis climb table (6×7×3 points,
// 31×37×13 samples) and scans it along each axis. Budget: well under
// 100 ms a profile; a few milliseconds.
func BenchmarkMonotoneBump(b *testing.B) {
	g := climbGrid(b, true, grid.Monotone)
	tol := tolerance(g.Values())
	for b.Loop() {
		l, err := newLattice(g)
		if err != nil {
			b.Fatal(err)
		}
		if len(l.bumps(tol)) == 0 {
			b.Fatal("no bump")
		}
	}
}

// BenchmarkCornerCut samples a takeoff table of 8 rows and 21 OAT columns
// with a corner per row between its rows.
func BenchmarkCornerCut(b *testing.B) {
	p, err := thrustmap.ParseProfile("corner.toml", []byte(`schema = 1
name = "corner benchmark engine (invented)"
parameter = "EPR"

[[rating]]
name = "takeoff"
temperature = "OAT"
altitude_ft = [-1000, 0, 2000, 4000, 6000, 8000, 10000, 12000]
temperature_c = [-40, -20, 0, 5, 9, 10, 13, 15, 17, 20, 21, 25, 29, 30, 31, 35, 40, 45, 50, 55, 60]
corner_c = [31, 29, 25, 21, 17, 13, 9, 5]
values = [
  [1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.510, 1.490, 1.466, 1.443, 1.421, 1.401, 1.381],
  [1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.520, 1.515, 1.510, 1.490, 1.466, 1.443, 1.422, 1.401, 1.381],
  [1.539, 1.539, 1.539, 1.539, 1.539, 1.539, 1.539, 1.539, 1.539, 1.539, 1.539, 1.539, 1.518, 1.512, 1.507, 1.487, 1.464, 1.441, 1.420, 1.399, 1.380],
  [1.555, 1.555, 1.555, 1.555, 1.555, 1.555, 1.555, 1.555, 1.555, 1.555, 1.555, 1.533, 1.512, 1.507, 1.502, 1.483, 1.459, 1.437, 1.415, 1.395, 1.376],
  [1.569, 1.569, 1.569, 1.569, 1.569, 1.569, 1.569, 1.569, 1.569, 1.553, 1.547, 1.526, 1.505, 1.500, 1.495, 1.476, 1.452, 1.430, 1.409, 1.389, 1.370],
  [1.582, 1.582, 1.582, 1.582, 1.582, 1.582, 1.582, 1.570, 1.559, 1.543, 1.537, 1.516, 1.496, 1.491, 1.486, 1.467, 1.444, 1.423, 1.402, 1.382, 1.364],
  [1.593, 1.593, 1.593, 1.593, 1.593, 1.587, 1.570, 1.558, 1.547, 1.531, 1.526, 1.505, 1.485, 1.481, 1.476, 1.457, 1.435, 1.414, 1.394, 1.374, 1.356],
  [1.603, 1.603, 1.603, 1.603, 1.579, 1.573, 1.556, 1.545, 1.534, 1.519, 1.514, 1.493, 1.474, 1.469, 1.465, 1.446, 1.425, 1.404, 1.384, 1.365, 1.348],
]
`))
	if err != nil {
		b.Fatal(err)
	}
	rt, _ := p.Rating("takeoff")
	for b.Loop() {
		if _, ok := cornerCut(rt); !ok {
			b.Fatal("no cut")
		}
	}
}

// BenchmarkVerifyProfiles verifies each embedded demo with its calibration
// (load included), every check on. Budget: well under 100 ms a profile.
func BenchmarkVerifyProfiles(b *testing.B) {
	for _, name := range thrustmap.EmbeddedProfiles() {
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				if r := File(name, name); !r.OK() {
					b.Fatal(r.Errors)
				}
			}
		})
	}
}
