package main

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"time"
	"unicode/utf8"

	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// recordRedraw is how often the live view of a recording is refreshed.
const recordRedraw = 100 * time.Millisecond

// liveFlags choose a live source and when to stop reading it (record, and
// sweep --device).
type liveFlags struct {
	device, format string
	axisArgs       []string
	baud           int
	seconds        float64
}

// register adds --device, --baud and --seconds; --format and --axis are
// the caller's.
func (f *liveFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&f.device, "device", "", "read live from a device: /dev/input/eventN, /dev/input/jsN, a serial port, joy:N, a FIFO (or a recording file, read to its end)")
	cmd.Flags().IntVar(&f.baud, "baud", 115200, "serial port speed")
	cmd.Flags().Float64Var(&f.seconds, "seconds", 0, "stop after N seconds (0: on Enter or Ctrl-C)")
}

// stop reasons of a live recording.
const (
	stopEnter     = "enter"
	stopInterrupt = "interrupt"
	stopSeconds   = "seconds"
	stopGone      = "device-gone"
	stopEnd       = "end-of-file"
)

// liveRecording is what a live recording gathered.
type liveRecording struct {
	device  *input.Device
	samples int
	first   int64 // t_ms of the first sample
	last    int64
	stopped string // one of the stop reasons
	goneErr error  // why the device went away, when not a plain end
}

// durationMs is the time the recording covers.
func (r *liveRecording) durationMs() int64 {
	if r.samples == 0 {
		return 0
	}
	return r.last - r.first
}

// describeStop says on w why the recording stopped and, when it did not end
// as asked, that what was recorded is kept (in file, when one is written).
func (r *liveRecording) describeStop(w io.Writer, file string) {
	kept := "what was recorded is kept"
	if file != "" {
		kept = "what was recorded is kept in " + file
	}
	switch r.stopped {
	case stopInterrupt:
		fmt.Fprintf(w, "stopped by Ctrl-C after %d samples: %s\n", r.samples, kept)
	case stopGone:
		why := ""
		if r.goneErr != nil && !errors.Is(r.goneErr, io.EOF) {
			why = " (" + r.goneErr.Error() + ")"
		}
		fmt.Fprintf(w, "%s went away after %d samples%s (unplugged, or the writer of the FIFO ended): %s\n", r.device.Path, r.samples, why, kept)
	case stopEnter:
		fmt.Fprintf(w, "stopped by Enter after %d samples\n", r.samples)
	case stopSeconds:
		fmt.Fprintf(w, "stopped after --seconds, %d samples\n", r.samples)
	case stopEnd:
		if r.goneErr != nil {
			fmt.Fprintf(w, "%s ends in a fault (%v) after %d samples: %s\n", r.device.Path, r.goneErr, r.samples, kept)
			return
		}
		fmt.Fprintf(w, "read %s to its end: %d samples\n", r.device.Path, r.samples)
	}
}

// record opens the source and reads it, showing the live view on the
// command's stderr and calling fn with every sample, until Enter on the
// command's input, Ctrl-C, --seconds, or the end of the source. p, when not
// nil, is the profile whose notches the rests found are counted against.
// The device is closed when it returns.
func (f *liveFlags) record(cmd *cobra.Command, p *thrustmap.Profile, fn func(input.Sample)) (*liveRecording, *input.Device, error) {
	if f.device == "" {
		return nil, nil, fmt.Errorf("--device PATH|joy:N is required (thrustmap devices lists the devices)")
	}
	if !(f.seconds >= 0) || math.IsInf(f.seconds, 0) {
		return nil, nil, fmt.Errorf("--seconds=%g: want a number of seconds ≥ 0", f.seconds)
	}
	_, format, err := sourceFormat(f.device, f.format)
	if err != nil {
		return nil, nil, err
	}
	axes, err := parseAxisArgs(format, f.axisArgs)
	if err != nil {
		return nil, nil, err
	}
	ctx, stop := signal.NotifyContext(cmd.Context(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	d, err := openCtx(ctx, f.device, input.OpenOptions{Format: format, Axes: axes, Baud: f.baud})
	if ctx.Err() != nil {
		return nil, nil, fmt.Errorf("--device %s: interrupted while waiting for it to open", f.device)
	}
	if err != nil {
		return nil, nil, fmt.Errorf("--device: %w", err)
	}
	defer d.Close()
	view := newRecordView(cmd.ErrOrStderr(), p)
	view.start(d, f.seconds)
	rec := &liveRecording{device: d}
	rec.stopped, rec.goneErr = f.loop(ctx, cmd.InOrStdin(), d, view, func(s input.Sample) {
		if rec.samples == 0 {
			rec.first = s.TMs
		}
		rec.samples++
		rec.first, rec.last = min(rec.first, s.TMs), max(rec.last, s.TMs)
		fn(s)
	})
	view.finish(d)
	return rec, d, nil
}

// loop reads d until a reason to stop, returning it (and the error that
// ended the source, if it went away).
func (f *liveFlags) loop(ctx context.Context, stdin io.Reader, d *input.Device, view *recordView, fn func(input.Sample)) (string, error) {
	quit := make(chan struct{})
	defer close(quit)
	events := readEvents(d, quit)
	enter := make(chan struct{}, 1)
	if stdin != nil {
		go func() {
			// Enter stops; the end of the input (none given) does not.
			br := bufio.NewReader(stdin)
			if _, err := br.ReadString('\n'); err == nil {
				enter <- struct{}{}
			}
		}()
	}
	var timeout <-chan time.Time
	live := d.Kind != input.KindFile
	if f.seconds > 0 && live {
		t := time.NewTimer(time.Duration(f.seconds * float64(time.Second)))
		defer t.Stop()
		timeout = t.C
	}
	tick := time.NewTicker(recordRedraw)
	defer tick.Stop()
	started, first := false, int64(0)
	for {
		select {
		case <-ctx.Done():
			return stopInterrupt, nil
		case <-enter:
			return stopEnter, nil
		case <-timeout:
			return stopSeconds, nil
		case <-tick.C:
			view.refresh(d)
		case e := <-events:
			if e.err != nil {
				if !live && errors.Is(e.err, io.EOF) {
					return stopEnd, nil
				}
				if !live {
					return stopEnd, e.err
				}
				return stopGone, e.err
			}
			if !live && f.seconds > 0 {
				if !started {
					started, first = true, e.s.TMs
				}
				if float64(e.s.TMs-first) >= f.seconds*1000 {
					return stopSeconds, nil
				}
			}
			fn(e.s)
			view.add(e.s)
		}
	}
}

// recordView shows a recording as it goes: on a terminal one line per
// lever redrawn in place (raw now, travel seen, rests found against the
// profile's notches); otherwise a line each time a lever's rests change.
type recordView struct {
	w      io.Writer
	live   bool
	width  int
	expect []thrustmap.NotchPosition
	an     *sweep.Analyzer // the rests shown; the same streaming analysis sweep runs
	axis   map[int]string
	levers []int
	rests  map[int]int // rests last reported, per lever
	drawn  int
	dirty  bool
	skips  *skipReporter
}

func newRecordView(w io.Writer, p *thrustmap.Profile) *recordView {
	v := &recordView{w: w, an: sweep.NewAnalyzer(sweep.Options{}), axis: map[int]string{}, rests: map[int]int{}}
	if p != nil {
		v.expect = p.NotchPositions()
	}
	if f, ok := w.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		v.live = true
		if width, _, err := term.GetSize(int(f.Fd())); err == nil {
			v.width = width
		}
	}
	v.skips = &skipReporter{emit: v.message, max: 5}
	return v
}

// message prints a note; on a terminal the table is drawn afresh below it.
func (v *recordView) message(msg string) {
	fmt.Fprintln(v.w, msg)
	v.drawn = 0
	v.dirty = true
}

func (v *recordView) start(d *input.Device, seconds float64) {
	for _, a := range d.Axes {
		name := a.Name
		if d.Format == input.FormatJoystick {
			name = "axis " + name
		}
		v.axis[a.Lever] = name
		v.levers = append(v.levers, a.Lever)
	}
	v.message("recording " + describeSource(d))
	if d.Warning != "" {
		v.message("warning: " + d.Warning)
	}
	if len(v.expect) > 0 {
		names := make([]string, len(v.expect))
		for i, n := range v.expect {
			names[i] = n.Name
		}
		v.message(fmt.Sprintf("the profile expects %d rests a lever: %s", len(v.expect), strings.Join(names, ", ")))
	}
	if d.Kind != input.KindFile {
		how := "Enter or Ctrl-C stops"
		if seconds > 0 {
			how = fmt.Sprintf("stops after %g s, or on Enter or Ctrl-C", seconds)
		}
		v.message("move each lever from end stop to end stop and back, resting a second or so at each end and in each notch; " + how)
	}
}

func (v *recordView) add(s input.Sample) {
	v.an.Add(s)
	if !slices.Contains(v.levers, s.Lever) {
		v.levers = append(v.levers, s.Lever)
	}
	v.dirty = true
}

// expected says how many rests the profile expects, or "".
func (v *recordView) expected() string {
	if len(v.expect) == 0 {
		return ""
	}
	return "/" + strconv.Itoa(len(v.expect))
}

// refresh redraws the table (terminal) or reports rests that changed.
func (v *recordView) refresh(d *input.Device) {
	v.skips.report(d)
	if !v.dirty {
		return
	}
	v.dirty = false
	if !v.live {
		for _, id := range v.levers {
			p, ok := v.an.Progress(id)
			if !ok || len(p.Rests) == v.rests[id] {
				continue
			}
			v.rests[id] = len(p.Rests)
			fmt.Fprintf(v.w, "lever %d: %d%s rests so far: %s\n", id, len(p.Rests), v.expected(), formatRests(p.Rests))
		}
		return
	}
	var b strings.Builder
	if v.drawn > 0 {
		fmt.Fprintf(&b, "\x1b[%dA", v.drawn)
	}
	line := func(text string) {
		if v.width > 1 && utf8.RuneCountInString(text) >= v.width {
			text = string([]rune(text)[:v.width-1])
		}
		b.WriteString("\r\x1b[2K")
		b.WriteString(text)
		b.WriteByte('\n')
	}
	line(fmt.Sprintf("lever  %-8s  %8s  %-13s  rests", "axis", "raw", "travel"))
	for _, id := range v.levers {
		axis := v.axis[id]
		if axis == "" {
			axis = "-" // the lines name the lever
		}
		p, ok := v.an.Progress(id)
		if !ok {
			line(fmt.Sprintf("%-5d  %-8s  %8s  waiting for a reading", id, axis, "-"))
			continue
		}
		state := ""
		if p.Resting {
			state = "  resting"
		}
		line(fmt.Sprintf("%-5d  %-8s  %8g  %-13s  %d%s: %s%s", id, axis, p.Raw,
			fmt.Sprintf("%g–%g", p.RawMinSeen, p.RawMaxSeen), len(p.Rests), v.expected(), formatRests(p.Rests), state))
	}
	io.WriteString(v.w, b.String())
	v.drawn = 1 + len(v.levers)
}

func (v *recordView) finish(d *input.Device) {
	v.dirty = true
	v.refresh(d)
}

// formatRests lists rest positions in whole counts.
func formatRests(rests []float64) string {
	if len(rests) == 0 {
		return "none yet"
	}
	parts := make([]string, len(rests))
	for i, r := range rests {
		parts[i] = strconv.FormatFloat(math.Round(r), 'f', -1, 64)
	}
	return strings.Join(parts, " ")
}

// recordJSON is the record command's JSON, described in
// docs/recordings.md.
type recordJSON struct {
	Device       string            `json:"device"`
	Format       string            `json:"format"`
	Recording    string            `json:"recording"`
	Stopped      string            `json:"stopped"`
	Samples      int               `json:"samples"`
	DurationMs   int64             `json:"duration_ms"`
	Levers       []recordLeverJSON `json:"levers"`
	SkippedLines []input.Skipped   `json:"skipped_lines"`
	SkippedCount int               `json:"skipped_count"`
	Sweep        *sweepJSON        `json:"sweep"`
}

type recordLeverJSON struct {
	Lever         int       `json:"lever"`
	Axis          string    `json:"axis"`
	Samples       int64     `json:"samples"`
	RawMinSeen    float64   `json:"raw_min_seen"`
	RawMaxSeen    float64   `json:"raw_max_seen"`
	Rests         []float64 `json:"rests"`
	ExpectedRests int       `json:"expected_rests"`
}

func newRecordCmd() *cobra.Command {
	var live liveFlags
	var cf calFlags
	var profile, out, calibrate string
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "record --device PATH|joy:N [--format evdev|js|serial|csv] [--axis CODE=LEVER]... [-p PROFILE] -o REC.csv [--calibrate CAL.toml] [--seconds N]",
		Short: "Record a sweep of the levers from a device into a recording (and calibrate from it)",
		Long: `record reads the levers from a device and writes their raw counts to a
recording (CSV t_ms,lever,raw, the format sweep reads), showing as it goes one
line per lever: the raw count now, the travel seen so far and the rests found
so far (the same streaming analysis sweep runs), counted against the notches
of the profile given with -p. thrustmap devices lists the devices and axes.

Move each lever slowly from one end stop to the other and back, resting a
second or so at each end and in each notch. Recording stops on Enter, on
Ctrl-C, after --seconds, or when the device goes away; the recording is then
written atomically (keeping REC.csv.bak), and on Ctrl-C or a device that went
away what was recorded is kept, as the message says.

Sources (--format, or told from the path): evdev (/dev/input/eventN: by
default every absolute axis the device has, in order, is a lever 1, 2, ...),
js (/dev/input/jsN), serial ("LEVER RAW" lines), csv (t_ms,lever,raw lines
from a board or FIFO; their t_ms are kept), joy (joy:N, a game controller on
Windows, axes X, Y, Z, R, U, V). --axis CODE=LEVER picks axes instead (an
axis the device does not have is refused, with the list of those it has). A
FIFO is read as a device; a recording file (CSV, .evdev or .js capture) is
read to its end, which converts a capture to a CSV recording.

With --calibrate CAL.toml (and -p) it then runs the sweep analysis on the
recording and writes the calibration, with the same report as sweep; the
device's own axis range (evdev, game controllers) is the calibration's device
range unless --raw-min and --raw-max are given, and each lever's axis is
written as its axis key for watch. A recording in which a lever did not
travel or never rested says so, and no calibration is written for it.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if out == "" {
				return fmt.Errorf("-o REC.csv is required: the recording to write")
			}
			if calibrate != "" && profile == "" {
				return fmt.Errorf("--calibrate needs -p PROFILE: the rests are matched to its notches")
			}
			var p *thrustmap.Profile
			if profile != "" {
				var err error
				if p, err = thrustmap.LoadProfile(profile); err != nil {
					return err
				}
			}
			o, err := cf.options(cmd)
			if err != nil {
				return err
			}
			an := sweep.NewAnalyzer(sweep.Options{})
			var csv bytes.Buffer
			csv.WriteString("t_ms,lever,raw\n")
			rec, d, err := live.record(cmd, p, func(s input.Sample) {
				an.Add(s)
				csv.WriteString(strconv.FormatInt(s.TMs, 10))
				csv.WriteByte(',')
				csv.WriteString(strconv.Itoa(s.Lever))
				csv.WriteByte(',')
				csv.WriteString(strconv.FormatFloat(s.Raw, 'f', -1, 64))
				csv.WriteByte('\n')
			})
			if err != nil {
				return err
			}
			if rec.samples == 0 {
				rec.describeStop(cmd.ErrOrStderr(), "")
				hint := "move the levers while recording"
				if len(d.Axes) > 0 {
					hint += "; are they on the axes read (thrustmap devices lists the axes; --axis picks them)?"
				}
				return fmt.Errorf("no readings from %s: nothing recorded, %s not written: %s", d.Path, out, hint)
			}
			header := fmt.Sprintf("# lever sweep recorded by thrustmap record from %s; simulation only\n", describeSource(d))
			if err := atomicfile.WriteFile(out, append([]byte(header), csv.Bytes()...), 0o644, true); err != nil {
				return err
			}
			rec.describeStop(cmd.ErrOrStderr(), out)
			src := newLeverSource(d)
			report := recordJSON{Device: d.Path, Format: d.Format, Recording: out, Stopped: rec.stopped, Samples: rec.samples,
				DurationMs: rec.durationMs(), SkippedLines: src.skipped, SkippedCount: src.skippedCount}
			if report.SkippedLines == nil {
				report.SkippedLines = []input.Skipped{}
			}
			expected := 0
			if p != nil {
				expected = len(p.NotchPositions())
			}
			for _, id := range an.Levers() {
				pr, _ := an.Progress(id)
				report.Levers = append(report.Levers, recordLeverJSON{Lever: id, Axis: src.axes[id], Samples: pr.Samples,
					RawMinSeen: pr.RawMinSeen, RawMaxSeen: pr.RawMaxSeen, Rests: roundAll(pr.Rests), ExpectedRests: expected})
			}
			var calErr error
			if calibrate != "" {
				calSrc := src // the skipped lines are in the recording's report
				calSrc.skipped, calSrc.skippedCount = nil, 0
				sj, err := calibrateSweep(p, an, calibrate, o, calSrc)
				report.Sweep, calErr = &sj, err
			}
			w := cmd.OutOrStdout()
			if asJSON {
				if err := writeJSON(w, report); err != nil {
					return err
				}
				return calErr
			}
			printRecord(w, report)
			if report.Sweep != nil {
				printSweep(w, *report.Sweep)
			}
			if calErr != nil {
				return fmt.Errorf("%s is kept; the calibration: %w", out, calErr)
			}
			return nil
		},
	}
	live.register(cmd)
	cf.register(cmd)
	cmd.Flags().StringVar(&live.format, "format", "", "evdev, js, serial, csv or joy (default: told from the device path; a file by its extension)")
	cmd.Flags().StringArrayVar(&live.axisArgs, "axis", nil, "CODE=LEVER: read lever LEVER from axis CODE (repeatable; ABS_Z=1, 0=1, Z=1)")
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile whose notches the rests are counted against (file or embedded name)")
	cmd.Flags().StringVarP(&out, "out", "o", "", "the recording to write (CSV t_ms,lever,raw)")
	cmd.Flags().StringVar(&calibrate, "calibrate", "", "also calibrate from the recording and write this calibration (needs -p)")
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	return cmd
}

func roundAll(xs []float64) []float64 {
	out := make([]float64, len(xs))
	for i, x := range xs {
		out[i] = round(x, 1)
	}
	return out
}

// printRecord describes a recording: where it went and what each lever did.
func printRecord(w io.Writer, r recordJSON) {
	fmt.Fprintf(w, "recorded %d samples of %d lever(s), %.1f s, from %s; wrote %s (the previous file, if any, is %s.bak)\n",
		r.Samples, len(r.Levers), float64(r.DurationMs)/1000, r.Device, r.Recording, r.Recording)
	for _, l := range r.Levers {
		axis := ""
		if l.Axis != "" {
			axis = " (" + l.Axis + ")"
		}
		expect := ""
		if l.ExpectedRests > 0 {
			expect = fmt.Sprintf(" (the profile expects %d)", l.ExpectedRests)
		}
		fmt.Fprintf(w, "  lever %d%s: %d samples, raw %g to %g, %d rest(s)%s: %s\n", l.Lever, axis, l.Samples, l.RawMinSeen, l.RawMaxSeen,
			len(l.Rests), expect, formatRests(l.Rests))
	}
	if r.SkippedCount > 0 {
		fmt.Fprintf(w, "skipped %d line(s) of the source:\n", r.SkippedCount)
		for _, s := range r.SkippedLines {
			fmt.Fprintf(w, "  %s\n", s)
		}
	}
	if r.Sweep == nil {
		fmt.Fprintln(w, safetyNote)
	}
}
