package export

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"testing"

	"github.com/pelletier/go-toml/v2"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// inlineTable matches a rating's inline values or thrust grid in TOML.
var inlineTable = regexp.MustCompile(`(?m)^\s*(values|thrust_kn)\s*=`)

// tableProfileFromInline rewrites a profile's TOML so that each rating takes
// its axes and values from table_file (and its thrust grid from
// thrust_file) as files(rating, grid) names them.
func tableProfileFromInline(t *testing.T, text []byte, files func(rating, grid string) string) []byte {
	t.Helper()
	var doc map[string]any
	if err := toml.Unmarshal(text, &doc); err != nil {
		t.Fatal(err)
	}
	ratings, ok := doc["rating"].([]any)
	if !ok {
		t.Fatalf("rating is %T", doc["rating"])
	}
	for _, r := range ratings {
		m := r.(map[string]any)
		name := m["name"].(string)
		for _, k := range []string{"altitude_ft", "temperature_c", "mach", "values"} {
			delete(m, k)
		}
		m["table_file"] = files(name, GridValues)
		if _, ok := m["thrust_kn"]; ok {
			delete(m, "thrust_kn")
			m["thrust_file"] = files(name, GridThrust)
		}
	}
	out, err := toml.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// TestTableRoundTripDemos: every rating of the embedded demos, exported with
// RatingTable and read back through table_file and thrust_file, gives the
// same targets bit for bit, with the same clamped axes, flags and
// assumed-temperature reduction, at thousands of random conditions with
// bleeds and assumed temperatures.
func TestTableRoundTripDemos(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(20240610, 7))
	for _, name := range thrustmap.EmbeddedProfiles() {
		t.Run(name, func(t *testing.T) {
			orig, err := thrustmap.LoadProfile(name)
			if err != nil {
				t.Fatal(err)
			}
			sub := filepath.Join(dir, name)
			if err := os.MkdirAll(filepath.Join(sub, "tables"), 0o755); err != nil {
				t.Fatal(err)
			}
			files := func(rating, which string) string { return "tables/" + rating + "-" + which + ".csv" }
			thrusts := 0
			for _, r := range orig.Ratings() {
				for _, which := range []string{GridValues, GridThrust} {
					if which == GridThrust && r.Thrust() == nil {
						continue
					}
					if which == GridThrust {
						thrusts++
					}
					tab, err := RatingTable(orig, r.Name(), which)
					if err != nil {
						t.Fatal(err)
					}
					if err := os.WriteFile(filepath.Join(sub, filepath.FromSlash(files(r.Name(), which))), tab.CSV(), 0o644); err != nil {
						t.Fatal(err)
					}
				}
			}
			text, _ := thrustmap.EmbeddedProfileText(name)
			path := filepath.Join(sub, name+".toml")
			rewritten := tableProfileFromInline(t, text, files)
			if inlineTable.Match(rewritten) {
				t.Fatalf("inline tables left in the rewritten profile:\n%s", rewritten)
			}
			if err := os.WriteFile(path, rewritten, 0o644); err != nil {
				t.Fatal(err)
			}
			back, err := thrustmap.LoadProfile(path)
			if err != nil {
				t.Fatalf("rewritten profile does not load: %v\n%s", err, rewritten)
			}
			if name == "demo" && thrusts == 0 {
				t.Fatal("demo has a thrust grid; none was exported")
			}
			t.Logf("%d ratings, %d thrust grids", len(orig.Ratings()), thrusts)
			nb := len(orig.Bleeds())
			checked := 0
			for range 3000 {
				c := thrustmap.Conditions{
					AltitudeFt: -3000 + rng.Float64()*48000,
					OATC:       -70 + rng.Float64()*125,
					Mach:       rng.Float64() * 0.95,
					Bleeds:     thrustmap.Bleeds(rng.Uint64N(1 << nb)),
					OnGround:   rng.IntN(2) == 0,
				}
				if rng.IntN(2) == 0 {
					c.AssumedSet, c.AssumedC = true, c.OATC-5+rng.Float64()*80
				}
				for _, r := range orig.Ratings() {
					a, errA := orig.Target(r.Name(), c)
					b, errB := back.Target(r.Name(), c)
					if fmt.Sprint(errA) != fmt.Sprint(errB) || math.Float64bits(a.Value) != math.Float64bits(b.Value) ||
						a.Clamped != b.Clamped || a.Flags != b.Flags || a.Reduction != b.Reduction {
						t.Fatalf("%s at %+v:\nembedded  %+v (%v)\nfrom CSV  %+v (%v)", r.Name(), c, a, errA, b, errB)
					}
					checked++
				}
			}
			for _, r := range orig.Ratings() {
				rb, _ := back.Rating(r.Name())
				if !slices.Equal(r.Table().Values(), rb.Table().Values()) || r.Table().Method() != rb.Table().Method() {
					t.Errorf("%s: grid differs after the round trip", r.Name())
				}
			}
			t.Logf("%d targets identical", checked)
		})
	}
}

// TestExportGridLoadsBack: what export grid writes at steps 0 (the rating's
// own points, values to 10 significant digits) is a long table that
// table_file reads back on the same axes with the same numbers.
func TestExportGridLoadsBack(t *testing.T) {
	dir := t.TempDir()
	for _, name := range thrustmap.EmbeddedProfiles() {
		p, err := thrustmap.LoadProfile(name)
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range p.Ratings() {
			d, err := DenseRating(p, r.Name(), Steps{}, 0)
			if err != nil {
				t.Fatal(err)
			}
			csvName := name + "-" + r.Name() + ".csv"
			if err := os.WriteFile(filepath.Join(dir, csvName), d.CSV(), 0o644); err != nil {
				t.Fatal(err)
			}
			doc := fmt.Sprintf("schema = 1\nparameter = %q\n[[rating]]\nname = %q\ntemperature = %q\ntable_file = %q\n",
				p.Parameter(), r.Name(), r.Basis(), csvName)
			path := filepath.Join(dir, name+"-"+r.Name()+".toml")
			if err := os.WriteFile(path, []byte(doc), 0o644); err != nil {
				t.Fatal(err)
			}
			back, err := thrustmap.LoadProfile(path)
			if err != nil {
				t.Fatalf("%s %s: %v", name, r.Name(), err)
			}
			rb, _ := back.Rating(r.Name())
			for a := grid.Altitude; a < grid.NumAxes; a++ {
				if !slices.Equal(r.Table().Axis(a), rb.Table().Axis(a)) {
					t.Errorf("%s %s: %s axis %v, want %v", name, r.Name(), a, rb.Table().Axis(a), r.Table().Axis(a))
				}
			}
			got := rb.Table().Values()
			for i, v := range d.Values {
				want, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 10, 64), 64)
				if got[i] != want {
					t.Fatalf("%s %s: value %d is %g, export grid wrote %g", name, r.Name(), i, got[i], want)
				}
			}
		}
	}
}
