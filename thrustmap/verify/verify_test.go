package verify

import (
	"bytes"
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/bad")

const badDir = "../../testdata/bad"

// TestBadProfiles: every file in testdata/bad holds one fault, named by the
// file, and trips exactly the findings in its golden file; clean.toml, the
// base the others edit, trips none. Regenerate with -update and review.
func TestBadProfiles(t *testing.T) {
	files, _ := filepath.Glob(filepath.Join(badDir, "*.toml"))
	n := 0
	for _, path := range files {
		if strings.HasSuffix(path, ".cal.toml") {
			continue
		}
		n++
		name := strings.TrimSuffix(filepath.Base(path), ".toml")
		t.Run(name, func(t *testing.T) {
			cal := strings.TrimSuffix(path, ".toml") + ".cal.toml"
			if _, err := os.Stat(cal); err != nil {
				cal = ""
			}
			r := File(path, cal)
			r.Notes = nil // resolution notes are not findings
			var codes []string
			for _, f := range append(slices.Clone(r.Errors), r.Warnings...) {
				codes = append(codes, f.Check)
			}
			if name == "clean" {
				if len(codes) != 0 {
					t.Fatalf("the base profile has findings: %+v %+v", r.Errors, r.Warnings)
				}
			} else if !slices.Contains(codes, name) {
				t.Fatalf("check %s not found; got %v", name, codes)
			}
			got, _ := json.MarshalIndent(r, "", "  ")
			got = append(got, '\n')
			golden := strings.TrimSuffix(path, ".toml") + ".golden.json"
			if *update {
				if err := os.WriteFile(golden, got, 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatalf("%v (run go test -update)", err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("findings differ from %s:\n%s", golden, got)
			}
		})
	}
	if n < 30 {
		t.Errorf("only %d bad profiles", n)
	}
}

// TestDemoProfilesVerify: the embedded demos have no errors.
func TestDemoProfilesVerify(t *testing.T) {
	for _, name := range thrustmap.EmbeddedProfiles() {
		r := File(name, name)
		if !r.OK() {
			t.Errorf("%s: %+v", name, r.Errors)
		}
	}
}

// BenchmarkVerifyDemo verifies the demo profile with its calibration (load
// included). Budget: 1000 of them in 10 s, i.e. 10 ms per op on one core.
func BenchmarkVerifyDemo(b *testing.B) {
	for b.Loop() {
		if r := File("demo", "demo"); !r.OK() {
			b.Fatal(r.Errors)
		}
	}
}
