// Package grid interpolates values tabulated on a rectilinear grid of up to
// three axes: pressure altitude, temperature and Mach, in that order.
//
// Two methods are offered. Linear is multilinear interpolation. Monotone is
// the tensor product of one-dimensional monotone piecewise cubics whose node
// slopes follow gonum's interp.FritschButland, applied along Mach first, then
// temperature, then altitude; an axis of two points is linear.
//
// Queries outside the grid are clamped to its edge and the clamped axes are
// reported: a grid never extrapolates and never returns NaN for finite input.
// A Grid is immutable once built and safe for concurrent use; At allocates
// nothing.
package grid

import (
	"errors"
	"fmt"
	"math"
)

// Axis names one of the three grid axes.
type Axis int

// The axes, in the order their dimensions nest in the values.
const (
	Altitude Axis = iota
	Temperature
	Mach
	NumAxes
)

var axisNames = [NumAxes]string{"altitude", "temperature", "mach"}

// String returns the axis name used in reports and JSON: "altitude",
// "temperature" or "mach".
func (a Axis) String() string {
	if a < 0 || a >= NumAxes {
		return fmt.Sprintf("Axis(%d)", int(a))
	}
	return axisNames[a]
}

// Clamped is a set of axes on which a query was clamped to the grid edge.
type Clamped uint8

// Has reports whether axis a is in the set.
func (c Clamped) Has(a Axis) bool { return c&(1<<a) != 0 }

// Names returns the names of the clamped axes in axis order; an empty,
// non-nil slice when none was clamped.
func (c Clamped) Names() []string {
	names := []string{}
	for a := Altitude; a < NumAxes; a++ {
		if c.Has(a) {
			names = append(names, a.String())
		}
	}
	return names
}

// Method selects how a grid interpolates between nodes.
type Method int

const (
	// Linear is multilinear interpolation (the default).
	Linear Method = iota
	// Monotone is a tensor product of Fritsch–Butland monotone cubics.
	Monotone
)

// String returns "linear" or "monotone".
func (m Method) String() string {
	if m == Monotone {
		return "monotone"
	}
	return "linear"
}

// ParseMethod reads an interpolation name; the empty string means Linear.
func ParseMethod(s string) (Method, error) {
	switch s {
	case "", "linear":
		return Linear, nil
	case "monotone":
		return Monotone, nil
	}
	return Linear, fmt.Errorf("unknown interpolation %q (want linear or monotone)", s)
}

// Grid is an immutable table of values over up to three axes.
type Grid struct {
	axes    [NumAxes][]float64 // nil when the axis is absent
	stride  [NumAxes]int       // 0 for an absent axis
	values  []float64          // flattened, altitude outermost
	method  Method
	present [NumAxes]bool
	order   [NumAxes]Axis // the present axes, outermost first
	dims    int           // how many axes are present
}

// Errors New reports; each is wrapped with details.
var (
	ErrAxis   = errors.New("bad axis")
	ErrValues = errors.New("bad values")
)

// New builds a grid from its axes (nil for an absent axis) and its values
// flattened with altitude outermost and Mach innermost. Each present axis must
// hold at least two finite, strictly increasing points; values must be finite
// and as many as the product of the axis lengths (one when no axis is
// present). New copies its arguments.
func New(axes [NumAxes][]float64, values []float64, method Method) (*Grid, error) {
	g := &Grid{method: method}
	n := 1
	for a := NumAxes - 1; a >= 0; a-- {
		xs := axes[a]
		if xs == nil {
			continue
		}
		if err := checkAxis(xs); err != nil {
			return nil, fmt.Errorf("%w: %s axis: %v", ErrAxis, a, err)
		}
		g.axes[a] = append([]float64(nil), xs...)
		g.present[a] = true
		g.stride[a] = n
		n *= len(xs)
		copy(g.order[1:], g.order[:g.dims])
		g.order[0] = a
		g.dims++
	}
	if len(values) != n {
		return nil, fmt.Errorf("%w: have %d values, the axes need %d", ErrValues, len(values), n)
	}
	for i, v := range values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: value %d is not finite", ErrValues, i)
		}
	}
	g.values = append([]float64(nil), values...)
	return g, nil
}

// checkAxis reports why xs cannot be an axis, or nil.
func checkAxis(xs []float64) error {
	if len(xs) < 2 {
		return fmt.Errorf("has %d point(s), want at least 2", len(xs))
	}
	for i, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("point %d is not finite", i)
		}
		if i > 0 && x <= xs[i-1] {
			return fmt.Errorf("point %d (%g) is not above point %d (%g): axes must be strictly increasing", i, x, i-1, xs[i-1])
		}
	}
	return nil
}

// Method returns the grid's interpolation method.
func (g *Grid) Method() Method { return g.method }

// Has reports whether axis a is present.
func (g *Grid) Has(a Axis) bool { return g.present[a] }

// Axis returns a copy of the points of axis a, or nil when it is absent.
func (g *Grid) Axis(a Axis) []float64 {
	if !g.present[a] {
		return nil
	}
	return append([]float64(nil), g.axes[a]...)
}

// Values returns a copy of the flattened values (altitude outermost).
func (g *Grid) Values() []float64 { return append([]float64(nil), g.values...) }

// Node returns the value at node indexes idx (ignored for absent axes).
// It panics if an index is out of range.
func (g *Grid) Node(idx [NumAxes]int) float64 {
	off := 0
	for a := Altitude; a < NumAxes; a++ {
		if g.present[a] {
			if idx[a] < 0 || idx[a] >= len(g.axes[a]) {
				panic(fmt.Sprintf("grid: %s index %d out of range", a, idx[a]))
			}
			off += idx[a] * g.stride[a]
		}
	}
	return g.values[off]
}

// Points returns how many points axis a has (0 when absent).
func (g *Grid) Points(a Axis) int { return len(g.axes[a]) }

// Point returns point i of axis a. It panics if i is out of range.
func (g *Grid) Point(a Axis, i int) float64 { return g.axes[a][i] }

// Range returns the first and last point of axis a (0, 0 when absent).
func (g *Grid) Range(a Axis) (lo, hi float64) {
	if !g.present[a] {
		return 0, 0
	}
	xs := g.axes[a]
	return xs[0], xs[len(xs)-1]
}

// Bounds returns the least and the greatest value at the grid's nodes.
// Every value At returns lies within them: multilinear interpolation is a
// convex combination of nodes, and the monotone (Fritsch–Butland)
// interpolant stays between the two nodes of each segment along each axis,
// applied axis by axis.
func (g *Grid) Bounds() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range g.values {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return lo, hi
}

// At interpolates the grid at q (altitude, temperature, Mach; coordinates of
// absent axes are ignored). Coordinates outside an axis are clamped to its
// edge and reported in the returned set. q must be finite: the caller checks.
func (g *Grid) At(q [NumAxes]float64) (float64, Clamped) {
	var clamped Clamped
	var seg [NumAxes]int
	var s [NumAxes]int     // strides of the present axes, outermost first
	var f [NumAxes]float64 // their fractions within the segment
	base := 0
	for d := 0; d < g.dims; d++ {
		a := g.order[d]
		xs := g.axes[a]
		x := q[a]
		last := len(xs) - 1
		if x < xs[0] {
			x = xs[0]
			clamped |= 1 << a
		} else if x > xs[last] {
			x = xs[last]
			clamped |= 1 << a
		}
		i := segment(xs, x)
		seg[a] = i
		q[a] = x
		base += i * g.stride[a]
		s[d] = g.stride[a]
		f[d] = (x - xs[i]) / (xs[i+1] - xs[i])
	}
	if g.method == Monotone {
		return g.cubic(Altitude, 0, &q, &seg), clamped
	}
	// Multilinear, written out per number of axes.
	v := g.values[base:]
	switch g.dims {
	case 0:
		return v[0], clamped
	case 1:
		return lerp(v[0], v[s[0]], f[0]), clamped
	case 2:
		lo := lerp(v[0], v[s[1]], f[1])
		hi := lerp(v[s[0]], v[s[0]+s[1]], f[1])
		return lerp(lo, hi, f[0]), clamped
	}
	c00 := lerp(v[0], v[s[2]], f[2])
	c01 := lerp(v[s[1]], v[s[1]+s[2]], f[2])
	c10 := lerp(v[s[0]], v[s[0]+s[2]], f[2])
	c11 := lerp(v[s[0]+s[1]], v[s[0]+s[1]+s[2]], f[2])
	return lerp(lerp(c00, c01, f[1]), lerp(c10, c11, f[1]), f[0]), clamped
}

// segment returns i such that xs[i] ≤ x ≤ xs[i+1], for x within the axis.
func segment(xs []float64, x float64) int {
	lo, hi := 0, len(xs)-2
	for lo < hi {
		mid := int(uint(lo+hi+1) >> 1)
		if xs[mid] <= x {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo
}

// lerp is a + (b-a)·f written as a weighted sum, exact at f = 0 and f = 1.
func lerp(a, b, f float64) float64 { return a*(1-f) + b*f }

// cubic evaluates the monotone interpolant along axis a and the axes inside
// it, starting from the values at offset off.
func (g *Grid) cubic(a Axis, off int, q *[NumAxes]float64, seg *[NumAxes]int) float64 {
	for a < NumAxes && !g.present[a] {
		a++
	}
	if a == NumAxes {
		return g.values[off]
	}
	xs := g.axes[a]
	i := seg[a]
	lo, hi := max(0, i-1), min(len(xs)-1, i+2)
	var ys [4]float64
	for k := lo; k <= hi; k++ {
		ys[k-lo] = g.cubic(a+1, off+k*g.stride[a], q, seg)
	}
	return hermite(xs, ys[:hi-lo+1], lo, i, q[a])
}

// hermite evaluates, on segment i of xs, the cubic Hermite polynomial with
// gonum's FritschButland node slopes. ys holds the values of nodes lo.. on.
func hermite(xs, ys []float64, lo, i int, x float64) float64 {
	y0, y1 := ys[i-lo], ys[i+1-lo]
	if x == xs[i] {
		return y0
	}
	if x == xs[i+1] {
		return y1
	}
	d0 := fbSlope(xs, ys, lo, i)
	d1 := fbSlope(xs, ys, lo, i+1)
	h := xs[i+1] - xs[i]
	dy := y1 - y0
	a2 := (3*dy - (2*d0+d1)*h) / h / h
	a3 := (-2*dy + (d0+d1)*h) / h / h / h
	dx := x - xs[i]
	return ((a3*dx+a2)*dx+d0)*dx + y0
}

// fbSlope is the derivative gonum's interp.FritschButland assigns to node k
// of xs, with the values of nodes lo.. in ys. It reads at most the nodes
// k-1..k+1 (k..k+2 or k-2..k at an edge), so a window of four suffices.
func fbSlope(xs, ys []float64, lo, k int) float64 {
	n := len(xs)
	y := func(j int) float64 { return ys[j-lo] }
	s := func(j int) float64 { return (y(j+1) - y(j)) / (xs[j+1] - xs[j]) }
	if n == 2 {
		return s(0)
	}
	switch k {
	case 0:
		return fbEdge(s(0), s(1), xs[1]-xs[0], xs[2]-xs[0], xs[1]+xs[2]-2*xs[0])
	case n - 1:
		return fbEdge(s(n-2), s(n-3), xs[n-1]-xs[n-2], xs[n-1]-xs[n-3], 2*xs[n-1]-xs[n-3]-xs[n-2])
	}
	sPrev, sNext := s(k-1), s(k)
	if sPrev*sNext <= 0 {
		return 0
	}
	return 3 * (xs[k+1] - xs[k-1]) /
		((2*xs[k+1]-xs[k-1]-xs[k])/sPrev + (xs[k+1]+xs[k]-2*xs[k-1])/sNext)
}

// fbEdge is gonum's Fritsch–Butland end-node derivative: dE the edge secant,
// dI the next one in, hE the edge interval, h the two intervals, f the
// weighting sum.
func fbEdge(dE, dI, hE, h, f float64) float64 {
	g := (f*dE - hE*dI) / h
	if g*dE <= 0 {
		return 0
	}
	if dE*dI <= 0 && math.Abs(g) > 3*math.Abs(dE) {
		return 3 * dE
	}
	return g
}
