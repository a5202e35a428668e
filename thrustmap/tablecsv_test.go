package thrustmap

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// TestParseTableCSV: both layouts, with the things spreadsheets write (a
// byte order mark, CRLF, spaces, quotes, empty cells at the end of rows)
// and comments anywhere. Every expected axis and value is read off the
// input text by hand.
func TestParseTableCSV(t *testing.T) {
	tests := []struct {
		name   string
		in     string
		layout TableLayout
		alt    []float64
		temp   []float64
		mach   []float64
		values []float64 // altitude outermost
	}{
		{"wide", "altitude_ft/temperature_c,0,20,40\n0,90,92,91\n5000,91,93,92\n",
			LayoutWide, []float64{0, 5000}, []float64{0, 20, 40}, nil, []float64{90, 92, 91, 91, 93, 92}},
		{"wide from a spreadsheet", "\uFEFF# takeoff N1\r\n altitude_ft/temperature_c , -10 ,\"25.5\",,\r\n\r\n-1000, 88.25,89,,\r\n# a comment between rows\r\n  # an indented one\r\n,,,\r\n2000,89.5 ,90.125\r\n",
			LayoutWide, []float64{-1000, 2000}, []float64{-10, 25.5}, nil, []float64{88.25, 89, 89.5, 90.125}},
		{"long as export grid writes it", "# rating takeoff (N1, percent), temperature axis OAT, bleeds none\n# axis altitude_ft: 2 points from 0 to 5000\naltitude_ft,temperature_c,value\n0,0,90\n0,20,92\n5000,0,91\n5000,20,93\n",
			LayoutLong, []float64{0, 5000}, []float64{0, 20}, nil, []float64{90, 92, 91, 93}},
		{"long in any order", "altitude_ft,temperature_c,value\n5000,20,93\n0,20,92\n5000,0,91\n0,0,90\n",
			LayoutLong, []float64{0, 5000}, []float64{0, 20}, nil, []float64{90, 92, 91, 93}},
		{"long three axes", "altitude_ft,temperature_c,mach,value\n" +
			"0,0,0,1\n0,0,0.5,2\n0,30,0,3\n0,30,0.5,4\n10000,0,0,5\n10000,0,0.5,6\n10000,30,0,7\n10000,30,0.5,8\n",
			LayoutLong, []float64{0, 10000}, []float64{0, 30}, []float64{0, 0.5}, []float64{1, 2, 3, 4, 5, 6, 7, 8}},
		{"long Mach alone", "mach,value\n0.8,-1.5\n0,-0.5\n0.4,-1\n",
			LayoutLong, nil, nil, []float64{0, 0.4, 0.8}, []float64{-0.5, -1, -1.5}},
		{"long temperature and Mach", "temperature_c,mach,value\n-20,0,1\n-20,0.3,2\n40,0,3\n40,0.3,4\n",
			LayoutLong, nil, []float64{-20, 40}, []float64{0, 0.3}, []float64{1, 2, 3, 4}},
		{"long no axes", "value\n# the idle rating\n21.5\n",
			LayoutLong, nil, nil, nil, []float64{21.5}},
		{"exponents", "altitude_ft,value\n1e3,1.5E1\n-2e3,+7\n",
			LayoutLong, []float64{-2000, 1000}, nil, nil, []float64{7, 15}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tab, err := ParseTableCSV("t.csv", []byte(tc.in))
			if err != nil {
				t.Fatal(err)
			}
			if tab.Layout != tc.layout || tab.File != "t.csv" {
				t.Errorf("layout %v file %q, want %v", tab.Layout, tab.File, tc.layout)
			}
			for a, want := range [][]float64{tc.alt, tc.temp, tc.mach} {
				if got := tab.Axes[a]; !slices.Equal(got, want) || (got == nil) != (want == nil) {
					t.Errorf("%s axis %v, want %v", grid.Axis(a), got, want)
				}
			}
			if !slices.Equal(tab.Values, tc.values) {
				t.Errorf("values %v, want %v", tab.Values, tc.values)
			}
			if _, err := tab.Grid(grid.Linear); err != nil {
				t.Errorf("grid: %v", err)
			}
		})
	}
}

// TestParseTableCSVErrors: each fault is reported with the file, the line
// and the byte column of the cell (counted by hand in the input), a stable
// code and a message saying what is wrong.
func TestParseTableCSVErrors(t *testing.T) {
	tests := []struct {
		name      string
		in        string
		line, col int
		code      string
		text      string
	}{
		{"empty", "", 0, 0, CheckGridShape, "holds no table"},
		{"only comments", "# nothing\n\n# here\n", 0, 0, CheckGridShape, "holds no table"},
		{"unknown header", "alt,oat,n1\n0,0,90\n", 1, 1, CheckGridShape, `got "alt"`},
		{"no header", "0,0,90\n0,10,91\n", 1, 1, CheckGridShape, "the first row holds numbers: add the header row"},
		{"semicolons", "altitude_ft;temperature_c;value\n0;0;90\n", 1, 1, CheckGridShape, "separated by semicolons"},
		{"unknown column", "altitude_ft,oat,value\n", 1, 13, CheckGridShape, `unknown column "oat"`},
		{"columns out of order", "temperature_c,altitude_ft,value\n", 1, 15, CheckGridShape, `column "altitude_ft" after "temperature_c"`},
		{"column twice", "mach,mach,value\n", 1, 6, CheckGridShape, "each once"},
		{"value not last", "value,mach\n", 1, 1, CheckGridShape, "value must be the last column"},
		{"no value column", "altitude_ft,mach\n0,0\n", 1, 17, CheckGridShape, "no value column"},
		{"header only", "altitude_ft,value\n", 1, 1, CheckGridShape, "has a header but no rows"},
		{"not a number", "altitude_ft/temperature_c,0,20\n0,90,92\n5000,91,9x\n", 3, 9, CheckWrongType, `value at altitude_ft 5000, temperature_c 20: "9x" is not a number`},
		{"decimal comma", "altitude_ft/temperature_c,0,20\n0,90,\"92,5\"\n5000,91,93\n", 2, 6, CheckWrongType, "write the decimal mark as a point"},
		{"hex", "altitude_ft,value\n0,0x5A\n1000,3\n", 2, 3, CheckWrongType, `value: "0x5A" is not a number`},
		{"digit separator", "altitude_ft,value\n0,1\n1_000,3\n", 3, 1, CheckWrongType, `altitude_ft: "1_000" is not a number`},
		{"NaN", "altitude_ft,value\n0,NaN\n1000,3\n", 2, 3, CheckNotFinite, "value: NaN is not a finite number"},
		{"overflow", "altitude_ft,value\n0,1\n1e999,3\n", 3, 1, CheckNotFinite, "altitude_ft: 1e999 is not a finite number"},
		{"infinite axis point", "altitude_ft/temperature_c,0,inf\n0,90,92\n5000,91,93\n", 1, 29, CheckNotFinite, "temperature_c point: inf is not a finite number"},
		{"empty cell", "altitude_ft/temperature_c,0,20,40\n0,90,,91\n5000,91,93,92\n", 2, 6, CheckGridShape, "value at altitude_ft 0, temperature_c 20: the cell is empty"},
		{"short row", "altitude_ft/temperature_c,0,20,40\n0,90,92,91\n5000,91,93\n", 3, 11, CheckGridShape, "row has 3 cells, the header has 4: no value for temperature_c 40"},
		{"long row", "altitude_ft,value\n0,1\n1000,2,3\n", 3, 8, CheckGridShape, `row has 3 cells, the header has 2: "3" is beyond the last column`},
		{"temperatures not increasing", "altitude_ft/temperature_c,0,20,10\n0,1,2,3\n5000,1,2,3\n", 1, 32, CheckAxisOrder, "temperature_c 10 is not above the point before it (20)"},
		{"temperature twice", "altitude_ft/temperature_c,0,20,20\n0,1,2,3\n5000,1,2,3\n", 1, 32, CheckAxisOrder, "temperature_c 20 is given twice (first at 1:29)"},
		{"altitude rows not increasing", "altitude_ft/temperature_c,0,20\n5000,1,2\n0,1,2\n", 3, 1, CheckAxisOrder, "altitude_ft 0 is not above the point before it (5000)"},
		{"one temperature column", "altitude_ft/temperature_c,0\n0,1\n5000,2\n", 1, 1, CheckGridShape, "at least 2 temperature_c points"},
		{"one altitude row", "altitude_ft/temperature_c,0,20\n0,1,2\n", 1, 1, CheckGridShape, "at least 2 altitude_ft rows"},
		{"long point twice", "altitude_ft,temperature_c,value\n0,0,90\n0,20,92\n5000,0,91\n0,20.0,93\n5000,20,94\n", 5, 1, CheckGridShape, "the point altitude_ft 0, temperature_c 20 is given twice (first on line 3)"},
		{"long point missing", "altitude_ft,temperature_c,value\n0,0,90\n0,20,92\n5000,0,91\n", 0, 0, CheckGridShape, "no row for altitude_ft 5000, temperature_c 20: the rows must fill the grid of 2 altitude_ft × 2 temperature_c points"},
		{"long points missing", "altitude_ft,mach,value\n0,0,1\n1000,0.5,2\n2000,0.8,3\n", 0, 0, CheckGridShape, "no row for altitude_ft 0, mach 0.5 (and 5 more)"},
		{"long one-point axis", "altitude_ft,temperature_c,value\n0,15,90\n5000,15,91\n", 1, 13, CheckGridShape, "temperature_c has one point (15): an axis needs at least 2"},
		{"no axes, two values", "value\n20\n21\n", 3, 1, CheckGridShape, "a second value (the first is on line 2): a table without axis columns holds one"},
		{"bare quote", "altitude_ft,value\n0,9\"0\n1000,91\n", 2, 4, CheckCSVSyntax, `bare " in non-quoted-field`},
		{"UTF-16", "\xff\xfea\x00", 1, 1, CheckCSVSyntax, "UTF-16"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tab, err := ParseTableCSV("dir/t.csv", []byte(tc.in))
			var list FileErrors
			if !errors.As(err, &list) || len(list) == 0 || tab != nil {
				t.Fatalf("got %v, %v; want FileErrors", tab, err)
			}
			e := list[0]
			if e.File != "dir/t.csv" || e.Line != tc.line || e.Column != tc.col || e.Code != tc.code || !strings.Contains(e.Err.Error(), tc.text) {
				t.Errorf("got %s [%s]\nwant line %d, column %d, code %s, text %q", e, e.Code, tc.line, tc.col, tc.code, tc.text)
			}
		})
	}
}

// TestParseTableCSVAllFaults: a table with several faults reports each of
// them, in file order, as FILE:LINE:COL.
func TestParseTableCSVAllFaults(t *testing.T) {
	in := "altitude_ft/temperature_c,0,20\n0,x,92\n5000,91,nan\n"
	_, err := ParseTableCSV("t.csv", []byte(in))
	want := `t.csv:2:3: value at altitude_ft 0, temperature_c 0: "x" is not a number` + "\n" +
		`t.csv:3:9: value at altitude_ft 5000, temperature_c 20: nan is not a finite number`
	if err == nil || err.Error() != want {
		t.Errorf("got\n%v\nwant\n%s", err, want)
	}
}

// TestLayoutFor: wide exactly for altitude × temperature.
func TestLayoutFor(t *testing.T) {
	two := []float64{0, 1}
	for _, tc := range []struct {
		axes [grid.NumAxes][]float64
		want TableLayout
	}{
		{[grid.NumAxes][]float64{two, two, nil}, LayoutWide},
		{[grid.NumAxes][]float64{two, two, two}, LayoutLong},
		{[grid.NumAxes][]float64{two, nil, nil}, LayoutLong},
		{[grid.NumAxes][]float64{nil, two, two}, LayoutLong},
		{[grid.NumAxes][]float64{}, LayoutLong},
	} {
		n := 1
		for _, xs := range tc.axes {
			if xs != nil {
				n *= len(xs)
			}
		}
		g, err := grid.New(tc.axes, make([]float64, n), grid.Linear)
		if err != nil {
			t.Fatal(err)
		}
		if got := LayoutFor(g); got != tc.want {
			t.Errorf("%v: %v, want %v", tc.axes, got, tc.want)
		}
	}
}

// FuzzParseTableCSV: no input may panic the parser, every fault is a
// FileError in the file, and whatever it accepts is a full grid: each axis
// at least two finite, strictly increasing points, one finite value per
// node, and grid.New takes it.
func FuzzParseTableCSV(f *testing.F) {
	f.Add([]byte("altitude_ft/temperature_c,0,20,40\n0,90,92,91\n5000,91,93,92\n"))
	f.Add([]byte("altitude_ft,temperature_c,mach,value\n0,0,0,1\n0,0,0.5,2\n0,30,0,3\n0,30,0.5,4\n10000,0,0,5\n10000,0,0.5,6\n10000,30,0,7\n10000,30,0.5,8\n"))
	f.Add([]byte("value\n20\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		tab, err := ParseTableCSV("fuzz.csv", data)
		if err != nil {
			var list FileErrors
			if !errors.As(err, &list) || len(list) == 0 || tab != nil {
				t.Fatalf("error of type %T: %v", err, err)
			}
			for _, e := range list {
				if e.File != "fuzz.csv" || e.Line < 0 || e.Column < 0 || e.Code == "" {
					t.Fatalf("fault without its place or code: %#v", e)
				}
			}
			return
		}
		n := 1
		for a, xs := range tab.Axes {
			if xs == nil {
				continue
			}
			if len(xs) < 2 {
				t.Fatalf("%s axis %v: fewer than 2 points", grid.Axis(a), xs)
			}
			for i, x := range xs {
				if math.IsNaN(x) || math.IsInf(x, 0) || (i > 0 && !(x > xs[i-1])) {
					t.Fatalf("%s axis %v: not finite and strictly increasing", grid.Axis(a), xs)
				}
			}
			n *= len(xs)
		}
		if len(tab.Values) != n || len(tab.valueAt) != n {
			t.Fatalf("%d values (%d places) for %d nodes", len(tab.Values), len(tab.valueAt), n)
		}
		for i, v := range tab.Values {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("value %d is %g", i, v)
			}
			if at := tab.valueAt[i]; at.line < 1 || at.col < 1 {
				t.Fatalf("value %d has no place: %v", i, at)
			}
			_ = tab.point(i)
		}
		if _, err := tab.Grid(grid.Monotone); err != nil {
			t.Fatal(err)
		}
	})
}
