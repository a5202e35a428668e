//go:build unix

package main

import (
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// fakeIoctl answers the device requests for the files of a fake tree, by
// path; any other file is not a device.
type fakeIoctl struct {
	evdev map[string]input.EvdevInfo
	js    map[string]input.JoystickInfo
}

func (f fakeIoctl) Evdev(file *os.File) (input.EvdevInfo, error) {
	if i, ok := f.evdev[file.Name()]; ok {
		return i, nil
	}
	return input.EvdevInfo{}, fmt.Errorf("%s: %w", file.Name(), input.ErrNotDevice)
}

func (f fakeIoctl) Joystick(file *os.File) (input.JoystickInfo, error) {
	if i, ok := f.js[file.Name()]; ok {
		return i, nil
	}
	return input.JoystickInfo{}, fmt.Errorf("%s: %w", file.Name(), input.ErrNotDevice)
}

// fakeTree is a device tree laid out as on Linux, in a temporary
// directory: the files of /dev/input are FIFOs or regular files standing in
// for devices, /sys/class/input describes them.
type fakeTree struct {
	root   string
	ioctl  fakeIoctl
	denied map[string]bool
}

func newFakeTree(t *testing.T) *fakeTree {
	t.Helper()
	return &fakeTree{root: t.TempDir(), ioctl: fakeIoctl{evdev: map[string]input.EvdevInfo{}, js: map[string]input.JoystickInfo{}}, denied: map[string]bool{}}
}

// file writes a regular file below the root and returns its path.
func (ft *fakeTree) file(t *testing.T, name, text string) string {
	t.Helper()
	p := filepath.Join(ft.root, name)
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// fifo makes a named pipe below the root and returns its path.
func (ft *fakeTree) fifo(t *testing.T, name string) string {
	t.Helper()
	p := filepath.Join(ft.root, name)
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := syscall.Mkfifo(p, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	return p
}

// system is the System over the tree; opening a denied path fails for
// lack of permission, as it would for a user outside the device's group.
func (ft *fakeTree) system() *input.System {
	return &input.System{
		Root:  ft.root,
		Ioctl: ft.ioctl,
		OpenFile: func(name string) (*os.File, error) {
			if ft.denied[name] {
				return nil, &fs.PathError{Op: "open", Path: name, Err: syscall.EACCES}
			}
			return os.Open(name)
		},
		Access: func(path string) error {
			if ft.denied[path] {
				return &fs.PathError{Op: "access", Path: path, Err: syscall.EACCES}
			}
			return nil
		},
	}
}

// useSystem makes the commands use s for the rest of the test.
func useSystem(t *testing.T, s *input.System) {
	t.Helper()
	old := devSystem
	devSystem = s
	t.Cleanup(func() { devSystem = old })
}

// stepClock is a clock that moves on by step at each reading, so a line
// reader stamps lines read in a burst as if they came step apart.
type stepClock struct {
	mu   sync.Mutex
	t    time.Time
	step time.Duration
}

func (c *stepClock) now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.t = c.t.Add(c.step)
	return c.t
}
