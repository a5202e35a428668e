package export

import (
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"

	"github.com/expr-lang/expr/parser"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// TestCRuntimeCompiles compiles the runtime files as they are in cruntime/,
// not as copied into a generated file, with the generated parts of each test
// model beside them: so the runtime can be read and edited as C, and every
// branch of its #if switches compiles (the test checks that the models turn
// each switch both on and off).
func TestCRuntimeCompiles(t *testing.T) {
	gccPath := needGCC(t)
	runtimeDir, err := filepath.Abs("cruntime")
	if err != nil {
		t.Fatal(err)
	}
	switches := map[string]map[string]bool{} // ENGINE__X -> values seen
	define := regexp.MustCompile(`(?m)^#define (ENGINE__[A-Z_]+) ([01])$`)
	models := cModels(t)
	names := make([]string, 0, len(models))
	for name := range models {
		names = append(names, name)
	}
	sort.Strings(names)
	for _, name := range names {
		g, err := newCGen(models[name], COptions{})
		if err != nil {
			t.Fatal(err)
		}
		dir := t.TempDir()
		parts := g.parts()
		for file, text := range parts {
			if err := os.WriteFile(filepath.Join(dir, file), []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
		}
		for _, m := range define.FindAllStringSubmatch(parts["engine_features.h"], -1) {
			if switches[m[1]] == nil {
				switches[m[1]] = map[string]bool{}
			}
			switches[m[1]][m[2]] = true
		}
		gcc(t, gccPath, dir, slicesConcat(cStrict, "-I", dir, "-c", filepath.Join(runtimeDir, "engine_runtime.c"), "-o", name+".o")...)
	}
	// Every switch the runtime tests is written by the generator and set
	// both ways by some model.
	src, err := os.ReadFile(filepath.Join(runtimeDir, "engine_runtime.c"))
	if err != nil {
		t.Fatal(err)
	}
	used := regexp.MustCompile(`(?m)^#if.*?\b(ENGINE__(?:[A-Z]+_)*[A-Z]+)\b`).FindAllStringSubmatch(string(src), -1)
	if len(used) == 0 {
		t.Fatal("the runtime tests no switch: the pattern is stale")
	}
	for _, u := range used {
		for _, sw := range regexp.MustCompile(`\bENGINE__[A-Z_]+\b`).FindAllString(u[0], -1) {
			if sw == "ENGINE__IDLE" {
				continue // an index, tested as >= 0: the demo has one, bare-when none
			}
			if v := switches[sw]; !v["0"] || !v["1"] {
				t.Errorf("%s is %v across the test models; want both 0 and 1", sw, keys(v))
			}
		}
	}
}

func keys(m map[string]bool) string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return "[" + strings.Join(out, " ") + "]"
}

// TestCExprOneWalk translates expressions for the kind of value their place
// wants: the C is written out by hand from the operators' meaning in
// expr-lang (docs/expressions.md), and a node of the other kind is refused
// where it stands, not at the top.
func TestCExprOneWalk(t *testing.T) {
	m, err := thrustmap.LoadModel(filepath.Join("testdata", "c", "exprs.toml"), "")
	if err != nil {
		t.Fatal(err)
	}
	g, err := newCGen(m, COptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		src     string
		want    cValue
		c       string // the C, or "" for a refusal
		refused string // the node the refusal names
	}{
		{"1 + 2 * oat", cNumber, "(1.0 + (2.0 * x->cond.oat_c))", ""},
		{"-mach ** 2", cNumber, "(-pow(x->cond.mach, 2.0))", ""}, // ** binds tighter than unary minus, as in algebra
		{"on_ground && mach > 0.3 || !assumed_set", cTruth, "(((x->cond.on_ground != 0) && (x->cond.mach > 0.3)) || (!(x->cond.assumed_set != 0)))", ""},
		{"on_ground ? 1 : alt / 1000", cNumber, "((x->cond.on_ground != 0) ? 1.0 : (x->cond.alt_ft / 1000.0))", ""},
		{"on_ground ? true : mach >= 0.5", cTruth, "((x->cond.on_ground != 0) ? 1 : (x->cond.mach >= 0.5))", ""},
		{"bleed('wai')", cTruth, "(((x->cond.bleeds >> 1) & 1u) != 0)", ""},
		{"bleed('no-such-bleed') or false", cTruth, "(0 || 0)", ""},
		{"clamp(oat, 0, 1)", cNumber, "engine__math_max(0.0, engine__math_min(1.0, x->cond.oat_c))", ""},
		{"abs(tla - 3)", cNumber, "engine__math_abs((x->tla - 3.0))", ""},
		{"rating('climb') + rating_at('derate', alt, -oat)", cNumber, "(engine__e_rating(x, 4) + engine__e_rating_at(x, 1, x->cond.alt_ft, (-x->cond.oat_c)))", ""},
		// The other kind, refused at the node that gives it.
		{"mach", cTruth, "", "mach (IdentifierNode) as true or false"},
		{"on_ground", cNumber, "", "on_ground (IdentifierNode) as a number"},
		{"1 + (mach > 0.5)", cNumber, "", "mach > 0.5 (BinaryNode) as a number"},
		{"-on_ground", cNumber, "", "on_ground (IdentifierNode) as a number"},
		{"!mach", cTruth, "", "mach (IdentifierNode) as true or false"},
		{"on_ground == true", cTruth, "", "on_ground (IdentifierNode) as a number"},
		{"bleed('wai') + 1", cNumber, "", `bleed("wai") (CallNode) as a number`},
		{"on_ground ? 1 : true", cNumber, "", "true (BoolNode) as a number"},
		{"min(on_ground, 1)", cNumber, "", "on_ground (IdentifierNode) as a number"},
		// Outside the subset whatever is wanted.
		{"oat % 2", cNumber, "", "oat % 2 (BinaryNode) as a number"},
		{"rating('no-such-rating')", cNumber, "", `rating("no-such-rating") (CallNode) as a number`},
	} {
		tree, err := parser.Parse(tc.src)
		if err != nil {
			t.Fatalf("%s: %v", tc.src, err)
		}
		got, err := (&cExprTr{g: g}).expr(tree.Node, tc.want)
		switch {
		case tc.c != "" && err != nil:
			t.Errorf("%s as %s: %v", tc.src, tc.want, err)
		case tc.c != "" && got != tc.c:
			t.Errorf("%s as %s:\n got %s\nwant %s", tc.src, tc.want, got, tc.c)
		case tc.c == "" && err == nil:
			t.Errorf("%s as %s: got %s, want a refusal", tc.src, tc.want, got)
		case tc.c == "" && !strings.HasPrefix(err.Error(), tc.refused):
			t.Errorf("%s as %s: refusal %q does not start with %q", tc.src, tc.want, err, tc.refused)
		}
	}
}
