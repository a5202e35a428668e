package docs

import (
	"bytes"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"unicode"
)

// wantTopics are the reference's pages; `thrustmap help TOPIC` and the
// index (README.md) promise each of them.
var wantTopics = []string{"c-api", "calibration", "exit-codes", "expressions", "methods", "profile", "recordings", "script", "units"}

func TestTopics(t *testing.T) {
	if got := Topics(); !slices.Equal(got, wantTopics) {
		t.Fatalf("Topics() = %q, want %q", got, wantTopics)
	}
	index, ok := Topic(Index)
	if !ok {
		t.Fatal("no index page")
	}
	for _, name := range wantTopics {
		b, ok := Topic(name)
		if !ok || len(b) == 0 {
			t.Errorf("Topic(%q): missing or empty", name)
			continue
		}
		if Title(name) == "" {
			t.Errorf("%s.md has no '# ' title", name)
		}
		if !bytes.Contains(index, []byte("("+name+".md)")) {
			t.Errorf("README.md (the index) does not link %s.md", name)
		}
	}
	// A copy: changing it must not change the next answer.
	b, _ := Topic("profile")
	b[0] = 'X'
	if again, _ := Topic("profile"); again[0] == 'X' {
		t.Error("Topic returns the embedded bytes themselves, not a copy")
	}
}

func TestTopicRejects(t *testing.T) {
	for _, name := range []string{"", "nosuch", "README", "readme", "profile.md", "../go.mod", "cli/thrustmap", `..\docs`, "docs.go"} {
		if _, ok := Topic(name); ok {
			t.Errorf("Topic(%q) found a page; want none", name)
		}
		if Title(name) != "" {
			t.Errorf("Title(%q) = %q, want empty", name, Title(name))
		}
	}
}

// TestSafetyNote: every page carries the simulation-only note.
func TestSafetyNote(t *testing.T) {
	for _, name := range append([]string{Index}, Topics()...) {
		b, _ := Topic(name)
		if !bytes.Contains(b, []byte("**Simulation only.**")) || !bytes.Contains(b, []byte("never be used to set thrust on a\n> real aircraft")) {
			t.Errorf("%s: no simulation-only note", name)
		}
	}
}

// slug is the anchor GitHub gives a heading: lower case, punctuation other
// than '-' and '_' dropped, spaces as '-'.
func slug(heading string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(heading) {
		switch {
		case r == ' ':
			b.WriteByte('-')
		case r == '-' || r == '_' || unicode.IsLetter(r) || unicode.IsDigit(r):
			b.WriteRune(r)
		}
	}
	return b.String()
}

// headings returns the Markdown headings of a file, outside code blocks.
func headings(text string) []string {
	var out []string
	fenced := false
	for _, line := range strings.Split(text, "\n") {
		if strings.HasPrefix(line, "```") {
			fenced = !fenced
			continue
		}
		if !fenced && strings.HasPrefix(line, "#") {
			h := strings.TrimLeft(line, "#")
			if strings.HasPrefix(h, " ") {
				out = append(out, strings.TrimSpace(h))
			}
		}
	}
	return out
}

var mdLink = regexp.MustCompile(`\]\(([^)\s]+)\)`)

// TestLinks: every relative link between the pages reaches a file, and
// every #anchor a heading of it.
func TestLinks(t *testing.T) {
	files, err := filepath.Glob("*.md")
	if err != nil || len(files) == 0 {
		t.Fatalf("no pages: %v", err)
	}
	cli, _ := filepath.Glob(filepath.Join("cli", "*.md"))
	for _, f := range append(files, cli...) {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range mdLink.FindAllStringSubmatch(string(b), -1) {
			target := m[1]
			if strings.Contains(target, "://") || strings.HasPrefix(target, "mailto:") {
				continue
			}
			page, anchor, _ := strings.Cut(target, "#")
			path := f
			if page != "" {
				path = filepath.Join(filepath.Dir(f), page)
			}
			text, err := os.ReadFile(path)
			if err != nil {
				t.Errorf("%s: link %q: %v", f, target, err)
				continue
			}
			if anchor == "" {
				continue
			}
			found := false
			for _, h := range headings(string(text)) {
				found = found || slug(h) == anchor
			}
			if !found {
				t.Errorf("%s: link %q: no heading of %s has the anchor #%s", f, target, path, anchor)
			}
		}
	}
}

// TestSlug checks the anchor rule on headings whose GitHub anchors were
// read off rendered pages (from memory).
func TestSlug(t *testing.T) {
	for _, c := range []struct{ heading, want string }{
		{"Gate rules", "gate-rules"},
		{"Ratings: `[[rating]]`", "ratings-rating"},
		{"Temperature bases: OAT, TAT, ISA_DEV", "temperature-bases-oat-tat-isa_dev"},
		{"Assumed-temperature method", "assumed-temperature-method"},
	} {
		if got := slug(c.heading); got != c.want {
			t.Errorf("slug(%q) = %q, want %q", c.heading, got, c.want)
		}
	}
}
