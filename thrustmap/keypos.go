package thrustmap

import (
	"strconv"
	"strings"

	"github.com/pelletier/go-toml/v2/unstable"
)

// keyLines maps the key paths of a TOML document to the line each starts on,
// so that checks made after decoding can name the line of what they reject.
// Paths are spelled as in error messages: "lever.tla_min_deg",
// "rating[2].values", "rating[2].values[3][1]" (array tables and array
// elements indexed from 0). A document that does not parse yields what was
// read before the fault; the decoder reports the fault itself.
type keyLines map[string]int

func indexKeyLines(doc []byte) keyLines {
	lines := keyLines{}
	nl := newlines(doc)
	counts := map[string]int{} // array-table path → tables seen so far
	var p unstable.Parser
	p.Reset(doc)
	table := ""
	for p.NextExpression() {
		e := p.Expression()
		switch e.Kind {
		case unstable.Table, unstable.ArrayTable:
			table = ""
			it := e.Key()
			var first *unstable.Node
			for it.Next() {
				n := it.Node()
				if first == nil {
					first = n
				}
				table = joinKey(table, string(n.Data))
			}
			if e.Kind == unstable.ArrayTable {
				i := counts[table]
				counts[table] = i + 1
				table += "[" + strconv.Itoa(i) + "]"
			} else if i, ok := counts[table]; ok && i > 0 {
				// [rating.sub] inside the last [[rating]] (not used by profiles,
				// but keep paths right).
				table += "[" + strconv.Itoa(i-1) + "]"
			}
			if first != nil {
				lines[table] = lineOf(nl, first)
			}
		case unstable.KeyValue:
			lines.addKeyValue(nl, table, e)
		}
	}
	return lines
}

func (l keyLines) addKeyValue(p []int, prefix string, kv *unstable.Node) {
	path := prefix
	it := kv.Key()
	line := 0
	for it.Next() {
		n := it.Node()
		if line == 0 {
			line = lineOf(p, n)
		}
		path = joinKey(path, string(n.Data))
	}
	if line > 0 {
		l[path] = line
	}
	l.addValue(p, path, kv.Value())
}

func (l keyLines) addValue(p []int, path string, v *unstable.Node) {
	switch v.Kind {
	case unstable.Array:
		it := v.Children()
		for i := 0; it.Next(); i++ {
			n := it.Node()
			elem := path + "[" + strconv.Itoa(i) + "]"
			if line := lineOf(p, n); line > 0 {
				l[elem] = line
			} else if n.Kind == unstable.Array || n.Kind == unstable.InlineTable {
				if c := firstLine(p, n); c > 0 {
					l[elem] = c
				}
			}
			l.addValue(p, elem, n)
		}
	case unstable.InlineTable:
		it := v.Children()
		for it.Next() {
			l.addKeyValue(p, path, it.Node())
		}
	}
}

// firstLine is the line of the first scalar inside a container node.
func firstLine(p []int, n *unstable.Node) int {
	it := n.Children()
	for it.Next() {
		c := it.Node()
		if line := lineOf(p, c); line > 0 {
			return line
		}
		if line := firstLine(p, c); line > 0 {
			return line
		}
	}
	return 0
}

// newlines returns the offsets of the document's newlines, in order.
func newlines(doc []byte) []int {
	var out []int
	for i, b := range doc {
		if b == '\n' {
			out = append(out, i)
		}
	}
	return out
}

// lineOf is the 1-based line a node starts on, found by binary search in
// the newline offsets (0 for a node without a place).
func lineOf(nl []int, n *unstable.Node) int {
	if n.Raw.Length == 0 && n.Raw.Offset == 0 {
		return 0
	}
	off := int(n.Raw.Offset)
	lo, hi := 0, len(nl)
	for lo < hi {
		mid := (lo + hi) / 2
		if nl[mid] < off {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	return lo + 1
}

func joinKey(prefix, key string) string {
	if prefix == "" {
		return key
	}
	return prefix + "." + key
}

// line returns the line of path, or of its nearest enclosing path, or 0.
func (l keyLines) line(path string) int {
	for path != "" {
		if n, ok := l[path]; ok {
			return n
		}
		i := strings.LastIndexAny(path, ".[")
		if i < 0 {
			break
		}
		path = path[:i]
	}
	return 0
}

// has reports whether the document spells out path.
func (l keyLines) has(path string) bool {
	_, ok := l[path]
	return ok
}
