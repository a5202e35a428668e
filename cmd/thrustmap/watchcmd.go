package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"slices"
	"strings"
	"syscall"
	"time"
	"unicode/utf8"

	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// watchRetry is how often watch tries to reopen a device that went away.
const watchRetry = 500 * time.Millisecond

// watchRedraw is the shortest time between two redraws of the live table.
const watchRedraw = 50 * time.Millisecond

func newWatchCmd() *cobra.Command {
	var cf conditionFlags
	var w watchConfig
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "watch -p PROFILE -c CAL --device PATH|joy:N|RECORDING [--format evdev|js|serial|csv] [--axis CODE=LEVER]... [--baud N] --alt ALT --oat T [--mach M] [--bleed NAME]... [--assumed T] [--on-ground] [--once N] [--speed F]",
		Short: "Live view of the levers of a device: raw counts, TLA, gate and command",
		Long: `watch reads a live lever device and shows, for each lever, the raw count, the
thrust-lever angle, the detent gate and the engine command at the given
conditions, updated as the levers move. On a terminal the table is redrawn in
place; otherwise (or with --json) each update is printed as one line.
thrustmap devices lists the devices there are, with their axes.

Devices (--format, or told from the path):
  evdev   /dev/input/eventN: Linux input events; true device counts, with the
          axis range the device reports (EVIOCGABS). The usual choice.
  js      /dev/input/jsN: the older joystick interface. It rescales counts to
          −32767..32767 and may add a centre dead zone; a warning says so.
  serial  /dev/ttyUSB0, /dev/ttyACM0, /dev/serial/..., COM3: a board printing
          one "LEVER RAW" line per reading (two integers; "1,2048" and
          "1:2048" too), 8N1 at --baud. Lines that cannot be read are counted
          and the first few shown with their line numbers.
  csv     a board (or FIFO) printing t_ms,lever,raw lines, the recording
          format; its times are kept.
  joy     joy:N, a game controller on Windows (multimedia joystick
          interface), axes X, Y, Z, R, U, V; counts 0..65535 as the driver
          reports them, after any calibration set in Windows.
A FIFO given with --format is read as a device of that format.

A regular file (a CSV recording, an evdev .evdev or joystick .js capture) is
replayed once at its own timing, --speed F times faster, then watch prints a
summary of what it saw and exits 0.

Axes: by default the calibration's levers, in file order, are read from
ABS_X, ABS_Y, ABS_Z, ... (evdev), axes 0, 1, 2, ... (js) or X, Y, Z, ...
(joy). --axis CODE=LEVER maps one axis instead (repeatable), as does an axis
key on a lever of the calibration; CODE is an ABS_ name (ABS_THROTTLE,
ABS_RZ, ...) or a number for evdev, an axis number for js, an axis letter for
joy. Serial and CSV lines carry lever ids themselves. An axis the device does
not have is refused, with the list of those it has.

When the device goes away (unplugged, or the writer of a FIFO closes it),
watch says so and tries to reopen it every 500 ms until it returns; a
/dev/input/by-id/... path keeps its name when a USB device comes back under
another number. Ctrl-C ends it (exit status 0). --once N ends it after N
samples. A device the user may not read gets the fix: the udev rule for its
vendor and product, or the group to join.

Each update line (and JSON object, with the lever command's keys) carries
t_ms, the device's time since it was opened: it starts again when the device
returns.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if w.profile == "" || w.cal == "" {
				return fmt.Errorf("-p PROFILE and -c CAL are required")
			}
			if w.device == "" {
				return fmt.Errorf("--device PATH is required (/dev/input/eventN, /dev/input/jsN, a serial port, joy:N, a FIFO or a recording; thrustmap devices lists them)")
			}
			if w.once < 0 {
				return fmt.Errorf("--once=%d: want a number of samples ≥ 1", w.once)
			}
			if !(w.speed > 0) || math.IsInf(w.speed, 0) {
				return fmt.Errorf("--speed=%g: want a positive factor (1 is the recording's own timing)", w.speed)
			}
			m, err := thrustmap.LoadModel(w.profile, w.cal)
			if err != nil {
				return err
			}
			if w.cond, _, err = cf.conditions(m.Profile()); err != nil {
				return err
			}
			if _, w.format, err = sourceFormat(w.device, w.format); err != nil {
				return err
			}
			if w.axes, w.levers, err = watchAxes(m.Calibration(), w.format, w.axisArgs); err != nil {
				return err
			}
			ctx, stop := signal.NotifyContext(cmd.Context(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			return w.run(ctx, m, newWatchView(cmd.OutOrStdout(), cmd.ErrOrStderr(), m, w.levers, asJSON))
		},
	}
	f := cmd.Flags()
	f.StringVarP(&w.profile, "profile", "p", "", "profile file or embedded profile name")
	f.StringVarP(&w.cal, "cal", "c", "", "calibration file (or an embedded profile's name)")
	f.StringVar(&w.device, "device", "", "the device: /dev/input/eventN, /dev/input/jsN, a serial port, joy:N, a FIFO, or a recording to replay")
	f.StringVar(&w.format, "format", "", "evdev, js, serial, csv or joy (default: told from the device path)")
	f.StringArrayVar(&w.axisArgs, "axis", nil, "CODE=LEVER: read lever LEVER from axis CODE (repeatable)")
	f.IntVar(&w.baud, "baud", 115200, "serial port speed")
	f.IntVar(&w.once, "once", 0, "exit after N samples (0: run until interrupted, or to the end of a recording)")
	f.Float64Var(&w.speed, "speed", 1, "replay a recording F times faster than its own timing")
	cf.register(f, true)
	f.BoolVar(&asJSON, "json", false, "print one JSON object per update")
	return cmd
}

// watchConfig is what watch was asked to do.
type watchConfig struct {
	profile, cal, device, format string
	axisArgs                     []string
	baud, once                   int
	speed                        float64
	cond                         thrustmap.Conditions
	axes                         map[int]int // device axis → lever id; nil for serial
	levers                       []int       // the levers shown, in order
}

// watchAxes builds the axis map: --axis CODE=LEVER pairs; else the axis
// each lever's calibration records (its axis key); else the calibration's
// levers in order on ABS_X, ABS_Y, ... (evdev), axes 0, 1, ... (js) or X,
// Y, ... (joy). Serial and CSV lines name their levers: every calibrated
// lever is shown.
func watchAxes(cal *thrustmap.Calibration, format string, args []string) (map[int]int, []int, error) {
	var ids []int
	for _, l := range cal.Levers() {
		ids = append(ids, l.ID())
	}
	switch format {
	case input.FormatSerial, input.FormatCSV:
		if len(args) > 0 {
			return nil, nil, fmt.Errorf("--axis: %s lines carry lever ids; there are no axes to map", format)
		}
		return nil, ids, nil
	case input.FormatEvdev, input.FormatJoystick, input.FormatJoy:
	default:
		return nil, nil, fmt.Errorf("--format %q: want %s", format, strings.Join(sourceFormats, ", "))
	}
	axes := make(map[int]int)
	var levers []int
	add := func(code, id int, what string) error {
		if cal.Lever(id) == nil {
			return fmt.Errorf("%s: %s has no lever %d (levers: %s)", what, cal.Source(), id, leverIDs(cal))
		}
		if prev, dup := axes[code]; dup {
			return fmt.Errorf("%s: axis %s is already mapped to lever %d", what, input.AxisName(format, code), prev)
		}
		axes[code] = id
		if !slices.Contains(levers, id) {
			levers = append(levers, id)
		}
		return nil
	}
	if len(args) > 0 {
		for _, a := range args {
			code, id, err := parseAxisArg(format, a)
			if err != nil {
				return nil, nil, err
			}
			if err := add(code, id, fmt.Sprintf("--axis %q", a)); err != nil {
				return nil, nil, err
			}
		}
		return axes, levers, nil
	}
	for _, l := range cal.Levers() {
		a := l.Spec().Axis
		if a == "" {
			continue
		}
		code, err := input.ParseAxis(format, a)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: lever %d: axis %q is not an axis of a %s source (%v): give --axis", cal.Source(), l.ID(), a, format, err)
		}
		if err := add(code, l.ID(), fmt.Sprintf("%s: lever %d: axis %q", cal.Source(), l.ID(), a)); err != nil {
			return nil, nil, err
		}
	}
	if len(axes) > 0 {
		return axes, levers, nil
	}
	for i, id := range ids {
		axes[i] = id
	}
	return axes, ids, nil
}

// watchEvent is what the reading goroutine hands over: a sample or the error
// that ended the stream.
type watchEvent struct {
	s   input.Sample
	err error
}

// readEvents reads src on a goroutine of its own and sends each sample, and
// finally the error that ends it, until quit is closed.
func readEvents(src input.Reader, quit <-chan struct{}) <-chan watchEvent {
	events := make(chan watchEvent)
	go func() {
		for {
			s, err := src.Next()
			select {
			case events <- watchEvent{s, err}:
			case <-quit:
				return
			}
			if err != nil {
				return
			}
		}
	}()
	return events
}

// run opens the device, shows its samples and reopens it when it goes away,
// until ctx ends or --once is reached. Only the first open's failure is an
// error; later failures mean the device is still away. A regular file is
// replayed once at its own timing (sped up by --speed), then summarised.
func (w *watchConfig) run(ctx context.Context, m *thrustmap.Model, v *watchView) error {
	states := make(map[int]*thrustmap.LeverState)
	unknown := make(map[int]bool)
	stats := newReplayStats()
	skips := &skipReporter{emit: v.message, max: 5}
	count := 0
	for attempt := 0; ; attempt++ {
		dev, err := w.open(ctx)
		if ctx.Err() != nil {
			return nil
		}
		if err != nil {
			if attempt == 0 {
				return fmt.Errorf("--device: %w", err)
			}
			if !sleepCtx(ctx, watchRetry) {
				return nil
			}
			continue
		}
		if attempt == 0 {
			w.describe(v, dev, m.Calibration())
			v.draw(true)
		} else {
			v.message(fmt.Sprintf("device %s is back", w.device))
		}
		var src input.Reader = dev
		var paced *input.Paced
		if dev.Kind == input.KindFile {
			if paced, err = input.NewPaced(dev, w.speed); err != nil {
				dev.Close()
				return err
			}
			src = paced
		}

		quit := make(chan struct{})
		events := readEvents(src, quit)
		stop := func() {
			close(quit)
			if paced != nil {
				paced.Close()
			}
			dev.Close()
		}
		tick := time.NewTicker(watchRedraw)
		var gone error
	read:
		for {
			select {
			case <-ctx.Done():
				break read
			case <-tick.C:
				v.draw(false)
			case e := <-events:
				skips.report(dev)
				if e.err != nil {
					gone = e.err
					break read
				}
				st := states[e.s.Lever]
				if st == nil {
					if m.Calibration().Lever(e.s.Lever) == nil {
						if !unknown[e.s.Lever] {
							unknown[e.s.Lever] = true
							v.message(fmt.Sprintf("lever %d is not in %s (levers: %s); its readings are ignored",
								e.s.Lever, m.Calibration().Source(), leverIDs(m.Calibration())))
						}
						continue
					}
					st = new(thrustmap.LeverState)
					states[e.s.Lever] = st
				}
				res, err := m.Command(st, e.s.Lever, e.s.Raw, w.cond)
				if err != nil {
					tick.Stop()
					stop()
					return err
				}
				v.update(e.s.TMs, res)
				stats.add(e.s, m.GateName(res.Gate))
				count++
				if w.once > 0 && count >= w.once {
					break read
				}
			}
		}
		tick.Stop()
		stop()
		v.draw(true)
		if dev.Kind == input.KindFile {
			for _, line := range stats.summary(dev, w.speed, skips.summary(dev)) {
				v.message(line)
			}
			if gone != nil && !errors.Is(gone, io.EOF) {
				return gone
			}
			return nil
		}
		if gone == nil { // ctrl-C or --once
			if msg := skips.summary(dev); msg != "" {
				v.message(msg)
			}
			return nil
		}
		msg := fmt.Sprintf("device %s gone; waiting for it to return", w.device)
		if !errors.Is(gone, io.EOF) {
			msg += " (" + gone.Error() + ")"
		}
		v.message(msg)
		if !sleepCtx(ctx, watchRetry) {
			return nil
		}
	}
}

// replayStats gathers what a replay showed, for its summary.
type replayStats struct {
	start       time.Time
	n           int
	first, last int64
	levers      []int
	min, max    map[int]float64
	gates       map[int][]string
}

func newReplayStats() *replayStats {
	return &replayStats{start: time.Now(), min: map[int]float64{}, max: map[int]float64{}, gates: map[int][]string{}}
}

func (r *replayStats) add(s input.Sample, gate string) {
	if r.n == 0 {
		r.first = s.TMs
	}
	r.n++
	r.first, r.last = min(r.first, s.TMs), max(r.last, s.TMs)
	if !slices.Contains(r.levers, s.Lever) {
		r.levers = append(r.levers, s.Lever)
		r.min[s.Lever], r.max[s.Lever] = s.Raw, s.Raw
	}
	r.min[s.Lever], r.max[s.Lever] = min(r.min[s.Lever], s.Raw), max(r.max[s.Lever], s.Raw)
	if g := r.gates[s.Lever]; gate != "" && (len(g) == 0 || g[len(g)-1] != gate) && !slices.Contains(g, gate) {
		r.gates[s.Lever] = append(g, gate)
	}
}

// summary describes the replay: how much of the recording it showed, how
// fast, and each lever's range and the gates it reached.
func (r *replayStats) summary(d *input.Device, speed float64, skipped string) []string {
	out := []string{fmt.Sprintf("replayed %s once: %d samples covering %.1f s of recording in %.1f s (speed %g)",
		d.Path, r.n, float64(r.last-r.first)/1000, time.Since(r.start).Seconds(), speed)}
	for _, id := range r.levers {
		gates := "none"
		if g := r.gates[id]; len(g) > 0 {
			gates = strings.Join(g, ", ")
		}
		out = append(out, fmt.Sprintf("  lever %d: raw %g to %g; gates reached: %s", id, r.min[id], r.max[id], gates))
	}
	if skipped != "" {
		out = append(out, skipped)
	}
	return out
}

// open opens the device, giving up when ctx ends.
func (w *watchConfig) open(ctx context.Context) (*input.Device, error) {
	return openCtx(ctx, w.device, input.OpenOptions{Format: w.format, Axes: w.axes, Baud: w.baud})
}

// describe says what is read from where, passes on the source's warning,
// and compares the ranges the device reports with the calibration's.
func (w *watchConfig) describe(v *watchView, d *input.Device, cal *thrustmap.Calibration) {
	how := "ctrl-C to stop"
	if d.Kind == input.KindFile {
		how = fmt.Sprintf("replaying once at speed %g", w.speed)
	}
	v.message(fmt.Sprintf("watching %s; %s", describeSource(d), how))
	if d.Warning != "" {
		v.message("warning: " + d.Warning)
	}
	for _, a := range d.Axes {
		l := cal.Lever(a.Lever)
		if !a.HasRange || l == nil {
			continue
		}
		spec := l.Spec()
		if a.Min != spec.RawMin || a.Max != spec.RawMax {
			v.message(fmt.Sprintf("warning: lever %d: the device reports counts %g to %g, the calibration's device range is %g to %g",
				a.Lever, a.Min, a.Max, spec.RawMin, spec.RawMax))
		}
	}
}

// sleepCtx waits d; false when ctx ended first.
func sleepCtx(ctx context.Context, d time.Duration) bool {
	t := time.NewTimer(d)
	defer t.Stop()
	select {
	case <-t.C:
		return true
	case <-ctx.Done():
		return false
	}
}

// watchView shows the levers: a table redrawn in place on a terminal, one
// line (or JSON object) per update otherwise.
type watchView struct {
	out, errOut io.Writer
	m           *thrustmap.Model
	levers      []int
	live        bool // a terminal: redraw in place
	width       int  // the terminal's columns; 0 when unknown
	asJSON      bool
	rows        map[int]leverJSON
	dirty       bool
	drawn       int // lines of the table on screen, to move up over
}

func newWatchView(out, errOut io.Writer, m *thrustmap.Model, levers []int, asJSON bool) *watchView {
	v := &watchView{out: out, errOut: errOut, m: m, levers: levers, asJSON: asJSON, rows: make(map[int]leverJSON)}
	if f, ok := out.(*os.File); ok && !asJSON && term.IsTerminal(int(f.Fd())) {
		v.live = true
		if w, _, err := term.GetSize(int(f.Fd())); err == nil {
			v.width = w
		}
	}
	return v
}

// watchJSON is one update in watch's JSON lines: the lever command's object
// (docs/units.md, JSON keys) with the sample's time.
type watchJSON struct {
	TMs int64 `json:"t_ms"`
	leverJSON
}

// update shows one lever's new command.
func (v *watchView) update(tms int64, cmd thrustmap.LeverCommand) {
	row := newLeverJSON(v.m, cmd)
	switch {
	case v.asJSON:
		b, _ := json.Marshal(watchJSON{TMs: tms, leverJSON: row})
		fmt.Fprintf(v.out, "%s\n", b)
	case v.live:
		v.rows[row.Lever] = row
		v.dirty = true
	default:
		fmt.Fprintf(v.out, "%8d ms  %s\n", tms, watchRow(row))
	}
}

// message prints a note on stderr; on a terminal the table is drawn afresh
// below it.
func (v *watchView) message(msg string) {
	fmt.Fprintln(v.errOut, msg)
	v.drawn = 0
	v.dirty = true
}

// draw redraws the live table when it changed (or always with force).
func (v *watchView) draw(force bool) {
	if !v.live || !(v.dirty || force) {
		return
	}
	var b strings.Builder
	if v.drawn > 0 {
		fmt.Fprintf(&b, "\x1b[%dA", v.drawn) // cursor up over the last table
	}
	param := v.m.Profile().Parameter().String()
	line := func(text string) { // one screen line: a longer one would wrap and spoil the cursor-up count
		if v.width > 1 && utf8.RuneCountInString(text) >= v.width {
			text = string([]rune(text)[:v.width-1])
		}
		b.WriteString("\r\x1b[2K")
		b.WriteString(text)
		b.WriteByte('\n')
	}
	line(fmt.Sprintf("lever  %8s  %s  %s  %s  %9s  notes", "raw", padLeft("TLA°", 7), padRight("gate", 18), padRight("between", 26), param))
	for _, id := range v.levers {
		if row, ok := v.rows[id]; ok {
			line(watchRow(row))
		} else {
			line(fmt.Sprintf("%-5d  %8s  waiting for a reading", id, "-"))
		}
	}
	io.WriteString(v.out, b.String())
	v.drawn = 1 + len(v.levers)
	v.dirty = false
}

// watchRow formats one lever's command in fixed-width columns.
func watchRow(r leverJSON) string {
	gate, between, notes := leverCells(r)
	line := fmt.Sprintf("%-5d  %8g  %7.2f  %s  %s  %9s  %s", r.Lever, r.Raw, r.TLADeg, padRight(gate, 18), padRight(between, 26),
		formatValue(r.Value, r.Unit), strings.Join(notes, " "))
	return strings.TrimRight(line, " ")
}

// padRight pads s with spaces to n characters (fmt pads to n bytes, which
// misaligns "–" and "°").
func padRight(s string, n int) string {
	return s + strings.Repeat(" ", max(0, n-utf8.RuneCountInString(s)))
}

// padLeft is padRight on the left.
func padLeft(s string, n int) string {
	return strings.Repeat(" ", max(0, n-utf8.RuneCountInString(s))) + s
}
