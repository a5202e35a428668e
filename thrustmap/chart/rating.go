package chart

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// MaxAltitudeLines is the most altitude lines a rating chart draws when it
// picks them from the table's altitude rows.
const MaxAltitudeLines = 9

// ratingSamples is how many OATs each altitude line is evaluated at, besides
// the table's temperature nodes and the corner.
const ratingSamples = 240

// RatingOption changes what a rating chart shows.
type RatingOption func(*ratingOptions) error

type ratingOptions struct {
	alts         []float64
	oatLo, oatHi float64
	hasOAT       bool
}

// Altitudes draws one line at each pressure altitude (ft) instead of the
// rating table's altitude rows.
func Altitudes(ft ...float64) RatingOption {
	alts := slices.Clone(ft)
	return func(o *ratingOptions) error {
		if len(alts) == 0 {
			return fmt.Errorf("no altitudes given")
		}
		for _, a := range alts {
			if !finite(a) || a < atmos.MinAltitudeFt || a > atmos.MaxAltitudeFt {
				return fmt.Errorf("altitude %g ft is outside the standard atmosphere (%.0f to %.0f ft)", a, atmos.MinAltitudeFt, atmos.MaxAltitudeFt)
			}
		}
		o.alts = alts
		return nil
	}
}

// OATRange sets the OAT axis (°C) instead of the table's temperature range
// widened on either side to show where the table is held at its edge.
func OATRange(lo, hi float64) RatingOption {
	return func(o *ratingOptions) error {
		if !finite(lo) || !finite(hi) || !(lo < hi) || lo <= -atmos.KelvinOffset {
			return fmt.Errorf("OAT range %g to %g °C: want finite temperatures above absolute zero, the first below the second", lo, hi)
		}
		o.oatLo, o.oatHi, o.hasOAT = lo, hi, true
		return nil
	}
}

// ParameterLabel returns the axis label of a rating parameter with its unit:
// "N1 (%)", "EPR" or "torque (%)".
func ParameterLabel(p thrustmap.Parameter) string {
	switch p {
	case thrustmap.EPR:
		return "EPR"
	case thrustmap.Torque:
		return "torque (%)"
	}
	return "N1 (%)"
}

// Rating charts the named rating's target against OAT at the conditions c
// (Mach, bleeds, on ground, assumed temperature; c's OAT is ignored), one
// line per altitude: the table's altitude rows (at most MaxAltitudeLines of
// them, spread over its range) unless Altitudes says otherwise, or c's
// altitude alone for a table without an altitude axis. Each value
// is p.RatingTarget at that altitude and OAT. Where a look-up was clamped to
// a table edge the line is dashed; where the rating declares a corner it is
// marked on each line.
func Rating(p *thrustmap.Profile, rating string, c thrustmap.Conditions, opts ...RatingOption) (*Chart, error) {
	if p == nil {
		return nil, fmt.Errorf("rating chart: no profile")
	}
	r, ok := p.Rating(rating)
	if !ok {
		names := make([]string, 0, len(p.Ratings()))
		for _, x := range p.Ratings() {
			names = append(names, x.Name())
		}
		return nil, fmt.Errorf("rating chart: %w %q (profile %s has %s)", thrustmap.ErrUnknownRating, rating, p.Source(), strings.Join(names, ", "))
	}
	var o ratingOptions
	for _, opt := range opts {
		if err := opt(&o); err != nil {
			return nil, fmt.Errorf("rating chart: %w", err)
		}
	}
	table := r.Table()
	alts := o.alts
	if alts == nil {
		alts = tableAltitudes(table, c.AltitudeFt)
	}
	lo, hi := o.oatLo, o.oatHi
	if !o.hasOAT {
		var err error
		if lo, hi, err = oatRange(p, r, alts, c.Mach); err != nil {
			return nil, fmt.Errorf("rating chart %q: %w", rating, err)
		}
	}

	pl := newPlot(ratingTitle(p, r, c), "OAT (°C)", ParameterLabel(p.Parameter()))
	pl.X.Min, pl.X.Max = lo, hi
	leg := newLegend()
	var corners plotter.XYs
	var clamped thrustmap.Clamped
	for i, alt := range alts {
		isa, err := atmos.ISATemperatureC(alt)
		if err != nil {
			return nil, fmt.Errorf("rating chart %q: %w", rating, err)
		}
		oats := sampleOATs(lo, hi, r, alt, isa, c.Mach)
		cornerOAT, hasCorner := r.CornerOAT(alt, isa)
		hasCorner = hasCorner && cornerOAT >= lo && cornerOAT <= hi
		if hasCorner {
			oats = insertSorted(oats, cornerOAT)
		}
		pts := make(plotter.XYs, len(oats))
		cl := make([]bool, len(oats))
		for k, oat := range oats {
			at := c
			at.AltitudeFt, at.OATC = alt, oat
			res, err := p.RatingTarget(r, at)
			if err != nil {
				return nil, fmt.Errorf("rating chart %q at %g ft, OAT %g °C: %w", rating, alt, oat, err)
			}
			pts[k] = plotter.XY{X: oat, Y: res.Value}
			tableAxes := res.Clamped & (thrustmap.ClampAltitude | thrustmap.ClampTemperature | thrustmap.ClampMach)
			cl[k] = tableAxes != 0
			clamped |= tableAxes
			if hasCorner && oat == cornerOAT {
				corners = append(corners, pts[k])
			}
		}
		col := seriesColor(i)
		for _, run := range runs(cl) {
			ln, err := line(pts[run.from:run.to+1], col, 1.5)
			if err != nil {
				return nil, fmt.Errorf("rating chart %q: %w", rating, err)
			}
			if run.clamped {
				ln.Dashes = dashes
			}
			pl.Add(ln)
		}
		thumb, _ := line(plotter.XYs{{}, {X: 1}}, col, 1.5)
		leg.Add(altitudeLabel(alt), thumb)
	}
	if len(corners) > 0 {
		sc, err := plotter.NewScatter(corners)
		if err != nil {
			return nil, fmt.Errorf("rating chart %q: %w", rating, err)
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: rgb(0, 0, 0), Radius: vg.Points(3.5), Shape: draw.RingGlyph{}}
		pl.Add(sc)
		leg.Add("corner", sc)
	}
	if clamped != 0 {
		thumb, _ := line(plotter.XYs{{}, {X: 1}}, rgb(0x55, 0x55, 0x55), 1.5)
		thumb.Dashes = dashes
		leg.Add("clamped: "+strings.Join(clamped.Names(), ", "), thumb)
	}
	return newChart(8, 5.5, Panel{Plot: pl, Legend: leg}), nil
}

// ratingTitle names the rating, its profile and the fixed conditions.
func ratingTitle(p *thrustmap.Profile, r *thrustmap.Rating, c thrustmap.Conditions) string {
	var cond []string
	cond = append(cond, fmt.Sprintf("Mach %.2f", c.Mach))
	if b := p.BleedNames(c.Bleeds); len(b) > 0 {
		cond = append(cond, "bleeds: "+strings.Join(b, ", "))
	} else {
		cond = append(cond, "no bleeds")
	}
	if c.AssumedSet {
		cond = append(cond, fmt.Sprintf("assumed %g °C", c.AssumedC))
		if c.OnGround {
			cond = append(cond, "on ground")
		}
	}
	name := p.Name()
	if name == "" {
		name = p.Source()
	}
	return fmt.Sprintf("Rating %s (%s table) — %s\n%s", r.Name(), r.Basis(), name, strings.Join(cond, "; "))
}

// altitudeLabel is an altitude line's legend entry: "8000 ft".
func altitudeLabel(ft float64) string { return fmt.Sprintf("%g ft", ft) }

// tableAltitudes returns the table's altitude rows, thinned evenly to
// MaxAltitudeLines keeping the first and last, or def when the table has no
// altitude axis.
func tableAltitudes(g *grid.Grid, def float64) []float64 {
	rows := g.Axis(grid.Altitude)
	if rows == nil {
		return []float64{def}
	}
	if len(rows) <= MaxAltitudeLines {
		return rows
	}
	out := make([]float64, MaxAltitudeLines)
	for i := range out {
		out[i] = rows[int(math.Round(float64(i)*float64(len(rows)-1)/float64(MaxAltitudeLines-1)))]
	}
	return out
}

// oatRange is the default OAT axis: the table's temperature axis as OAT at
// the chart's altitudes and Mach, widened by a twelfth of its span (at least
// 5 °C) on either side so the held edges show. A table without a
// temperature axis takes the profile's envelope, or −40 to 50 °C.
func oatRange(p *thrustmap.Profile, r *thrustmap.Rating, alts []float64, mach float64) (lo, hi float64, err error) {
	g := r.Table()
	if !g.Has(grid.Temperature) {
		if e, ok := p.Envelope(); ok && e.OATC[0] < e.OATC[1] {
			return e.OATC[0], e.OATC[1], nil
		}
		return -40, 50, nil
	}
	tLo, tHi := g.Range(grid.Temperature)
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, alt := range alts {
		isa, err := atmos.ISATemperatureC(alt)
		if err != nil {
			return 0, 0, err
		}
		for _, t := range []float64{tLo, tHi} {
			oat := oatOf(r.Basis(), t, mach, isa)
			lo, hi = math.Min(lo, oat), math.Max(hi, oat)
		}
	}
	m := math.Max(5, (hi-lo)/12)
	lo, hi = lo-m, hi+m
	// Keep clear of absolute zero (a table in kelvin by mistake, say).
	lo = math.Max(lo, -atmos.KelvinOffset+1)
	if !(lo < hi) {
		return 0, 0, fmt.Errorf("temperature axis %g to %g gives no OAT range", tLo, tHi)
	}
	return lo, hi, nil
}

// oatOf converts a temperature on a rating's axis to OAT at an ISA
// temperature and Mach: TAT = SAT·(1 + 0.2·M²) in kelvin (recovery factor 1;
// docs/methods.md, Total air temperature), ISA deviation = OAT − ISA.
func oatOf(b thrustmap.TemperatureBasis, t, mach, isaC float64) float64 {
	switch b {
	case thrustmap.TAT:
		return (t+atmos.KelvinOffset)/(1+0.2*mach*mach) - atmos.KelvinOffset
	case thrustmap.ISADev:
		return t + isaC
	}
	return t
}

// sampleOATs returns OATs from lo to hi, evenly spaced, with the table's
// temperature nodes (as OAT) added so the kinks of a linear table are drawn
// exactly.
func sampleOATs(lo, hi float64, r *thrustmap.Rating, alt, isa, mach float64) []float64 {
	out := make([]float64, 0, ratingSamples+24)
	for i := 0; i <= ratingSamples; i++ {
		out = append(out, lo+(hi-lo)*float64(i)/ratingSamples)
	}
	for _, t := range r.Table().Axis(grid.Temperature) {
		if oat := oatOf(r.Basis(), t, mach, isa); oat > lo && oat < hi {
			out = append(out, oat)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// insertSorted adds x to the sorted xs unless it is there.
func insertSorted(xs []float64, x float64) []float64 {
	i, found := slices.BinarySearch(xs, x)
	if found {
		return xs
	}
	return slices.Insert(xs, i, x)
}

// run is a stretch of points from..to (inclusive) drawn in one style.
type run struct {
	from, to int
	clamped  bool
}

// runs splits a line into stretches: the segment between points k−1 and k
// is clamped when either end is. Neighbouring runs share their end point,
// so the line stays unbroken.
func runs(cl []bool) []run {
	if len(cl) < 2 {
		return nil
	}
	var out []run
	for k := 1; k < len(cl); k++ {
		seg := cl[k-1] || cl[k]
		if n := len(out); n > 0 && out[n-1].clamped == seg {
			out[n-1].to = k
			continue
		}
		out = append(out, run{from: k - 1, to: k, clamped: seg})
	}
	return out
}
