package thrustmap

import (
	"errors"
	"fmt"
	"reflect"
	"strings"

	"github.com/pelletier/go-toml/v2"
)

// FileError is one fault in an input file, with its place: the file, the
// line (0 when unknown), the column (in a table CSV file; 0 when unknown) and
// the key path ("rating[2].values[3]"), modelled on encoding/csv's
// ParseError.
type FileError struct {
	File   string
	Line   int
	Column int // 1-based byte column
	Key    string
	Code   string // a stable code for the kind of fault (see the Check constants)
	Err    error
}

// Place prints "FILE:LINE:COL", leaving out what is unknown.
func (e *FileError) Place() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
		if e.Column > 0 {
			fmt.Fprintf(&b, ":%d", e.Column)
		}
	}
	return b.String()
}

// Error prints "FILE:LINE:COL: KEY: message", leaving out what is unknown.
func (e *FileError) Error() string {
	var b strings.Builder
	b.WriteString(e.Place())
	if e.Key != "" {
		b.WriteString(": ")
		b.WriteString(e.Key)
	}
	b.WriteString(": ")
	b.WriteString(e.Err.Error())
	return b.String()
}

// Unwrap returns the underlying error.
func (e *FileError) Unwrap() error { return e.Err }

// FileErrors is every fault found in one file, in the order found.
type FileErrors []*FileError

// Error prints one fault a line.
func (l FileErrors) Error() string {
	lines := make([]string, len(l))
	for i, e := range l {
		lines[i] = e.Error()
	}
	return strings.Join(lines, "\n")
}

// Unwrap returns the faults, for errors.Is and errors.As.
func (l FileErrors) Unwrap() []error {
	errs := make([]error, len(l))
	for i, e := range l {
		errs[i] = e
	}
	return errs
}

// maxFileErrors caps how many faults one file reports, so a badly broken
// file gives a readable list rather than thousands of lines.
const maxFileErrors = 20

// collector gathers the faults of one file with their lines.
type collector struct {
	file   string
	lines  keyLines
	errs   FileErrors
	broken map[string]bool // ratings that failed to build: references to them are not faults of their own
}

// Stable codes of the faults that stop a file loading; the data verifier
// reports them as findings with these codes.
const (
	CheckSyntax      = "toml_syntax"      // not valid TOML
	CheckUnknownKey  = "unknown_key"      // a key the format does not have
	CheckWrongType   = "wrong_type"       // a value of the wrong type
	CheckAxisOrder   = "axis_order"       // an axis not strictly increasing
	CheckNotFinite   = "value_not_finite" // NaN or infinity
	CheckBounds      = "value_bounds"     // outside the parameter's physical range
	CheckGridShape   = "grid_shape"       // values that do not match their axes
	CheckReference   = "unknown_name"     // a rating, bleed or gate that is not declared
	CheckGateOrder   = "gate_order"       // gates not in increasing TLA
	CheckGateSpacing = "gate_spacing"     // capture zones too close (docs/methods.md, Gate rules)
	CheckExpression  = "expression"       // a gate expression that does not compile
	CheckInvalid     = "invalid"          // any other fault
)

// add records a fault at key path key.
func (c *collector) add(key, format string, args ...any) {
	c.addCode(CheckInvalid, key, format, args...)
}

// addCode records a fault with its stable code.
func (c *collector) addCode(code, key, format string, args ...any) {
	if len(c.errs) >= maxFileErrors {
		return
	}
	c.errs = append(c.errs, &FileError{File: c.file, Line: c.lines.line(key), Key: key, Code: code, Err: fmt.Errorf(format, args...)})
}

// namesBroken reports whether the expression src names, quoted, a rating
// that failed to build: its faults are reported already, and the
// expression's failure would only echo them.
func (c *collector) namesBroken(src string) bool {
	for name := range c.broken {
		if strings.Contains(src, "'"+name+"'") || strings.Contains(src, `"`+name+`"`) {
			return true
		}
	}
	return false
}

// err returns the faults as an error, or nil.
func (c *collector) err() error {
	if len(c.errs) == 0 {
		return nil
	}
	return c.errs
}

// tomlError converts an error from the TOML decoder into FileErrors with
// lines: syntax errors, type mismatches and unknown keys. schema is the
// decoder's struct type, so an unknown key can be answered with the nearest
// known one.
func tomlError(file string, err error, schema reflect.Type) error {
	var strict *toml.StrictMissingError
	if errors.As(err, &strict) {
		var out FileErrors
		for i := range strict.Errors {
			e := &strict.Errors[i]
			line, _ := e.Position()
			out = append(out, &FileError{File: file, Line: line, Key: strings.Join(e.Key(), "."), Code: CheckUnknownKey,
				Err: errors.New(unknownKeyMessage(schema, e.Key()))})
			if len(out) == maxFileErrors {
				break
			}
		}
		return out
	}
	var dec *toml.DecodeError
	if errors.As(err, &dec) {
		line, _ := dec.Position()
		code := CheckSyntax
		if strings.Contains(dec.Error(), "cannot decode") {
			code = CheckWrongType
		}
		return FileErrors{{File: file, Line: line, Key: strings.Join(dec.Key(), "."), Code: code, Err: errors.New(decodeMessage(dec.Error()))}}
	}
	return FileErrors{{File: file, Code: CheckSyntax, Err: err}}
}

// decodeMessage rewrites the decoder's type-mismatch message
// ("toml: cannot decode TOML string into struct field x.y of type float64")
// in the file's terms ("wrong type: got a string, want a number").
func decodeMessage(msg string) string {
	msg = strings.TrimPrefix(msg, "toml: ")
	const head = "cannot decode TOML "
	if !strings.HasPrefix(msg, head) {
		return msg
	}
	got, goType, _ := strings.Cut(strings.TrimPrefix(msg, head), " ")
	if i := strings.LastIndex(msg, " of type "); i >= 0 {
		goType = msg[i+len(" of type "):]
	} else if i := strings.LastIndex(msg, " into "); i >= 0 {
		goType = msg[i+len(" into "):]
	}
	want := map[string]string{
		"float64": "a number", "*float64": "a number", "int": "an integer", "*int": "an integer",
		"string": "a string", "bool": "true or false", "[]float64": "an array of numbers",
		"[]string": "an array of strings",
	}[goType]
	if want == "" {
		want = "another type"
	}
	return "wrong type: got a " + got + ", want " + want
}
