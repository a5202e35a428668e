package main

import (
	"bufio"
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/script"
)

// sessionFlags load a profile and calibration into an interpreter.
type sessionFlags struct {
	profile, cal string
}

func (f *sessionFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVarP(&f.profile, "profile", "p", "", "profile file or embedded name (default: the embedded demo)")
	cmd.Flags().StringVarP(&f.cal, "cal", "c", "", "calibration file (or an embedded profile's name)")
}

// newInterpreter starts a session on the flags' profile and calibration,
// printing command output to out and failed checks to report.
func (f *sessionFlags) newInterpreter(out, report io.Writer) (*script.Interpreter, error) {
	in, err := script.New(io.Discard)
	if err != nil {
		return nil, err
	}
	if f.profile != "" {
		if err := in.Exec("profile "+f.profile, "", 0); err != nil {
			return nil, err
		}
	}
	if f.cal != "" {
		if err := in.Exec("calibration "+f.cal, "", 0); err != nil {
			return nil, err
		}
	}
	in.SetOutput(out, report)
	return in, nil
}

// JUnit XML, as read by CI servers.
type junitSuites struct {
	XMLName xml.Name     `xml:"testsuites"`
	Suites  []junitSuite `xml:"testsuite"`
}

type junitSuite struct {
	Name     string      `xml:"name,attr"`
	Tests    int         `xml:"tests,attr"`
	Failures int         `xml:"failures,attr"`
	Errors   int         `xml:"errors,attr"`
	Skipped  int         `xml:"skipped,attr"`
	Cases    []junitCase `xml:"testcase"`
}

// count sets the suite's totals from its test cases, so they always agree.
func (s *junitSuite) count() {
	s.Tests, s.Failures, s.Errors, s.Skipped = len(s.Cases), 0, 0, 0
	for _, c := range s.Cases {
		switch {
		case c.Failure != nil:
			s.Failures++
		case c.Error != nil:
			s.Errors++
		}
	}
}

type junitCase struct {
	Name      string        `xml:"name,attr"`
	Classname string        `xml:"classname,attr"`
	Failure   *junitFailure `xml:"failure,omitempty"`
	Error     *junitFailure `xml:"error,omitempty"`
}

type junitFailure struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr,omitempty"`
	Text    string `xml:",chardata"`
}

func newRunCmd() *cobra.Command {
	var sf sessionFlags
	var junit string
	var failFast, verbose bool
	cmd := &cobra.Command{
		Use:   "run [-p PROFILE] [-c CAL] [--junit FILE] [--fail-fast] [-v] SCRIPT...",
		Short: "Run scripts of checks; exit 1 when any check fails",
		Long: `run executes scripts in thrustmap's command language (see the shell's help), each
in a fresh session on the given profile and calibration. Every script given
runs, whatever happened in the others; a script error (bad syntax, an unknown
name, a file that will not load) ends that script, reported with its
file:line. Every failed check is reported with its file:line, what was
checked, what it gave and what was expected; the run ends with a line
"N passed, N failed", script errors counted as failed. With -v the output of
every command is shown too; --fail-fast stops the whole run at the first
failed check or script error. --junit writes one test suite per script.
Scripts conventionally end in .script, but any file given is read, whatever
its name ends in (older .tm files run as they are).
Exit status: 0 all passed, 1 a check failed, 2 a script had an error.

` + safetyNote,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			out := cmd.OutOrStdout()
			var suites junitSuites
			var bar *progressbar.ProgressBar
			if f, ok := cmd.ErrOrStderr().(*os.File); ok && term.IsTerminal(int(f.Fd())) {
				if lines := countLines(args); lines > 5000 {
					bar = progressbar.NewOptions(lines, progressbar.OptionSetWriter(f), progressbar.OptionSetDescription("checks"),
						progressbar.OptionClearOnFinish(), progressbar.OptionThrottle(100_000_000))
				}
			}
			passed, failed, scriptErrs := 0, 0, 0
			for _, path := range args {
				shown := io.Discard
				if verbose {
					shown = out
				}
				in, err := sf.newInterpreter(shown, out)
				if err != nil {
					return err
				}
				in.FailFast = failFast
				classname := strings.TrimSuffix(path, filepath.Ext(path))
				suite := junitSuite{Name: path}
				in.Observer = func(a script.Assertion) {
					c := junitCase{Name: fmt.Sprintf("%s:%d %s", a.File, a.Line, a.Expr), Classname: classname}
					if !a.Passed {
						c.Failure = &junitFailure{Message: a.Detail, Type: "check failed", Text: a.Detail}
					}
					suite.Cases = append(suite.Cases, c)
				}
				err = runScript(in, path, bar)
				passed, failed = passed+in.Passed(), failed+in.Failed()
				if err != nil && !errors.Is(err, script.ErrFailFast) {
					// A script error ends this script only; it counts as failed.
					scriptErrs++
					fmt.Fprintf(out, "ERROR %v\n", err)
					name := path + " script error"
					var se *script.Error
					if errors.As(err, &se) && se.File != "" {
						name = fmt.Sprintf("%s:%d script error", se.File, se.Line)
					}
					suite.Cases = append(suite.Cases, junitCase{Name: name, Classname: classname, Error: &junitFailure{Message: err.Error(), Type: "script error", Text: err.Error()}})
				}
				suite.count()
				suites.Suites = append(suites.Suites, suite)
				if failFast && (in.Failed() > 0 || err != nil) {
					break
				}
			}
			if bar != nil {
				bar.Finish()
			}
			if junit != "" {
				var b bytes.Buffer
				b.WriteString(xml.Header)
				enc := xml.NewEncoder(&b)
				enc.Indent("", "  ")
				if err := enc.Encode(suites); err != nil {
					return err
				}
				b.WriteByte('\n')
				if err := atomicfile.WriteFile(junit, b.Bytes(), 0o644, false); err != nil {
					return err
				}
			}
			fmt.Fprintf(out, "%d passed, %d failed\n", passed, failed+scriptErrs)
			switch {
			case scriptErrs > 0:
				return fmt.Errorf("%d script(s) had an error (see ERROR above)", scriptErrs)
			case failed > 0:
				return &checksFailed{msg: fmt.Sprintf("%d check(s) failed", failed)}
			}
			return nil
		},
	}
	sf.register(cmd)
	cmd.Flags().StringVar(&junit, "junit", "", "write a JUnit XML report to FILE")
	cmd.Flags().BoolVar(&failFast, "fail-fast", false, "stop the whole run at the first failed check or script error")
	cmd.Flags().BoolVarP(&verbose, "verbose", "v", false, "show every command's output")
	return cmd
}

// runScript runs one file, advancing the progress bar line by line.
func runScript(in *script.Interpreter, path string, bar *progressbar.ProgressBar) error {
	if bar == nil {
		return in.RunFile(path)
	}
	f, err := os.Open(path)
	if err != nil {
		return &script.Error{Err: err}
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		if err := in.Exec(sc.Text(), path, n); err != nil {
			return err
		}
		bar.Add(1)
	}
	return sc.Err()
}

func countLines(paths []string) int {
	n := 0
	for _, p := range paths {
		if b, err := os.ReadFile(p); err == nil {
			n += bytes.Count(b, []byte{'\n'})
		}
	}
	return n
}
