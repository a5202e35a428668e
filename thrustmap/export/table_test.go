package export

import (
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// tableTestProfile has a rating of each shape the table export writes
// (invented numbers).
const tableTestProfile = `schema = 1
parameter = "EPR"

[[rating]]
name = "takeoff"
temperature = "ISA_DEV"
altitude_ft = [0, 5000]
temperature_c = [-10, 15.5, 40]
values = [[1.5, 1.52, 1.45], [1.55, 1.575, 1.5]]
thrust_kn = [[110, 110, 95], [104, 104, 88.25]]

[[rating]]
name = "climb"
temperature = "TAT"
temperature_c = [-20, 30]
mach = [0, 0.8]
values = [[1.3, 1.35], [1.33, 1.4]]

[[rating]]
name = "cruise"
mach = [0.5, 0.7, 0.85]
values = [1.2, 1.25, 1.3]

[[rating]]
name = "idle"
values = 1.02
`

// TestRatingTableCSV: each shape is written in its layout with its own
// points and numbers; the expected files are written out by hand from the
// profile above.
func TestRatingTableCSV(t *testing.T) {
	p, err := thrustmap.ParseProfile("t.toml", []byte(tableTestProfile))
	if err != nil {
		t.Fatal(err)
	}
	const note = "# exported by thrustmap; simulation only, not certified, not for real aircraft\n"
	tests := []struct {
		rating, which string
		layout        thrustmap.TableLayout
		want          string
	}{
		{"takeoff", GridValues, thrustmap.LayoutWide,
			"# rating takeoff: EPR (ratio), the rating's own grid as in the profile: not resampled, no bleed corrections, no redline\n" +
				"# temperature axis ISA_DEV: deviation from the ISA temperature at the row's pressure altitude, °C\n" +
				"# wide layout: altitude_ft down the first column, temperature_c along the first row\n" + note +
				"altitude_ft/temperature_c,-10,15.5,40\n0,1.5,1.52,1.45\n5000,1.55,1.575,1.5\n"},
		{"takeoff", GridThrust, thrustmap.LayoutWide,
			"# rating takeoff: rated thrust per engine (kN), the rating's own grid as in the profile: not resampled, no bleed corrections, no redline\n" +
				"# temperature axis ISA_DEV: deviation from the ISA temperature at the row's pressure altitude, °C\n" +
				"# wide layout: altitude_ft down the first column, temperature_c along the first row\n" + note +
				"altitude_ft/temperature_c,-10,15.5,40\n0,110,110,95\n5000,104,104,88.25\n"},
		{"climb", GridValues, thrustmap.LayoutLong,
			"# rating climb: EPR (ratio), the rating's own grid as in the profile: not resampled, no bleed corrections, no redline\n" +
				"# temperature axis TAT: total air temperature, °C\n# long layout: one row per grid point\n" + note +
				"temperature_c,mach,value\n-20,0,1.3\n-20,0.8,1.35\n30,0,1.33\n30,0.8,1.4\n"},
		{"cruise", GridValues, thrustmap.LayoutLong,
			"# rating cruise: EPR (ratio), the rating's own grid as in the profile: not resampled, no bleed corrections, no redline\n" +
				"# long layout: one row per grid point\n" + note +
				"mach,value\n0.5,1.2\n0.7,1.25\n0.85,1.3\n"},
		{"idle", GridValues, thrustmap.LayoutLong,
			"# rating idle: EPR (ratio), the rating's own grid as in the profile: not resampled, no bleed corrections, no redline\n" +
				"# long layout: one row per grid point\n" + note +
				"value\n1.02\n"},
	}
	for _, tc := range tests {
		t.Run(tc.rating+"/"+tc.which, func(t *testing.T) {
			tab, err := RatingTable(p, tc.rating, tc.which)
			if err != nil {
				t.Fatal(err)
			}
			if tab.Layout != tc.layout {
				t.Errorf("layout %v, want %v", tab.Layout, tc.layout)
			}
			if got := string(tab.CSV()); got != tc.want {
				t.Errorf("got\n%s\nwant\n%s", got, tc.want)
			}
			back, err := thrustmap.ParseTableCSV("back.csv", tab.CSV())
			if err != nil {
				t.Fatalf("does not read back: %v", err)
			}
			if back.Layout != tc.layout {
				t.Errorf("reads back as %v", back.Layout)
			}
		})
	}
	for _, tc := range []struct{ rating, which, text string }{
		{"idle", GridThrust, `rating "idle" has no thrust grid (thrust_kn or thrust_file); its values are --grid values`},
		{"nope", GridValues, `unknown rating "nope"`},
		{"takeoff", "torque", `grid "torque": want values or thrust`},
	} {
		if _, err := RatingTable(p, tc.rating, tc.which); err == nil || err.Error() != tc.text {
			t.Errorf("%s %s: %v, want %s", tc.rating, tc.which, err, tc.text)
		}
	}
}
