package grid

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/interp"
)

// TestLinearHandWorked checks multilinear interpolation against values worked
// out by hand in the comments (the textbook bilinear formula
// f = Σ w_c f_c with w the products of the fractional distances).
func TestLinearHandWorked(t *testing.T) {
	alt := []float64{0, 4000, 8000}
	temp := []float64{-20, 0, 20, 40}
	// values[i][j] = 80 + i*2 + j (altitude i, temperature j)
	vals := []float64{
		80, 81, 82, 83,
		82, 83, 84, 85,
		84, 85, 86, 87,
	}
	g, err := New([NumAxes][]float64{alt, temp, nil}, vals, Linear)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name      string
		alt, temp float64
		want      float64
		clamped   Clamped
	}{
		// At a node the value is the node's: values[1][2] = 84.
		{"node", 4000, 20, 84, 0},
		// Midway in altitude between rows 0 and 1 at column 0: (80+82)/2 = 81.
		{"mid altitude", 2000, -20, 81, 0},
		// Cell (0..4000, 0..20) at (1000, 5): fa = 0.25, ft = 0.25.
		// f = 0.75*0.75*81 + 0.75*0.25*82 + 0.25*0.75*83 + 0.25*0.25*84
		//   = 45.5625 + 15.375 + 15.5625 + 5.25 = 81.75.
		{"inside cell", 1000, 5, 81.75, 0},
		// Above the top row at 30: clamped to 8000; between 20 and 40: 86.5.
		{"clamp altitude", 12000, 30, 86.5, 1 << Altitude},
		// Below the coldest column and the lowest row: corner node 80.
		{"clamp both", -5000, -60, 80, 1<<Altitude | 1<<Temperature},
	}
	for _, tc := range tests {
		got, cl := g.At([NumAxes]float64{tc.alt, tc.temp, 0})
		if math.Abs(got-tc.want) > 1e-12 || cl != tc.clamped {
			t.Errorf("%s: At(%g, %g) = %g, %v; want %g, %v", tc.name, tc.alt, tc.temp, got, cl.Names(), tc.want, tc.clamped.Names())
		}
	}
}

// TestLinearThreeAxes checks the trilinear case by hand: on the unit cube
// with f = x + 10y + 100z at the corners, trilinear interpolation reproduces
// the linear function exactly (any multilinear scheme is exact for it).
func TestLinearThreeAxes(t *testing.T) {
	ax := []float64{0, 1}
	var vals []float64
	for _, x := range ax {
		for _, y := range ax {
			for _, z := range ax {
				vals = append(vals, x+10*y+100*z)
			}
		}
	}
	g, err := New([NumAxes][]float64{ax, ax, ax}, vals, Linear)
	if err != nil {
		t.Fatal(err)
	}
	got, _ := g.At([NumAxes]float64{0.3, 0.6, 0.2})
	if want := 0.3 + 6 + 20; math.Abs(got-want) > 1e-12 {
		t.Errorf("got %g, want %g", got, want)
	}
}

func TestNoAxes(t *testing.T) {
	g, err := New([NumAxes][]float64{}, []float64{72.5}, Linear)
	if err != nil {
		t.Fatal(err)
	}
	if v, cl := g.At([NumAxes]float64{1e9, -1e9, 5}); v != 72.5 || cl != 0 {
		t.Errorf("got %g %v", v, cl)
	}
}

func TestNewErrors(t *testing.T) {
	tests := []struct {
		name   string
		axes   [NumAxes][]float64
		values []float64
		want   error
	}{
		{"one point", [NumAxes][]float64{{0}}, []float64{1}, ErrAxis},
		{"not increasing", [NumAxes][]float64{{0, 0}}, []float64{1, 2}, ErrAxis},
		{"nan axis", [NumAxes][]float64{{0, math.NaN()}}, []float64{1, 2}, ErrAxis},
		{"too few values", [NumAxes][]float64{{0, 1}, {0, 1}}, []float64{1, 2, 3}, ErrValues},
		{"inf value", [NumAxes][]float64{{0, 1}}, []float64{1, math.Inf(1)}, ErrValues},
	}
	for _, tc := range tests {
		if _, err := New(tc.axes, tc.values, Linear); !errors.Is(err, tc.want) {
			t.Errorf("%s: err = %v, want %v", tc.name, err, tc.want)
		}
	}
}

// fbLine fits gonum's interp.FritschButland to (xs, ys) and predicts at x.
func fbLine(xs, ys []float64, x float64) float64 {
	var fb interp.FritschButland
	if err := fb.Fit(xs, ys); err != nil {
		panic(err)
	}
	return fb.Predict(x)
}

// reference is the monotone grid computed independently with gonum's
// FritschButland: along Mach for every (altitude, temperature) line, then
// along temperature for every altitude, then along altitude.
func reference(alt, temp, mach []float64, v [][][]float64, q [3]float64) float64 {
	row := make([]float64, len(alt))
	for i := range alt {
		col := make([]float64, len(temp))
		for j := range temp {
			col[j] = fbLine(mach, v[i][j], q[2])
		}
		row[i] = fbLine(temp, col, q[1])
	}
	return fbLine(alt, row, q[0])
}

// TestMonotoneAgainstGonum cross-checks the monotone method against gonum's
// interp.FritschButland (an outside reference) at 2000 random in-grid points
// on irregular grids with non-monotone data, to 1e-9.
func TestMonotoneAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 20; trial++ {
		axis := func(n int, lo float64) []float64 {
			xs := make([]float64, n)
			x := lo
			for i := range xs {
				xs[i] = x
				x += 0.1 + rng.Float64()*3
			}
			return xs
		}
		// Sizes 2..6 exercise the two-point linear case and both edges.
		alt, temp, mach := axis(2+rng.IntN(5), -2), axis(2+rng.IntN(5), -40), axis(2+rng.IntN(4), 0)
		v := make([][][]float64, len(alt))
		var flat []float64
		for i := range alt {
			v[i] = make([][]float64, len(temp))
			for j := range temp {
				v[i][j] = make([]float64, len(mach))
				for k := range mach {
					v[i][j][k] = 80 + 20*rng.Float64()
					flat = append(flat, v[i][j][k])
				}
			}
		}
		g, err := New([NumAxes][]float64{alt, temp, mach}, flat, Monotone)
		if err != nil {
			t.Fatal(err)
		}
		for p := 0; p < 100; p++ {
			in := func(xs []float64) float64 { return xs[0] + rng.Float64()*(xs[len(xs)-1]-xs[0]) }
			q := [3]float64{in(alt), in(temp), in(mach)}
			if p%10 == 0 { // land on nodes too
				q[1] = temp[rng.IntN(len(temp))]
			}
			got, cl := g.At(q)
			want := reference(alt, temp, mach, v, q)
			if math.Abs(got-want) > 1e-9 || cl != 0 {
				t.Fatalf("trial %d: At(%v) = %.12g (clamped %v), gonum reference %.12g", trial, q, got, cl.Names(), want)
			}
		}
	}
}

// TestMonotoneIsMonotone: on monotone data the Fritsch–Butland interpolant
// preserves monotonicity (Fritsch & Butland 1984), along every axis.
func TestMonotoneIsMonotone(t *testing.T) {
	temp := []float64{-40, 0, 15, 30, 31, 45, 60}
	vals := []float64{90, 95, 97, 99, 99, 99.5, 104}
	g, err := New([NumAxes][]float64{nil, temp, nil}, vals, Monotone)
	if err != nil {
		t.Fatal(err)
	}
	prev := math.Inf(-1)
	for x := -40.0; x <= 60; x += 0.01 {
		v, _ := g.At([NumAxes]float64{0, x, 0})
		if v < prev-1e-12 {
			t.Fatalf("decrease at %g: %g < %g", x, v, prev)
		}
		prev = v
	}
}

// TestNeverNaN: every finite query, in or far out of the grid, gives a finite
// value within the data's range (clamping, never extrapolation).
func TestNeverNaN(t *testing.T) {
	for _, m := range []Method{Linear, Monotone} {
		g, err := New([NumAxes][]float64{{0, 1, 2}, {0, 10}, nil}, []float64{1, 2, 3, 4, 5, 6}, m)
		if err != nil {
			t.Fatal(err)
		}
		for _, x := range []float64{-math.MaxFloat64, -1e300, -1, 0, 0.5, 2, 1e300, math.MaxFloat64} {
			v, _ := g.At([NumAxes]float64{x, x, x})
			if math.IsNaN(v) || v < 1 || v > 6 {
				t.Errorf("%v At(%g) = %g", m, x, v)
			}
		}
	}
}

// TestBoundsHoldEverywhere: Bounds are the least and greatest node (worked
// by hand for the small grid below: 88 and 104), and no value At returns,
// on three axes, in either method, at random points in and around the grid,
// lies outside them — the property the lever hot path relies on to skip the
// raise chain when a gate's own target is above every gate below it.
func TestBoundsHoldEverywhere(t *testing.T) {
	alt := []float64{0, 5000, 10000}
	temp := []float64{-40, 0, 15, 30}
	mach := []float64{0, 0.4}
	rng := rand.New(rand.NewPCG(5, 6))
	vals := make([]float64, len(alt)*len(temp)*len(mach))
	for i := range vals {
		vals[i] = 88 + 16*rng.Float64()
	}
	vals[3], vals[17] = 88, 104
	for _, m := range []Method{Linear, Monotone} {
		g, err := New([NumAxes][]float64{alt, temp, mach}, vals, m)
		if err != nil {
			t.Fatal(err)
		}
		if lo, hi := g.Bounds(); lo != 88 || hi != 104 {
			t.Fatalf("%v: Bounds = %g, %g, want 88, 104", m, lo, hi)
		}
		for range 20000 {
			q := [NumAxes]float64{-2000 + 14000*rng.Float64(), -60 + 110*rng.Float64(), -0.1 + 0.6*rng.Float64()}
			if v, _ := g.At(q); v < 88 || v > 104 {
				t.Fatalf("%v At(%v) = %g, outside the node range 88 to 104", m, q, v)
			}
		}
	}
}

func BenchmarkAtLinear12x12(b *testing.B) {
	g := bench12x12(b, Linear)
	rng := rand.New(rand.NewPCG(3, 4))
	qs := make([][NumAxes]float64, 1024)
	for i := range qs {
		qs[i] = [NumAxes]float64{rng.Float64() * 11000, -40 + rng.Float64()*110, 0}
	}
	b.ReportAllocs()
	b.ResetTimer()
	s := 0.0
	for i := 0; i < b.N; i++ {
		v, _ := g.At(qs[i&1023])
		s += v
	}
	_ = s
}

func BenchmarkAtMonotone12x12(b *testing.B) {
	g := bench12x12(b, Monotone)
	rng := rand.New(rand.NewPCG(3, 4))
	qs := make([][NumAxes]float64, 1024)
	for i := range qs {
		qs[i] = [NumAxes]float64{rng.Float64() * 11000, -40 + rng.Float64()*110, 0}
	}
	b.ReportAllocs()
	b.ResetTimer()
	s := 0.0
	for i := 0; i < b.N; i++ {
		v, _ := g.At(qs[i&1023])
		s += v
	}
	_ = s
}

func bench12x12(b *testing.B, m Method) *Grid {
	alt := make([]float64, 12)
	temp := make([]float64, 12)
	vals := make([]float64, 0, 144)
	for i := range alt {
		alt[i] = float64(i) * 1000
		temp[i] = -40 + float64(i)*10
	}
	for i := range alt {
		for j := range temp {
			vals = append(vals, 85+float64(i)*0.3+float64(j)*0.5)
		}
	}
	g, err := New([NumAxes][]float64{alt, temp, nil}, vals, m)
	if err != nil {
		b.Fatal(err)
	}
	return g
}

// BenchmarkAtLinear12x12Drift queries a slowly drifting point, as a sim's
// conditions drift frame to frame (the searches are predictable).
func BenchmarkAtLinear12x12Drift(b *testing.B) {
	g := bench12x12(b, Linear)
	b.ReportAllocs()
	s := 0.0
	for i := 0; i < b.N; i++ {
		alt := float64(i%22000) * 0.5
		v, _ := g.At([NumAxes]float64{alt, 25 - 0.002*alt, 0})
		s += v
	}
	_ = s
}
