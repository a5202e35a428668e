// Package export writes thrustmap's data for other programs: a rating as a
// dense grid, a lever calibration as a lookup table, and a profile as a
// self-contained C99 source file. Each export states its grid and the
// interpolation error it measured against the source.
package export

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// Steps are the spacings of a dense grid; a zero step keeps the rating's
// own points along that axis.
type Steps struct {
	AltitudeFt  float64
	Temperature float64
	Mach        float64
}

// Axis is one axis of a dense export.
type Axis struct {
	Name   string    `json:"name"` // altitude_ft, temperature_c or mach
	Points []float64 `json:"points"`
}

// Dense is a rating sampled on a regular grid.
type Dense struct {
	Rating      string    `json:"rating"`
	Parameter   string    `json:"parameter"`
	Unit        string    `json:"unit"`
	Temperature string    `json:"temperature"` // what the temperature axis means: OAT, TAT or ISA_DEV
	Bleeds      []string  `json:"bleeds"`      // corrections included
	Axes        []Axis    `json:"axes"`
	Values      []float64 `json:"-"` // flattened, first axis outermost
	// MaxError is the largest difference between linear interpolation in
	// this grid and the source rating, measured at the centre of every
	// cell; MaxErrorAt is where (one coordinate per axis).
	MaxError   float64   `json:"max_error"`
	MaxErrorAt []float64 `json:"max_error_at"`
}

// DenseRating samples a rating of p over its own axes at the given steps,
// with the corrections of the bleeds on and the redline applied, and
// measures how well linear interpolation in the result reproduces it.
func DenseRating(p *thrustmap.Profile, rating string, s Steps, bleeds thrustmap.Bleeds) (*Dense, error) {
	r, ok := p.Rating(rating)
	if !ok {
		return nil, fmt.Errorf("unknown rating %q", rating)
	}
	t := r.Table()
	d := &Dense{Rating: rating, Parameter: p.Parameter().String(), Unit: p.Parameter().Unit(),
		Temperature: r.Basis().String(), Bleeds: p.BleedNames(bleeds)}
	steps := [grid.NumAxes]float64{s.AltitudeFt, s.Temperature, s.Mach}
	var axes [grid.NumAxes][]float64
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		if !t.Has(a) {
			continue
		}
		pts, err := stepped(t.Axis(a), steps[a])
		if err != nil {
			return nil, fmt.Errorf("%s step: %w", thrustmap.AxisColumn(a), err)
		}
		axes[a] = pts
		d.Axes = append(d.Axes, Axis{thrustmap.AxisColumn(a), pts})
	}
	eval := func(q [grid.NumAxes]float64) float64 { return value(p, r, q, bleeds) }
	d.Values = sample(axes, eval)
	g, err := grid.New(axes, d.Values, grid.Linear)
	if err != nil {
		return nil, err
	}
	d.MaxError, d.MaxErrorAt = measure(axes, g, eval)
	return d, nil
}

// value is the rating at axis coordinates q in its own terms, with the
// corrections of bleeds and the redline.
func value(p *thrustmap.Profile, r *thrustmap.Rating, q [grid.NumAxes]float64, bleeds thrustmap.Bleeds) float64 {
	v, _ := r.Table().At(q)
	for _, c := range r.Corrections() {
		if !bleeds.Has(c.Bleed) {
			continue
		}
		if c.Grid == nil {
			v += c.Delta
		} else {
			dv, _ := c.Grid.At(q)
			v += dv
		}
	}
	if red, ok := p.Redline(); ok && v > red {
		v = red
	}
	return v
}

// stepped returns the points from the first to the last of xs at step
// (the last always included), or xs itself for step 0.
func stepped(xs []float64, step float64) ([]float64, error) {
	if step == 0 {
		return xs, nil
	}
	lo, hi := xs[0], xs[len(xs)-1]
	if !(step > 0) || math.IsInf(step, 0) {
		return nil, fmt.Errorf("%g: want a positive number", step)
	}
	n := int(math.Floor((hi-lo)/step + 1e-9))
	if n > 100_000 {
		return nil, fmt.Errorf("%g gives %d points: too fine", step, n)
	}
	out := make([]float64, 0, n+2)
	for i := 0; i <= n; i++ {
		out = append(out, lo+float64(i)*step)
	}
	if hi-out[len(out)-1] > 1e-9*math.Max(1, math.Abs(hi)) {
		out = append(out, hi)
	}
	return out, nil
}

// sample evaluates fn at every point of the grid, first axis outermost.
func sample(axes [grid.NumAxes][]float64, fn func([grid.NumAxes]float64) float64) []float64 {
	var out []float64
	eachPoint(axes, func(q [grid.NumAxes]float64) { out = append(out, fn(q)) })
	return out
}

// measure compares linear interpolation in g with fn at the centre of every
// cell, returning the largest difference and where it is.
func measure(axes [grid.NumAxes][]float64, g *grid.Grid, fn func([grid.NumAxes]float64) float64) (float64, []float64) {
	var centres [grid.NumAxes][]float64
	for a, xs := range axes {
		for i := 0; i+1 < len(xs); i++ {
			centres[a] = append(centres[a], (xs[i]+xs[i+1])/2)
		}
	}
	worst, at := 0.0, []float64{}
	eachPoint(centres, func(q [grid.NumAxes]float64) {
		v, _ := g.At(q)
		if e := math.Abs(v - fn(q)); e > worst {
			worst, at = e, at[:0]
			for a, xs := range axes {
				if xs != nil {
					at = append(at, q[a])
				}
			}
		}
	})
	return worst, at
}

// eachPoint calls fn at every combination of the points of the axes that
// are not nil, first axis outermost.
func eachPoint(axes [grid.NumAxes][]float64, fn func([grid.NumAxes]float64)) {
	var q [grid.NumAxes]float64
	var rec func(a grid.Axis)
	rec = func(a grid.Axis) {
		switch {
		case a == grid.NumAxes:
			fn(q)
		case axes[a] == nil:
			rec(a + 1)
		default:
			for _, x := range axes[a] {
				q[a] = x
				rec(a + 1)
			}
		}
	}
	rec(grid.Altitude)
}

// CSV writes the grid as comment lines stating it, then one row per point.
func (d *Dense) CSV() []byte {
	var b bytes.Buffer
	fmt.Fprintf(&b, "# rating %s (%s, %s), temperature axis %s, bleeds %s\n", d.Rating, d.Parameter, d.Unit, d.Temperature, orNone(d.Bleeds))
	for _, a := range d.Axes {
		fmt.Fprintf(&b, "# axis %s: %d points from %g to %g\n", a.Name, len(a.Points), a.Points[0], a.Points[len(a.Points)-1])
	}
	fmt.Fprintf(&b, "# largest difference of linear interpolation in this grid from the source, at cell centres: %.6g at %v\n", d.MaxError, d.MaxErrorAt)
	b.WriteString("# exported by thrustmap; simulation only, not certified, not for real aircraft\n")
	for _, a := range d.Axes {
		b.WriteString(a.Name + ",")
	}
	b.WriteString(thrustmap.ColumnValue + "\n")
	idx := make([]int, len(d.Axes))
	for _, v := range d.Values {
		for k, a := range d.Axes {
			b.WriteString(strconv.FormatFloat(a.Points[idx[k]], 'g', -1, 64))
			b.WriteByte(',')
		}
		b.WriteString(strconv.FormatFloat(v, 'g', 10, 64))
		b.WriteByte('\n')
		for k := len(idx) - 1; k >= 0; k-- {
			idx[k]++
			if idx[k] < len(d.Axes[k].Points) {
				break
			}
			idx[k] = 0
		}
	}
	return b.Bytes()
}

// JSON writes the grid with nested values (values[i][j][k], first axis
// outermost), as in a profile.
func (d *Dense) JSON() ([]byte, error) {
	type out struct {
		*Dense
		Values any    `json:"values"`
		Note   string `json:"note"`
	}
	shape := make([]int, len(d.Axes))
	for i, a := range d.Axes {
		shape[i] = len(a.Points)
	}
	nested, _ := nest(d.Values, shape)
	return json.MarshalIndent(out{Dense: d, Values: nested, Note: "exported by thrustmap; simulation only, not certified, not for real aircraft"}, "", "  ")
}

func nest(v []float64, shape []int) (any, []float64) {
	if len(shape) == 0 {
		return v[0], v[1:]
	}
	out := make([]any, shape[0])
	for i := range out {
		out[i], v = nest(v, shape[1:])
	}
	return out, v
}

// LeverTable is a lever calibration sampled as a raw → TLA lookup table.
type LeverTable struct {
	Lever int       `json:"lever"`
	Raw   []float64 `json:"raw"`
	TLA   []float64 `json:"tla_deg"`
	// MaxErrorDeg is the largest difference of linear interpolation in the
	// table from the calibration, at the midpoint of every step.
	MaxErrorDeg   float64 `json:"max_error_deg"`
	MaxErrorAtRaw float64 `json:"max_error_at_raw"`
}

// LeverLookup samples lever l from its device's raw_min to raw_max at step
// counts.
func LeverLookup(l *thrustmap.LeverCalibration, step float64) (*LeverTable, error) {
	s := l.Spec()
	raws, err := stepped([]float64{s.RawMin, s.RawMax}, step)
	if err != nil {
		return nil, fmt.Errorf("step: %w", err)
	}
	t := &LeverTable{Lever: s.ID, Raw: raws}
	for _, r := range raws {
		v, _ := l.TLA(r)
		t.TLA = append(t.TLA, v)
	}
	for i := 0; i+1 < len(raws); i++ {
		mid := (raws[i] + raws[i+1]) / 2
		want, _ := l.TLA(mid)
		got := (t.TLA[i] + t.TLA[i+1]) / 2
		if e := math.Abs(got - want); e > t.MaxErrorDeg {
			t.MaxErrorDeg, t.MaxErrorAtRaw = e, mid
		}
	}
	return t, nil
}

// CSV writes the table with comment lines stating it.
func (t *LeverTable) CSV() []byte {
	var b bytes.Buffer
	fmt.Fprintf(&b, "# lever %d raw → TLA, %d points from %g to %g\n", t.Lever, len(t.Raw), t.Raw[0], t.Raw[len(t.Raw)-1])
	fmt.Fprintf(&b, "# largest difference of linear interpolation in this table from the calibration: %.6g° at raw %g\n", t.MaxErrorDeg, t.MaxErrorAtRaw)
	b.WriteString("# exported by thrustmap; simulation only, not certified, not for real aircraft\nraw,tla_deg\n")
	for i, r := range t.Raw {
		fmt.Fprintf(&b, "%s,%s\n", strconv.FormatFloat(r, 'g', -1, 64), strconv.FormatFloat(t.TLA[i], 'g', 10, 64))
	}
	return b.Bytes()
}

func orNone(s []string) string {
	if len(s) == 0 {
		return "none"
	}
	return strings.Join(s, ", ")
}
