package script

import (
	"io"
	"maps"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
)

// readDoc returns the text of a page of the users' reference, docs/ at the
// repository root.
func readDoc(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "docs", name))
	if err != nil {
		t.Fatalf("the reference page: %v", err)
	}
	return string(b)
}

// TestCommandsDocumented: docs/script.md has a section for every command of
// the language, headed by its usage exactly as `help` prints it.
func TestCommandsDocumented(t *testing.T) {
	doc := readDoc(t, "script.md")
	cmds := Commands()
	if len(cmds) < 10 {
		t.Fatalf("Commands() gave %d commands", len(cmds))
	}
	for _, c := range cmds {
		if heading := "### `" + c.Usage + "`"; !strings.Contains(doc, heading) {
			t.Errorf("docs/script.md has no section %s for command %q: add one with what it does and an example", heading, c.Name)
		}
	}
}

// TestShellNamesDocumented: every name of the command language's
// expression environment — the gate expressions' and what the shell adds —
// has a row in the tables of docs/expressions.md, and every name let may
// not redefine is one of them.
func TestShellNamesDocumented(t *testing.T) {
	in, err := New(io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	in.refreshEnv()
	names := slices.Sorted(maps.Keys(in.env))
	for _, want := range []string{"alt", "value", "gate", "reverse", "target", "rating_at"} {
		if !slices.Contains(names, want) {
			t.Fatalf("the environment has no %q (names: %q)", want, names)
		}
	}
	doc := readDoc(t, "expressions.md")
	for _, n := range names {
		// A row of the page's tables: "| `value` |" for a variable,
		// "| `target(name)` |" for a function.
		row := "| `" + n + "` |"
		if reflect.ValueOf(in.env[n]).Kind() == reflect.Func {
			row = "| `" + n + "("
		}
		if !strings.Contains(doc, row) {
			t.Errorf("docs/expressions.md has no table row %q for %q of the command language's expressions", row, n)
		}
	}
	for n := range reserved {
		if !slices.Contains(names, n) {
			t.Errorf("let refuses %q, which the environment does not have", n)
		}
	}
}
