package thrustmap

import (
	"reflect"
	"slices"
	"strings"
)

// tomlTable returns the type of the table reached by following path from
// the decoder struct t (array-of-table paths carry no indexes): a struct, a
// pointer to one, or a slice of them for an array of tables; nil when the
// path leads nowhere.
func tomlTable(t reflect.Type, path []string) reflect.Type {
	for _, name := range path {
		st := elemStruct(t)
		if st == nil {
			return nil
		}
		f, ok := fieldByTag(st, "toml", name)
		if !ok {
			return nil
		}
		t = f.Type
	}
	return t
}

// elemStruct strips pointers and slices from t and returns the struct type
// under them, or nil.
func elemStruct(t reflect.Type) reflect.Type {
	for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
		t = t.Elem()
	}
	if t.Kind() != reflect.Struct {
		return nil
	}
	return t
}

// fieldByTag finds the field of struct t whose tag key is name.
func fieldByTag(t reflect.Type, key, name string) (reflect.StructField, bool) {
	for i := range t.NumField() {
		f := t.Field(i)
		if tagName(f, key) == name {
			return f, true
		}
	}
	return reflect.StructField{}, false
}

// tagNames lists the tag key names of struct t's fields, in field order.
func tagNames(t reflect.Type, key string) []string {
	var names []string
	for i := range t.NumField() {
		if n := tagName(t.Field(i), key); n != "" && n != "-" {
			names = append(names, n)
		}
	}
	return names
}

func tagName(f reflect.StructField, key string) string {
	n, _, _ := strings.Cut(f.Tag.Get(key), ",")
	return n
}

// nearest returns the candidate a mistyped name most likely meant: one that
// starts with it or that it starts with ("capture" → "capture_deg"), else
// the closest by edit distance among those within a third of the name's
// length (at least 2) or sharing its first four letters ("deadzone" →
// "deadband"). It returns "" when nothing is close.
func nearest(name string, candidates []string) string {
	best, bestDist := "", 0
	lower := strings.ToLower(name)
	for _, c := range candidates {
		var d int
		switch {
		case c == lower:
			d = 0
		case strings.HasPrefix(c, lower) || strings.HasPrefix(lower, c):
			d = 1
		default:
			d = 1 + editDistance(lower, c)
			if d-1 > max(2, len(name)/3) && (len(lower) < 4 || !strings.HasPrefix(c, lower[:4])) {
				continue
			}
		}
		if best == "" || d < bestDist {
			best, bestDist = c, d
		}
	}
	return best
}

// editDistance is the Levenshtein distance between a and b (insertions,
// deletions and substitutions of one byte each cost 1).
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// unknownKeyMessage explains an unknown key at path (the table path then the
// key) of a file whose decoder struct is t, suggesting the nearest known key
// or listing the keys the table has.
func unknownKeyMessage(t reflect.Type, path []string) string {
	if len(path) == 0 {
		return "unknown key"
	}
	key := path[len(path)-1]
	table := path[:len(path)-1]
	tt := tomlTable(t, table)
	var st reflect.Type
	if tt != nil {
		st = elemStruct(tt)
	}
	if st == nil {
		return "unknown key"
	}
	known := tagNames(st, "toml")
	where := "at the top level"
	if len(table) > 0 {
		where = "in " + tableHeader(tt, table)
	}
	if s := nearest(key, known); s != "" {
		return "unknown key " + where + ": did you mean " + s + "?"
	}
	slices.Sort(known)
	return "unknown key " + where + "; the keys there are " + strings.Join(known, ", ")
}

// tableHeader spells the table of type t at path as its TOML header:
// [lever] for a table, [[gate]] for an array of tables.
func tableHeader(t reflect.Type, path []string) string {
	name := strings.Join(path, ".")
	if t.Kind() == reflect.Slice {
		return "[[" + name + "]]"
	}
	return "[" + name + "]"
}

// exprSignatures spells each function of the expression environment with
// its arguments (temperatures in °C, altitudes in ft); target is the shell's
// own.
var exprSignatures = map[string]string{
	"bleed":     `bleed(name) → bool`,
	"rating":    `rating(name) → number`,
	"rating_at": `rating_at(name, alt_ft, temp_c) → number`,
	"assumed":   `assumed(name) → number`,
	"isa_temp":  `isa_temp(alt_ft) → °C`,
	"clamp":     `clamp(x, lo, hi) → number`,
	"lerp":      `lerp(a, b, f) → a + (b − a)·f`,
	"target":    `target(name) → number (shell only)`,
}

// ExprHint returns what a user needs to mend an expression, given the first
// line of its compile error: for an unknown name, the nearest of names (the
// environment's variables and functions) and the full list; for a function
// called with the wrong number of arguments, its signature. It returns ""
// when it has nothing to add.
func ExprHint(msg string, names []string) string {
	if name, ok := strings.CutPrefix(msg, "unknown name "); ok {
		sorted := slices.Sorted(slices.Values(names))
		hint := "."
		if s := nearest(name, sorted); s != "" {
			hint = ": did you mean " + s + "?"
		}
		return hint + " The names are " + strings.Join(sorted, ", ") + "."
	}
	for _, head := range []string{"not enough arguments to call ", "too many arguments to call "} {
		if fn, ok := strings.CutPrefix(msg, head); ok {
			if sig, ok := exprSignatures[fn]; ok {
				return ": " + sig
			}
		}
	}
	return ""
}

// exprNames lists the variables and functions of the gate expression
// environment.
func exprNames() []string { return tagNames(reflect.TypeFor[exprEnv](), "expr") }
