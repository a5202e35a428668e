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

// TestShellOnTerminal drives the interactive shell through a pseudo-terminal:
// tab completion of commands and ratings, Ctrl-C cancelling a line, and
// Ctrl-D asking first when an edited calibration is unsaved.
func TestShellOnTerminal(t *testing.T) {
	ptmx, tty, err := pty.Open()
	if err != nil {
		t.Skipf("no pseudo-terminal: %v", err)
	}
	defer ptmx.Close()
	t.Setenv("XDG_STATE_HOME", t.TempDir()) // history goes to a temporary state directory

	var mu sync.Mutex
	var screen bytes.Buffer
	go func() {
		buf := make([]byte, 4096)
		for {
			n, err := ptmx.Read(buf)
			mu.Lock()
			screen.Write(buf[:n])
			mu.Unlock()
			if err != nil {
				return
			}
		}
	}()
	done := make(chan int, 1)
	go func() {
		done <- runWithInput([]string{"shell", "-c", "demo"}, tty, tty, tty)
		tty.Close()
	}()
	waitFor := func(want string) {
		t.Helper()
		deadline := time.Now().Add(10 * time.Second)
		for time.Now().Before(deadline) {
			mu.Lock()
			ok := strings.Contains(screen.String(), want)
			mu.Unlock()
			if ok {
				return
			}
			time.Sleep(20 * time.Millisecond)
		}
		mu.Lock()
		defer mu.Unlock()
		t.Fatalf("no %q on the terminal; it shows:\n%s", want, screen.String())
	}
	send := func(s string) {
		if _, err := io.WriteString(ptmx, s); err != nil {
			t.Fatal(err)
		}
		time.Sleep(50 * time.Millisecond)
	}

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
