package main

import (
	"bufio"
	"cmp"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"

	"github.com/chzyer/readline"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/script"
)

func newShellCmd() *cobra.Command {
	var sf sessionFlags
	var keepGoing bool
	cmd := &cobra.Command{
		Use:   "shell [-p PROFILE] [-c CAL] [--keep-going]",
		Short: "Interactive session in thrustmap's command language",
		Long: `shell reads commands one a line — set conditions, compute targets, feed raw
lever counts, define named values, check results, edit and save a calibration.
Type help for the commands. On a terminal it has history (kept in the user's
state directory), tab completion of commands, ratings, gates, bleeds and
defined names, Ctrl-C to cancel a line and Ctrl-D to leave (asking first when
an edited calibration is unsaved). Without a terminal it reads commands from
standard input and, as run does, stops at the first script error with exit
status 2 (--keep-going goes on, and still exits 2); failed checks exit 1. It
starts on the embedded demo profile when no -p is given.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			out := cmd.OutOrStdout()
			in, err := sf.newInterpreter(out, out)
			if err != nil {
				return err
			}
			in.Interactive = true
			if f, ok := cmd.InOrStdin().(*os.File); ok && term.IsTerminal(int(f.Fd())) && isTerminal(out) {
				return interactive(in, f, out, cmd.ErrOrStderr())
			}
			return piped(in, cmd.InOrStdin(), out, cmd.ErrOrStderr(), keepGoing)
		},
	}
	sf.register(cmd)
	cmd.Flags().BoolVar(&keepGoing, "keep-going", false, "without a terminal: go on after a script error (the exit status is still 2)")
	return cmd
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// piped runs commands from a reader, as run runs a script: it stops at the
// first script error (exit 2) unless keepGoing, which prints each error and
// goes on but still ends with exit 2; failed checks end with exit 1.
func piped(in *script.Interpreter, r io.Reader, out, errOut io.Writer, keepGoing bool) error {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1024*1024)
	var errs int
	for n := 1; sc.Scan(); n++ {
		err := in.Exec(sc.Text(), "stdin", n)
		if errors.Is(err, script.ErrExit) {
			break
		}
		if err != nil {
			errs++
			if !keepGoing {
				return err
			}
			fmt.Fprintf(errOut, "error: %v\n", err)
		}
	}
	if in.CalibrationEdited() {
		fmt.Fprintln(errOut, "warning: the calibration was edited and not saved")
	}
	switch {
	case sc.Err() != nil:
		return sc.Err()
	case errs > 0:
		return fmt.Errorf("%d script error(s) on standard input", errs)
	case in.Failed() > 0:
		return &checksFailed{fmt.Sprintf("%d check(s) failed", in.Failed())}
	}
	return nil
}

// rawWriter writes to a terminal that the line editor may have put in raw
// mode, where a line feed moves the cursor down without returning it to the
// first column: while raw, every "\n" not already after "\r" goes out as
// "\r\n", so output after a command and completion lists start at column 0.
type rawWriter struct {
	mu     sync.Mutex
	w      io.Writer
	raw    bool
	lastCR bool // the last byte written was "\r"
}

// setRaw records whether the terminal is in raw mode.
func (r *rawWriter) setRaw(raw bool) {
	r.mu.Lock()
	r.raw = raw
	r.mu.Unlock()
}

// Write implements io.Writer.
func (r *rawWriter) Write(p []byte) (int, error) {
	r.mu.Lock()
	defer r.mu.Unlock()
	if len(p) == 0 {
		return 0, nil
	}
	if !r.raw {
		r.lastCR = p[len(p)-1] == '\r'
		return r.w.Write(p)
	}
	out := make([]byte, 0, len(p)+8)
	prevCR := r.lastCR
	for _, b := range p {
		if b == '\n' && !prevCR {
			out = append(out, '\r')
		}
		out = append(out, b)
		prevCR = b == '\r'
	}
	r.lastCR = prevCR
	if _, err := r.w.Write(out); err != nil {
		return 0, err
	}
	return len(p), nil
}

// interactive runs the readline prompt on the terminal tty.
func interactive(in *script.Interpreter, tty *os.File, out, errOut io.Writer) error {
	fd := int(tty.Fd())
	var saved *term.State
	rawOut, rawErr := &rawWriter{w: out}, &rawWriter{w: errOut}
	cfg := &readline.Config{
		Prompt:          "thrustmap> ",
		HistoryFile:     historyFile(),
		AutoComplete:    completer{in},
		InterruptPrompt: "^C",
		EOFPrompt:       "",
		Stdin:           io.NopCloser(tty),
		Stdout:          rawOut,
		Stderr:          rawErr,
		FuncIsTerminal:  func() bool { return true },
		FuncMakeRaw: func() (err error) {
			saved, err = term.MakeRaw(fd)
			rawOut.setRaw(err == nil)
			rawErr.setRaw(err == nil)
			return err
		},
		FuncExitRaw: func() error {
			if saved == nil {
				return nil
			}
			rawOut.setRaw(false)
			rawErr.setRaw(false)
			return term.Restore(fd, saved)
		},
		FuncGetWidth: func() int {
			w, _, err := term.GetSize(fd)
			if err != nil || w <= 0 {
				return 80
			}
			return w
		},
	}
	rl, err := readline.NewEx(cfg)
	if err != nil {
		return err
	}
	defer rl.Close()
	fmt.Fprintf(out, "thrustmap shell on %s — help lists the commands, Ctrl-D leaves.\n%s\n", in.Profile().Source(), safetyNote)
	warned := false
	for n := 1; ; n++ {
		line, err := rl.Readline()
		switch {
		case errors.Is(err, readline.ErrInterrupt):
			continue // Ctrl-C cancels the line
		case errors.Is(err, io.EOF):
			if in.CalibrationEdited() && !warned {
				fmt.Fprintln(errOut, "the calibration was edited and not saved: save FILE to keep it, or Ctrl-D again to leave without saving")
				warned = true
				continue
			}
			return nil
		case err != nil:
			return err
		}
		line = strings.TrimSpace(line)
		if line == "quit" || line == "exit" {
			if in.CalibrationEdited() && !warned {
				fmt.Fprintln(errOut, "the calibration was edited and not saved: save FILE to keep it, or quit again to leave without saving")
				warned = true
				continue
			}
			return nil
		}
		if err := in.Exec(line, "shell", n); err != nil {
			fmt.Fprintf(errOut, "error: %v\n", err)
		}
	}
}

// historyFile is $XDG_STATE_HOME/thrustmap/history, or
// ~/.local/state/thrustmap/history; "" (no history) when neither exists.
func historyFile() string {
	dir := os.Getenv("XDG_STATE_HOME")
	if dir == "" {
		home, err := os.UserHomeDir()
		if err != nil {
			return ""
		}
		dir = filepath.Join(home, ".local", "state")
	}
	dir = filepath.Join(dir, "thrustmap")
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return ""
	}
	return filepath.Join(dir, "history")
}

// completer offers what fits where the cursor is: command names first,
// then that command's own arguments — ratings, gates, bleeds, set keys and
// values, lever ids, file names — and nothing where nothing fits (a number).
type completer struct{ in *script.Interpreter }

// Do implements readline.AutoCompleter.
func (c completer) Do(line []rune, pos int) ([][]rune, int) {
	text := string(line[:pos])
	words := strings.Fields(text)
	if !strings.HasSuffix(text, " ") && len(words) > 0 {
		words = words[:len(words)-1] // the word being typed is not yet an argument
	}
	word := lastWord(text)
	// expect-error "TEXT" COMMAND...: complete the command it runs.
	if len(words) > 0 && words[0] == "expect-error" {
		if _, after, ok := strings.Cut(text, `" `); ok && strings.Count(text, `"`) >= 2 {
			return c.Do([]rune(strings.TrimLeft(after, " ")), len([]rune(strings.TrimLeft(after, " "))))
		}
		return nil, 0
	}
	if len(words) == 0 {
		return complete(scriptCommandNames(), word)
	}
	if files, ok := c.files(words[0], len(words)); ok {
		return completeFiles(files, text)
	}
	return complete(c.candidates(words[0], len(words)-1, words), word)
}

// scriptCommandNames are the names of the command language's commands.
func scriptCommandNames() []string {
	var names []string
	for _, cmd := range script.Commands() {
		names = append(names, cmd.Name)
	}
	slices.Sort(names)
	return names
}

// candidates are the completions of argument arg (0-based) of command.
func (c completer) candidates(command string, arg int, words []string) []string {
	p := c.in.Profile()
	var out []string
	switch command {
	case "target":
		if arg == 0 {
			for _, r := range p.Ratings() {
				out = append(out, r.Name())
			}
		}
	case "bleed":
		switch arg {
		case 0:
			out = p.Bleeds()
		case 1:
			out = []string{"on", "off"}
		}
	case "help":
		if arg == 0 {
			out = scriptCommandNames()
		}
	case "set":
		if arg%2 == 0 {
			out = []string{"alt", "oat", "mach", "assumed", "ground"}
			break
		}
		switch words[len(words)-1] {
		case "ground":
			out = []string{"on", "off"}
		case "assumed":
			out = []string{"off"}
		}
	case "profile":
		if arg == 0 {
			out = thrustmap.EmbeddedProfiles()
		}
	case "calibration":
		if arg == 0 {
			out = thrustmap.EmbeddedProfiles()
		}
	case "lever", "point":
		if arg == 0 && c.in.Calibration() != nil {
			for _, l := range c.in.Calibration().Levers() {
				out = append(out, strconv.Itoa(l.ID()))
			}
		}
	case "print", "check", "let":
		// An expression: the session's names, and the profile's gates and
		// ratings for gate == "..." and rating('...').
		if command == "let" && arg < 2 {
			break
		}
		out = append(out, c.in.Names()...)
		out = append(out, exprVariables...)
		for _, g := range p.Gates() {
			out = append(out, g.Name)
		}
		for _, r := range p.Ratings() {
			out = append(out, r.Name())
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// exprVariables are the names every shell expression can read.
var exprVariables = []string{"alt", "oat", "tat", "isa_dev", "mach", "on_ground", "assumed_set", "assumed_temp",
	"value", "gate", "tla", "reverse", "rating", "rating_at", "target", "assumed", "bleed", "isa_temp", "clamp", "lerp"}

// files reports whether argument arg of command is a file name, and the
// file name endings it takes ("" for any).
func (c completer) files(command string, args int) ([]string, bool) {
	if args != 1 {
		return nil, false
	}
	switch command {
	case "profile", "calibration", "save":
		return []string{".toml"}, true
	case "include":
		return []string{".script", ".tm"}, true
	case "points":
		return []string{".csv"}, true
	}
	return nil, false
}

// completeFiles completes the file name being typed at the end of text
// with the directories and the files of the given endings there; for
// profile and calibration the embedded names come too.
func completeFiles(exts []string, text string) ([][]rune, int) {
	word := text[strings.LastIndexByte(text, ' ')+1:]
	dir, base := filepath.Split(word)
	entries, _ := os.ReadDir(cmp.Or(dir, "."))
	var out [][]rune
	for _, e := range entries {
		name := e.Name()
		if !strings.HasPrefix(name, base) || (strings.HasPrefix(name, ".") && !strings.HasPrefix(base, ".")) {
			continue
		}
		switch {
		case e.IsDir():
			out = append(out, []rune(name[len(base):]+"/"))
		case slices.ContainsFunc(exts, func(x string) bool { return strings.HasSuffix(name, x) }):
			out = append(out, []rune(name[len(base):]+" "))
		}
	}
	if dir == "" && slices.Contains(exts, ".toml") {
		more, _ := complete(slices.Sorted(slices.Values(thrustmap.EmbeddedProfiles())), base)
		out = append(out, more...)
	}
	return out, len([]rune(base))
}

func lastWord(s string) string {
	if i := strings.LastIndexAny(s, " ('\"(,"); i >= 0 {
		return s[i+1:]
	}
	return s
}

// complete returns the suffixes of the candidates that start with prefix.
func complete(candidates []string, prefix string) ([][]rune, int) {
	var out [][]rune
	for _, c := range candidates {
		if strings.HasPrefix(c, prefix) {
			out = append(out, []rune(c[len(prefix):]+" "))
		}
	}
	return out, len([]rune(prefix))
}
