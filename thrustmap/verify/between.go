package verify

// Checks of what interpolation does between grid lines, where the checks of
// verify.go, which read the tables' nodes, cannot see: a monotone table that
// turns where its data do not (monotone_bump; docs/methods.md,
// Interpolation) and a flat-rated table whose flat region is cut between
// altitude rows (corner_cut; docs/methods.md, Flat rating and corners).

import (
	"fmt"
	"math"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// relTol is the smallest move worth a finding, as a fraction of the largest
// magnitude in the table: 1e-4 is 0.00015 EPR or 0.01 % N1, below what a
// table's printed digits resolve.
const relTol = 1e-4

// cellSamples lists, best first, how many points inside each cell the
// checks sample on every axis: 5 puts them at sixths (thirds and the
// middle among them). Fewer are used when a table is so large that the
// sample lattice would pass maxLattice points.
var cellSamples = []int{5, 2, 1}

const maxLattice = 60000

// tolerance is relTol of the largest magnitude among values.
func tolerance(values []float64) float64 {
	m := 0.0
	for _, v := range values {
		m = math.Max(m, math.Abs(v))
	}
	return relTol * m
}

// lattice is a grid evaluated at its grid lines and at k evenly spaced
// points inside each cell, on every present axis: on an axis of n points,
// sample p lies in cell p/(k+1) and is grid line p/(k+1) when p%(k+1) == 0.
// An absent axis has the single sample 0.
type lattice struct {
	g   *grid.Grid
	k   int
	pos [grid.NumAxes][]float64
	dim [grid.NumAxes]int
	v   []float64 // altitude outermost, Mach innermost
}

// index is the offset of sample idx in v.
func (l *lattice) index(idx [grid.NumAxes]int) int {
	return (idx[grid.Altitude]*l.dim[grid.Temperature]+idx[grid.Temperature])*l.dim[grid.Mach] + idx[grid.Mach]
}

// point is the coordinates of sample idx.
func (l *lattice) point(idx [grid.NumAxes]int) [grid.NumAxes]float64 {
	var q [grid.NumAxes]float64
	for a := range grid.NumAxes {
		q[a] = l.pos[a][idx[a]]
	}
	return q
}

// nodes returns the grid lines that bound sample p of axis a: one when the
// sample is on a grid line, else the two on either side.
func (l *lattice) nodes(a grid.Axis, p int) (lo, hi int) {
	if !l.g.Has(a) {
		return 0, 0
	}
	lo = p / (l.k + 1)
	if p%(l.k+1) != 0 {
		return lo, lo + 1
	}
	return lo, lo
}

// newLattice samples g with as many points inside each cell as the size
// allows (see cellSamples).
func newLattice(g *grid.Grid) (*lattice, error) {
	k := cellSamples[len(cellSamples)-1]
	for _, c := range cellSamples {
		n := 1
		for a := range grid.NumAxes {
			if g.Has(a) {
				n *= g.Points(a) + (g.Points(a)-1)*c
			}
		}
		if n <= maxLattice {
			k = c
			break
		}
	}
	l := &lattice{g: g, k: k}
	for a := range grid.NumAxes {
		if !g.Has(a) {
			l.pos[a], l.dim[a] = []float64{0}, 1
			continue
		}
		xs := g.Axis(a)
		for i := 0; i+1 < len(xs); i++ {
			for j := 0; j <= k; j++ {
				l.pos[a] = append(l.pos[a], xs[i]+(xs[i+1]-xs[i])*float64(j)/float64(k+1))
			}
		}
		l.pos[a] = append(l.pos[a], xs[len(xs)-1])
		l.dim[a] = len(l.pos[a])
	}
	return l, l.evaluate()
}

// evaluate fills v in stages, one axis at a time in the order the grid
// applies them (Mach, then temperature, then altitude; docs/methods.md,
// Interpolation): each stage interpolates along its axis, through the grid
// lines of that axis, the values the stage before left at every sample of
// the axes inside it. A one-axis curve of the grid's method does each line,
// so every value is the grid's own (TestLatticeMatchesAt checks it against
// grid.At) at a fraction of the cost of one At per sample.
func (l *lattice) evaluate() error {
	cur := l.g.Values()
	var dim [grid.NumAxes]int
	for a := range grid.NumAxes {
		dim[a] = max(1, l.g.Points(a))
	}
	for a := grid.Mach; a >= grid.Altitude; a-- {
		if !l.g.Has(a) {
			continue
		}
		next := dim
		next[a] = l.dim[a]
		out := make([]float64, next[0]*next[1]*next[2])
		xs := l.g.Axis(a)
		ys := make([]float64, len(xs))
		off := func(d [grid.NumAxes]int, idx [grid.NumAxes]int) int {
			return (idx[0]*d[1]+idx[1])*d[2] + idx[2]
		}
		var idx [grid.NumAxes]int
		for idx[0] = 0; idx[0] < next[0]; idx[0]++ {
			for idx[1] = 0; idx[1] < next[1]; idx[1]++ {
				for idx[2] = 0; idx[2] < next[2]; idx[2]++ {
					if idx[a] != 0 {
						continue // one line per position on the other axes
					}
					line := idx
					for i := range ys {
						line[a] = i
						ys[i] = cur[off(dim, line)]
					}
					c, err := grid.NewCurve(xs, ys, l.g.Method())
					if err != nil {
						return err
					}
					for p, x := range l.pos[a] {
						line[a] = p
						out[off(next, line)], _ = c.At(x)
					}
				}
			}
		}
		cur, dim = out, next
	}
	l.v = cur
	return nil
}

// bump is where a table's interpolant moves furthest against its data
// along one axis between grid lines.
type bump struct {
	axis     grid.Axis
	size     float64               // how far it moves, in the table's unit
	from, to [grid.NumAxes]float64 // where the move starts and ends (they differ on axis only)
	vFrom    float64
	vTo      float64
	dataDir  int                  // the data's direction: -1 fall or stay flat, +1 rise or stay flat, 0 flat
	lines    [grid.NumAxes][2]int // the grid lines around it on the other axes (node indexes)
	window   [2]int               // the nodes of axis whose data were read
}

// bumps scans the lattice along each axis and returns, per axis in axis
// order, the worst place where the interpolant moves against the data by
// more than tol. Along an axis, in one cell, the data are the node values
// of the grid lines around the sample on the other axes, over the cell and
// its neighbours (the nodes a monotone cubic reads): when they all fall or
// stay flat, any rise between the cell's grid lines is against them; when
// they all rise or stay flat, any fall; when all are flat, either. Data
// that turn there themselves are not judged.
func (l *lattice) bumps(tol float64) []bump {
	var out []bump
	g := l.g
	level := tol * 1e-6 // rounding in a flat stretch
	for a := range grid.NumAxes {
		n := g.Points(a)
		if n < 2 {
			continue
		}
		var others []grid.Axis
		for b := range grid.NumAxes {
			if b != a {
				others = append(others, b)
			}
		}
		b, c := others[0], others[1]
		worst := bump{axis: a}
		// The data's direction depends only on the grid lines around the
		// sample (a slot: on grid line j is 2j, inside cell j is 2j+1) and on
		// the cell: worked out once for each.
		slots := func(o grid.Axis) int { return max(1, 2*g.Points(o)-1) }
		slot := func(o grid.Axis, p int) int {
			lo, hi := l.nodes(o, p)
			return lo + hi
		}
		dirs := make([]int8, slots(b)*slots(c)*(n-1)) // 0 unknown, else direction+2, or 4 when the data turn
		line := make([]float64, l.dim[a])
		var idx [grid.NumAxes]int
		for idx[b] = 0; idx[b] < l.dim[b]; idx[b]++ {
			for idx[c] = 0; idx[c] < l.dim[c]; idx[c]++ {
				for p := range line {
					idx[a] = p
					line[p] = l.v[l.index(idx)]
				}
				var lines [grid.NumAxes][2]int
				lines[b][0], lines[b][1] = l.nodes(b, idx[b])
				lines[c][0], lines[c][1] = l.nodes(c, idx[c])
				for cell := 0; cell+1 < n; cell++ {
					w := [2]int{max(0, cell-1), min(n-1, cell+2)}
					key := (slot(b, idx[b])*slots(c)+slot(c, idx[c]))*(n-1) + cell
					if dirs[key] == 0 {
						dirs[key] = 4
						if dir, ok := dataDirection(g, a, w, b, c, lines); ok {
							dirs[key] = int8(dir + 2)
						}
					}
					if dirs[key] == 4 {
						continue
					}
					dir := int(dirs[key]) - 2
					// The largest rise and fall from one sample to a later
					// one, grid lines included; each from the last sample
					// at the lowest (highest) level before it, where the
					// move begins.
					s0, s1 := cell*(l.k+1), (cell+1)*(l.k+1)
					lo, hi := s0, s0
					rise, fall := 0.0, 0.0
					var riseAt, fallAt [2]int
					for t := s0 + 1; t <= s1; t++ {
						if d := line[t] - line[lo]; d > rise {
							rise, riseAt = d, [2]int{lo, t}
						}
						if d := line[hi] - line[t]; d > fall {
							fall, fallAt = d, [2]int{hi, t}
						}
						if line[t] <= line[lo]+level {
							lo = t
						}
						if line[t] >= line[hi]-level {
							hi = t
						}
					}
					size, at := 0.0, [2]int{}
					if dir <= 0 && rise > size {
						size, at = rise, riseAt
					}
					if dir >= 0 && fall > size {
						size, at = fall, fallAt
					}
					if size > tol && size > worst.size {
						worst.size, worst.dataDir, worst.lines, worst.window = size, dir, lines, w
						idx[a] = at[0]
						worst.from, worst.vFrom = l.point(idx), line[at[0]]
						idx[a] = at[1]
						worst.to, worst.vTo = l.point(idx), line[at[1]]
					}
				}
			}
		}
		if worst.size > 0 {
			out = append(out, worst)
		}
	}
	return out
}

// dataDirection reports which way the node values of g run along axis a
// over the nodes w[0]..w[1], on every grid line through the nodes lines[b]
// and lines[c] of the other axes: -1 when all fall or stay flat, +1 when
// all rise or stay flat, 0 when all are flat, and false when they turn.
func dataDirection(g *grid.Grid, a grid.Axis, w [2]int, b, c grid.Axis, lines [grid.NumAxes][2]int) (int, bool) {
	down, up := true, true
	var idx [grid.NumAxes]int
	for _, nb := range lines[b] {
		for _, nc := range lines[c] {
			idx[b], idx[c] = nb, nc
			idx[a] = w[0]
			prev := g.Node(idx)
			for i := w[0] + 1; i <= w[1]; i++ {
				idx[a] = i
				v := g.Node(idx)
				down = down && v <= prev
				up = up && v >= prev
				prev = v
			}
		}
	}
	switch {
	case down && up:
		return 0, true
	case down:
		return -1, true
	case up:
		return 1, true
	}
	return 0, false
}

// axisTerm names axis a in the table's own terms.
func axisTerm(a grid.Axis, basis thrustmap.TemperatureBasis) string {
	switch a {
	case grid.Temperature:
		if basis == thrustmap.ISADev {
			return "ISA deviation"
		}
		return basis.String()
	case grid.Mach:
		return "Mach"
	}
	return "altitude"
}

// coord names coordinate x of axis a in the table's own terms.
func coord(a grid.Axis, basis thrustmap.TemperatureBasis, x float64) string {
	switch a {
	case grid.Temperature:
		if basis == thrustmap.ISADev {
			return fmt.Sprintf("ISA%+.1f °C", x)
		}
		return fmt.Sprintf("%s %.1f °C", basis, x)
	case grid.Mach:
		return fmt.Sprintf("Mach %.3g", x)
	}
	return fmt.Sprintf("%.0f ft", x)
}

// nodeSpan names the grid lines i..j of axis a of g (one when i == j), in
// the table's own terms: "0 and 10000 ft", "TAT -30 to 30 °C".
func nodeSpan(g *grid.Grid, a grid.Axis, basis thrustmap.TemperatureBasis, i, j int, join string) string {
	x, y := g.Point(a, i), g.Point(a, j)
	switch a {
	case grid.Temperature:
		if basis == thrustmap.ISADev {
			if i == j {
				return fmt.Sprintf("ISA%+g °C", x)
			}
			return fmt.Sprintf("ISA%+g%sISA%+g °C", x, join, y)
		}
		if i == j {
			return fmt.Sprintf("%s %g °C", basis, x)
		}
		return fmt.Sprintf("%s %g%s%g °C", basis, x, join, y)
	case grid.Mach:
		if i == j {
			return fmt.Sprintf("Mach %g", x)
		}
		return fmt.Sprintf("Mach %g%s%g", x, join, y)
	}
	if i == j {
		return fmt.Sprintf("%g ft", x)
	}
	return fmt.Sprintf("%g%s%g ft", x, join, y)
}

// checkMonotoneBump: a monotone table of two or more axes is the tensor
// product of one-axis monotone cubics, which is monotone along each axis on
// the grid lines but not between them (docs/methods.md, Interpolation).
// Each monotone grid of a rating — its values, its thrust grid, its gridded
// corrections — is sampled between its grid lines and the worst turn
// against the data along each axis is reported.
func checkMonotoneBump(r *Report, p *thrustmap.Profile, rt *thrustmap.Rating) {
	scale := tolerance(rt.Table().Values())
	checkGridBump(r, rt.Name(), rt.Table(), rt.Basis(), scale)
	if th := rt.Thrust(); th != nil {
		checkGridBump(r, rt.Name()+" thrust_kn", th, rt.Basis(), tolerance(th.Values()))
	}
	bleeds := p.Bleeds()
	for _, k := range rt.Corrections() {
		if k.Grid != nil {
			checkGridBump(r, fmt.Sprintf("%s correction for %s", rt.Name(), bleeds[k.Bleed]), k.Grid, rt.Basis(), scale)
		}
	}
}

// checkGridBump reports the bumps of one grid, named label, beyond tol.
func checkGridBump(r *Report, label string, g *grid.Grid, basis thrustmap.TemperatureBasis, tol float64) {
	dims := 0
	for a := range grid.NumAxes {
		if g.Has(a) {
			dims++
		}
	}
	if g.Method() != grid.Monotone || dims < 2 {
		return
	}
	l, err := newLattice(g)
	if err != nil {
		r.errorf(checkInternal, label, "cannot sample the table: %v", err)
		return
	}
	for _, b := range l.bumps(tol) {
		var at, around []string
		for o := range grid.NumAxes {
			if o == b.axis || !g.Has(o) {
				continue
			}
			at = append(at, coord(o, basis, b.to[o]))
			around = append(around, nodeSpan(g, o, basis, b.lines[o][0], b.lines[o][1], " and "))
		}
		verb := "rises"
		if b.vTo < b.vFrom {
			verb = "falls"
		}
		data := map[int]string{-1: "fall or stay flat", 0: "are flat", 1: "rise or stay flat"}[b.dataDir]
		term := axisTerm(b.axis, basis)
		r.warnf(CheckMonotoneBump, fmt.Sprintf("%s, along %s at %s", label, term, strings.Join(at, ", ")),
			"between grid lines the interpolant %s by %.3g, from %.6g at %s to %.6g at %s, although the data on the grid lines around it (%s) %s along %s (%s): "+
				"monotone interpolation is monotone along each axis on the grid lines, not jointly between them; "+
				"interpolation = \"linear\" keeps the data's direction, and rows that change shape more gradually shrink the bump",
			verb, b.size, b.vFrom, coord(b.axis, basis, b.from[b.axis]), b.vTo, coord(b.axis, basis, b.to[b.axis]),
			strings.Join(around, "; "), data, term, nodeSpan(g, b.axis, basis, b.window[0], b.window[1], " to "))
	}
}

// cut is the worst fall below the corner between altitude rows.
type cut struct {
	drop, alt, mach, corner float64 // the corner in the axis's own terms
	tFrom, tTo, vFrom, vTo  float64
	rows                    [2]float64 // the altitude rows around it
	rowCorners              [2]float64 // their corners, in the axis's own terms
}

// checkCornerCut reports the worst cut of a rating's flat region (see
// cornerCut).
func checkCornerCut(r *Report, rt *thrustmap.Rating) {
	c, ok := cornerCut(rt)
	if !ok {
		return
	}
	where := fmt.Sprintf("%s, %.0f ft", rt.Name(), c.alt)
	if rt.Table().Has(grid.Mach) {
		where += fmt.Sprintf(", Mach %g", c.mach)
	}
	basis := rt.Basis()
	// The advice depends on whether the corner moves along the axis
	// between the two rows: if it does not, a column at it keeps the kink;
	// if it does, no choice of columns can.
	var advice string
	if math.Abs(c.rowCorners[1]-c.rowCorners[0]) < 0.05 {
		advice = fmt.Sprintf("a temperature column at the corner (%s) keeps it", coord(grid.Temperature, basis, c.corner))
	} else {
		advice = fmt.Sprintf("the corner moves from %s at %.0f ft to %s at %.0f ft, and between rows whose corners differ no choice of columns keeps the flat region",
			coord(grid.Temperature, basis, c.rowCorners[0]), c.rows[0], coord(grid.Temperature, basis, c.rowCorners[1]), c.rows[1])
		if basis != thrustmap.ISADev {
			advice += "; an ISA_DEV axis with corner_isa_dev_c keeps the corner on one column at every altitude"
		}
		advice += "; where the corner must move, closer altitude rows make the cut smaller"
	}
	r.warnf(CheckCornerCut, where,
		"between the altitude rows the value falls from %.6g at %s to %.6g at %s (by %.3g) although the corner there is %s: "+
			"below the corner the rating is flat rated, so interpolation cut the flat region; %s",
		c.vFrom, coord(grid.Temperature, basis, c.tFrom), c.vTo, coord(grid.Temperature, basis, c.tTo), c.drop,
		coord(grid.Temperature, basis, c.corner), advice)
}

// cornerCut: below the corner a flat-rated table is flat (or rises, for
// N1), on the altitude rows and between them. Between rows whose corners
// sit at different temperatures of the axis, interpolation mixes one row's
// flat region with the other's falling one and cuts the flat region. The
// table is sampled at altitudes between the rows and, at each (and at each
// Mach point), at temperatures up to the corner interpolated there
// (Rating.CornerOAT); the worst fall beyond the tolerance is returned.
// Rows that fall below their own corner are left to falls_below_corner.
func cornerCut(rt *thrustmap.Rating) (cut, bool) {
	var worst cut
	t := rt.Table()
	if !t.Has(grid.Temperature) || !t.Has(grid.Altitude) || rt.Basis() == thrustmap.TAT {
		return worst, false
	}
	if _, _, _, ok := rt.Corner(); !ok {
		return worst, false
	}
	alts, temps := t.Axis(grid.Altitude), t.Axis(grid.Temperature)
	machs := []float64{0}
	if t.Has(grid.Mach) {
		machs = t.Axis(grid.Mach)
	}
	basis := rt.Basis()
	// cornerAt is the corner at an altitude in the axis's own terms.
	cornerAt := func(alt float64) (float64, bool) {
		isa, err := atmos.ISATemperatureC(alt)
		if err != nil {
			return 0, false
		}
		c, _ := rt.CornerOAT(alt, isa)
		if basis == thrustmap.ISADev {
			c -= isa
		}
		return c, true
	}
	// rowFlat: row i does not fall below its own corner.
	rowFlat := func(i int) bool {
		c, ok := cornerAt(alts[i])
		if !ok {
			return false
		}
		for m := range max(1, t.Points(grid.Mach)) {
			for j := 1; j < len(temps) && temps[j] <= c+1e-9; j++ {
				if t.Node([grid.NumAxes]int{i, j, m}) < t.Node([grid.NumAxes]int{i, j - 1, m}) {
					return false
				}
			}
		}
		return true
	}
	tol := tolerance(t.Values())
	level := tol * 1e-6 // rounding in a flat stretch
	k := cellSamples[0]
	for i := 0; i+1 < len(alts); i++ {
		if !rowFlat(i) || !rowFlat(i+1) {
			continue
		}
		c0, _ := cornerAt(alts[i])
		c1, _ := cornerAt(alts[i+1])
		for j := 1; j <= k; j++ {
			alt := alts[i] + (alts[i+1]-alts[i])*float64(j)/float64(k+1)
			corner, ok := cornerAt(alt)
			if !ok {
				continue
			}
			ts := samplesUpTo(temps, k, corner)
			for _, m := range machs {
				hi, tHi := math.Inf(-1), 0.0
				for _, x := range ts {
					v, _ := t.At([grid.NumAxes]float64{alt, x, m})
					if d := hi - v; d > tol && d > worst.drop {
						worst = cut{drop: d, alt: alt, mach: m, corner: corner, tFrom: tHi, tTo: x, vFrom: hi, vTo: v,
							rows: [2]float64{alts[i], alts[i+1]}, rowCorners: [2]float64{c0, c1}}
					}
					if v >= hi-level { // the last sample at the top: where the fall begins
						hi, tHi = max(hi, v), x
					}
				}
			}
		}
	}
	return worst, worst.drop > 0
}

// samplesUpTo returns the points of axis xs and k evenly spaced points
// inside each cell, those below top, then top itself (when inside the axis).
func samplesUpTo(xs []float64, k int, top float64) []float64 {
	var out []float64
	for i := 0; i+1 < len(xs); i++ {
		for j := 0; j <= k; j++ {
			x := xs[i] + (xs[i+1]-xs[i])*float64(j)/float64(k+1)
			if x >= top {
				break
			}
			out = append(out, x)
		}
	}
	return append(out, min(top, xs[len(xs)-1]))
}
