package thrustmap

import (
	"reflect"
	"strings"
	"testing"
)

// TestEditDistance checks the Levenshtein distance against the textbook
// examples (V. I. Levenshtein, 1966; "kitten" → "sitting" is 3: two
// substitutions and one insertion, worked by hand).
func TestEditDistance(t *testing.T) {
	tests := []struct {
		a, b string
		want int
	}{
		{"kitten", "sitting", 3}, // k→s, e→i, +g
		{"flaw", "lawn", 2},      // −f, +n
		{"", "abc", 3},
		{"abc", "abc", 0},
		{"rating", "ratng", 1},
	}
	for _, tc := range tests {
		if got := editDistance(tc.a, tc.b); got != tc.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.want)
		}
	}
}

// TestUnknownKeyMessage: a mistyped key is answered with the key meant, in
// the table it was found in; a key like nothing known lists the table's keys.
func TestUnknownKeyMessage(t *testing.T) {
	profile := reflect.TypeFor[profileFile]()
	cal := reflect.TypeFor[calibrationFile]()
	tests := []struct {
		schema reflect.Type
		path   []string
		want   string
	}{
		{profile, []string{"gate", "capture"}, "unknown key in [[gate]]: did you mean capture_deg?"},
		{profile, []string{"gate", "tla"}, "unknown key in [[gate]]: did you mean tla_deg?"},
		{profile, []string{"lever", "idle"}, "unknown key in [lever]: did you mean idle_gate?"},
		{profile, []string{"rating", "interpolate"}, "unknown key in [[rating]]: did you mean interpolation?"},
		{profile, []string{"paramter"}, "unknown key at the top level: did you mean parameter?"},
		{profile, []string{"limits", "zzz"}, "unknown key in [limits]; the keys there are max"},
		{cal, []string{"lever", "deadzone"}, "unknown key in [[lever]]: did you mean deadband?"},
		{cal, []string{"nosuch", "x"}, "unknown key"},
	}
	for _, tc := range tests {
		if got := unknownKeyMessage(tc.schema, tc.path); got != tc.want {
			t.Errorf("%v: got %q, want %q", tc.path, got, tc.want)
		}
	}
}

// TestExprErrorsTeach: a gate expression that names something unknown or
// calls a function wrongly says what would be right.
func TestExprErrorsTeach(t *testing.T) {
	p, err := LoadProfile("demo")
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct{ src, want string }{
		{`rating_at("takeoff")`, "not enough arguments to call rating_at: rating_at(name, alt_ft, temp_c) → number"},
		{`rating("takeoff", 2)`, "too many arguments to call rating: rating(name) → number"},
		{`altitude + 1`, "unknown name altitude: did you mean alt? The names are alt, assumed, assumed_set, assumed_temp, bleed, clamp, isa_dev, isa_temp, lerp, mach, oat, on_ground, rating, rating_at, tat, tla."},
		{`ratng("takeoff")`, "did you mean rating?"},
		{`zebra`, "unknown name zebra. The names are alt,"},
		{`oat >`, "unexpected token EOF (column "},
	}
	for _, tc := range tests {
		_, err := compileExpr(p, tc.src, false)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want it to contain %q", tc.src, err, tc.want)
		}
	}
	env := reflect.TypeFor[exprEnv]()
	for i := range env.NumField() {
		f := env.Field(i)
		if name := tagName(f, "expr"); f.Type.Kind() == reflect.Func && exprSignatures[name] == "" {
			t.Errorf("function %s has no signature in exprSignatures", name)
		}
	}
}
