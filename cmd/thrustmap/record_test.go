//go:build unix

package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// demoProfile is the embedded profile the watch tests use (demoArgs' -p),
// whose built-in calibration (-c, the same name) places the notches of the
// generated sweeps.
func demoProfile() string { return demoArgs[1] }

// demoSweep generates an invented sweep of the demo quadrant with the sweep
// package's generator: each lever of the demo calibration rests at its
// points (its notches and end stops), two passes, noise σ 3 counts and
// 6 counts of backlash, sampled at 200 Hz.
func demoSweep(t *testing.T) []input.Sample {
	t.Helper()
	cal, err := thrustmap.LoadCalibration(demoProfile())
	if err != nil {
		t.Fatal(err)
	}
	cfg := sweep.SynthConfig{SampleHz: 200, DwellMs: 1000, CountsPerSec: 900, Passes: 2, Bits: 12, Seed: 7}
	for _, l := range cal.Levers() {
		var notches []float64
		for _, p := range l.Spec().Points {
			notches = append(notches, p[0])
		}
		cfg.Levers = append(cfg.Levers, sweep.SynthLever{ID: l.ID(), Notches: notches, NoiseSigma: 3, Backlash: 6})
	}
	return sweep.Synthesize(cfg)
}

// csvRecording is the recording CSV of samples, as record writes it.
func csvRecording(samples []input.Sample) []byte {
	var b bytes.Buffer
	b.WriteString("t_ms,lever,raw\n")
	for _, s := range samples {
		fmt.Fprintf(&b, "%d,%d,%s\n", s.TMs, s.Lever, strconv.FormatFloat(s.Raw, 'f', -1, 64))
	}
	return b.Bytes()
}

// evdevCapture encodes samples as struct input_event records (lever n on
// axis code n−1), a SYN_REPORT closing each tick.
func evdevCapture(t *testing.T, samples []input.Sample) []byte {
	var recs []any
	for i, s := range samples {
		sec, usec := s.TMs/1000, s.TMs%1000*1000
		recs = append(recs, inputEvent{sec, usec, evAbs, uint16(s.Lever - 1), int32(s.Raw)})
		if i+1 == len(samples) || samples[i+1].TMs != s.TMs {
			recs = append(recs, inputEvent{sec, usec, evSyn, synReport, 0})
		}
	}
	return encode(t, recs...)
}

// jsCapture encodes samples as struct js_event records (lever n on axis
// number n−1).
func jsCapture(t *testing.T, samples []input.Sample) []byte {
	var recs []any
	for _, s := range samples {
		recs = append(recs, jsEvent{uint32(s.TMs), int16(s.Raw), jsAxis, uint8(s.Lever - 1)})
	}
	return encode(t, recs...)
}

// serialLines prints samples as a board would: "LEVER RAW" lines, with
// the odd line a board prints at start-up.
func serialLines(samples []input.Sample) []byte {
	var b bytes.Buffer
	b.WriteString("# board ready\nlevers: 2\n")
	for _, s := range samples {
		fmt.Fprintf(&b, "%d %g\n", s.Lever, s.Raw)
	}
	return b.Bytes()
}

// readRecording reads a recording CSV back.
func readRecording(t *testing.T, path string) []input.Sample {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := input.NewCSVReader(f, path)
	var out []input.Sample
	for {
		s, err := r.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, s)
	}
	if r.SkippedCount() != 0 {
		t.Errorf("%s: skipped %v", path, r.Skipped())
	}
	return out
}

// runCmd runs a command line with stdin and returns its exit code and
// output.
func runCmd(stdin io.Reader, args ...string) (int, string, string) {
	if stdin == nil {
		stdin = strings.NewReader("")
	}
	var stdout, stderr syncBuffer
	c := runWithInput(args, stdin, &stdout, &stderr)
	return c, stdout.String(), stderr.String()
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestRecordFormats feeds a FIFO with a replay of a generated sweep in each
// input format, as a device would. The recording written must equal the
// input (for serial lines, whose times are the reading's, its levers and
// counts), and the calibration written by --calibrate must equal, byte for
// byte, what sweep writes from the same data.
func TestRecordFormats(t *testing.T) {
	samples := demoSweep(t)
	tests := []struct {
		format  string
		data    []byte
		capture string // the same data as a file for sweep: its extension
	}{
		{"csv", csvRecording(samples), ".csv"},
		{"evdev", evdevCapture(t, samples), ".evdev"},
		{"js", jsCapture(t, samples), ".js"},
		{"serial", serialLines(samples), ""}, // sweep reads the recording record wrote
	}
	for _, tc := range tests {
		t.Run(tc.format, func(t *testing.T) {
			ft := newFakeTree(t)
			s := ft.system()
			// Serial lines are stamped with the clock: 2.5 ms a line (two
			// levers a tick at 200 Hz), however fast the FIFO delivers them.
			clock := &stepClock{t: time.Unix(1e9, 0), step: 2500 * time.Microsecond}
			s.Now = clock.now
			useSystem(t, s)
			dir := t.TempDir()
			fifo := ft.fifo(t, "lever")
			fed := make(chan error, 1)
			go func() { fed <- feed(fifo, tc.data) }()
			rec, cal := filepath.Join(dir, "rec.csv"), filepath.Join(dir, "cal.toml")
			c, stdout, stderr := runCmd(strings.NewReader(""), "record", "--device", fifo, "--format", tc.format,
				"-p", demoProfile(), "-o", rec, "--calibrate", cal)
			if c != 0 {
				t.Fatalf("exit %d\nstdout:\n%s\nstderr:\n%s", c, stdout, stderr)
			}
			if err := <-fed; err != nil {
				t.Fatal(err)
			}
			// The writer closing the FIFO is the device going away: what was
			// recorded is kept, and the message says so.
			if !strings.Contains(stderr, "went away after "+strconv.Itoa(len(samples))+" samples") || !strings.Contains(stderr, "what was recorded is kept in "+rec) {
				t.Errorf("stderr:\n%s", stderr)
			}
			if !strings.Contains(stderr, "lever 1: 6/6 rests so far") && !strings.Contains(stderr, "rests so far") {
				t.Errorf("no live rests on stderr:\n%s", stderr)
			}
			got := readRecording(t, rec)
			if tc.format == "serial" {
				if len(got) != len(samples) {
					t.Fatalf("recorded %d samples, fed %d", len(got), len(samples))
				}
				for i := range got {
					if got[i].Lever != samples[i].Lever || got[i].Raw != samples[i].Raw || (i > 0 && got[i].TMs < got[i-1].TMs) {
						t.Fatalf("sample %d: %v, fed %v", i, got[i], samples[i])
					}
				}
				if !strings.Contains(stderr, `skipped line 2: want two whole numbers: LEVER RAW: "levers: 2"`) {
					t.Errorf("the board's start-up line is not reported:\n%s", stderr)
				}
			} else if !slices.Equal(got, samples) {
				t.Fatalf("the recording differs from the input: %d samples recorded, %d fed", len(got), len(samples))
			}
			if !strings.Contains(stdout, "6 rest(s) (the profile expects 6)") || !strings.Contains(stdout, "wrote "+cal) {
				t.Errorf("stdout:\n%s", stdout)
			}

			// sweep on the same data.
			from := rec
			if tc.capture != "" {
				from = filepath.Join(dir, "capture"+tc.capture)
				if err := os.WriteFile(from, tc.data, 0o644); err != nil {
					t.Fatal(err)
				}
			}
			cal2 := filepath.Join(dir, "cal2.toml")
			c, sout, serr := runCmd(nil, "sweep", from, "-p", demoProfile(), "-o", cal2)
			if c != 0 {
				t.Fatalf("sweep: exit %d\n%s\n%s", c, sout, serr)
			}
			if a, b := readFile(t, cal), readFile(t, cal2); a != b {
				t.Errorf("record --calibrate wrote\n%s\nsweep wrote\n%s", a, b)
			}
			// The same report as sweep's.
			if i := strings.Index(stdout, "lever 1: "); i < 0 || !strings.Contains(stdout[i:], sout[:strings.Index(sout, "wrote ")]) {
				t.Errorf("record's report does not hold sweep's:\n%s\n---\n%s", stdout, sout)
			}
			if (tc.format == "evdev") != strings.Contains(readFile(t, cal), `axis = "ABS_Y"`) {
				t.Errorf("axis keys:\n%s", readFile(t, cal))
			}
		})
	}
}

// fakeJoy is a game controller whose axes X and Y follow a script, one
// entry a poll, then unplugged.
type fakeJoy struct {
	mu     sync.Mutex
	script [][input.JoyAxes]uint32
	polls  int
}

func (f *fakeJoy) Caps(id int) (input.JoyCaps, error) {
	return input.JoyCaps{Name: "Invented Quadrant", Axes: []input.JoyAxis{{Index: 0, Max: 4095}, {Index: 1, Max: 4095}}}, nil
}

func (f *fakeJoy) Position(id int) ([input.JoyAxes]uint32, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	if id != 0 || f.polls >= len(f.script) {
		return [input.JoyAxes]uint32{}, input.ErrUnplugged
	}
	f.polls++
	return f.script[f.polls-1], nil
}

// TestRecordJoy reads a game controller through the shared poller, with a
// fake in place of winmm.dll: one poll a tick of the generated sweep (5 ms
// on the fake clock), X lever 1, Y lever 2. The recording holds each change
// of an axis (readings that did not change are not repeated), the
// controller's 0..4095 is the calibration's device range, and sweep
// --device on the same controller writes the same calibration.
func TestRecordJoy(t *testing.T) {
	samples := demoSweep(t)
	var script [][input.JoyAxes]uint32
	script = append(script, [input.JoyAxes]uint32{}) // the poll that finds the controller connected
	var want []input.Sample
	var last [2]float64
	for i := 0; i < len(samples); i += 2 {
		a, b := samples[i], samples[i+1]
		script = append(script, [input.JoyAxes]uint32{uint32(a.Raw), uint32(b.Raw)})
		for k, s := range []input.Sample{a, b} {
			if i == 0 || s.Raw != last[k] {
				want = append(want, s)
			}
			last[k] = s.Raw
		}
	}
	dir := t.TempDir()
	calFrom := map[string]string{}
	for _, command := range []string{"record", "sweep"} {
		var now time.Time
		var mu sync.Mutex
		useSystem(t, &input.System{
			Controllers:  &fakeJoy{script: script},
			PollInterval: 5 * time.Millisecond,
			Now:          func() time.Time { mu.Lock(); defer mu.Unlock(); return now },
			Sleep:        func(d time.Duration) { mu.Lock(); now = now.Add(d); mu.Unlock() },
		})
		rec, cal := filepath.Join(dir, command+".csv"), filepath.Join(dir, command+".toml")
		args := []string{"sweep", "--device", "joy:0", "-p", demoProfile(), "-o", cal}
		if command == "record" {
			args = []string{"record", "--device", "joy:0", "-p", demoProfile(), "-o", rec, "--calibrate", cal}
		}
		c, stdout, stderr := runCmd(strings.NewReader(""), args...)
		if c != 0 {
			t.Fatalf("%s: exit %d\n%s\n%s", command, c, stdout, stderr)
		}
		if !strings.Contains(stderr, "joy:0 went away") || !strings.Contains(stderr, "clear that calibration there first") {
			t.Errorf("%s: stderr:\n%s", command, stderr)
		}
		calFrom[command] = readFile(t, cal)
		if command == "record" {
			if got := readRecording(t, rec); !slices.Equal(got, want) {
				t.Errorf("recorded %d samples, want the %d changes", len(got), len(want))
			}
		}
	}
	if calFrom["record"] != calFrom["sweep"] {
		t.Errorf("record --calibrate wrote\n%s\nsweep --device wrote\n%s", calFrom["record"], calFrom["sweep"])
	}
	for _, want := range []string{`axis = "X"`, `axis = "Y"`, "raw_max = 4095"} {
		if !strings.Contains(calFrom["record"], want) {
			t.Errorf("calibration does not hold %q:\n%s", want, calFrom["record"])
		}
	}
	if strings.Contains(calFrom["record"], "was not given") {
		t.Error("the device range was guessed")
	}
}

// TestRecordStops: Enter, --seconds and Ctrl-C stop a recording from a
// device that is still sending; what was read so far is written, complete.
func TestRecordStops(t *testing.T) {
	samples := demoSweep(t)
	data := csvRecording(samples[:400])
	for _, how := range []string{"enter", "seconds", "interrupt"} {
		t.Run(how, func(t *testing.T) {
			ft := newFakeTree(t)
			useSystem(t, ft.system())
			fifo := ft.fifo(t, "lever")
			rec := filepath.Join(t.TempDir(), "rec.csv")
			stdinR, stdinW := io.Pipe()
			defer stdinW.Close()
			args := []string{"record", "--device", fifo, "--format", "csv", "-o", rec, "--json"}
			if how == "seconds" {
				args = append(args, "--seconds", "0.3")
			}
			done := make(chan [3]string, 1)
			go func() {
				c, stdout, stderr := runCmd(stdinR, args...)
				done <- [3]string{strconv.Itoa(c), stdout, stderr}
			}()
			w, err := os.OpenFile(fifo, os.O_WRONLY, 0)
			if err != nil {
				t.Fatal(err)
			}
			defer w.Close() // the device stays: only the stop asked for ends the recording
			if _, err := w.Write(data); err != nil {
				t.Fatal(err)
			}
			time.Sleep(100 * time.Millisecond)
			switch how {
			case "enter":
				io.WriteString(stdinW, "\n")
			case "interrupt":
				syscall.Kill(os.Getpid(), syscall.SIGINT)
			}
			var out [3]string
			select {
			case out = <-done:
			case <-time.After(15 * time.Second):
				t.Fatal("record did not stop")
			}
			if out[0] != "0" {
				t.Fatalf("exit %s\n%s\n%s", out[0], out[1], out[2])
			}
			var j recordJSON
			if err := json.Unmarshal([]byte(out[1]), &j); err != nil {
				t.Fatal(err)
			}
			wantStop := map[string]string{"enter": stopEnter, "seconds": stopSeconds, "interrupt": stopInterrupt}[how]
			got := readRecording(t, rec)
			if j.Stopped != wantStop || j.Samples != len(got) || !slices.Equal(got, samples[:len(got)]) || len(got) == 0 {
				t.Errorf("stopped %q with %d samples (%d in the file); want %q and a prefix of the input", j.Stopped, j.Samples, len(got), wantStop)
			}
			if how == "interrupt" && !strings.Contains(out[2], "stopped by Ctrl-C after") {
				t.Errorf("stderr:\n%s", out[2])
			}
		})
	}
}

// TestRecordTooLittle: nothing recorded writes nothing; a recording in
// which the levers never travelled is kept but no calibration is written,
// and the message says why.
func TestRecordTooLittle(t *testing.T) {
	ft := newFakeTree(t)
	useSystem(t, ft.system())
	dir := t.TempDir()

	fifo := ft.fifo(t, "empty")
	go feed(fifo, nil)
	rec := filepath.Join(dir, "none.csv")
	c, _, stderr := runCmd(strings.NewReader(""), "record", "--device", fifo, "--format", "evdev", "-o", rec)
	if c != exitUsage || !strings.Contains(stderr, "nothing recorded, "+rec+" not written") {
		t.Errorf("exit %d: %s", c, stderr)
	}
	if _, err := os.Stat(rec); err == nil {
		t.Error("an empty recording was written")
	}

	// Both levers rest where they are for three seconds.
	var still []input.Sample
	for tms := int64(0); tms < 3000; tms += 5 {
		still = append(still, input.Sample{TMs: tms, Lever: 1, Raw: float64(1218 + tms/5%3)}, input.Sample{TMs: tms, Lever: 2, Raw: 3021})
	}
	file := filepath.Join(dir, "still.csv")
	if err := os.WriteFile(file, csvRecording(still), 0o644); err != nil {
		t.Fatal(err)
	}
	rec, cal := filepath.Join(dir, "still-rec.csv"), filepath.Join(dir, "cal.toml")
	c, stdout, stderr := runCmd(nil, "record", "--device", file, "-p", demoProfile(), "-o", rec, "--calibrate", cal)
	if c != exitUsage || !strings.Contains(stderr, rec+" is kept; the calibration") || !strings.Contains(stdout, "rested at one place only (raw 1219)") {
		t.Errorf("exit %d\nstdout:\n%s\nstderr:\n%s", c, stdout, stderr)
	}
	if _, err := os.Stat(cal); err == nil {
		t.Error("a calibration was written from levers that never moved")
	}
	if got := readRecording(t, rec); !slices.Equal(got, still) {
		t.Error("the recording was not kept as read")
	}
}

// TestRecordUsage: bad arguments are usage errors (exit 2) with one message.
func TestRecordUsage(t *testing.T) {
	ft := newFakeTree(t)
	useSystem(t, ft.system())
	fifo := ft.fifo(t, "lever")
	dir := t.TempDir()
	out := filepath.Join(dir, "rec.csv")
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"no device", []string{"record", "-o", out}, "--device PATH|joy:N is required"},
		{"no output", []string{"record", "--device", fifo}, "-o REC.csv is required"},
		{"calibrate without a profile", []string{"record", "--device", fifo, "-o", out, "--calibrate", "c.toml"}, "--calibrate needs -p PROFILE"},
		{"a directory", []string{"record", "--device", dir, "-o", out}, "is a directory: want a device"},
		{"format not told by the path", []string{"record", "--device", fifo, "-o", out}, "cannot tell the input format"},
		{"bad format", []string{"record", "--device", fifo, "--format", "usb", "-o", out}, `--format "usb": want evdev, js, serial, csv, joy`},
		{"axes for csv", []string{"record", "--device", fifo, "--format", "csv", "--axis", "0=1", "-o", out}, "csv lines carry lever ids"},
		{"bad axis", []string{"record", "--device", fifo, "--format", "js", "--axis", "X=1", "-o", out}, "want a joystick-interface axis number"},
		{"negative seconds", []string{"record", "--device", fifo, "--format", "js", "--seconds", "-1", "-o", out}, "--seconds=-1"},
		{"game controller off Windows", []string{"record", "--device", "joy:0", "-o", out}, "game controllers are read as joy:N on Windows only"},
		{"joy format on a FIFO", []string{"record", "--device", fifo, "--format", "joy", "-o", out}, "--format joy is for game controllers"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c, _, stderr := runCmd(nil, tc.args...)
			if c != exitUsage || !strings.Contains(stderr, tc.want) || strings.Count(stderr, "\n") != 1 {
				t.Errorf("exit %d, stderr %q; want %d and one line containing %q", c, stderr, exitUsage, tc.want)
			}
		})
	}
}

// TestRecordTruncatedCapture: a capture cut short in its last record (as
// one stopped with Ctrl-C often is) converts with what it holds, and the
// message names the fault.
func TestRecordTruncatedCapture(t *testing.T) {
	dir := t.TempDir()
	data := encode(t, inputEvent{5, 0, evAbs, absX, 1218}, inputEvent{5, 10_000, evAbs, absY, 3021})
	path := filepath.Join(dir, "cut.evdev")
	if err := os.WriteFile(path, data[:24+10], 0o644); err != nil {
		t.Fatal(err)
	}
	rec := filepath.Join(dir, "cut.csv")
	c, _, stderr := runCmd(nil, "record", "--device", path, "-o", rec)
	if c != 0 || !strings.Contains(stderr, "ends in a fault (evdev: truncated record at byte offset 24: 10 of 24 bytes") ||
		!strings.Contains(stderr, "what was recorded is kept in "+rec) {
		t.Errorf("exit %d: %s", c, stderr)
	}
	if got := readRecording(t, rec); !slices.Equal(got, []input.Sample{{TMs: 0, Lever: 1, Raw: 1218}}) {
		t.Errorf("recording %v", got)
	}
}
