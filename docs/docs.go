// Package docs holds thrustmap's reference for users — the Markdown pages in
// this directory, one subject a page — built into the program so that
// `thrustmap help TOPIC` prints the same text the repository ships.
//
// A topic is a page's file name without ".md": "profile" is profile.md.
// README.md is the index, available as the topic "index". The generated
// command-line reference under cli/ is not embedded: the program prints its
// own --help.
//
// Simulation only: not certified, never for real aircraft.
package docs

import (
	"embed"
	"path"
	"slices"
	"strings"
)

//go:embed *.md
var pages embed.FS

// Index is the topic name of the index page, README.md.
const Index = "index"

// file returns the embedded file name of a topic, or "" for a name that
// cannot be one (empty, or holding a path separator or a dot).
func file(name string) string {
	switch {
	case name == Index:
		return "README.md"
	case name == "", strings.ContainsAny(name, "/\\."), strings.EqualFold(name, "README"):
		return ""
	}
	return name + ".md"
}

// Topic returns the Markdown text of a topic ("profile", "exit-codes", or
// Index for the index page) and true, or nil and false when there is no such
// topic. The returned slice is a copy the caller may keep or change.
func Topic(name string) ([]byte, bool) {
	f := file(name)
	if f == "" {
		return nil, false
	}
	b, err := pages.ReadFile(f)
	if err != nil {
		return nil, false
	}
	return b, true
}

// Topics returns the names of the topics, sorted, without the index.
func Topics() []string {
	entries, _ := pages.ReadDir(".")
	var names []string
	for _, e := range entries {
		name := strings.TrimSuffix(e.Name(), path.Ext(e.Name()))
		if e.IsDir() || name == "README" {
			continue
		}
		names = append(names, name)
	}
	slices.Sort(names)
	return names
}

// Title returns a topic's title — the text of its first Markdown heading,
// without the leading '#' — or "" when there is no such topic.
func Title(name string) string {
	b, ok := Topic(name)
	if !ok {
		return ""
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, "# ") {
			return strings.TrimSpace(strings.TrimPrefix(line, "# "))
		}
	}
	return ""
}
