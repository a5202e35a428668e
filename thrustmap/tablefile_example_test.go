package thrustmap_test

import (
	"fmt"
	"io/fs"
	"log"
	"testing/fstest"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// A profile whose takeoff table comes from a CSV file beside it (the wide
// layout: altitude down the first column, temperature along the first row),
// read from a file system; a fault in the CSV is reported at its file, line
// and column.
func ExampleParseProfileFS() {
	fsys := fstest.MapFS{
		"engines/small.toml": {Data: []byte(`schema = 1
parameter = "N1"

[[rating]]
name = "takeoff"
table_file = "takeoff.csv"
`)},
		"engines/takeoff.csv": {Data: []byte(`# invented numbers
altitude_ft/temperature_c, 0, 30
0,                         90, 94
5000,                      92, 96
`)},
	}
	data, err := fs.ReadFile(fsys, "engines/small.toml")
	if err != nil {
		log.Fatal(err)
	}
	p, err := thrustmap.ParseProfileFS(fsys, "engines/small.toml", data)
	if err != nil {
		log.Fatal(err)
	}
	// The centre of the cell: (90 + 94 + 92 + 96)/4.
	res, err := p.Target("takeoff", thrustmap.Conditions{AltitudeFt: 2500, OATC: 15})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%.1f %s\n", res.Value, res.Unit())

	fsys["engines/takeoff.csv"].Data = []byte("altitude_ft/temperature_c,0,30\n0,90,94\n5000,92,9.6.\n")
	_, err = thrustmap.ParseProfileFS(fsys, "engines/small.toml", data)
	fmt.Println(err)
	// Output:
	// 93.0 percent
	// engines/takeoff.csv:3:9: value at altitude_ft 5000, temperature_c 30: "9.6." is not a number
}
