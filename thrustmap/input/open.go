package input

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"go.bug.st/serial"
)

// Formats of a live source, for OpenDevice.
const (
	FormatEvdev    = "evdev"  // struct input_event records (/dev/input/eventN)
	FormatJoystick = "js"     // struct js_event records (/dev/input/jsN)
	FormatSerial   = "serial" // "LEVER RAW" text lines (/dev/ttyUSB0, /dev/serial/...)
)

// DetectFormat tells a live source's format from its path, following
// symbolic links (/dev/input/by-id/...): /dev/input/event* is evdev,
// /dev/input/js* the joystick interface, /dev/tty* and /dev/serial/* serial.
func DetectFormat(path string) (string, error) {
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
		case strings.HasPrefix(p, "/dev/tty"), strings.HasPrefix(p, "/dev/serial"):
			return FormatSerial, nil
		}
	}
	return "", fmt.Errorf("%s: cannot tell the input format from the path: want the format %s, %s or %s",
		path, FormatEvdev, FormatJoystick, FormatSerial)
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

// OpenDevice opens a live source of lever readings. format is FormatEvdev,
// FormatJoystick, FormatSerial or "" to tell it from the path
// (DetectFormat). axes maps a device axis (an EV_ABS code for evdev, an
// axis number for the joystick interface) to a lever id; serial lines carry
// lever ids themselves and take no axis map. baud is the serial rate.
//
// An evdev character device reports each mapped axis's range (EVIOCGABS),
// available from the returned reader's Ranges. A serial source that is not a
// character device (a FIFO, say) is read as plain text, without port
// settings. Opening a FIFO waits for a writer, as open(2) does. The string
// is a warning for the user, or "": the joystick interface's.
func OpenDevice(path, format string, axes map[int]int, baud int) (Reader, io.Closer, string, error) {
	if format == "" {
		var err error
		if format, err = DetectFormat(path); err != nil {
			return nil, nil, "", err
		}
	}
	switch format {
	case FormatEvdev:
		codes := make(map[uint16]int, len(axes))
		for code, lever := range axes {
			if code < 0 || code > ABS_MAX {
				return nil, nil, "", fmt.Errorf("%s: axis code %d: want an EV_ABS code from 0 to %d", path, code, ABS_MAX)
			}
			codes[uint16(code)] = lever
		}
		f, err := os.Open(path)
		if err != nil {
			return nil, nil, "", err
		}
		ranges, err := deviceRanges(f, codes)
		if err != nil {
			f.Close()
			return nil, nil, "", err
		}
		size := EvdevRecordSize
		if ranges != nil && strconv.IntSize == 32 {
			size = 16 // a 32-bit process's struct input_event
		}
		r := newEvdevReader(f, codes, size)
		r.ranges = ranges
		return r, f, "", nil
	case FormatJoystick:
		numbers := make(map[uint8]int, len(axes))
		for n, lever := range axes {
			if n < 0 || n > 255 {
				return nil, nil, "", fmt.Errorf("%s: axis number %d: want 0 to 255", path, n)
			}
			numbers[uint8(n)] = lever
		}
		f, err := os.Open(path)
		if err != nil {
			return nil, nil, "", err
		}
		r := NewJoystickReader(f, numbers)
		return r, f, r.Warning(), nil
	case FormatSerial:
		if len(axes) > 0 {
			return nil, nil, "", fmt.Errorf("%s: serial lines carry lever ids: an axis map does not apply", path)
		}
		var rc io.ReadCloser
		if fi, err := os.Stat(path); err != nil {
			return nil, nil, "", err
		} else if fi.Mode()&os.ModeCharDevice != 0 {
			if rc, err = OpenSerial(path, baud); err != nil {
				return nil, nil, "", err
			}
		} else if rc, err = os.Open(path); err != nil {
			return nil, nil, "", err
		}
		return NewLineReader(rc, path, time.Now(), time.Now), rc, "", nil
	}
	return nil, nil, "", fmt.Errorf("%s: format %q: want %s, %s or %s", path, format, FormatEvdev, FormatJoystick, FormatSerial)
}

// deviceRanges reads each mapped axis's range when f is a character device
// (nil otherwise); an axis whose range is empty is not one of the device's.
func deviceRanges(f *os.File, codes map[uint16]int) (map[int][2]int32, error) {
	fi, err := f.Stat()
	if err != nil {
		return nil, err
	}
	if fi.Mode()&os.ModeCharDevice == 0 {
		return nil, nil
	}
	ranges := make(map[int][2]int32, len(codes))
	var errs []error
	for code, lever := range codes {
		lo, hi, err := AbsRange(f, code)
		if err != nil {
			return nil, err
		}
		if lo >= hi {
			errs = append(errs, fmt.Errorf("%s: axis %s reports the range %d to %d: not an axis of this device", f.Name(), AbsName(code), lo, hi))
			continue
		}
		ranges[lever] = [2]int32{lo, hi}
	}
	return ranges, errors.Join(errs...)
}

// AbsName returns an axis code's name ("ABS_THROTTLE") or its number in hex.
func AbsName(code uint16) string {
	for name, c := range absNames {
		if c == code {
			return name
		}
	}
	return fmt.Sprintf("0x%02x", code)
}
