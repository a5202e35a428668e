package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
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
		Use:   "watch -p PROFILE -c CAL --device PATH [--format evdev|js|serial] [--axis CODE=LEVER]... [--baud N] --alt ALT --oat T [--mach M] [--bleed NAME]... [--assumed T] [--on-ground] [--once N]",
		Short: "Live view of the levers of a device: raw counts, TLA, gate and command",
		Long: `watch reads a live lever device and shows, for each lever, the raw count, the
thrust-lever angle, the detent gate and the engine command at the given
conditions, updated as the levers move. On a terminal the table is redrawn in
place; otherwise (or with --json) each update is printed as one line.

Devices (--format, or told from the path):
  evdev   /dev/input/eventN: Linux input events; true device counts, with the
          axis range the device reports (EVIOCGABS). The usual choice.
  js      /dev/input/jsN: the older joystick interface. It rescales counts to
          −32767..32767 and may add a centre dead zone; a warning says so.
  serial  /dev/ttyUSB0, /dev/ttyACM0, /dev/serial/...: a board printing one
          "LEVER RAW" line per reading (two integers), 8N1 at --baud. A FIFO or
          file given with --format serial is read as plain text.

Axes: by default the calibration's levers, in file order, are read from
ABS_X, ABS_Y, ABS_Z, ... (evdev) or axes 0, 1, 2, ... (js). --axis CODE=LEVER
maps one axis instead (repeatable), as does an axis key on a lever of the
calibration; CODE is an ABS_ name (ABS_THROTTLE,
ABS_RZ, ...) or a number for evdev, an axis number for js. Serial lines carry
lever ids themselves.

When the device goes away (unplugged, or the writer of a FIFO closes it),
watch says so and tries to reopen it every 500 ms until it returns; a
/dev/input/by-id/... path keeps its name when a USB device comes back under
another number. Ctrl-C ends it (exit status 0). --once N ends it after N
samples.

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
				return fmt.Errorf("--device PATH is required (/dev/input/eventN, /dev/input/jsN, a serial port or a FIFO)")
			}
			if w.once < 0 {
				return fmt.Errorf("--once=%d: want a number of samples ≥ 1", w.once)
			}
			m, err := thrustmap.LoadModel(w.profile, w.cal)
			if err != nil {
				return err
			}
			if w.cond, _, err = cf.conditions(m.Profile()); err != nil {
				return err
			}
			if w.format == "" {
				if w.format, err = input.DetectFormat(w.device); err != nil {
					return fmt.Errorf("--device: %w (give --format)", err)
				}
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
	f.StringVar(&w.device, "device", "", "the device: /dev/input/eventN, /dev/input/jsN, a serial port, or a FIFO")
	f.StringVar(&w.format, "format", "", "evdev, js or serial (default: told from the device path)")
	f.StringArrayVar(&w.axisArgs, "axis", nil, "CODE=LEVER: read lever LEVER from axis CODE (repeatable)")
	f.IntVar(&w.baud, "baud", 115200, "serial port speed")
	f.IntVar(&w.once, "once", 0, "exit after N samples (0: run until interrupted)")
	cf.register(f, true)
	f.BoolVar(&asJSON, "json", false, "print one JSON object per update")
	return cmd
}

// watchConfig is what watch was asked to do.
type watchConfig struct {
	profile, cal, device, format string
	axisArgs                     []string
	baud, once                   int
	cond                         thrustmap.Conditions
	axes                         map[int]int // device axis → lever id; nil for serial
	levers                       []int       // the levers shown, in order
}

// watchAxes builds the axis map: --axis CODE=LEVER pairs; else the axis
// each lever's calibration records (its axis key); else the calibration's
// levers in order on ABS_X, ABS_Y, ... (evdev) or axes 0, 1, ... (js).
// Serial lines name their levers: every calibrated lever is shown.
func watchAxes(cal *thrustmap.Calibration, format string, args []string) (map[int]int, []int, error) {
	var fromCal []string
	var ids []int
	for _, l := range cal.Levers() {
		ids = append(ids, l.ID())
		if a := l.Spec().Axis; a != "" {
			fromCal = append(fromCal, fmt.Sprintf("%s=%d", a, l.ID()))
		}
	}
	if len(args) == 0 && format != input.FormatSerial {
		args = fromCal
	}
	switch format {
	case input.FormatSerial:
		if len(args) > 0 {
			return nil, nil, fmt.Errorf("--axis: serial lines carry lever ids (\"LEVER RAW\"); there are no axes to map")
		}
		return nil, ids, nil
	case input.FormatEvdev, input.FormatJoystick:
	default:
		return nil, nil, fmt.Errorf("--format %q: want evdev, js or serial", format)
	}
	axes := make(map[int]int)
	var levers []int
	if len(args) == 0 {
		for i, id := range ids {
			axes[i] = id
		}
		return axes, ids, nil
	}
	for _, a := range args {
		codeText, leverText, ok := strings.Cut(a, "=")
		if !ok {
			return nil, nil, fmt.Errorf("--axis %q: want CODE=LEVER (ABS_THROTTLE=1, 0=1)", a)
		}
		var code int
		if format == input.FormatEvdev {
			c, err := input.ParseAbsCode(strings.TrimSpace(codeText))
			if err != nil {
				return nil, nil, fmt.Errorf("--axis %q: %w", a, err)
			}
			code = int(c)
		} else {
			n, err := strconv.Atoi(strings.TrimSpace(codeText))
			if err != nil || n < 0 || n > 255 {
				return nil, nil, fmt.Errorf("--axis %q: want a joystick axis number from 0 to 255 before the =", a)
			}
			code = n
		}
		id, err := strconv.Atoi(strings.TrimSpace(leverText))
		if err != nil {
			return nil, nil, fmt.Errorf("--axis %q: want a lever id after the =", a)
		}
		if cal.Lever(id) == nil {
			return nil, nil, fmt.Errorf("--axis %q: %s has no lever %d (levers: %s)", a, cal.Source(), id, leverIDs(cal))
		}
		if prev, dup := axes[code]; dup {
			return nil, nil, fmt.Errorf("--axis %q: axis %s is already mapped to lever %d", a, codeText, prev)
		}
		axes[code] = id
		if !slices.Contains(levers, id) {
			levers = append(levers, id)
		}
	}
	return axes, levers, nil
}

// axisLabel names a device axis for messages.
func axisLabel(format string, code int) string {
	if format == input.FormatEvdev {
		return input.AbsName(uint16(code))
	}
	return "axis " + strconv.Itoa(code)
}

// watchEvent is what the reading goroutine hands over: a sample or the error
// that ended the stream.
type watchEvent struct {
	s   input.Sample
	err error
}

// run opens the device, shows its samples and reopens it when it goes away,
// until ctx ends or --once is reached. Only the first open's failure is an
// error; later failures mean the device is still away.
func (w *watchConfig) run(ctx context.Context, m *thrustmap.Model, v *watchView) error {
	states := make(map[int]*thrustmap.LeverState)
	unknown := make(map[int]bool)
	count := 0
	for attempt := 0; ; attempt++ {
		src, closer, warning, err := w.open(ctx)
		if ctx.Err() != nil {
			return nil
		}
		if err != nil {
			if attempt == 0 {
				if errors.Is(err, fs.ErrPermission) {
					return fmt.Errorf("--device: %w (input devices and serial ports usually belong to a group such as input or dialout: is your user in it?)", err)
				}
				return fmt.Errorf("--device: %w", err)
			}
			if !sleepCtx(ctx, watchRetry) {
				return nil
			}
			continue
		}
		if attempt == 0 {
			w.describe(v, src, warning, m.Calibration())
			v.draw(true)
		} else {
			v.message(fmt.Sprintf("device %s is back", w.device))
		}

		events := make(chan watchEvent)
		quit := make(chan struct{})
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
					close(quit)
					closer.Close()
					return err
				}
				v.update(e.s.TMs, res)
				count++
				if w.once > 0 && count >= w.once {
					break read
				}
			}
		}
		tick.Stop()
		close(quit)
		closer.Close()
		v.draw(true)
		if gone == nil { // ctrl-C or --once
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

// open opens the device, giving up when ctx ends. Opening a FIFO waits for
// a writer and cannot be interrupted: the goroutine then closes what it
// opened once a writer comes, or stays blocked until the process exits.
func (w *watchConfig) open(ctx context.Context) (input.Reader, io.Closer, string, error) {
	type opened struct {
		r       input.Reader
		c       io.Closer
		warning string
		err     error
	}
	ch := make(chan opened, 1)
	go func() {
		r, c, warning, err := input.OpenDevice(w.device, w.format, w.axes, w.baud)
		select {
		case ch <- opened{r, c, warning, err}:
		case <-ctx.Done():
			if c != nil {
				c.Close()
			}
		}
	}()
	select {
	case o := <-ch:
		return o.r, o.c, o.warning, o.err
	case <-ctx.Done():
		return nil, nil, "", ctx.Err()
	}
}

// describe says what is read from where, passes on the source's warning,
// and compares an evdev device's reported ranges with the calibration's.
func (w *watchConfig) describe(v *watchView, src input.Reader, warning string, cal *thrustmap.Calibration) {
	var maps []string
	codes := make([]int, 0, len(w.axes))
	for code := range w.axes {
		codes = append(codes, code)
	}
	slices.Sort(codes)
	for _, code := range codes {
		maps = append(maps, fmt.Sprintf("lever %d ← %s", w.axes[code], axisLabel(w.format, code)))
	}
	if w.format == input.FormatSerial {
		maps = append(maps, "lever ids from the lines")
	}
	v.message(fmt.Sprintf("watching %s (%s): %s; ctrl-C to stop", w.device, w.format, strings.Join(maps, ", ")))
	if warning != "" {
		v.message("warning: " + warning)
	}
	if ev, ok := src.(*input.EvdevReader); ok {
		ranges := ev.Ranges()
		for _, id := range w.levers {
			r, ok := ranges[id]
			if !ok {
				continue
			}
			spec := cal.Lever(id).Spec()
			if float64(r[0]) != spec.RawMin || float64(r[1]) != spec.RawMax {
				v.message(fmt.Sprintf("warning: lever %d: the device reports counts %d to %d, the calibration's device range is %g to %g",
					id, r[0], r[1], spec.RawMin, spec.RawMax))
			}
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
