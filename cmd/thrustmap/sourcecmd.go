package main

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"slices"
	"strconv"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// devSystem finds and opens devices: the machine's own. Tests put a fake
// device tree here.
var devSystem = input.Host()

// sourceFormats are the --format values of a live source.
var sourceFormats = []string{input.FormatEvdev, input.FormatJoystick, input.FormatSerial, input.FormatCSV, input.FormatJoy}

// sourceFormat tells what a --device path names and its format: the one
// given, or joy for a game controller, the recording's (by extension) for a
// regular file, and the device's (by path) for a device or FIFO.
func sourceFormat(path, format string) (input.Kind, string, error) {
	kind, err := devSystem.Classify(path)
	if errors.Is(err, fs.ErrNotExist) {
		// Check the rest of the command line first: opening the device says
		// it is missing.
		if format == "" {
			format, _ = devSystem.DetectFormat(path)
		}
		if slices.Contains(sourceFormats, format) {
			return 0, format, nil
		}
	}
	if err != nil {
		return 0, "", fmt.Errorf("--device: %w", err)
	}
	switch {
	case format != "":
		if !slices.Contains(sourceFormats, format) {
			return 0, "", fmt.Errorf("--format %q: want %s", format, strings.Join(sourceFormats, ", "))
		}
		if (kind == input.KindController) != (format == input.FormatJoy) {
			return 0, "", fmt.Errorf("--format %s is for game controllers, given as --device joy:N", input.FormatJoy)
		}
	case kind == input.KindController:
		format = input.FormatJoy
	case kind == input.KindFile:
		format = input.FileFormat(path)
	default:
		if format, err = devSystem.DetectFormat(path); err != nil {
			return 0, "", fmt.Errorf("--device: %w (give --format)", err)
		}
	}
	return kind, format, nil
}

// openCtx opens a source, giving up when ctx ends. Opening a FIFO waits for
// a writer and cannot be interrupted: the goroutine then closes what it
// opened once a writer comes, or stays blocked until the process exits.
func openCtx(ctx context.Context, path string, o input.OpenOptions) (*input.Device, error) {
	type opened struct {
		d   *input.Device
		err error
	}
	ch := make(chan opened, 1)
	go func() {
		d, err := devSystem.Open(path, o)
		select {
		case ch <- opened{d, err}:
		case <-ctx.Done():
			if d != nil {
				d.Close()
			}
		}
	}()
	select {
	case o := <-ch:
		return o.d, o.err
	case <-ctx.Done():
		return nil, ctx.Err()
	}
}

// parseAxisArg reads one --axis CODE=LEVER for a source of format.
func parseAxisArg(format, arg string) (code, lever int, err error) {
	codeText, leverText, ok := strings.Cut(arg, "=")
	if !ok {
		return 0, 0, fmt.Errorf("--axis %q: want CODE=LEVER (ABS_THROTTLE=1, 0=1, Z=1)", arg)
	}
	if code, err = input.ParseAxis(format, codeText); err != nil {
		return 0, 0, fmt.Errorf("--axis %q: %w", arg, err)
	}
	if lever, err = strconv.Atoi(strings.TrimSpace(leverText)); err != nil {
		return 0, 0, fmt.Errorf("--axis %q: want a lever id after the =", arg)
	}
	return code, lever, nil
}

// parseAxisArgs reads --axis CODE=LEVER pairs into an axis map, refusing an
// axis mapped twice; nil when there are none.
func parseAxisArgs(format string, args []string) (map[int]int, error) {
	if len(args) == 0 {
		return nil, nil
	}
	axes := make(map[int]int, len(args))
	for _, a := range args {
		code, lever, err := parseAxisArg(format, a)
		if err != nil {
			return nil, err
		}
		if prev, dup := axes[code]; dup {
			return nil, fmt.Errorf("--axis %q: axis %s is already mapped to lever %d", a, input.AxisName(format, code), prev)
		}
		axes[code] = lever
	}
	return axes, nil
}

// describeSource says in one line what is read from where.
func describeSource(d *input.Device) string {
	var maps []string
	for _, a := range d.Axes {
		name := a.Name
		if d.Format == input.FormatJoystick {
			name = "axis " + name
		}
		maps = append(maps, fmt.Sprintf("lever %d ← %s", a.Lever, name))
	}
	if d.LeverIDsFromLines() {
		maps = append(maps, "lever ids from the lines")
	}
	what := d.Format
	if d.Name != "" {
		what += ", " + strconv.Quote(d.Name)
	}
	return fmt.Sprintf("%s (%s): %s", d.Path, what, strings.Join(maps, ", "))
}

// skipReporter shows the first few lines a text source could not use, with
// their line numbers and the forms it accepts, and counts the rest.
type skipReporter struct {
	emit  func(string)
	shown int
	max   int
}

// report shows the skipped lines not shown yet, up to the first max.
func (r *skipReporter) report(d *input.Device) {
	list, n := d.Skipped()
	if n == 0 || r.shown >= r.max {
		return
	}
	for r.shown < len(list) && r.shown < r.max {
		if r.shown == 0 {
			r.emit(fmt.Sprintf("%s: lines that cannot be read are skipped; accepted: %s", d.Path, acceptedForms(d.Format)))
		}
		r.emit("  skipped " + list[r.shown].String())
		r.shown++
		if r.shown == r.max {
			r.emit(fmt.Sprintf("  (only the first %d skipped lines are shown; all are counted)", r.max))
		}
	}
}

// summary says how many lines were skipped in all, or "".
func (r *skipReporter) summary(d *input.Device) string {
	if _, n := d.Skipped(); n > 0 {
		return fmt.Sprintf("%d line(s) of %s could not be read and were skipped", n, d.Path)
	}
	return ""
}

// acceptedForms describes the lines a text format takes.
func acceptedForms(format string) string {
	if format == input.FormatCSV {
		return "t_ms,lever,raw lines (three numbers: time in ms, lever id, raw count), after a header naming those columns or without one"
	}
	return input.LineForms
}
