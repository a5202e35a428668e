package grid

// Curve is a one-dimensional table y(x) with the same interpolation,
// clamping and guarantees as a Grid: the shape of a lever calibration.
type Curve struct {
	g      *Grid
	xs, ys []float64 // the grid's own slices, for the linear fast path
}

// NewCurve builds a curve through (xs, ys); xs must be finite and strictly
// increasing with at least two points, ys finite and as many. ys may run in
// either direction. NewCurve copies its arguments.
func NewCurve(xs, ys []float64, method Method) (*Curve, error) {
	g, err := New([NumAxes][]float64{xs, nil, nil}, ys, method)
	if err != nil {
		return nil, err
	}
	return &Curve{g: g, xs: g.axes[Altitude], ys: g.values}, nil
}

// At returns y at x, with x clamped to the curve's ends; clamped reports
// whether it was. x must not be NaN.
func (c *Curve) At(x float64) (y float64, clamped bool) {
	if c.g.method == Monotone {
		v, cl := c.g.At([NumAxes]float64{x, 0, 0})
		return v, cl != 0
	}
	xs, last := c.xs, len(c.xs)-1
	if x <= xs[0] {
		return c.ys[0], x < xs[0]
	}
	if x >= xs[last] {
		return c.ys[last], x > xs[last]
	}
	i := segment(xs, x)
	return lerp(c.ys[i], c.ys[i+1], (x-xs[i])/(xs[i+1]-xs[i])), false
}

// Method returns the curve's interpolation method.
func (c *Curve) Method() Method { return c.g.method }

// Len returns the number of points.
func (c *Curve) Len() int { return len(c.g.axes[Altitude]) }

// Point returns point i as (x, y). It panics if i is out of range.
func (c *Curve) Point(i int) (x, y float64) { return c.g.axes[Altitude][i], c.g.values[i] }
