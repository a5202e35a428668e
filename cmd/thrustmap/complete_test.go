package main

import (
	"io"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap/script"
)

// TestCompletionByContext: what Tab offers depends on where the cursor is —
// command names first, then that command's own arguments, nothing where
// nothing fits.
func TestCompletionByContext(t *testing.T) {
	dir := t.TempDir()
	for _, name := range []string{"a.script", "b.csv", "c.toml", "notes.txt"} {
		if err := os.WriteFile(filepath.Join(dir, name), nil, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Mkdir(filepath.Join(dir, "sub"), 0o755); err != nil {
		t.Fatal(err)
	}
	t.Chdir(dir)
	in, err := script.New(io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if err := in.Exec("calibration demo", "t", 1); err != nil {
		t.Fatal(err)
	}
	c := completer{in}
	tests := []struct {
		line string
		want []string // the completed words, in order
	}{
		{"ta", []string{"target"}},
		{"e", []string{"exit", "expect-error"}},
		{"target ", []string{"climb", "continuous", "cruise", "go-around", "idle", "reverse", "takeoff"}},
		{"target to", nil},
		{"target takeoff ", nil}, // a rating given: nothing more fits
		{"bleed ", []string{"engine-anti-ice", "packs-off", "wing-anti-ice"}},
		{"bleed packs-off ", []string{"off", "on"}},
		{"set ", []string{"alt", "assumed", "ground", "mach", "oat"}},
		{"set alt ", nil}, // a number
		{"set alt 2000 gr", []string{"ground"}},
		{"set alt 2000 ground ", []string{"off", "on"}},
		{"lever ", []string{"1", "2"}},
		{"lever 1 ", nil},
		{"tla ", nil},
		{"help che", []string{"check"}},
		{"include ", []string{"a.script", "sub/"}},
		{"points ", []string{"b.csv", "sub/"}},
		{"profile ", []string{"c.toml", "sub/", "demo", "demo-epr", "demo-turboprop"}},
		{`expect-error "unknown" tar`, []string{"target"}},
		{`expect-error "unknown" target `, []string{"climb", "continuous", "cruise", "go-around", "idle", "reverse", "takeoff"}},
	}
	for _, tc := range tests {
		got, n := c.Do([]rune(tc.line), len([]rune(tc.line)))
		var words []string
		prefix := []rune(tc.line)[len([]rune(tc.line))-n:]
		for _, g := range got {
			w := string(prefix) + string(g)
			if w[len(w)-1] == ' ' {
				w = w[:len(w)-1]
			}
			words = append(words, w)
		}
		if !slices.Equal(words, tc.want) {
			t.Errorf("%q: offers %q, want %q", tc.line, words, tc.want)
		}
	}
}
