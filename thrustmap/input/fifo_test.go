//go:build unix

package input

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
)

// fifo makes a named pipe and writes data into it from a goroutine once a
// reader has opened it; the returned channel reports the writer's error.
func fifo(t *testing.T, data []byte) (string, <-chan error) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "lever")
	if err := syscall.Mkfifo(path, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	done := make(chan error, 1)
	go func() {
		f, err := os.OpenFile(path, os.O_WRONLY, 0) // waits for the reader
		if err != nil {
			done <- err
			return
		}
		// Two writes, so a record may arrive split across reads.
		half := len(data)/2 + 3
		if _, err = f.Write(data[:min(half, len(data))]); err == nil {
			_, err = f.Write(data[min(half, len(data)):])
		}
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		done <- err
	}()
	return path, done
}

// TestOpenDeviceFIFO reads evdev records, js_event records and serial lines
// through a named pipe, as from a live device.
func TestOpenDeviceFIFO(t *testing.T) {
	evdev := evdevStream(t,
		inputEvent{10, 0, EV_ABS, ABS_X, 1218},
		inputEvent{10, 0, EV_ABS, ABS_Z, 3021},
		inputEvent{10, 0, EV_SYN, SYN_REPORT, 0},
		inputEvent{10, 20_000, EV_ABS, ABS_X, 2588},
		inputEvent{10, 20_000, EV_SYN, SYN_REPORT, 0})
	js := jsStream(t,
		jsEvent{100, -32767, JS_EVENT_INIT | JS_EVENT_AXIS, 0},
		jsEvent{130, 32767, JS_EVENT_AXIS, 1})
	tests := []struct {
		name, format string
		data         []byte
		axes         map[int]int
		want         []Sample
		warning      string
	}{
		{"evdev", FormatEvdev, evdev, map[int]int{ABS_X: 1, ABS_Z: 2},
			[]Sample{{0, 1, 1218}, {0, 2, 3021}, {20, 1, 2588}}, ""},
		{"joystick", FormatJoystick, js, map[int]int{0: 1, 1: 2},
			[]Sample{{0, 1, -32767}, {30, 2, 32767}}, "rescales"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			path, done := fifo(t, tc.data)
			d, err := OpenDevice(path, OpenOptions{Format: tc.format, Axes: tc.axes})
			if err != nil {
				t.Fatal(err)
			}
			defer d.Close()
			r, warning := d.Reader, d.Warning
			got, err := readAll(r)
			if err != nil {
				t.Fatal(err)
			}
			if err := <-done; err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got, tc.want) {
				t.Errorf("samples\n got %v\nwant %v", got, tc.want)
			}
			if !strings.Contains(warning, tc.warning) || (tc.warning == "") != (warning == "") {
				t.Errorf("warning %q, want one containing %q", warning, tc.warning)
			}
			if ev, ok := r.(*EvdevReader); ok && ev.Ranges() != nil {
				t.Errorf("a FIFO has no axis ranges, got %v", ev.Ranges())
			}
		})
	}

	// Serial lines: the lever ids and counts are the lines'; times come from
	// the clock, so only their order is checked.
	path, done := fifo(t, []byte("1 1218\n2 3021\nhello\n1 2588\n"))
	d, err := OpenDevice(path, OpenOptions{Format: FormatSerial, Baud: 115200})
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	r := d.Reader
	got, err := readAll(r)
	if err != nil || <-done != nil {
		t.Fatal(err)
	}
	if len(got) != 3 || got[0].Raw != 1218 || got[1].Lever != 2 || got[2].Raw != 2588 || got[2].TMs < got[0].TMs {
		t.Errorf("serial samples %v", got)
	}
	if lr := r.(*LineReader); lr.SkippedCount() != 1 {
		t.Errorf("skipped %v, want the hello line", lr.Skipped())
	}
}
