package thrustmap

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// Column names of table CSV files: the files a profile names in table_file,
// thrust_file and delta_file, and what thrustmap export table writes.
const (
	ColumnAltitude    = "altitude_ft"   // pressure altitude, ft
	ColumnTemperature = "temperature_c" // temperature, °C, in the rating's basis (OAT, TAT or ISA deviation)
	ColumnMach        = "mach"          // Mach number
	ColumnValue       = "value"         // the tabulated value (long layout)
	// WideCorner is the first cell of a wide table: altitude points down the
	// first column, temperature points along the first row.
	WideCorner = ColumnAltitude + "/" + ColumnTemperature
)

// Stable codes of faults in table files, beside the Check codes above.
const (
	CheckTableFile = "file"       // a table file that cannot be read
	CheckCSVSyntax = "csv_syntax" // broken CSV quoting
)

// AxisColumn returns the column name of axis a in a table CSV file
// ("altitude_ft", "temperature_c" or "mach"), or "" for no axis.
func AxisColumn(a grid.Axis) string {
	switch a {
	case grid.Altitude:
		return ColumnAltitude
	case grid.Temperature:
		return ColumnTemperature
	case grid.Mach:
		return ColumnMach
	}
	return ""
}

// axisOfColumn is the axis a column name stands for, or -1.
func axisOfColumn(name string) grid.Axis {
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		if AxisColumn(a) == name {
			return a
		}
	}
	return -1
}

// TableLayout is how a table CSV file arranges its grid. The header row
// tells them apart.
type TableLayout int

const (
	// LayoutLong has one row per grid point, in any order: the header names
	// the axis columns present (in the order altitude_ft, temperature_c,
	// mach), then value. It holds a table of any axes.
	LayoutLong TableLayout = iota
	// LayoutWide is a table of altitude × temperature: WideCorner in the
	// first cell, the temperature points along the rest of the first row,
	// the altitude points down the first column, the values in the cells.
	LayoutWide
)

// String returns "long" or "wide".
func (l TableLayout) String() string {
	if l == LayoutWide {
		return "wide"
	}
	return "long"
}

// LayoutFor returns the layout a grid is written in: LayoutWide when its
// axes are exactly altitude and temperature, LayoutLong otherwise.
func LayoutFor(g *grid.Grid) TableLayout {
	if g.Has(grid.Altitude) && g.Has(grid.Temperature) && !g.Has(grid.Mach) {
		return LayoutWide
	}
	return LayoutLong
}

// TableCSV is a table read from a CSV file by ParseTableCSV: a full
// rectilinear grid with the place in the file of every number.
type TableCSV struct {
	File   string      // the name the file was read by, for messages
	Layout TableLayout // the layout the header announced
	// Axes holds each present axis's points (at least two, finite and
	// strictly increasing); nil for an absent axis.
	Axes [grid.NumAxes][]float64
	// Values holds one finite number per grid point, altitude outermost and
	// Mach innermost, as grid.New takes them.
	Values []float64

	header  cellPos
	axisAt  [grid.NumAxes][]cellPos // where each axis point was (first) given
	valueAt []cellPos
}

// Grid builds the table's grid.
func (t *TableCSV) Grid(method grid.Method) (*grid.Grid, error) {
	return grid.New(t.Axes, t.Values, method)
}

// point describes grid point i (an index into Values) by its coordinates:
// "value at altitude_ft 2000, temperature_c 15", or "value" for a table
// without axes.
func (t *TableCSV) point(i int) string {
	var parts []string
	stride := len(t.Values)
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		xs := t.Axes[a]
		if xs == nil {
			continue
		}
		stride /= len(xs)
		parts = append(parts, AxisColumn(a)+" "+formatNumber(xs[i/stride%len(xs)]))
	}
	if len(parts) == 0 {
		return "value"
	}
	return "value at " + strings.Join(parts, ", ")
}

// errAt is a fault at a place in the table's file.
func (t *TableCSV) errAt(at cellPos, code, format string, args ...any) *FileError {
	return &FileError{File: t.File, Line: at.line, Column: at.col, Code: code, Err: fmt.Errorf(format, args...)}
}

// cellPos is a cell's 1-based line and byte column (0 when unknown).
type cellPos struct{ line, col int }

type csvCell struct {
	text string
	at   cellPos
}

// ParseTableCSV reads a table from CSV text, in either layout (see
// TableLayout). Lines whose first cell starts with "#" are comments; blank
// lines, empty cells at the end of a row, a UTF-8 byte order mark, CRLF line
// ends and spaces around cells are ignored. file names the source in
// errors. Every fault found (up to a limit) is reported as a FileError with
// the file, line and column: a row with the wrong number of cells, a cell
// that is not a finite number, an axis that is not strictly increasing, a
// grid point missing or given twice, an unknown header.
func ParseTableCSV(file string, data []byte) (*TableCSV, error) {
	p := &tableParser{file: file}
	rows := p.read(data)
	if len(p.errs) > 0 {
		return nil, p.errs
	}
	if len(rows) == 0 {
		p.add(cellPos{}, CheckGridShape, "holds no table (it is empty, or only comments and blank lines): want a header row, then the grid")
		return nil, p.errs
	}
	var t *TableCSV
	if rows[0][0].text == WideCorner {
		t = p.wide(rows)
	} else {
		t = p.long(rows)
	}
	if len(p.errs) > 0 {
		return nil, p.errs
	}
	return t, nil
}

// tableParser gathers the faults of one table file.
type tableParser struct {
	file string
	errs FileErrors
}

func (p *tableParser) add(at cellPos, code, format string, args ...any) {
	if len(p.errs) < maxFileErrors {
		p.errs = append(p.errs, &FileError{File: p.file, Line: at.line, Column: at.col, Code: code, Err: fmt.Errorf(format, args...)})
	}
}

// read splits the text into rows of trimmed cells, leaving out comments,
// blank rows and empty cells at the end of a row.
func (p *tableParser) read(data []byte) [][]csvCell {
	if bytes.HasPrefix(data, []byte{0xFF, 0xFE}) || bytes.HasPrefix(data, []byte{0xFE, 0xFF}) {
		p.add(cellPos{line: 1, col: 1}, CheckCSVSyntax, "is UTF-16 text: save it as CSV in UTF-8")
		return nil
	}
	data = bytes.TrimPrefix(data, []byte("\uFEFF"))
	r := csv.NewReader(bytes.NewReader(data))
	r.Comment = '#'
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	var rows [][]csvCell
	for {
		rec, err := r.Read()
		if err == io.EOF {
			return rows
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				p.add(cellPos{pe.Line, pe.Column}, CheckCSVSyntax, "%v (a cell that holds a quote must be quoted whole, with the quote doubled)", pe.Err)
			} else {
				p.add(cellPos{}, CheckCSVSyntax, "%v", err)
			}
			return nil
		}
		row := make([]csvCell, len(rec))
		for i, s := range rec {
			line, col := r.FieldPos(i)
			row[i] = csvCell{strings.TrimSpace(s), cellPos{line, col}}
		}
		for len(row) > 0 && row[len(row)-1].text == "" {
			row = row[:len(row)-1]
		}
		if len(row) == 0 || strings.HasPrefix(row[0].text, "#") {
			continue
		}
		rows = append(rows, row)
	}
}

// decimalComma matches a number written with a decimal comma ("96,8").
var decimalComma = regexp.MustCompile(`^[-+]?[0-9]+,[0-9]+$`)

// number reads a cell as a finite number; what names it in messages ("value
// at altitude_ft 0, temperature_c 15", "temperature_c point"). An empty cell
// is a missing number (grid_shape).
func (p *tableParser) number(c csvCell, what string) (float64, bool) {
	if c.text == "" {
		p.add(c.at, CheckGridShape, "%s: the cell is empty, want a number", what)
		return 0, false
	}
	x, err := strconv.ParseFloat(c.text, 64)
	if err == nil && strings.ContainsAny(c.text, "xX_") {
		err = strconv.ErrSyntax // decimal numbers only: no hex floats or digit separators
	}
	switch {
	case err != nil && errors.Is(err, strconv.ErrRange):
		p.add(c.at, CheckNotFinite, "%s: %s is not a finite number", what, c.text)
	case err != nil:
		hint := ""
		if decimalComma.MatchString(c.text) {
			hint = " (write the decimal mark as a point)"
		}
		p.add(c.at, CheckWrongType, "%s: %q is not a number%s", what, c.text, hint)
	case math.IsNaN(x) || math.IsInf(x, 0):
		p.add(c.at, CheckNotFinite, "%s: %s is not a finite number", what, c.text)
	default:
		return x, true
	}
	return 0, false
}

// axis reads the points of an axis from cells: numbers, finite, strictly
// increasing.
func (p *tableParser) axis(a grid.Axis, cells []csvCell) ([]float64, []cellPos, bool) {
	name := AxisColumn(a)
	xs := make([]float64, 0, len(cells))
	at := make([]cellPos, 0, len(cells))
	ok := true
	for _, c := range cells {
		x, good := p.number(c, name+" point")
		if !good {
			ok = false
			continue
		}
		if n := len(xs); n > 0 && !(x > xs[n-1]) {
			ok = false
			if k := slices.Index(xs, x); k >= 0 {
				p.add(c.at, CheckAxisOrder, "%s %s is given twice (first at %d:%d): an axis must be strictly increasing", name, formatNumber(x), at[k].line, at[k].col)
			} else {
				p.add(c.at, CheckAxisOrder, "%s %s is not above the point before it (%s): an axis must be strictly increasing", name, formatNumber(x), formatNumber(xs[n-1]))
			}
			continue
		}
		xs = append(xs, x)
		at = append(at, c.at)
	}
	return xs, at, ok
}

// wide reads a table in the wide layout.
func (p *tableParser) wide(rows [][]csvCell) *TableCSV {
	head := rows[0]
	t := &TableCSV{File: p.file, Layout: LayoutWide, header: head[0].at}
	if len(head) < 3 {
		p.add(head[0].at, CheckGridShape, "a wide table needs at least 2 temperature_c points after %q in the first row (a table of altitude alone takes the long layout: %s,%s)", WideCorner, ColumnAltitude, ColumnValue)
		return nil
	}
	if len(rows) < 3 {
		p.add(head[0].at, CheckGridShape, "a wide table needs at least 2 altitude_ft rows below the header, has %d", len(rows)-1)
		return nil
	}
	temps, tempAt, _ := p.axis(grid.Temperature, head[1:])
	altCells := make([]csvCell, len(rows)-1)
	for i, row := range rows[1:] {
		altCells[i] = row[0]
	}
	alts, altAt, _ := p.axis(grid.Altitude, altCells)
	t.Axes[grid.Altitude], t.Axes[grid.Temperature] = alts, temps
	t.axisAt[grid.Altitude], t.axisAt[grid.Temperature] = altAt, tempAt
	for _, row := range rows[1:] {
		if len(row) != len(head) {
			p.ragged(row, head)
			continue
		}
		for j, c := range row[1:] {
			v, _ := p.number(c, fmt.Sprintf("value at %s %s, %s %s", ColumnAltitude, row[0].text, ColumnTemperature, head[j+1].text))
			t.Values = append(t.Values, v)
			t.valueAt = append(t.valueAt, c.at)
		}
	}
	return t // the caller drops it when a fault was found
}

// ragged reports a row with a number of cells other than the header's.
func (p *tableParser) ragged(row, head []csvCell) {
	last := row[len(row)-1]
	if len(row) < len(head) {
		var missing []string
		for _, h := range head[len(row):] {
			missing = append(missing, h.text)
		}
		what := "no " + strings.Join(missing, ", ")
		if head[0].text == WideCorner {
			what = "no value for " + ColumnTemperature + " " + strings.Join(missing, ", ")
		}
		p.add(cellPos{last.at.line, last.at.col + len(last.text)}, CheckGridShape, "row has %d cells, the header has %d: %s", len(row), len(head), what)
		return
	}
	p.add(row[len(head)].at, CheckGridShape, "row has %d cells, the header has %d: %q is beyond the last column", len(row), len(head), row[len(head)].text)
}

// headerHint adds to the message for a header row that is neither
// layout's what is likely wrong with it.
func headerHint(head []csvCell) string {
	first := head[0].text
	switch {
	case len(head) == 1 && strings.Contains(first, ";"):
		return "; cells are separated by semicolons: save the sheet as CSV with commas between cells and a point as the decimal mark"
	case len(head) == 1 && strings.Contains(first, "\t"):
		return "; cells are separated by tabs: save the sheet as CSV with commas between cells"
	}
	if _, err := strconv.ParseFloat(first, 64); err == nil {
		return "; the first row holds numbers: add the header row"
	}
	return ""
}

// long reads a table in the long layout.
func (p *tableParser) long(rows [][]csvCell) *TableCSV {
	head := rows[0]
	t := &TableCSV{File: p.file, Layout: LayoutLong, header: head[0].at}
	var axes []grid.Axis
	for k, c := range head {
		a := axisOfColumn(c.text)
		switch {
		case k == 0 && a < 0 && c.text != ColumnValue:
			p.add(c.at, CheckGridShape, "the first row must be a header: %q then the temperature points (wide layout), or the axis columns present among %s, %s, %s, then %s (long layout); got %q%s",
				WideCorner, ColumnAltitude, ColumnTemperature, ColumnMach, ColumnValue, c.text, headerHint(head))
			return nil
		case c.text == ColumnValue && k != len(head)-1:
			p.add(c.at, CheckGridShape, "%s must be the last column", ColumnValue)
			return nil
		case c.text == ColumnValue:
		case a < 0:
			p.add(c.at, CheckGridShape, "unknown column %q: want the axis columns present among %s, %s, %s (in that order), then %s", c.text, ColumnAltitude, ColumnTemperature, ColumnMach, ColumnValue)
			return nil
		case len(axes) > 0 && a <= axes[len(axes)-1]:
			p.add(c.at, CheckGridShape, "column %q after %q: axis columns go in the order %s, %s, %s, each once, then %s", c.text, AxisColumn(axes[len(axes)-1]), ColumnAltitude, ColumnTemperature, ColumnMach, ColumnValue)
			return nil
		default:
			axes = append(axes, a)
		}
	}
	if head[len(head)-1].text != ColumnValue {
		last := head[len(head)-1]
		p.add(cellPos{last.at.line, last.at.col + len(last.text)}, CheckGridShape, "the header has no %s column: it must follow the axis columns", ColumnValue)
		return nil
	}
	if len(rows) == 1 {
		p.add(head[0].at, CheckGridShape, "has a header but no rows")
		return nil
	}

	// Read the points, then gather each axis's distinct coordinates.
	type point struct {
		x     [grid.NumAxes]float64
		v     float64
		first cellPos // the row's first cell
		vAt   cellPos
	}
	points := make([]point, 0, len(rows)-1)
	seen := map[[grid.NumAxes]float64]int{} // coordinates → index in points
	firstAt := [grid.NumAxes]map[float64]cellPos{}
	for _, a := range axes {
		firstAt[a] = map[float64]cellPos{}
	}
	for _, row := range rows[1:] {
		if len(row) != len(head) {
			p.ragged(row, head)
			continue
		}
		pt := point{first: row[0].at, vAt: row[len(row)-1].at}
		ok := true
		for k, a := range axes {
			x, good := p.number(row[k], AxisColumn(a))
			if !good {
				ok = false
				continue
			}
			pt.x[a] = x
			if _, seen := firstAt[a][x]; !seen {
				firstAt[a][x] = row[k].at
			}
		}
		v, good := p.number(row[len(row)-1], "value")
		if !good || !ok {
			continue
		}
		pt.v = v
		if j, dup := seen[pt.x]; dup {
			if len(axes) == 0 {
				p.add(pt.first, CheckGridShape, "a second value (the first is on line %d): a table without axis columns holds one", points[j].first.line)
			} else {
				p.add(pt.first, CheckGridShape, "the point %s is given twice (first on line %d)", pointName(axes, pt.x), points[j].first.line)
			}
			continue
		}
		seen[pt.x] = len(points)
		points = append(points, pt)
	}
	if len(p.errs) > 0 {
		return nil
	}
	for k, a := range axes {
		xs := make([]float64, 0, len(firstAt[a]))
		for x := range firstAt[a] {
			xs = append(xs, x)
		}
		slices.Sort(xs)
		if len(xs) < 2 {
			p.add(head[k].at, CheckGridShape, "%s has one point (%s): an axis needs at least 2 (leave the column out for a table without this axis)", AxisColumn(a), formatNumber(xs[0]))
			continue
		}
		t.Axes[a] = xs
		t.axisAt[a] = make([]cellPos, len(xs))
		for i, x := range xs {
			t.axisAt[a][i] = firstAt[a][x]
		}
	}
	if len(p.errs) > 0 {
		return nil
	}

	// Place each point in the grid (each once: duplicates are out above).
	type index [grid.NumAxes]int
	at := make(map[index]int, len(points)) // node → points index
	for i, pt := range points {
		var idx index
		for _, a := range axes {
			idx[a], _ = slices.BinarySearch(t.Axes[a], pt.x[a])
		}
		at[idx] = i
	}
	nodes := 1 // capped: a grid larger than the points is incomplete anyway
	for _, a := range axes {
		if nodes > len(points) {
			break
		}
		nodes *= len(t.Axes[a])
	}
	if nodes != len(points) {
		// Walk the grid in order to the first missing node: at most one
		// step past each point given.
		var idx index
		for range len(points) {
			if _, ok := at[idx]; !ok {
				break
			}
			for k := len(axes) - 1; k >= 0; k-- {
				a := axes[k]
				if idx[a]++; idx[a] < len(t.Axes[a]) {
					break
				}
				idx[a] = 0
			}
		}
		var x [grid.NumAxes]float64
		for _, a := range axes {
			x[a] = t.Axes[a][idx[a]]
		}
		var sizes []string
		for _, a := range axes {
			sizes = append(sizes, fmt.Sprintf("%d %s", len(t.Axes[a]), AxisColumn(a)))
		}
		more := ""
		if missing := gridSize(t.Axes) - len(points); missing > 1 {
			more = fmt.Sprintf(" (and %d more)", missing-1)
		} else if missing < 0 {
			more = " (and more)"
		}
		p.add(cellPos{}, CheckGridShape, "no row for %s%s: the rows must fill the grid of %s points (%s)", pointName(axes, x), more,
			strings.Join(sizes, " × "), "every combination once")
		return nil
	}
	t.Values = make([]float64, len(points))
	t.valueAt = make([]cellPos, len(points))
	for idx, i := range at {
		off := 0
		for _, a := range axes {
			off = off*len(t.Axes[a]) + idx[a]
		}
		t.Values[off] = points[i].v
		t.valueAt[off] = points[i].vAt
	}
	return t
}

// gridSize is the number of nodes of the axes, or -1 when it overflows an
// int.
func gridSize(axes [grid.NumAxes][]float64) int {
	n := 1
	for _, xs := range axes {
		if xs == nil {
			continue
		}
		if len(xs) > 0 && n > math.MaxInt/len(xs) {
			return -1
		}
		n *= len(xs)
	}
	return n
}

// pointName spells coordinates as "altitude_ft 2000, temperature_c 15".
func pointName(axes []grid.Axis, x [grid.NumAxes]float64) string {
	parts := make([]string, len(axes))
	for k, a := range axes {
		parts[k] = AxisColumn(a) + " " + formatNumber(x[a])
	}
	return strings.Join(parts, ", ")
}

// formatNumber prints a number the shortest way that reads back the same.
func formatNumber(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
