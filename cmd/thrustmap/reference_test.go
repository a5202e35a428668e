package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/docs"
)

var update = flag.Bool("update", false, "rewrite docs/cli from the commands (TestCLIReference)")

// cliDir is the command-line reference kept in the repository.
const cliDir = "../../docs/cli"

const updateHint = "the commands changed: run go test ./cmd/thrustmap -run TestCLIReference -update and review docs/cli"

// mdFiles reads the .md files of dir by name.
func mdFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	names, err := filepath.Glob(filepath.Join(dir, "*.md"))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][]byte{}
	for _, n := range names {
		b, err := os.ReadFile(n)
		if err != nil {
			t.Fatal(err)
		}
		out[filepath.Base(n)] = b
	}
	return out
}

// TestCLIReference regenerates the command-line reference with
// `thrustmap reference --markdown` and fails when docs/cli differs from it;
// -update rewrites docs/cli instead.
func TestCLIReference(t *testing.T) {
	tmp := t.TempDir()
	var stdout, stderr bytes.Buffer
	if code := run([]string{"reference", "--markdown", tmp}, &stdout, &stderr); code != exitOK {
		t.Fatalf("reference --markdown: exit %d: %s", code, stderr.String())
	}
	got := mdFiles(t, tmp)
	if len(got) < 10 || got["thrustmap.md"] == nil || got["thrustmap_atmos.md"] == nil {
		t.Fatalf("reference --markdown wrote %d pages; want one per command, thrustmap.md and thrustmap_atmos.md among them", len(got))
	}
	if *update {
		old, _ := filepath.Glob(filepath.Join(cliDir, "*.md"))
		for _, f := range old {
			if err := os.Remove(f); err != nil {
				t.Fatal(err)
			}
		}
		if err := os.MkdirAll(cliDir, 0o755); err != nil {
			t.Fatal(err)
		}
		for name, b := range got {
			if err := os.WriteFile(filepath.Join(cliDir, name), b, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		t.Logf("rewrote %d pages in %s", len(got), cliDir)
		return
	}
	want := mdFiles(t, cliDir)
	var names []string
	for n := range got {
		names = append(names, n)
	}
	for n := range want {
		if got[n] == nil {
			names = append(names, n)
		}
	}
	slices.Sort(names)
	for _, n := range names {
		g, w := got[n], want[n]
		switch {
		case w == nil:
			t.Errorf("docs/cli/%s is missing (a new command?): %s", n, updateHint)
		case g == nil:
			t.Errorf("docs/cli/%s is for a command that is gone: %s", n, updateHint)
		case !bytes.Equal(g, w):
			t.Errorf("docs/cli/%s differs from the command's help at line %d: %s", n, firstDiffLine(g, w), updateHint)
		}
	}
}

// firstDiffLine is the 1-based line where a and b first differ.
func firstDiffLine(a, b []byte) int {
	la, lb := strings.Split(string(a), "\n"), strings.Split(string(b), "\n")
	for i := range min(len(la), len(lb)) {
		if la[i] != lb[i] {
			return i + 1
		}
	}
	return min(len(la), len(lb)) + 1
}

// TestReferenceMan writes manual pages: one per command, in section 1.
func TestReferenceMan(t *testing.T) {
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	if code := run([]string{"reference", "--man", dir}, &stdout, &stderr); code != exitOK {
		t.Fatalf("reference --man: exit %d: %s", code, stderr.String())
	}
	for _, name := range []string{"thrustmap.1", "thrustmap-atmos.1", "thrustmap-export-grid.1"} {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.HasPrefix(b, []byte(".nh\n.TH ")) || !bytes.Contains(b, []byte("Not certified")) {
			t.Errorf("%s is not a manual page with the safety note:\n%.300s", name, b)
		}
	}
	if code := run([]string{"reference"}, &stdout, &stderr); code != exitUsage {
		t.Errorf("reference without a directory: exit %d, want %d", code, exitUsage)
	}
}

// TestHelpTopics: thrustmap help TOPIC prints each page of the reference;
// help COMMAND is the command's help; anything else exits 2 listing both.
func TestHelpTopics(t *testing.T) {
	for _, topic := range docs.Topics() {
		var stdout, stderr bytes.Buffer
		if code := run([]string{"help", topic}, &stdout, &stderr); code != exitOK {
			t.Errorf("help %s: exit %d: %s", topic, code, stderr.String())
			continue
		}
		want, _ := docs.Topic(topic)
		if !bytes.Equal(stdout.Bytes(), want) {
			t.Errorf("help %s printed %d bytes, not the page's %d", topic, stdout.Len(), len(want))
		}
	}
	for _, c := range []struct {
		args []string
		code int
		out  string // in stdout, or in stderr on an error
	}{
		{[]string{"help"}, exitOK, "thrustmap help TOPIC"},
		{[]string{"help", "atmos"}, exitOK, "thrustmap atmos --alt ALT"},
		{[]string{"help", "export", "grid"}, exitOK, "thrustmap export grid -p PROFILE"},
		{[]string{"help", "nosuch"}, exitUsage, "topics:   c-api, calibration"},
		{[]string{"help", "nosuch"}, exitUsage, "commands: add-point, atmos"},
		{[]string{"help", "export", "nosuch"}, exitUsage, `no command or topic "export nosuch"`},
		{[]string{"help", "profile", "extra"}, exitUsage, "no command or topic"},
	} {
		var stdout, stderr bytes.Buffer
		code := run(c.args, &stdout, &stderr)
		text := stdout.String()
		if code != exitOK {
			text = stderr.String()
		}
		if code != c.code || !strings.Contains(text, c.out) {
			t.Errorf("%q: exit %d, output %q; want exit %d and %q", c.args, code, text, c.code, c.out)
		}
	}
}
