package thrustmap_test

import (
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
	"github.com/thrustmap/thrustmap/thrustmap/verify"
)

// TestSpreadsheetExample: the worked example in testdata/spreadsheet loads
// with its tables from CSV files, verifies without errors, and gives the
// numbers its files hold.
func TestSpreadsheetExample(t *testing.T) {
	const path = "../testdata/spreadsheet/regional.toml"
	p, err := thrustmap.LoadProfile(path)
	if err != nil {
		t.Fatal(err)
	}
	takeoff, _ := p.Rating("takeoff")
	climb, _ := p.Rating("climb")
	if takeoff == nil || climb == nil || takeoff.Thrust() == nil || !climb.Table().Has(grid.Mach) {
		t.Fatal("want takeoff with a thrust grid and climb with a Mach axis")
	}
	if n := takeoff.Table().Points(grid.Temperature); n != 10 {
		t.Errorf("takeoff has %d temperature columns, takeoff-n1.csv has 10", n)
	}
	// takeoff-n1.csv, row 0 ft, column ISA+15 (OAT 30 °C at sea level in
	// the ISA): 93; wing-anti-ice.csv at 0 ft: -1.2.
	wing, _ := p.BleedSet("wing-anti-ice")
	for _, tc := range []struct {
		c    thrustmap.Conditions
		want float64
	}{
		{thrustmap.Conditions{AltitudeFt: 0, OATC: 30}, 93},
		{thrustmap.Conditions{AltitudeFt: 0, OATC: 30, Bleeds: wing}, 93 - 1.2},
	} {
		res, err := p.Target("takeoff", tc.c)
		if err != nil || res.Value != tc.want {
			t.Errorf("takeoff at %+v: %v, %v; want %g", tc.c, res.Value, err, tc.want)
		}
	}
	r := verify.File(path, "")
	if !r.OK() {
		t.Errorf("verify: %+v", r.Errors)
	}
}
