//go:build unix

package main

import (
	"bytes"
	"io"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/creack/pty"
)

// ptySession runs the shell on a pseudo-terminal and returns what the
// terminal shows, a function sending keys, a function waiting for text on
// the screen, and the channel of the exit code.
func ptySession(t *testing.T, args ...string) (screen func() string, send func(string), waitFor func(string), done chan int) {
	t.Helper()
	ptmx, tty, err := pty.Open()
	if err != nil {
		t.Skipf("no pseudo-terminal: %v", err)
	}
	t.Cleanup(func() { ptmx.Close() })
	t.Setenv("XDG_STATE_HOME", t.TempDir()) // history goes to a temporary state directory

	var mu sync.Mutex
	var buf bytes.Buffer
	go func() {
		b := make([]byte, 4096)
		for {
			n, err := ptmx.Read(b)
			mu.Lock()
			buf.Write(b[:n])
			mu.Unlock()
			if err != nil {
				return
			}
		}
	}()
	done = make(chan int, 1)
	go func() {
		done <- runWithInput(append([]string{"shell"}, args...), tty, tty, tty)
		tty.Close()
	}()
	screen = func() string {
		mu.Lock()
		defer mu.Unlock()
		return buf.String()
	}
	waitFor = func(want string) {
		t.Helper()
		deadline := time.Now().Add(10 * time.Second)
		for time.Now().Before(deadline) {
			if strings.Contains(screen(), want) {
				return
			}
			time.Sleep(20 * time.Millisecond)
		}
		t.Fatalf("no %q on the terminal; it shows:\n%q", want, screen())
	}
	send = func(s string) {
		if _, err := io.WriteString(ptmx, s); err != nil {
			t.Fatal(err)
		}
		time.Sleep(50 * time.Millisecond)
	}
	return screen, send, waitFor, done
}

// TestShellOutputAtColumnZero: on a terminal in raw mode a line feed alone
// does not return the cursor, so every new line the shell or its line
// editor writes must be "\r\n" — else the first line of a command's output
// starts under the end of the typed line, and completion lists stair-step.
func TestShellOutputAtColumnZero(t *testing.T) {
	screen, send, waitFor, done := ptySession(t, "-c", "demo")
	waitFor("thrustmap> ")
	send("set alt 2000 oat 30\r")
	send("target takeoff\r")
	waitFor("takeoff N1 97.42 %")
	send("le\t\t") // two candidates, let and lever: a completion list
	waitFor("lever")
	send("\x03") // Ctrl-C leaves the list,
	send("\x03") // and again cancels the line
	send("exit\r")
	select {
	case <-done:
	case <-time.After(10 * time.Second):
		t.Fatalf("the shell did not leave on exit; the terminal shows:\n%q", screen())
	}
	out := screen()
	for i := range len(out) {
		if out[i] == '\n' && (i == 0 || out[i-1] != '\r') {
			t.Fatalf("a bare line feed at byte %d: the next line starts mid-screen:\n%q", i, out[max(0, i-60):min(len(out), i+40)])
		}
	}
	if !strings.Contains(out, "\r\ntakeoff N1 97.42 %") {
		t.Errorf("the target's output does not start a line of its own:\n%q", out)
	}
}

// TestShellOnTerminal drives the interactive shell through a pseudo-terminal:
// tab completion of commands and ratings, Ctrl-C cancelling a line, and
// Ctrl-D asking first when an edited calibration is unsaved.
func TestShellOnTerminal(t *testing.T) {
	_, send, waitFor, done := ptySession(t, "-c", "demo")
	waitFor("thrustmap> ")
	send("set alt 2000 oat 30\r")
	send("tar\t")    // completes the command
	send("take\t\r") // completes the rating
	waitFor("takeoff N1 97.42 %")
	send("print 1 +\x03") // Ctrl-C cancels the line
	send("point 1 1900 13\r")
	waitFor("not saved yet")
	send("\x04") // Ctrl-D: asks first
	waitFor("edited and not saved")
	send("\x04") // Ctrl-D again: leaves
	select {
	case code := <-done:
		if code != 0 {
			t.Errorf("exit %d", code)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("the shell did not leave on the second Ctrl-D")
	}
}
