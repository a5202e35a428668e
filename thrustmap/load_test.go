package thrustmap

import (
	"errors"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
)

// TestEmbeddedProfilesLoad: every embedded demo loads, has the parameter the
// issue asks for and the ratings the demos promise.
func TestEmbeddedProfilesLoad(t *testing.T) {
	want := map[string]struct {
		param   Parameter
		ratings []string
	}{
		"demo":           {N1, []string{"takeoff", "go-around", "continuous", "climb", "cruise", "idle", "reverse"}},
		"demo-epr":       {EPR, []string{"takeoff", "idle"}},
		"demo-turboprop": {Torque, []string{"takeoff", "idle"}},
	}
	names := EmbeddedProfiles()
	for name, w := range want {
		if !slices.Contains(names, name) {
			t.Fatalf("embedded profile %q missing (have %v)", name, names)
		}
		p, err := LoadProfile(name)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if p.Parameter() != w.param {
			t.Errorf("%s: parameter %v, want %v", name, p.Parameter(), w.param)
		}
		for _, r := range w.ratings {
			if _, ok := p.Rating(r); !ok {
				t.Errorf("%s: no rating %q", name, r)
			}
		}
		if p.Source() != EmbeddedPrefix+name {
			t.Errorf("%s: source %q", name, p.Source())
		}
	}
	p, _ := LoadProfile("demo")
	if r, _ := p.Rating("takeoff"); r.Thrust() == nil || !r.Assumed() {
		t.Error("demo takeoff needs a thrust grid and an assumed-temperature limit")
	}
	if r, _ := p.Rating("climb"); r.Basis() != TAT {
		t.Error("demo climb should be TAT-based")
	}
}

// TestEmbeddedProfileNamesPlain: the demos' aircraft and engines are
// described in plain words, marked fictional, and carry nothing that reads
// as a type designation or a brand: no letters run into a number ("X-120",
// "Q90"), no bare number that is not a quantity with its unit ("120 kN"),
// and not the program's two-letter shorthand.
func TestEmbeddedProfileNamesPlain(t *testing.T) {
	designation := regexp.MustCompile(`\b[A-Za-z]+-?\d+`)
	number := regexp.MustCompile(`\d+(\s*\S+)?`)
	shorthand := regexp.MustCompile(`\b(TM|tm)\b`)
	for _, name := range EmbeddedProfiles() {
		p, err := LoadProfile(name)
		if err != nil {
			t.Fatal(err)
		}
		text, _ := EmbeddedProfileText(name)
		if m := designation.FindString(p.Name()); m != "" {
			t.Errorf("%s: %q in the name reads as a type designation", name, m)
		}
		if m := shorthand.FindString(string(text)); m != "" {
			t.Errorf("%s: %q is the program's shorthand", name, m)
		}
		if !strings.Contains(p.Name(), "(fictional)") {
			t.Errorf("%s: name %q does not say it is fictional", name, p.Name())
		}
		for _, m := range number.FindAllStringSubmatch(p.Name(), -1) {
			if strings.TrimSpace(m[1]) != "kN" {
				t.Errorf("%s: name %q has a bare number %q (a model number?)", name, p.Name(), m[0])
			}
		}
	}
}

// minimal is a valid profile the bad cases below edit.
const minimal = `schema = 1
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
delta = -1

[assumed_temperature]
rating = "takeoff"
max_c = 60

[limits]
max = 104

[lever]
tla_min_deg = -10
tla_max_deg = 50
idle_gate = "idle"

[[gate]]
name = "idle"
tla_deg = 0
capture_deg = 1
hysteresis_deg = 0.5
rating = "idle"

[[gate]]
name = "takeoff"
tla_deg = 50
capture_deg = 1.5
rating = "takeoff"
`

func TestMinimalLoads(t *testing.T) {
	if _, err := ParseProfile("min.toml", []byte(minimal)); err != nil {
		t.Fatal(err)
	}
}

// TestProfileErrors: each broken profile is rejected with the file, the
// line and the key path of the fault, and a message saying what was wanted.
func TestProfileErrors(t *testing.T) {
	tests := []struct {
		name      string
		old, new  string // replace old with new in minimal
		line      int
		key, text string
	}{
		{"unknown key", `name = "test"`, "name = \"test\"\ncolour = \"red\"", 3, "colour", "unknown key at the top level; the keys there are assumed_temperature, bleeds"},
		{"near key", `max_c = 60`, "max_c = 60\nmax_reduction = 20", 26, "assumed_temperature.max_reduction", "unknown key in [assumed_temperature]: did you mean max_reduction_pct?"},
		{"wrong type", `max_c = 60`, `max_c = "hot"`, 25, "assumed_temperature.max_c", "wrong type: got a string, want a number"},
		{"syntax", `max_c = 60`, `max_c = = 60`, 25, "", ""},
		{"bad parameter", `parameter = "N1"`, `parameter = "RPM"`, 3, "parameter", "want N1, EPR or TORQUE"},
		{"schema", `schema = 1`, `schema = 7`, 1, "schema", "reads schema 1"},
		{"non-increasing axis", `temperature_c = [0, 20, 40]`, `temperature_c = [0, 40, 20]`, 9, "rating[0].temperature_c[2]", "strictly increasing"},
		{"ragged grid", `[[90, 92, 91], [91, 93, 92]]`, `[[90, 92, 91], [91, 93]]`, 10, "rating[0].values[1]", "has 2 entries, want 3 (one per temperature_c point)"},
		{"rows vs axis", `[[90, 92, 91], [91, 93, 92]]`, `[[90, 92, 91]]`, 10, "rating[0].values", "has 1 entries, want 2 (one per altitude_ft point)"},
		{"non-finite", `[[90, 92, 91], [91, 93, 92]]`, `[[90, nan, 91], [91, 93, 92]]`, 10, "rating[0].values[0][1]", "not a finite number"},
		{"out of bounds", `[[90, 92, 91], [91, 93, 92]]`, `[[90, 92, 91], [91, 193, 92]]`, 10, "rating[0].values[1][1]", "outside the physical range of N1 (0 to 130)"},
		{"string value", `values = 20`, `values = "20"`, 16, "rating[1].values", "want a number"},
		{"unknown bleed", `bleed = "anti-ice"`, `bleed = "de-ice"`, 20, "correction[0].bleed", `bleed "de-ice"`},
		{"unknown rating", "rating = \"takeoff\"\nbleed", "rating = \"t/o\"\nbleed", 19, "correction[0].rating", `rating "t/o"`},
		{"both deltas", `delta = -1`, "delta = -1\ndelta_values = [1, 2]", 22, "correction[0].delta_values", "not both"},
		{"duplicate rating", `name = "idle"` + "\nvalues = 20", `name = "takeoff"` + "\nvalues = 20", 15, "rating[1].name", "declared twice"},
		{"redline", `max = 104`, `max = 150`, 28, "limits.max", "redline"},
		{"gate order", "tla_deg = 50", "tla_deg = -5", 44, "gate[1].tla_deg", "increasing TLA"},
		{"gate spacing", "tla_deg = 50", "tla_deg = 2", 44, "gate[1].tla_deg", "too close"},
		{"gate rating", `rating = "idle"` + "\n\n[[gate]]", `rating = "flight-idle"` + "\n\n[[gate]]", 40, "gate[0].rating", `rating "flight-idle"`},
		{"idle gate", `idle_gate = "idle"`, `idle_gate = "ground"`, 33, "lever.idle_gate", `gate "ground"`},
		{"corner per altitude", `corner_isa_dev_c = 15`, `corner_c = [30]`, 12, "rating[0].corner_c", "want 2 (one per altitude_ft row)"},
		{"assumed rating", "rating = \"takeoff\"\nmax_c", "rating = \"idle\"\nmax_c", 24, "assumed_temperature.rating", "no temperature axis"},
		{"reduction pct", `max_c = 60`, "max_c = 60\nmax_reduction_pct = 120", 26, "assumed_temperature.max_reduction_pct", "below 100"},
		{"mach axis", `temperature_c = [0, 20, 40]`, "temperature_c = [0, 20, 40]\nmach = [0, 9]", 10, "rating[0].mach", "from 0 to 5"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if !strings.Contains(minimal, tc.old) {
				t.Fatalf("test edit %q not found", tc.old)
			}
			doc := strings.Replace(minimal, tc.old, tc.new, 1)
			_, err := ParseProfile("bad.toml", []byte(doc))
			var list FileErrors
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("err = %v, want FileErrors", err)
			}
			e := list[0]
			if e.File != "bad.toml" || e.Line != tc.line || e.Key != tc.key || !strings.Contains(e.Err.Error(), tc.text) {
				t.Errorf("got %q (line %d, key %q)\nwant line %d, key %q, text %q", err, e.Line, e.Key, tc.line, tc.key, tc.text)
			}
			if !strings.HasPrefix(err.Error(), "bad.toml:") {
				t.Errorf("message %q does not start with the file name", err)
			}
		})
	}
}

func TestLoadProfileFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "p.toml")
	if err := os.WriteFile(path, []byte(minimal), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := LoadProfile(path)
	if err != nil || p.Source() != path {
		t.Fatalf("%v %v", p, err)
	}
	if _, err := LoadProfile("no-such-profile"); err == nil || !strings.Contains(err.Error(), "embedded: demo") {
		t.Errorf("missing profile: %v", err)
	}
}

// FuzzParseProfile: no input may panic the parser; whatever it accepts must
// answer Target for every rating without NaN. The profile sits beside the
// table files of tableFiles, so table_file, thrust_file and delta_file are
// fuzzed too.
func FuzzParseProfile(f *testing.F) {
	f.Add([]byte(minimal))
	f.Add([]byte(tableProfile))
	for _, name := range EmbeddedProfiles() {
		b, _ := EmbeddedProfileText(name)
		f.Add(b)
	}
	fsys := tableFS("", tableFiles())
	f.Fuzz(func(t *testing.T, doc []byte) {
		p, err := ParseProfileFS(fsys, "eng/p.toml", doc)
		if err != nil {
			var list FileErrors
			if !errors.As(err, &list) {
				t.Fatalf("error of type %T: %v", err, err)
			}
			return
		}
		for _, r := range p.Ratings() {
			res, err := p.RatingTarget(r, Conditions{AltitudeFt: 1000, OATC: 20, Mach: 0.3, Bleeds: ^Bleeds(0), AssumedSet: true, AssumedC: 45})
			if err == nil && !finite(res.Value) {
				t.Fatalf("rating %s: %g", r.Name(), res.Value)
			}
		}
	})
}
