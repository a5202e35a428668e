package export

import (
	"bytes"
	"fmt"
	"strconv"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// The grids of a rating that RatingTable writes.
const (
	GridValues = "values" // the rating's table, in its parameter
	GridThrust = "thrust" // its rated-thrust grid, kN
)

// Table is one of a rating's own grids — its values or its rated thrust —
// on the rating's own axis points: not resampled, without bleed corrections
// or the redline. Its CSV is what a profile's table_file or thrust_file
// reads back as it is.
type Table struct {
	Rating      string
	Grid        string // GridValues or GridThrust
	Parameter   string // N1, EPR or TORQUE
	Unit        string // of the numbers: percent, ratio, or kN for the thrust grid
	Temperature string // what the temperature axis means: OAT, TAT or ISA_DEV
	Layout      thrustmap.TableLayout
	g           *grid.Grid
}

// RatingTable returns grid which (GridValues or GridThrust) of rating in p.
func RatingTable(p *thrustmap.Profile, rating, which string) (*Table, error) {
	r, ok := p.Rating(rating)
	if !ok {
		return nil, fmt.Errorf("unknown rating %q", rating)
	}
	t := &Table{Rating: rating, Grid: which, Parameter: p.Parameter().String(), Unit: p.Parameter().Unit(), Temperature: r.Basis().String()}
	switch which {
	case GridValues:
		t.g = r.Table()
	case GridThrust:
		if t.g = r.Thrust(); t.g == nil {
			return nil, fmt.Errorf("rating %q has no thrust grid (thrust_kn or thrust_file); its values are --grid %s", rating, GridValues)
		}
		t.Unit = "kN"
	default:
		return nil, fmt.Errorf("grid %q: want %s or %s", which, GridValues, GridThrust)
	}
	t.Layout = thrustmap.LayoutFor(t.g)
	return t, nil
}

// Axes returns the table's present axes with their points.
func (t *Table) Axes() []Axis {
	var out []Axis
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		if t.g.Has(a) {
			out = append(out, Axis{thrustmap.AxisColumn(a), t.g.Axis(a)})
		}
	}
	return out
}

// temperatureMeaning says what a temperature axis of basis b holds.
var temperatureMeaning = map[string]string{
	"OAT":     "outside air temperature, °C",
	"TAT":     "total air temperature, °C",
	"ISA_DEV": "deviation from the ISA temperature at the row's pressure altitude, °C",
}

// CSV writes the table with "#" lines saying what it is, in the wide layout
// when its axes are exactly altitude and temperature, else the long layout.
// Numbers are written in the fewest digits that read back the same, so a
// profile that reads the file has the same grid bit for bit.
func (t *Table) CSV() []byte {
	var b bytes.Buffer
	what := fmt.Sprintf("%s (%s)", t.Parameter, t.Unit)
	if t.Grid == GridThrust {
		what = "rated thrust per engine (kN)"
	}
	fmt.Fprintf(&b, "# rating %s: %s, the rating's own grid as in the profile: not resampled, no bleed corrections, no redline\n", t.Rating, what)
	if t.g.Has(grid.Temperature) {
		fmt.Fprintf(&b, "# temperature axis %s: %s\n", t.Temperature, temperatureMeaning[t.Temperature])
	}
	if t.Layout == thrustmap.LayoutWide {
		fmt.Fprintf(&b, "# wide layout: %s down the first column, %s along the first row\n", thrustmap.ColumnAltitude, thrustmap.ColumnTemperature)
	} else {
		b.WriteString("# long layout: one row per grid point\n")
	}
	b.WriteString("# exported by thrustmap; simulation only, not certified, not for real aircraft\n")
	values := t.g.Values()
	if t.Layout == thrustmap.LayoutWide {
		b.WriteString(thrustmap.WideCorner)
		for _, x := range t.g.Axis(grid.Temperature) {
			b.WriteByte(',')
			b.WriteString(number(x))
		}
		b.WriteByte('\n')
		cols := t.g.Points(grid.Temperature)
		for i, alt := range t.g.Axis(grid.Altitude) {
			b.WriteString(number(alt))
			for _, v := range values[i*cols : (i+1)*cols] {
				b.WriteByte(',')
				b.WriteString(number(v))
			}
			b.WriteByte('\n')
		}
		return b.Bytes()
	}
	var axes [grid.NumAxes][]float64
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		if t.g.Has(a) {
			axes[a] = t.g.Axis(a)
			b.WriteString(thrustmap.AxisColumn(a) + ",")
		}
	}
	b.WriteString(thrustmap.ColumnValue + "\n")
	i := 0
	eachPoint(axes, func(q [grid.NumAxes]float64) {
		for a := grid.Altitude; a < grid.NumAxes; a++ {
			if axes[a] != nil {
				b.WriteString(number(q[a]) + ",")
			}
		}
		b.WriteString(number(values[i]) + "\n")
		i++
	})
	return b.Bytes()
}

// number writes x in the fewest digits that read back the same.
func number(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
