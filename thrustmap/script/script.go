// Package script is thrustmap's command language: one command a line, '#'
// comments, quantities with unit suffixes and expressions in expr-lang. The
// same interpreter serves the interactive shell and batch runs in CI.
//
// A script sets conditions, computes rating targets and lever commands, and
// checks them:
//
//	profile demo
//	set alt 2000 oat 30 mach 0
//	target takeoff
//	check value within 0.1 of 97.4
//	expect-error "unknown rating" target cruise-climb
//
// Every command is listed, with its help, by Commands.
package script

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"

	"github.com/expr-lang/expr/vm"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// Error is a script error — bad syntax, an unknown name, a file that will
// not load — with its place, printed as "file:line: message".
type Error struct {
	File string
	Line int
	Err  error
}

func (e *Error) Error() string {
	if e.File == "" {
		return e.Err.Error()
	}
	return fmt.Sprintf("%s:%d: %v", e.File, e.Line, e.Err)
}

// Unwrap returns the underlying error.
func (e *Error) Unwrap() error { return e.Err }

// Failure is an assertion that did not hold.
type Failure struct {
	File string
	Line int
	Expr string // what was checked
	Got  string
	Want string
	// Values are the variables the expression read, as "name = value",
	// so a failure says what it compared.
	Values []string
}

func (f Failure) String() string {
	s := fmt.Sprintf("%s:%d: check %s: got %s, want %s", f.File, f.Line, f.Expr, f.Got, f.Want)
	if len(f.Values) > 0 {
		s += " (" + strings.Join(f.Values, ", ") + ")"
	}
	return s
}

// Assertion is the outcome of one check, reported to an Observer.
type Assertion struct {
	File   string
	Line   int
	Expr   string
	Passed bool
	Detail string // the failure, when not passed
}

// ErrFailFast stops a run at the first failed assertion.
var ErrFailFast = errors.New("stopped at the first failed assertion (--fail-fast)")

// Interpreter runs commands against a session: a profile, a calibration,
// conditions, lever states and named values. It is not safe for concurrent
// use.
type Interpreter struct {
	out    io.Writer // what commands print
	report io.Writer // failed checks

	profile *thrustmap.Profile
	cal     *thrustmap.Calibration
	model   *thrustmap.Model
	cond    thrustmap.Conditions
	field   *[2]float64 // elevation ft, QNH hPa, when set by `field`
	levers  map[int]*thrustmap.LeverState

	names   map[string]any // defined by let
	env     map[string]any // the expression environment
	progs   map[string]*vm.Program
	machine vm.VM
	last    result

	calEdited bool
	depth     int // include nesting

	passed, failed int
	failures       []Failure

	// FailFast stops at the first failed assertion with ErrFailFast.
	FailFast bool
	// Observer, if set, is told of every assertion as it is checked.
	Observer func(Assertion)
	// Interactive marks a session at the shell's prompt.
	Interactive bool
	// NoFiles refuses every command that would read or write a file
	// (profiles and calibrations by name only), for untrusted scripts.
	NoFiles bool
}

// result is what the last target, lever or tla command computed.
type result struct {
	value   float64
	gate    string
	between string // "climb and continuous" when the lever was between gates
	tla     float64
	reverse bool
	flags   []string
	clamped []string
}

// demoProfile is the embedded demo, parsed once: profiles are immutable.
var demoProfile = sync.OnceValues(func() (*thrustmap.Profile, error) { return thrustmap.LoadProfile("demo") })

// New returns an interpreter writing to out, on the embedded demo profile.
func New(out io.Writer) (*Interpreter, error) {
	in := &Interpreter{out: out, report: out, levers: map[int]*thrustmap.LeverState{}, names: map[string]any{}, progs: map[string]*vm.Program{}}
	p, err := demoProfile()
	if err != nil {
		return nil, err
	}
	if err := in.setProfile(p); err != nil {
		return nil, err
	}
	in.cond = thrustmap.Conditions{AltitudeFt: 0, OATC: 15}
	in.refreshEnv()
	return in, nil
}

// SetOutput sends what commands print to out and the failed checks to
// report (which may be the same writer).
func (in *Interpreter) SetOutput(out, report io.Writer) { in.out, in.report = out, report }

// Passed and Failed count the assertions checked so far.
func (in *Interpreter) Passed() int { return in.passed }

// Failed counts the assertions that did not hold.
func (in *Interpreter) Failed() int { return in.failed }

// Failures returns the failed assertions.
func (in *Interpreter) Failures() []Failure { return append([]Failure(nil), in.failures...) }

// CalibrationEdited reports whether the session's calibration was changed
// and not saved.
func (in *Interpreter) CalibrationEdited() bool { return in.calEdited }

// Profile returns the session's profile.
func (in *Interpreter) Profile() *thrustmap.Profile { return in.profile }

// Calibration returns the session's lever calibration, or nil.
func (in *Interpreter) Calibration() *thrustmap.Calibration { return in.cal }

// Names returns the names defined with let.
func (in *Interpreter) Names() []string {
	var out []string
	for n := range in.names {
		out = append(out, n)
	}
	return out
}

// RunFile runs a script file.
func (in *Interpreter) RunFile(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return &Error{Err: err}
	}
	defer f.Close()
	return in.Run(f, path)
}

// Run runs the script read from r; name is its file name in messages and
// the base of relative include and points paths. It stops at the first
// script error (an *Error), with FailFast at the first failed assertion,
// and without error at exit or quit.
func (in *Interpreter) Run(r io.Reader, name string) error {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1024*1024)
	for n := 1; sc.Scan(); n++ {
		if err := in.Exec(sc.Text(), name, n); errors.Is(err, ErrExit) {
			return nil
		} else if err != nil {
			return err
		}
	}
	if err := sc.Err(); err != nil {
		return &Error{File: name, Err: err}
	}
	return nil
}

// Exec runs one line of file at line n. Script errors come back as *Error.
func (in *Interpreter) Exec(line, file string, n int) error {
	text := strings.TrimSpace(stripComment(line))
	if text == "" {
		return nil
	}
	name, rest, _ := strings.Cut(text, " ")
	rest = strings.TrimSpace(rest)
	c := lookup(name)
	if c == nil {
		return &Error{File: file, Line: n, Err: fmt.Errorf("unknown command %q (try help)", name)}
	}
	ctx := &call{in: in, file: file, line: n, rest: rest}
	err := c.run(ctx)
	switch {
	case err == nil:
		return nil
	case errors.Is(err, ErrFailFast), errors.Is(err, ErrExit):
		return err
	}
	var se *Error
	if errors.As(err, &se) {
		return err
	}
	return &Error{File: file, Line: n, Err: err}
}

// call is one command being run.
type call struct {
	in   *Interpreter
	file string
	line int
	rest string
}

func (c *call) fields() []string { return strings.Fields(c.rest) }

// errNoFiles is returned by file commands in a NoFiles session.
var errNoFiles = errors.New("files are not allowed in this session")

// filePath resolves p relative to the running script's directory, unless
// the session allows no files.
func (c *call) filePath(p string) (string, error) {
	if c.in.NoFiles {
		return "", errNoFiles
	}
	return c.path(p), nil
}

// path resolves p relative to the running script's directory.
func (c *call) path(p string) string {
	if filepath.IsAbs(p) || c.file == "" || c.file == "-" || strings.HasPrefix(c.file, "<") {
		return p
	}
	return filepath.Join(filepath.Dir(c.file), p)
}

// stripComment drops a '#' comment that is not inside quotes.
func stripComment(s string) string {
	var quote rune
	for i, r := range s {
		switch {
		case quote != 0:
			if r == quote {
				quote = 0
			}
		case r == '"' || r == '\'':
			quote = r
		case r == '#':
			return s[:i]
		}
	}
	return s
}

// setProfile switches the session to p, keeping a calibration that fits.
func (in *Interpreter) setProfile(p *thrustmap.Profile) error {
	m, err := thrustmap.NewModel(p, in.cal)
	if err != nil && in.cal != nil {
		return err
	}
	in.profile, in.model = p, m
	in.levers = map[int]*thrustmap.LeverState{}
	in.progs = map[string]*vm.Program{}
	in.cond.Bleeds = 0
	in.refreshEnv()
	return nil
}

// setCalibration switches the session to cal.
func (in *Interpreter) setCalibration(cal *thrustmap.Calibration) error {
	m, err := thrustmap.NewModel(in.profile, cal)
	if err != nil {
		return err
	}
	in.cal, in.model = cal, m
	in.levers = map[int]*thrustmap.LeverState{}
	return nil
}

func (in *Interpreter) printf(format string, args ...any) {
	fmt.Fprintf(in.out, format, args...)
}
