//go:build unix

package main

import (
	"bytes"
	"encoding/binary"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// inputEvent is struct input_event on 64-bit Linux
// (Documentation/input/input.rst, include/uapi/linux/input.h): s64 tv_sec,
// s64 tv_usec, u16 type, u16 code, s32 value, little-endian; 24 bytes.
type inputEvent struct {
	Sec, Usec  int64
	Type, Code uint16
	Value      int32
}

// jsEvent is struct js_event (Documentation/input/joydev/joystick-api.rst):
// u32 time in ms, s16 value, u8 type, u8 number; 8 bytes.
type jsEvent struct {
	Time   uint32
	Value  int16
	Type   uint8
	Number uint8
}

// Kernel constants, from include/uapi/linux/input-event-codes.h and
// joystick-api.rst.
const (
	evSyn, evAbs          = 0x00, 0x03
	absX, absY            = 0x00, 0x01
	jsAxis, jsInit        = 0x02, 0x80
	synReport      uint16 = 0
)

func encode(t *testing.T, records ...any) []byte {
	t.Helper()
	var b bytes.Buffer
	for _, r := range records {
		if err := binary.Write(&b, binary.LittleEndian, r); err != nil {
			t.Fatal(err)
		}
	}
	return b.Bytes()
}

// syncBuffer is an output buffer the watcher writes while the test reads.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// waitFor polls until the buffer holds want.
func (s *syncBuffer) waitFor(t *testing.T, want string) {
	t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for !strings.Contains(s.String(), want) {
		if time.Now().After(deadline) {
			t.Fatalf("waited 10 s for %q; have:\n%s", want, s.String())
		}
		time.Sleep(10 * time.Millisecond)
	}
}

func mkfifo(t *testing.T) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "lever")
	if err := syscall.Mkfifo(path, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	return path
}

// feed opens the FIFO for writing (waiting for the watcher), writes data
// and closes it.
func feed(path string, data []byte) error {
	f, err := os.OpenFile(path, os.O_WRONLY, 0)
	if err != nil {
		return err
	}
	_, err = f.Write(data)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	return err
}

// startWatch runs the command in the background; the channel gives its exit
// code.
func startWatch(args ...string) (stdout, stderr *syncBuffer, code <-chan int) {
	stdout, stderr = new(syncBuffer), new(syncBuffer)
	ch := make(chan int, 1)
	go func() { ch <- run(args, stdout, stderr) }()
	return stdout, stderr, ch
}

func waitExit(t *testing.T, code <-chan int, stderr *syncBuffer) int {
	t.Helper()
	select {
	case c := <-code:
		return c
	case <-time.After(15 * time.Second):
		t.Fatalf("watch did not finish; stderr:\n%s", stderr.String())
		return -1
	}
}

// demoArgs are the conditions every case uses; the demo profile's gates
// are idle at 0° and climb at 27° (thrustmap/profiles/demo.toml).
var demoArgs = []string{"-p", "demo", "-c", "demo", "--alt", "0", "--oat", "15"}

// wantRow is one expected update line: lever, raw count and gate. Lever 1
// of thrustmap/calibrations/demo.toml puts raw 1218 at 0° (idle) and 2588 at
// 27° (climb); lever 2 (inverted) puts 3021 at 0° (idle).
type wantRow struct{ lever, raw, gate string }

var demoRows = []wantRow{{"1", "1218", "idle"}, {"2", "3021", "idle"}, {"1", "2588", "climb"}}

// checkRows compares the update lines "T ms LEVER RAW TLA GATE ..." with want.
func checkRows(t *testing.T, out string, want []wantRow) {
	t.Helper()
	lines := strings.Split(strings.TrimRight(out, "\n"), "\n")
	if len(lines) != len(want) {
		t.Fatalf("%d update lines, want %d:\n%s", len(lines), len(want), out)
	}
	for i, w := range want {
		f := strings.Fields(lines[i])
		if len(f) < 6 || f[1] != "ms" || f[2] != w.lever || f[3] != w.raw || f[5] != w.gate {
			t.Errorf("line %d %q: want lever %s, raw %s, gate %s", i+1, lines[i], w.lever, w.raw, w.gate)
		}
	}
}

// TestWatch feeds each device format through a FIFO: the demo
// calibration's gate points must come out at their gates.
func TestWatch(t *testing.T) {
	tests := []struct {
		name       string
		args       []string
		data       []byte
		wantStderr []string
	}{{
		name: "evdev, default axes: lever 1 on ABS_X, lever 2 on ABS_Y",
		args: []string{"--format", "evdev"},
		data: encode(t,
			inputEvent{50, 0, evAbs, absX, 1218}, inputEvent{50, 0, evAbs, absY, 3021},
			inputEvent{50, 0, evSyn, synReport, 0},
			inputEvent{50, 500_000, evAbs, absX, 2588}, inputEvent{50, 500_000, evSyn, synReport, 0}),
		wantStderr: []string{"lever 1 ← ABS_X, lever 2 ← ABS_Y"},
	}, {
		name: "evdev, axes mapped by --axis",
		args: []string{"--format", "evdev", "--axis", "ABS_THROTTLE=1", "--axis", "0x07=2"},
		data: encode(t,
			inputEvent{0, 0, evAbs, 0x06, 1218}, inputEvent{0, 0, evAbs, absX, 99}, // ABS_X is not mapped
			inputEvent{0, 0, evAbs, 0x07, 3021}, inputEvent{0, 0, evAbs, 0x06, 2588}),
		wantStderr: []string{"lever 1 ← ABS_THROTTLE, lever 2 ← ABS_RUDDER"},
	}, {
		name: "evdev, axes recorded in the calibration (axis keys)",
		args: []string{"--format", "evdev", "-c", "axes.toml"},
		data: encode(t,
			inputEvent{0, 0, evAbs, 0x06, 1218}, inputEvent{0, 0, evAbs, absX, 99}, // ABS_X is not mapped
			inputEvent{0, 0, evAbs, 0x07, 3021}, inputEvent{0, 0, evAbs, 0x06, 2588}),
		wantStderr: []string{"lever 1 ← ABS_THROTTLE, lever 2 ← ABS_RUDDER"},
	}, {
		name: "joystick interface: initial state, then motion, with its warning",
		args: []string{"--format", "js"},
		data: encode(t,
			jsEvent{1000, 1218, jsInit | jsAxis, 0}, jsEvent{1000, 3021, jsInit | jsAxis, 1},
			jsEvent{1040, 2588, jsAxis, 0}),
		wantStderr: []string{"lever 1 ← axis 0", "warning: The joystick interface", "rescales"},
	}, {
		name:       "serial-style lines, one unusable",
		args:       []string{"--format", "serial"},
		data:       []byte("1 1218\nboard ready\n2 3021\n1 2588\n"),
		wantStderr: []string{"lever ids from the lines"},
	}}
	// The demo calibration with each lever's device axis recorded.
	cal, err := thrustmap.LoadCalibration("demo")
	if err != nil {
		t.Fatal(err)
	}
	for id, axis := range map[int]string{1: "ABS_THROTTLE", 2: "7"} {
		spec := cal.Lever(id).Spec()
		spec.Axis = axis
		l, err := thrustmap.NewLeverCalibration(spec)
		if err != nil {
			t.Fatal(err)
		}
		cal = cal.With(l)
	}
	axesCal := filepath.Join(t.TempDir(), "axes.toml")
	if err := cal.WriteFile(axesCal); err != nil {
		t.Fatal(err)
	}
	for _, tc := range tests {
		for i, a := range tc.args {
			if a == "axes.toml" {
				tc.args[i] = axesCal
			}
		}
		t.Run(tc.name, func(t *testing.T) {
			path := mkfifo(t)
			fed := make(chan error, 1)
			go func() { fed <- feed(path, tc.data) }()
			args := append(append([]string{"watch", "--device", path, "--once=3"}, demoArgs...), tc.args...)
			stdout, stderr, code := startWatch(args...)
			if c := waitExit(t, code, stderr); c != 0 {
				t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
			}
			if err := <-fed; err != nil {
				t.Fatal(err)
			}
			checkRows(t, stdout.String(), demoRows)
			for _, want := range tc.wantStderr {
				if !strings.Contains(stderr.String(), want) {
					t.Errorf("stderr does not say %q:\n%s", want, stderr.String())
				}
			}
		})
	}
}

// TestWatchJSON: one JSON object per update, the lever command's keys plus
// t_ms (500 ms after the first event for the second report).
func TestWatchJSON(t *testing.T) {
	path := mkfifo(t)
	go feed(path, encode(t, inputEvent{7, 0, evAbs, absX, 1218}, inputEvent{7, 500_000, evAbs, absX, 2588}))
	args := append([]string{"watch", "--device", path, "--format", "evdev", "--once=2", "--json"}, demoArgs...)
	stdout, stderr, code := startWatch(args...)
	if c := waitExit(t, code, stderr); c != 0 {
		t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
	}
	lines := strings.Split(strings.TrimSpace(stdout.String()), "\n")
	if len(lines) != 2 ||
		!strings.HasPrefix(lines[0], `{"t_ms":0,"lever":1,"raw":1218,"tla_deg":0,"gate":"idle"`) ||
		!strings.HasPrefix(lines[1], `{"t_ms":500,"lever":1,"raw":2588,"tla_deg":27,"gate":"climb"`) {
		t.Errorf("JSON lines:\n%s", stdout.String())
	}
}

// TestWatchDeviceReturns: the writer closes the FIFO (the device goes
// away), then opens it again and writes more; the watcher says the device is
// gone, waits, and picks up again.
func TestWatchDeviceReturns(t *testing.T) {
	path := mkfifo(t)
	args := append([]string{"watch", "--device", path, "--format", "evdev", "--once=2"}, demoArgs...)
	stdout, stderr, code := startWatch(args...)
	if err := feed(path, encode(t, inputEvent{1, 0, evAbs, absX, 1218}, inputEvent{1, 0, evSyn, synReport, 0})); err != nil {
		t.Fatal(err)
	}
	stderr.waitFor(t, "device "+path+" gone; waiting for it to return")
	if err := feed(path, encode(t, inputEvent{9, 0, evAbs, absX, 2588}, inputEvent{9, 0, evSyn, synReport, 0})); err != nil {
		t.Fatal(err)
	}
	if c := waitExit(t, code, stderr); c != 0 {
		t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
	}
	checkRows(t, stdout.String(), []wantRow{{"1", "1218", "idle"}, {"1", "2588", "climb"}})
	if !strings.Contains(stderr.String(), "device "+path+" is back") {
		t.Errorf("stderr does not say the device is back:\n%s", stderr.String())
	}
}

// TestWatchInterrupt: ctrl-C (SIGINT) ends the watch with exit status 0.
func TestWatchInterrupt(t *testing.T) {
	path := mkfifo(t)
	args := append([]string{"watch", "--device", path, "--format", "evdev"}, demoArgs...)
	stdout, stderr, code := startWatch(args...)
	f, err := os.OpenFile(path, os.O_WRONLY, 0) // the watcher has it open once this returns
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := f.Write(encode(t, inputEvent{1, 0, evAbs, absX, 1218})); err != nil {
		t.Fatal(err)
	}
	stdout.waitFor(t, "1218")
	if err := syscall.Kill(os.Getpid(), syscall.SIGINT); err != nil {
		t.Fatal(err)
	}
	if c := waitExit(t, code, stderr); c != 0 {
		t.Fatalf("exit %d after ctrl-C; stderr:\n%s", c, stderr.String())
	}
}

// TestWatchUsage: bad arguments are usage errors (exit 2) with one message.
func TestWatchUsage(t *testing.T) {
	fifo := mkfifo(t)
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"no device", []string{"watch", "-p", "demo", "-c", "demo", "--alt", "0", "--oat", "15"}, "--device PATH is required"},
		{"no calibration", []string{"watch", "-p", "demo", "--device", fifo}, "-p PROFILE and -c CAL are required"},
		{"format not told by the path", append([]string{"watch", "--device", fifo}, demoArgs...), "cannot tell the input format"},
		{"bad format", append([]string{"watch", "--device", fifo, "--format", "usb"}, demoArgs...), `--format "usb": want evdev, js, serial, csv, joy`},
		{"axis without =", append([]string{"watch", "--device", fifo, "--format", "evdev", "--axis", "ABS_X"}, demoArgs...), "want CODE=LEVER"},
		{"unknown axis name", append([]string{"watch", "--device", fifo, "--format", "evdev", "--axis", "ABS_TILLER=1"}, demoArgs...), "want an ABS_ name"},
		{"lever not calibrated", append([]string{"watch", "--device", fifo, "--format", "js", "--axis", "0=7"}, demoArgs...), "has no lever 7 (levers: 1, 2)"},
		{"axis mapped twice", append([]string{"watch", "--device", fifo, "--format", "js", "--axis", "0=1", "--axis", "0=2"}, demoArgs...), "already mapped to lever 1"},
		{"axes for serial", append([]string{"watch", "--device", fifo, "--format", "serial", "--axis", "0=1"}, demoArgs...), "serial lines carry lever ids"},
		{"missing device", append([]string{"watch", "--device", filepath.Join(t.TempDir(), "event9"), "--format", "evdev"}, demoArgs...), "no such file"},
		{"no conditions", []string{"watch", "-p", "demo", "-c", "demo", "--device", fifo, "--format", "evdev"}, "--alt is required"},
		{"a directory", append([]string{"watch", "--device", t.TempDir()}, demoArgs...), "is a directory: want a device"},
		{"speed not positive", append([]string{"watch", "--device", fifo, "--format", "evdev", "--speed", "0"}, demoArgs...), "--speed=0: want a positive factor"},
		{"axis of a game controller", append([]string{"watch", "--device", fifo, "--format", "evdev", "--axis", "R=1"}, demoArgs...), "want an ABS_ name"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var stdout, stderr bytes.Buffer
			if c := run(tc.args, &stdout, &stderr); c != exitUsage {
				t.Fatalf("exit %d, want %d; stderr: %s", c, exitUsage, stderr.String())
			}
			if !strings.Contains(stderr.String(), tc.want) || strings.Count(stderr.String(), "\n") != 1 {
				t.Errorf("stderr %q, want one line containing %q", stderr.String(), tc.want)
			}
		})
	}
}

// TestWatchReplay: a regular file is replayed once at its own timing (sped
// up by --speed), then watch summarises it and exits 0, for each recording
// format; --once ends it early.
func TestWatchReplay(t *testing.T) {
	dir := t.TempDir()
	files := map[string][]byte{
		"rec.csv": []byte("t_ms,lever,raw\n0,1,1218\n0,2,3021\n500,1,2588\n"),
		"rec.evdev": encode(t, inputEvent{50, 0, evAbs, absX, 1218}, inputEvent{50, 0, evAbs, absY, 3021},
			inputEvent{50, 0, evSyn, synReport, 0}, inputEvent{50, 500_000, evAbs, absX, 2588}, inputEvent{50, 500_000, evSyn, synReport, 0}),
		"rec.js": encode(t, jsEvent{1000, 1218, jsInit | jsAxis, 0}, jsEvent{1000, 3021, jsInit | jsAxis, 1}, jsEvent{1500, 2588, jsAxis, 0}),
	}
	for name, data := range files {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		t.Run(name, func(t *testing.T) {
			args := append([]string{"watch", "--device", path, "--speed", "1000"}, demoArgs...)
			stdout, stderr, code := startWatch(args...)
			if c := waitExit(t, code, stderr); c != 0 {
				t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
			}
			checkRows(t, stdout.String(), demoRows)
			for _, want := range []string{
				"replaying once at speed 1000",
				"replayed " + path + " once: 3 samples covering 0.5 s of recording",
				"lever 1: raw 1218 to 2588; gates reached: idle, climb",
				"lever 2: raw 3021 to 3021; gates reached: idle",
			} {
				if !strings.Contains(stderr.String(), want) {
					t.Errorf("stderr does not say %q:\n%s", want, stderr.String())
				}
			}
			if strings.Contains(stderr.String(), "gone") {
				t.Errorf("a recording is not a device that went away:\n%s", stderr.String())
			}
		})
	}
	args := append([]string{"watch", "--device", filepath.Join(dir, "rec.csv"), "--speed", "1000", "--once", "2"}, demoArgs...)
	stdout, stderr, code := startWatch(args...)
	if c := waitExit(t, code, stderr); c != 0 {
		t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
	}
	checkRows(t, stdout.String(), demoRows[:2])
}

// TestWatchSkippedLines: serial lines that cannot be read are counted; the
// first five are shown with their line numbers and the accepted forms.
func TestWatchSkippedLines(t *testing.T) {
	path := mkfifo(t)
	data := "1 1218\n" + // line 1
		"hello\n1 2 3\n1:\n#note\nx y\n1 20.5\nboard v2\n\n" + // lines 2-9: 6 bad (#note and the blank line are ignored)
		"2,3021\n1: 2588\n" // lines 10, 11: other accepted forms
	go feed(path, []byte(data))
	args := append([]string{"watch", "--device", path, "--format", "serial", "--once=3"}, demoArgs...)
	stdout, stderr, code := startWatch(args...)
	if c := waitExit(t, code, stderr); c != 0 {
		t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
	}
	checkRows(t, stdout.String(), demoRows)
	for _, want := range []string{
		"lines that cannot be read are skipped; accepted: \"LEVER RAW\": two whole numbers",
		`skipped line 2: want two whole numbers: LEVER RAW: "hello"`,
		`skipped line 3: want two whole numbers: LEVER RAW: "1 2 3"`,
		`skipped line 7: want two whole numbers: LEVER RAW: "1 20.5"`,
		"only the first 5 skipped lines are shown",
		"6 line(s) of " + path + " could not be read and were skipped",
	} {
		if !strings.Contains(stderr.String(), want) {
			t.Errorf("stderr does not say %q:\n%s", want, stderr.String())
		}
	}
	if strings.Contains(stderr.String(), "board v2") {
		t.Errorf("a sixth skipped line is shown:\n%s", stderr.String())
	}
}

// TestWatchCSVDevice: --format csv reads t_ms,lever,raw lines from a FIFO,
// header or not, keeping their times.
func TestWatchCSVDevice(t *testing.T) {
	path := mkfifo(t)
	go feed(path, []byte("0,1,1218\n0,2,3021\n500,1,2588\n"))
	args := append([]string{"watch", "--device", path, "--format", "csv", "--once=3", "--json"}, demoArgs...)
	stdout, stderr, code := startWatch(args...)
	if c := waitExit(t, code, stderr); c != 0 {
		t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
	}
	lines := strings.Split(strings.TrimSpace(stdout.String()), "\n")
	if len(lines) != 3 || !strings.HasPrefix(lines[2], `{"t_ms":500,"lever":1,"raw":2588,"tla_deg":27,"gate":"climb"`) {
		t.Errorf("JSON lines:\n%s", stdout.String())
	}
}

// TestWatchJoy: a game controller (a fake in place of winmm.dll) read as
// joy:0, the calibration's levers on X and Y by default; the warning about
// the driver's calibration is shown.
func TestWatchJoy(t *testing.T) {
	useSystem(t, &input.System{Controllers: &fakeJoy{script: [][input.JoyAxes]uint32{
		{},           // the poll that finds it connected
		{1218, 3021}, // lever 1 at idle, lever 2 at idle
		{2588, 3021}, // lever 1 to climb
	}}, PollInterval: time.Millisecond})
	args := append([]string{"watch", "--device", "joy:0", "--once=3"}, demoArgs...)
	stdout, stderr, code := startWatch(args...)
	if c := waitExit(t, code, stderr); c != 0 {
		t.Fatalf("exit %d; stderr:\n%s", c, stderr.String())
	}
	checkRows(t, stdout.String(), demoRows)
	for _, want := range []string{"joy:0 (joy, \"Invented Quadrant\"): lever 1 ← X, lever 2 ← Y", "clear that calibration there first"} {
		if !strings.Contains(stderr.String(), want) {
			t.Errorf("stderr does not say %q:\n%s", want, stderr.String())
		}
	}
}
