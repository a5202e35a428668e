package export

import (
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"
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
