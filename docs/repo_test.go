package docs

import (
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"unicode"
)

// moduleRoot is the directory above this one holding go.mod.
func moduleRoot(t *testing.T) string {
	t.Helper()
	dir, err := filepath.Abs(".")
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			return dir
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			t.Fatal("no go.mod above the test's directory")
		}
		dir = parent
	}
}

// sourceFiles calls fn with the path (relative to the module root) and text
// of every .go, .md, .h, .script, .tm and .txtar file of the repository.
func sourceFiles(t *testing.T, fn func(rel string, text []byte)) {
	t.Helper()
	root := moduleRoot(t)
	n := 0
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if d.Name() == ".git" {
				return filepath.SkipDir
			}
			return nil
		}
		switch filepath.Ext(path) {
		case ".go", ".md", ".h", ".script", ".tm", ".txtar":
		default:
			return nil
		}
		b, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(root, path)
		fn(filepath.ToSlash(rel), b)
		n++
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if n < 50 {
		t.Fatalf("walked only %d source files from %s: is this the repository?", n, root)
	}
}

// TestNoOutsideReferences: users read the code comments, messages and
// docs; none may point to a document they do not have. The needles are
// built from pieces so that this file does not trip over itself.
func TestNoOutsideReferences(t *testing.T) {
	needles := []string{"design br" + "ief", "design" + " §", "bri" + "ef §", "/" + "shared" + "/"}
	sourceFiles(t, func(rel string, text []byte) {
		for i, line := range strings.Split(string(text), "\n") {
			low := strings.ToLower(line)
			for _, n := range needles {
				if strings.Contains(low, n) {
					t.Errorf("%s:%d: mentions %q: cite a docs/ page and section or a published source instead", rel, i+1, n)
				}
			}
		}
	})
}

// citation finds "docs/PAGE.md" and, after a comma, the section cited (up
// to a closing bracket, a semicolon, a colon or the end of the line).
var citation = regexp.MustCompile(`docs/([a-z0-9-]+\.md)(?:, ([^)\];:\n]+))?`)

// TestCitationsResolve: every "docs/PAGE.md, Section" in the repository
// names a page that exists and begins a heading of it (a citation wrapped
// over two comment lines keeps only its first line's words), so code
// comments keep pointing at text that is there.
func TestCitationsResolve(t *testing.T) {
	pageHeadings := map[string][]string{}
	sourceFiles(t, func(rel string, text []byte) {
		for i, line := range strings.Split(string(text), "\n") {
			for _, m := range citation.FindAllStringSubmatch(line, -1) {
				page, section := m[1], strings.TrimRight(strings.TrimSpace(m[2]), ".,:\"'`")
				hs, ok := pageHeadings[page]
				if !ok {
					b, err := os.ReadFile(page)
					if err != nil {
						t.Errorf("%s:%d: cites docs/%s, which does not exist", rel, i+1, page)
						pageHeadings[page] = nil
						continue
					}
					hs = headings(string(b))
					pageHeadings[page] = hs
				}
				if hs == nil || section == "" || !unicode.IsUpper([]rune(section)[0]) {
					continue // no section cited ("see docs/profile.md, and ...")
				}
				if !slices.ContainsFunc(hs, func(h string) bool { return strings.HasPrefix(h, section) }) {
					t.Errorf("%s:%d: cites docs/%s, %q: no heading of that page begins so", rel, i+1, page, section)
				}
			}
		}
	})
}
