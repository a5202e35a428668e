package thrustmap

import (
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"testing/fstest"
)

// tableProfile is a profile whose takeoff table, thrust grid and anti-ice
// correction come from CSV files (tableFiles) beside it.
const tableProfile = `schema = 1
name = "test"
parameter = "N1"
bleeds = ["anti-ice"]

[[rating]]
name = "takeoff"
table_file = "takeoff.csv"
thrust_file = "thrust.csv"
corner_isa_dev_c = 15

[[rating]]
name = "idle"
values = 20

[[correction]]
rating = "takeoff"
bleed = "anti-ice"
delta_file = "anti-ice.csv"

[assumed_temperature]
rating = "takeoff"
max_c = 60
`

// tableInline is tableProfile with its tables written inline.
const tableInline = `schema = 1
name = "test"
parameter = "N1"
bleeds = ["anti-ice"]

[[rating]]
name = "takeoff"
altitude_ft = [0, 5000]
temperature_c = [0, 20, 40]
values = [[90, 92, 91], [91, 93, 92]]
thrust_kn = [[100, 100, 90], [95, 95, 85]]
corner_isa_dev_c = 15

[[rating]]
name = "idle"
values = 20

[[correction]]
rating = "takeoff"
bleed = "anti-ice"
altitude_ft = [0, 10000]
delta_values = [-1, -2]

[assumed_temperature]
rating = "takeoff"
max_c = 60
`

func tableFiles() map[string]string {
	return map[string]string{
		"takeoff.csv":  "# takeoff N1\naltitude_ft/temperature_c,0,20,40\n0,90,92,91\n5000,91,93,92\n",
		"thrust.csv":   "altitude_ft/temperature_c,0,20,40\n0,100,100,90\n5000,95,95,85\n",
		"anti-ice.csv": "altitude_ft,value\n0,-1\n10000,-2\n",
	}
}

// tableFS puts the profile and the files in eng/ of a file system.
func tableFS(profile string, files map[string]string) fstest.MapFS {
	fsys := fstest.MapFS{"eng/p.toml": {Data: []byte(profile)}}
	for name, text := range files {
		fsys["eng/"+name] = &fstest.MapFile{Data: []byte(text)}
	}
	return fsys
}

func parseFS(fsys fstest.MapFS) (*Profile, error) {
	return ParseProfileFS(fsys, "eng/p.toml", fsys["eng/p.toml"].Data)
}

// TestTableFiles: tables from CSV files give the targets of the same tables
// written inline, bit for bit, and one target worked by hand.
func TestTableFiles(t *testing.T) {
	p, err := parseFS(tableFS(tableProfile, tableFiles()))
	if err != nil {
		t.Fatal(err)
	}
	// By hand, bilinear at the centre of the cell (0..5000 ft, 0..20 °C):
	// (90 + 92 + 91 + 93)/4 = 91.5; anti-ice at 2500 ft, linear between
	// -1 at 0 ft and -2 at 10000 ft: -1.25; 91.5 - 1.25 = 90.25.
	anti, _ := p.BleedSet("anti-ice")
	res, err := p.Target("takeoff", Conditions{AltitudeFt: 2500, OATC: 10, Bleeds: anti})
	if err != nil || res.Value != 90.25 {
		t.Fatalf("target %v, %v; want 90.25 (by hand)", res.Value, err)
	}
	// The hot path is the same grid look-up, so it allocates nothing.
	if n := testing.AllocsPerRun(100, func() { _, _ = p.Target("takeoff", Conditions{AltitudeFt: 2500, OATC: 10, Bleeds: anti}) }); n != 0 {
		t.Errorf("Target allocates %g times", n)
	}
	inline, err := ParseProfile("inline.toml", []byte(tableInline))
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(10, 1))
	for range 2000 {
		c := Conditions{AltitudeFt: -2000 + rng.Float64()*12000, OATC: -30 + rng.Float64()*90, Bleeds: Bleeds(rng.IntN(2)),
			OnGround: rng.IntN(2) == 0, AssumedSet: rng.IntN(2) == 0, AssumedC: rng.Float64() * 80}
		for _, name := range []string{"takeoff", "idle"} {
			a, errA := p.Target(name, c)
			b, errB := inline.Target(name, c)
			if (errA == nil) != (errB == nil) || math.Float64bits(a.Value) != math.Float64bits(b.Value) || a.Clamped != b.Clamped || a.Flags != b.Flags || a.Reduction != b.Reduction {
				t.Fatalf("%s at %+v: from files %+v (%v), inline %+v (%v)", name, c, a, errA, b, errB)
			}
		}
	}
}

// TestTableFileErrors: each fault in or about a table file is reported with
// its place: the CSV file's line and column for what is in it, the
// profile's line and key for what refers to it.
func TestTableFileErrors(t *testing.T) {
	tests := []struct {
		name      string
		old, new  string // replace old with new in tableProfile
		file      string // the CSV file to replace, or ""
		csv       string
		wantFile  string
		line, col int
		key, code string
		text      string
	}{
		{name: "inline axis beside table_file", old: `table_file = "takeoff.csv"`, new: "table_file = \"takeoff.csv\"\ntemperature_c = [0, 20, 40]",
			wantFile: "eng/p.toml", line: 9, key: "rating[0].temperature_c", code: CheckInvalid, text: "give temperature_c or table_file, not both"},
		{name: "inline values beside table_file", old: `corner_isa_dev_c = 15`, new: "corner_isa_dev_c = 15\nvalues = [[1]]",
			wantFile: "eng/p.toml", line: 11, key: "rating[0].values", code: CheckInvalid, text: "give values or table_file, not both"},
		{name: "no such file", old: `"takeoff.csv"`, new: `"nope.csv"`,
			wantFile: "eng/p.toml", line: 8, key: "rating[0].table_file", code: CheckTableFile, text: `cannot read "nope.csv": open eng/nope.csv: file does not exist`},
		{name: "outside the tree", old: `"takeoff.csv"`, new: `"../../takeoff.csv"`,
			wantFile: "eng/p.toml", line: 8, key: "rating[0].table_file", code: CheckTableFile, text: "outside the directory tree"},
		{name: "empty name", old: `"takeoff.csv"`, new: `""`,
			wantFile: "eng/p.toml", line: 8, key: "rating[0].table_file", code: CheckInvalid, text: "is empty, want the name of a CSV file"},
		{name: "not a number", file: "takeoff.csv", csv: "altitude_ft/temperature_c,0,20,40\n0,90,92,91\n5000,91,9x,92\n",
			wantFile: "eng/takeoff.csv", line: 3, col: 9, code: CheckWrongType, text: `value at altitude_ft 5000, temperature_c 20: "9x" is not a number`},
		{name: "value out of bounds", file: "takeoff.csv", csv: "altitude_ft/temperature_c,0,20,40\n0,90,92,91\n5000,91,193,92\n",
			wantFile: "eng/takeoff.csv", line: 3, col: 9, code: CheckBounds, text: "value at altitude_ft 5000, temperature_c 20: 193 is outside the physical range of N1 (0 to 130)"},
		{name: "single value out of bounds", old: "values = 20", new: `table_file = "idle.csv"`, file: "idle.csv", csv: "value\n150\n",
			wantFile: "eng/idle.csv", line: 2, col: 1, code: CheckBounds, text: "value: 150 is outside the physical range of N1 (0 to 130)"},
		{name: "Mach out of range", file: "anti-ice.csv", csv: "mach,value\n0,-1\n7,-2\n",
			wantFile: "eng/anti-ice.csv", line: 3, col: 1, code: CheckInvalid, text: "mach runs from 0 to 7, want Mach numbers from 0 to 5"},
		{name: "thrust point differs", file: "thrust.csv", csv: "altitude_ft/temperature_c,0,25,40\n0,100,100,90\n5000,95,95,85\n",
			wantFile: "eng/thrust.csv", line: 1, col: 29, code: CheckGridShape, text: "temperature_c point 2 is 25 where the values have 20 (thrust_file must be on the grid of the rating's values)"},
		{name: "thrust point missing", file: "thrust.csv", csv: "altitude_ft/temperature_c,0,20\n0,100,100\n5000,95,95\n",
			wantFile: "eng/thrust.csv", line: 1, col: 29, code: CheckGridShape, text: "has 2 temperature_c points, the values have 3: temperature_c 40 is missing"},
		{name: "thrust axis missing", file: "thrust.csv", csv: "temperature_c,value\n0,100\n20,100\n40,90\n",
			wantFile: "eng/thrust.csv", line: 1, col: 1, code: CheckGridShape, text: "has no altitude_ft axis; the values have 2 altitude_ft points from 0 to 5000"},
		{name: "thrust axis extra", file: "thrust.csv", csv: "altitude_ft,temperature_c,mach,value\n" +
			"0,0,0,1\n0,0,1,1\n0,20,0,1\n0,20,1,1\n0,40,0,1\n0,40,1,1\n5000,0,0,1\n5000,0,1,1\n5000,20,0,1\n5000,20,1,1\n5000,40,0,1\n5000,40,1,1\n",
			wantFile: "eng/thrust.csv", line: 2, col: 5, code: CheckGridShape, text: "has a mach axis; the values have none"},
		{name: "negative thrust", file: "thrust.csv", csv: "altitude_ft/temperature_c,0,20,40\n0,100,100,90\n5000,95,-5,85\n",
			wantFile: "eng/thrust.csv", line: 3, col: 9, code: CheckBounds, text: "value at altitude_ft 5000, temperature_c 20: -5 kN is negative"},
		{name: "thrust_kn beside thrust_file", old: `corner_isa_dev_c = 15`, new: "corner_isa_dev_c = 15\nthrust_kn = [[1, 1, 1], [1, 1, 1]]",
			wantFile: "eng/p.toml", line: 9, key: "rating[0].thrust_file", code: CheckInvalid, text: "give thrust_kn or thrust_file, not both"},
		{name: "corner per altitude row", old: `corner_isa_dev_c = 15`, new: `corner_c = [30]`,
			wantFile: "eng/p.toml", line: 10, key: "rating[0].corner_c", code: CheckInvalid, text: "has 1 temperatures, want 2 (one per altitude_ft row of eng/takeoff.csv)"},
		{name: "corner_c without altitude axis", old: `corner_isa_dev_c = 15`, new: "corner_isa_dev_c = 15\n[[rating]]\nname = \"t2\"\ntable_file = \"flat.csv\"\ncorner_c = [30]",
			file: "flat.csv", csv: "temperature_c,value\n0,90\n40,92\n",
			wantFile: "eng/p.toml", line: 14, key: "rating[1].corner_c", code: CheckInvalid, text: "needs an altitude_ft axis"},
		{name: "assumed temperature without a temperature axis", old: `"thrust.csv"`, new: `"alt.csv"`,
			file: "takeoff.csv", csv: "altitude_ft,value\n0,90\n5000,91\n",
			wantFile: "eng/p.toml", line: 22, key: "assumed_temperature.rating", code: CheckInvalid, text: "no temperature axis"},
		{name: "delta beside delta_file", old: `delta_file = "anti-ice.csv"`, new: "delta_file = \"anti-ice.csv\"\ndelta = -1",
			wantFile: "eng/p.toml", line: 20, key: "correction[0].delta", code: CheckInvalid, text: "give delta or delta_file, not both"},
		{name: "delta_values beside delta_file", old: `delta_file = "anti-ice.csv"`, new: "delta_values = [1, 2]\ndelta_file = \"anti-ice.csv\"",
			wantFile: "eng/p.toml", line: 19, key: "correction[0].delta_values", code: CheckInvalid, text: "give delta_values or delta_file, not both"},
		{name: "axes beside delta_file", old: `delta_file = "anti-ice.csv"`, new: "delta_file = \"anti-ice.csv\"\nmach = [0, 1]",
			wantFile: "eng/p.toml", line: 20, key: "correction[0].mach", code: CheckInvalid, text: "give mach or delta_file, not both"},
		{name: "delta file fault", file: "anti-ice.csv", csv: "altitude_ft,value\n0,-1\n0,-2\n",
			wantFile: "eng/anti-ice.csv", line: 3, col: 1, code: CheckGridShape, text: "the point altitude_ft 0 is given twice (first on line 2)"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			doc := tableProfile
			if tc.old != "" {
				if !strings.Contains(doc, tc.old) {
					t.Fatalf("test edit %q not found", tc.old)
				}
				doc = strings.Replace(doc, tc.old, tc.new, 1)
			}
			files := tableFiles()
			if tc.file != "" {
				files[tc.file] = tc.csv
			}
			files["alt.csv"] = "altitude_ft,value\n0,100\n5000,95\n"
			_, err := parseFS(tableFS(doc, files))
			var list FileErrors
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("err = %v, want FileErrors", err)
			}
			e := list[0]
			if e.File != tc.wantFile || e.Line != tc.line || e.Column != tc.col || e.Key != tc.key || e.Code != tc.code || !strings.Contains(e.Err.Error(), tc.text) {
				t.Errorf("got %s [%s]\nwant %s:%d:%d key %q code %s text %q", err, e.Code, tc.wantFile, tc.line, tc.col, tc.key, tc.code, tc.text)
			}
		})
	}
}

// TestTableFileNoDirectory: ParseProfile has no directory to read a table
// file from, and says so at the key.
func TestTableFileNoDirectory(t *testing.T) {
	_, err := ParseProfile("p.toml", []byte(tableProfile))
	want := `p.toml:8: rating[0].table_file: cannot read "takeoff.csv": the profile was parsed without a directory to read it from`
	if err == nil || !strings.HasPrefix(err.Error(), want) {
		t.Fatalf("got %v\nwant %s...", err, want)
	}
}

// TestTableFileOnDisk: LoadProfile reads table files relative to the
// profile's directory (or at an absolute path), and a fault in one is
// reported as FILE:LINE:COL with the path it was read from.
func TestTableFileOnDisk(t *testing.T) {
	dir := t.TempDir()
	sub := filepath.Join(dir, "engines")
	if err := os.MkdirAll(filepath.Join(sub, "tables"), 0o755); err != nil {
		t.Fatal(err)
	}
	write := func(name, text string) {
		if err := os.WriteFile(filepath.Join(sub, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	files := tableFiles()
	for name, text := range files {
		write(filepath.Join("tables", name), text)
	}
	abs := filepath.ToSlash(filepath.Join(sub, "tables", "anti-ice.csv"))
	doc := strings.NewReplacer(`"takeoff.csv"`, `"tables/takeoff.csv"`, `"thrust.csv"`, `"tables/thrust.csv"`, `"anti-ice.csv"`, `"`+abs+`"`).Replace(tableProfile)
	write("p.toml", doc)
	p, err := LoadProfile(filepath.Join(sub, "p.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if res, err := p.Target("takeoff", Conditions{AltitudeFt: 2500, OATC: 10}); err != nil || res.Value != 91.5 {
		t.Errorf("target %v, %v; want 91.5 (by hand, as in TestTableFiles)", res.Value, err)
	}
	write(filepath.Join("tables", "takeoff.csv"), "altitude_ft/temperature_c,0,20,40\n0,90,92,91\n5000,91,93\n")
	_, err = LoadProfile(filepath.Join(sub, "p.toml"))
	want := filepath.Join(sub, "tables", "takeoff.csv") + ":3:11: row has 3 cells, the header has 4: no value for temperature_c 40"
	if err == nil || err.Error() != want {
		t.Errorf("got %v\nwant %s", err, want)
	}
}

// TestEmbeddedProfileNames: the embedded directory may hold table files;
// only profiles are listed.
func TestEmbeddedProfileNames(t *testing.T) {
	for _, name := range EmbeddedProfiles() {
		if _, ok := EmbeddedProfileText(name); !ok || strings.Contains(name, ".") {
			t.Errorf("embedded profile %q", name)
		}
	}
}
