package thrustmap

import (
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// The users' reference (docs/ at the repository root) must name everything
// the file formats accept: these tests read the decoders' struct tags by
// reflection, so a key added to a *File struct fails here until it is
// documented.

// readDoc returns the text of a page of docs/.
func readDoc(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "docs", name))
	if err != nil {
		t.Fatalf("the reference page: %v", err)
	}
	return string(b)
}

// allTagNames collects the names of tag key on the fields of typ and of the
// structs it holds (through pointers, slices and arrays), each once, in the
// order met.
func allTagNames(typ reflect.Type, key string) []string {
	var out []string
	seen := map[reflect.Type]bool{}
	var walk func(t reflect.Type)
	walk = func(t reflect.Type) {
		for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice || t.Kind() == reflect.Array {
			t = t.Elem()
		}
		if t.Kind() != reflect.Struct || seen[t] {
			return
		}
		seen[t] = true
		for i := range t.NumField() {
			f := t.Field(i)
			name := tagName(f, key)
			if name != "" && name != "-" && !slices.Contains(out, name) {
				out = append(out, name)
			}
			walk(f.Type)
		}
	}
	walk(typ)
	return out
}

// missingInDoc returns the names that the page does not show as `name`.
func missingInDoc(doc string, names []string) []string {
	var missing []string
	for _, n := range names {
		if !strings.Contains(doc, "`"+n+"`") {
			missing = append(missing, n)
		}
	}
	return missing
}

func TestDocTagNames(t *testing.T) {
	type inner struct {
		B int `toml:"b"`
		A int `toml:"a,omitempty"`
	}
	type outer struct {
		A  int      `toml:"a"`
		In []inner  `toml:"in"`
		P  *inner   `toml:"p"`
		X  int      `toml:"-"`
		Y  int      // untagged
		M  [2]inner `toml:"m"`
	}
	if got, want := allTagNames(reflect.TypeFor[outer](), "toml"), []string{"a", "in", "b", "p", "m"}; !slices.Equal(got, want) {
		t.Errorf("allTagNames = %q, want %q", got, want)
	}
	if got := missingInDoc("keys `a` and b", []string{"a", "b"}); !slices.Equal(got, []string{"b"}) {
		t.Errorf("missingInDoc = %q, want [b]: a name must be in backquotes", got)
	}
}

// TestProfileKeysDocumented: every key the profile decoder accepts appears
// in docs/profile.md as `key`.
func TestProfileKeysDocumented(t *testing.T) {
	keys := allTagNames(reflect.TypeFor[profileFile](), "toml")
	for _, want := range []string{"schema", "rating", "corner_isa_dev_c", "delta_values", "max_reduction_pct", "idle_gate", "hysteresis_deg", "order"} {
		if !slices.Contains(keys, want) {
			t.Fatalf("the decoder structs do not give key %q: is the reflection walking them all? (got %q)", want, keys)
		}
	}
	if missing := missingInDoc(readDoc(t, "profile.md"), keys); len(missing) > 0 {
		t.Errorf("docs/profile.md does not document the profile keys %q: add each, in backquotes, with its type, unit, default, meaning and an example", missing)
	}
}

// TestCalibrationKeysDocumented: every key the calibration decoder accepts
// appears in docs/calibration.md as `key`.
func TestCalibrationKeysDocumented(t *testing.T) {
	keys := allTagNames(reflect.TypeFor[calibrationFile](), "toml")
	for _, want := range []string{"schema", "lever", "raw_min", "points", "min_hysteresis_deg", "axis"} {
		if !slices.Contains(keys, want) {
			t.Fatalf("the decoder structs do not give key %q (got %q)", want, keys)
		}
	}
	if missing := missingInDoc(readDoc(t, "calibration.md"), keys); len(missing) > 0 {
		t.Errorf("docs/calibration.md does not document the calibration keys %q", missing)
	}
}

// TestExpressionNamesDocumented: every variable and function of the gate
// expression environment (exprEnv's expr tags) has a row in the tables of
// docs/expressions.md.
func TestExpressionNamesDocumented(t *testing.T) {
	doc := readDoc(t, "expressions.md")
	env := reflect.TypeFor[exprEnv]()
	if env.NumField() < 10 {
		t.Fatalf("exprEnv has only %d fields", env.NumField())
	}
	for i := range env.NumField() {
		f := env.Field(i)
		n := tagName(f, "expr")
		// A row of the page's tables: "| `alt` |" for a variable,
		// "| `rating(name)` |" for a function.
		row := "| `" + n + "` |"
		if f.Type.Kind() == reflect.Func {
			row = "| `" + n + "("
		}
		if !strings.Contains(doc, row) {
			t.Errorf("docs/expressions.md has no table row %q for %q of the expression environment", row, n)
		}
	}
	// The size cap it states is the one the code applies.
	if cap := strconv.Itoa(MaxExprNodes); !strings.Contains(doc, "at most "+cap+" nodes") {
		t.Errorf("docs/expressions.md does not state the size limit MaxExprNodes = %s (\"at most %s nodes\")", cap, cap)
	}
}

// checkCodes returns the values of the constants named Check... in the
// non-test Go files of dir: the stable codes of findings.
func checkCodes(t *testing.T, dir string) []string {
	t.Helper()
	fset := token.NewFileSet()
	files, err := filepath.Glob(filepath.Join(dir, "*.go"))
	if err != nil {
		t.Fatal(err)
	}
	var codes []string
	for _, f := range files {
		if strings.HasSuffix(f, "_test.go") {
			continue
		}
		file, err := parser.ParseFile(fset, f, nil, 0)
		if err != nil {
			t.Fatal(err)
		}
		for _, d := range file.Decls {
			g, ok := d.(*ast.GenDecl)
			if !ok || g.Tok != token.CONST {
				continue
			}
			for _, s := range g.Specs {
				vs := s.(*ast.ValueSpec)
				for i, name := range vs.Names {
					if !strings.HasPrefix(name.Name, "Check") || i >= len(vs.Values) {
						continue
					}
					lit, ok := vs.Values[i].(*ast.BasicLit)
					if !ok || lit.Kind != token.STRING {
						continue
					}
					v, _ := strconv.Unquote(lit.Value)
					if !slices.Contains(codes, v) {
						codes = append(codes, v)
					}
				}
			}
		}
	}
	return codes
}

// TestCheckCodesDocumented: every stable check code — of the faults that
// stop a profile loading and of thrustmap verify — appears in
// docs/profile.md as `code`.
func TestCheckCodesDocumented(t *testing.T) {
	codes := append(checkCodes(t, "."), checkCodes(t, "verify")...)
	for _, want := range []string{CheckSyntax, CheckGateSpacing, "rating_order"} {
		if !slices.Contains(codes, want) {
			t.Fatalf("the check codes found do not include %q (got %q)", want, codes)
		}
	}
	if missing := missingInDoc(readDoc(t, "profile.md"), codes); len(missing) > 0 {
		t.Errorf("docs/profile.md (Checking a profile) does not list the check codes %q", missing)
	}
}
