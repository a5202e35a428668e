package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"

	"github.com/chzyer/readline"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/thrustmap/thrustmap/thrustmap/script"
)

func newShellCmd() *cobra.Command {
	var sf sessionFlags
	cmd := &cobra.Command{
		Use:   "shell [-p PROFILE] [-c CAL]",
		Short: "Interactive session in thrustmap's command language",
		Long: `shell reads commands one a line — set conditions, compute targets, feed raw
lever counts, define named values, check results, edit and save a calibration.
Type help for the commands. On a terminal it has history (kept in the user's
state directory), tab completion of commands, ratings, gates, bleeds and
defined names, Ctrl-C to cancel a line and Ctrl-D to leave (asking first when
an edited calibration is unsaved). Without a terminal it reads commands from
standard input. It starts on the embedded demo profile when no -p is given.

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
			return piped(in, cmd.InOrStdin(), out, cmd.ErrOrStderr())
		},
	}
	sf.register(cmd)
	return cmd
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// piped runs commands from a reader: each error is printed and the session
// goes on, as at the prompt.
func piped(in *script.Interpreter, r io.Reader, out, errOut io.Writer) error {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1024*1024)
	for n := 1; sc.Scan(); n++ {
		line := strings.TrimSpace(sc.Text())
		if line == "quit" || line == "exit" {
			break
		}
		if err := in.Exec(line, "stdin", n); err != nil {
			fmt.Fprintf(errOut, "error: %v\n", err)
		}
	}
	if in.CalibrationEdited() {
		fmt.Fprintln(errOut, "warning: the calibration was edited and not saved")
	}
	return sc.Err()
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

// completer completes commands, then ratings, gates, bleeds and names.
type completer struct{ in *script.Interpreter }

// Do implements readline.AutoCompleter.
func (c completer) Do(line []rune, pos int) ([][]rune, int) {
	text := string(line[:pos])
	words := strings.Fields(text)
	if len(words) == 0 || (len(words) == 1 && !strings.HasSuffix(text, " ")) {
		var names []string
		for _, cmd := range script.Commands() {
			names = append(names, cmd.Name)
		}
		return complete(names, lastWord(text))
	}
	return complete(c.candidates(words[0]), lastWord(text))
}

func (c completer) candidates(command string) []string {
	p := c.in.Profile()
	var out []string
	switch command {
	case "target":
		for _, r := range p.Ratings() {
			out = append(out, r.Name())
		}
	case "bleed":
		out = append(p.Bleeds(), "on", "off")
	case "help":
		for _, cmd := range script.Commands() {
			out = append(out, cmd.Name)
		}
	case "set":
		out = []string{"alt", "oat", "mach", "assumed", "ground"}
	default:
		out = append(out, c.in.Names()...)
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
