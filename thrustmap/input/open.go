package input

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"

	"go.bug.st/serial"
)

// Formats of a source.
const (
	FormatEvdev    = "evdev"  // struct input_event records (/dev/input/eventN, or a .evdev capture)
	FormatJoystick = "js"     // struct js_event records (/dev/input/jsN, or a .js capture)
	FormatSerial   = "serial" // "LEVER RAW" text lines (/dev/ttyUSB0, /dev/serial/..., COM3)
	FormatCSV      = "csv"    // t_ms,lever,raw lines: a recording, or a board printing them
	FormatJoy      = "joy"    // a game controller, joy:N (Windows)
)

// DetectFormat tells a live source's format from its path, following
// symbolic links (/dev/input/by-id/...): /dev/input/event* is evdev,
// /dev/input/js* the joystick interface, /dev/tty*, /dev/cu.* (macOS),
// /dev/serial/* and COMn (Windows) serial, joy:N a game controller.
func DetectFormat(path string) (string, error) {
	if _, ok, _ := ParseJoyID(path); ok {
		return FormatJoy, nil
	}
	if comPort.MatchString(path) {
		return FormatSerial, nil
	}
	paths := []string{path}
	if resolved, err := filepath.EvalSymlinks(path); err == nil && resolved != path {
		paths = append(paths, resolved)
	}
	for _, p := range paths {
		switch {
		case strings.HasPrefix(p, "/dev/input/event"):
			return FormatEvdev, nil
		case strings.HasPrefix(p, "/dev/input/js"):
			return FormatJoystick, nil
		case strings.HasPrefix(p, "/dev/tty"), strings.HasPrefix(p, "/dev/cu."), strings.HasPrefix(p, "/dev/serial"):
			return FormatSerial, nil
		}
	}
	return "", fmt.Errorf("%s: cannot tell the input format from the path: want the format %s, %s, %s or %s",
		path, FormatEvdev, FormatJoystick, FormatSerial, FormatCSV)
}

// OpenSerial opens a serial port at baud, 8 data bits, no parity, one stop
// bit (8N1).
func OpenSerial(path string, baud int) (io.ReadCloser, error) {
	if baud <= 0 {
		return nil, fmt.Errorf("%s: baud rate %d: want a positive rate such as 9600 or 115200", path, baud)
	}
	p, err := serial.Open(path, &serial.Mode{BaudRate: baud, DataBits: 8, Parity: serial.NoParity, StopBits: serial.OneStopBit})
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return p, nil
}

// OpenOptions choose how a source is read.
type OpenOptions struct {
	// Format is FormatEvdev, FormatJoystick, FormatSerial, FormatCSV,
	// FormatJoy, or "" to tell it: joy:N is a game controller, a regular
	// file a recording (FileFormat), a device its kind from the path
	// (DetectFormat).
	Format string
	// Axes maps a device axis (an EV_ABS code, a joystick-interface axis
	// number, a game controller axis 0 to 5 for X to V) to a lever id. Nil
	// takes every axis the device has, in order, as levers 1, 2, 3, ...
	// (axes 0 to 7 when the source cannot tell its axes: a capture or a
	// FIFO). Serial and CSV lines carry lever ids and take no axes.
	Axes map[int]int
	// Baud is a serial port's speed.
	Baud int
}

// MappedAxis is a device axis read as a lever.
type MappedAxis struct {
	Code  int    // the EV_ABS code, joystick axis number or controller axis (0 to 5)
	Name  string // "ABS_Z", "2", "Z": as ParseAxis reads it
	Lever int
	// Min and Max are the axis's range as the device reports it, when it
	// does (HasRange).
	Min, Max float64
	HasRange bool
}

// Device is an open source of lever readings.
type Device struct {
	Reader
	Path    string
	Format  string
	Kind    Kind
	Name    string       // the device's own name, when it gives one
	Warning string       // something the user should know about its counts, or ""
	Axes    []MappedAxis // in axis order; nil for sources whose lines carry lever ids
	closer  io.Closer
	skips   interface {
		Skipped() []Skipped
		SkippedCount() int
	}
	seen  int // skipped lines counted by Next
	mu    sync.Mutex
	snap  []Skipped // the skipped lines as Next last saw them
	snapN int
}

// Next returns the next sample. Only one goroutine may call it; Skipped
// and Close may be called from others meanwhile.
func (d *Device) Next() (Sample, error) {
	s, err := d.Reader.Next()
	if d.skips != nil {
		if n := d.skips.SkippedCount(); n != d.seen {
			d.seen = n
			list := d.skips.Skipped()
			d.mu.Lock()
			d.snap, d.snapN = list, n
			d.mu.Unlock()
		}
	}
	return s, err
}

// Close closes the source; a pending Next returns.
func (d *Device) Close() error { return d.closer.Close() }

// Skipped returns the first lines a text source could not use and how many
// there were in all (none for binary sources), as of the last Next.
func (d *Device) Skipped() ([]Skipped, int) {
	d.mu.Lock()
	defer d.mu.Unlock()
	return slices.Clone(d.snap), d.snapN
}

// LeverIDsFromLines reports whether the source's lines name their levers
// (serial and CSV) rather than the device's axes.
func (d *Device) LeverIDsFromLines() bool {
	return d.Format == FormatSerial || d.Format == FormatCSV
}

// OpenDevice opens a source on the machine's own System.
func OpenDevice(path string, o OpenOptions) (*Device, error) { return Host().Open(path, o) }

// Open opens a source of lever readings: a device (/dev/input/eventN,
// /dev/input/jsN, a serial port), a game controller (joy:N), a FIFO read
// as a device, or a recording file (read once, to its end).
//
// A device that reports its axes (evdev, the joystick interface, a game
// controller) is asked for them: an axis map naming an axis it does not
// have is an error listing those it has, and each mapped axis's range is
// in the Device's Axes. A serial or CSV source that is not a character
// device (a FIFO, a file) is read as plain text, without port settings.
// Opening a FIFO waits for a writer, as open(2) does. A device the user may
// not read is a *PermissionError, which says how to get access.
func (s *System) Open(path string, o OpenOptions) (*Device, error) {
	kind, err := s.Classify(path)
	if err != nil {
		return nil, err
	}
	format := o.Format
	if format == "" {
		switch kind {
		case KindController:
			format = FormatJoy
		case KindFile:
			format = FileFormat(path)
		default:
			if format, err = s.DetectFormat(path); err != nil {
				return nil, err
			}
		}
	}
	if (kind == KindController) != (format == FormatJoy) {
		return nil, fmt.Errorf("%s: format %s is for game controllers named joy:N", path, FormatJoy)
	}
	d := &Device{Path: path, Format: format, Kind: kind}
	switch format {
	case FormatEvdev:
		err = s.openEvdev(d, o.Axes)
	case FormatJoystick:
		err = s.openJoystick(d, o.Axes)
	case FormatSerial, FormatCSV:
		err = s.openLines(d, o)
	case FormatJoy:
		err = s.openController(d, o.Axes)
	default:
		err = fmt.Errorf("%s: format %q: want %s, %s, %s, %s or %s", path, format, FormatEvdev, FormatJoystick, FormatSerial, FormatCSV, FormatJoy)
	}
	if err != nil {
		return nil, err
	}
	return d, nil
}

func (s *System) openEvdev(d *Device, want map[int]int) error {
	for code := range want {
		if code < 0 || code > ABS_MAX {
			return fmt.Errorf("%s: axis code %d: want an EV_ABS code from 0 to %d", d.Path, code, ABS_MAX)
		}
	}
	f, err := s.open(d.Path)
	if err != nil {
		return s.permissionError(d.Path, false, err)
	}
	var info *EvdevInfo
	if s.Ioctl != nil {
		if info, err = askDevice(f, s.Ioctl.Evdev); err != nil {
			f.Close()
			return err
		}
	}
	var have []axisInfo
	if info != nil {
		d.Name = info.Name
		for _, a := range info.Axes {
			have = append(have, axisInfo{code: int(a.Code), min: float64(a.Min), max: float64(a.Max), hasRange: a.HasRange})
		}
	}
	d.Axes, err = mapAxes(d.Path, FormatEvdev, have, info != nil, want)
	if err != nil {
		f.Close()
		return err
	}
	codes := make(map[uint16]int, len(d.Axes))
	for _, a := range d.Axes {
		codes[uint16(a.Code)] = a.Lever
	}
	size := EvdevRecordSize
	if info != nil && d.Kind == KindDevice && strconv.IntSize == 32 {
		size = 16 // a 32-bit process's struct input_event
	}
	r := newEvdevReader(f, codes, size)
	r.ranges = make(map[int][2]int32)
	for _, a := range d.Axes {
		if a.HasRange {
			r.ranges[a.Lever] = [2]int32{int32(a.Min), int32(a.Max)}
		}
	}
	if len(r.ranges) == 0 {
		r.ranges = nil
	}
	d.Reader, d.closer = r, f
	return nil
}

func (s *System) openJoystick(d *Device, want map[int]int) error {
	for n := range want {
		if n < 0 || n > 255 {
			return fmt.Errorf("%s: axis number %d: want 0 to 255", d.Path, n)
		}
	}
	f, err := s.open(d.Path)
	if err != nil {
		return s.permissionError(d.Path, false, err)
	}
	var info *JoystickInfo
	if s.Ioctl != nil {
		if info, err = askDevice(f, s.Ioctl.Joystick); err != nil {
			f.Close()
			return err
		}
	}
	var have []axisInfo
	if info != nil {
		d.Name = info.Name
		for n, code := range info.Axes {
			// The interface rescales every axis to −32767..32767
			// (Documentation/input/joydev/joystick-api.rst).
			have = append(have, axisInfo{code: n, also: AbsName(code), min: -32767, max: 32767, hasRange: true})
		}
	}
	d.Axes, err = mapAxes(d.Path, FormatJoystick, have, info != nil, want)
	if err != nil {
		f.Close()
		return err
	}
	numbers := make(map[uint8]int, len(d.Axes))
	for _, a := range d.Axes {
		numbers[uint8(a.Code)] = a.Lever
	}
	r := NewJoystickReader(f, numbers)
	d.Reader, d.closer, d.Warning = r, f, r.Warning()
	return nil
}

func (s *System) openLines(d *Device, o OpenOptions) error {
	if len(o.Axes) > 0 {
		return fmt.Errorf("%s: %s lines carry lever ids: an axis map does not apply", d.Path, d.Format)
	}
	var rc io.ReadCloser
	var err error
	if d.Kind == KindDevice {
		if rc, err = OpenSerial(d.Path, o.Baud); err != nil {
			return s.permissionError(d.Path, true, err)
		}
	} else if rc, err = s.open(d.Path); err != nil {
		return s.permissionError(d.Path, true, err)
	}
	d.closer = rc
	if d.Format == FormatSerial {
		lr := NewLineReader(rc, d.Path, s.now(), s.now)
		d.Reader, d.skips = lr, lr
		return nil
	}
	cr := NewCSVReader(rc, d.Path)
	if d.Kind != KindFile {
		cr.HeaderOptional() // a board may have printed its header before we listened
	}
	d.Reader, d.skips = cr, cr
	return nil
}

func (s *System) openController(d *Device, want map[int]int) error {
	id, _, err := ParseJoyID(d.Path)
	if err != nil {
		return err
	}
	if s.Controllers == nil {
		return fmt.Errorf("%s: game controllers are read as joy:N on Windows only; on Linux read the controller's /dev/input/event* device (thrustmap devices lists them); on macOS game controllers cannot be read yet", d.Path)
	}
	if _, err := s.Controllers.Position(id); err != nil {
		if errors.Is(err, ErrUnplugged) {
			return fmt.Errorf("%s: no game controller is connected as number %d (thrustmap devices lists the connected ones): %w", d.Path, id, err)
		}
		return fmt.Errorf("%s: %w", d.Path, err)
	}
	caps, err := s.Controllers.Caps(id)
	if err != nil {
		return fmt.Errorf("%s: %w", d.Path, err)
	}
	d.Name = caps.Name
	var have []axisInfo
	for _, a := range caps.Axes {
		have = append(have, axisInfo{code: a.Index, min: float64(a.Min), max: float64(a.Max), hasRange: true})
	}
	for code := range want {
		if code < 0 || code >= JoyAxes {
			return fmt.Errorf("%s: axis %d: want a game controller axis: X, Y, Z, R, U or V", d.Path, code)
		}
	}
	if d.Axes, err = mapAxes(d.Path, FormatJoy, have, true, want); err != nil {
		return err
	}
	r := newJoyReader(s, id, d.Axes)
	d.Reader, d.closer, d.Warning = r, closerFunc(r.Close), joyWarning
	return nil
}

type closerFunc func() error

func (f closerFunc) Close() error { return f() }

// axisInfo is an axis a device says it has.
type axisInfo struct {
	code     int
	also     string // another name for it (the evdev axis behind a joystick-interface axis)
	min, max float64
	hasRange bool
}

func (a axisInfo) label(format string) string {
	s := AxisName(format, a.code)
	if format == FormatJoystick {
		s = "axis " + s
	}
	if a.also != "" {
		s += " (" + a.also + ")"
	}
	if a.hasRange {
		s += fmt.Sprintf(" %g to %g", a.min, a.max)
	}
	return s
}

// mapAxes builds the axis map of a source. known says whether the source
// told its axes (have): then want may name only those, and nil want takes
// them all as levers 1, 2, ...; otherwise nil want takes axes 0 to 7 as
// levers 1 to 8.
func mapAxes(path, format string, have []axisInfo, known bool, want map[int]int) ([]MappedAxis, error) {
	var out []MappedAxis
	byCode := make(map[int]axisInfo, len(have))
	for _, a := range have {
		byCode[a.code] = a
	}
	add := func(code, lever int) {
		m := MappedAxis{Code: code, Name: AxisName(format, code), Lever: lever}
		if a, ok := byCode[code]; ok && a.hasRange {
			m.Min, m.Max, m.HasRange = a.min, a.max, true
		}
		out = append(out, m)
	}
	switch {
	case want == nil && known:
		for i, a := range have {
			add(a.code, i+1)
		}
		if len(out) == 0 {
			return nil, fmt.Errorf("%s has no axes to read", path)
		}
	case want == nil:
		for code := range 8 {
			add(code, code+1)
		}
	default:
		var missing []string
		for code, lever := range want {
			if _, ok := byCode[code]; known && !ok {
				missing = append(missing, AxisName(format, code))
				continue
			}
			add(code, lever)
		}
		if len(missing) > 0 {
			slices.Sort(missing)
			var list []string
			for _, a := range have {
				list = append(list, a.label(format))
			}
			its := "it has no axes"
			if len(list) > 0 {
				its = "its axes are " + strings.Join(list, ", ")
			}
			what := "axis"
			if len(missing) > 1 {
				what = "axes"
			}
			return nil, fmt.Errorf("%s has no %s %s: %s", path, what, strings.Join(missing, ", "), its)
		}
	}
	slices.SortFunc(out, func(a, b MappedAxis) int { return a.Code - b.Code })
	return out, nil
}
