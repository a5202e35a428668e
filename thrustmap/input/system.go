package input

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"time"
)

// System is how devices are found and opened: a file tree (the machine's
// own, or a fake one in tests, where regular files and FIFOs stand in for
// devices) and the requests made of device files. Host returns the
// machine's.
type System struct {
	// Root is put in front of the /dev and /sys paths searched for devices
	// ("" on the machine itself). Paths given by the user are used as
	// given.
	Root string
	// OpenFile opens a device file for reading (os.Open when nil).
	OpenFile func(name string) (*os.File, error)
	// Ioctl answers the evdev and joystick-interface requests; nil where
	// there are none (not Linux): then no file is a device with axes.
	Ioctl Ioctl
	// SerialPorts lists the serial ports; nil lists none.
	SerialPorts func() ([]SerialPort, error)
	// Access reports whether the user may read and write path (a serial
	// port, which is not opened to find out: opening one resets many
	// boards); nil takes every port as accessible.
	Access func(path string) error
	// Controllers reads game controllers (joy:N); nil where there are none
	// (only Windows has them).
	Controllers JoyAPI
	// Now is the clock (time.Now when nil); serial lines are stamped with it
	// and game controllers polled by it.
	Now func() time.Time
	// Sleep waits between two polls of a game controller (time.Sleep when
	// nil).
	Sleep func(time.Duration)
	// PollInterval is how often a game controller is polled (default 5 ms,
	// 200 readings a second).
	PollInterval time.Duration
}

// Host returns the System of the machine the program runs on.
func Host() *System {
	return &System{Ioctl: hostIoctl(), SerialPorts: hostSerialPorts, Access: hostAccess, Controllers: hostControllers()}
}

// Ioctl is the requests made of a Linux input device. Each returns an error
// matching ErrNotDevice for a file that is not such a device (a capture, a
// FIFO).
type Ioctl interface {
	// Evdev asks an evdev device (/dev/input/eventN) for its name
	// (EVIOCGNAME), ids (EVIOCGID), absolute axes (EVIOCGBIT(EV_ABS)) and
	// each axis's range (EVIOCGABS).
	Evdev(f *os.File) (EvdevInfo, error)
	// Joystick asks a joystick-interface device (/dev/input/jsN) for its
	// name (JSIOCGNAME) and axes (JSIOCGAXES, JSIOCGAXMAP).
	Joystick(f *os.File) (JoystickInfo, error)
}

// ErrNotDevice is matched by an Ioctl's error for a file that is not a
// device: a capture or a FIFO standing in for one.
var ErrNotDevice = errors.New("not an input device")

// InputID is struct input_id (include/uapi/linux/input.h): bus type,
// vendor, product and version.
type InputID struct {
	Bustype, Vendor, Product, Version uint16
}

// AbsAxis is one absolute axis of an evdev device: its code and struct
// input_absinfo (include/uapi/linux/input.h).
type AbsAxis struct {
	Code       uint16
	Value      int32 // the current reading
	Min, Max   int32
	Fuzz, Flat int32 // the driver's noise filter and centre flat zone, counts
	Resolution int32
	HasRange   bool // false when the axis is known (from sysfs) but the device could not be asked
}

// Name returns the axis's name ("ABS_THROTTLE").
func (a AbsAxis) Name() string { return AbsName(a.Code) }

// EvdevInfo is what an evdev device says of itself.
type EvdevInfo struct {
	Name string
	ID   InputID
	Axes []AbsAxis // in code order
}

// JoystickInfo is what a joystick-interface device says of itself.
type JoystickInfo struct {
	Name string
	// Axes holds, for each axis number, the evdev axis it reports
	// (JSIOCGAXMAP); its length is the axis count (JSIOCGAXES).
	Axes []uint16
}

// Kind is what a --device path names.
type Kind int

// The kinds of source.
const (
	KindDevice     Kind = iota + 1 // a character device (or a Windows COM port)
	KindFIFO                       // a named pipe, read as a live device
	KindFile                       // a regular file: a recording or capture
	KindController                 // a game controller, joy:N
)

// String names the kind for messages.
func (k Kind) String() string {
	switch k {
	case KindDevice:
		return "device"
	case KindFIFO:
		return "FIFO"
	case KindFile:
		return "file"
	case KindController:
		return "game controller"
	}
	return "unknown"
}

// comPort matches a Windows serial port name (COM3, \\.\COM12).
var comPort = regexp.MustCompile(`(?i)^(\\\\\.\\)?COM[0-9]{1,3}$`)

// Classify tells what path names: a game controller (joy:N), a character
// device, a FIFO or a regular file. Anything else (a directory, a socket)
// is an error.
func (s *System) Classify(path string) (Kind, error) {
	if _, ok, err := ParseJoyID(path); ok || err != nil {
		return KindController, err
	}
	if comPort.MatchString(path) {
		return KindDevice, nil
	}
	fi, err := os.Stat(path)
	if err != nil {
		return 0, err
	}
	m := fi.Mode()
	switch {
	case m&fs.ModeCharDevice != 0:
		return KindDevice, nil
	case m&fs.ModeNamedPipe != 0:
		return KindFIFO, nil
	case m.IsRegular():
		return KindFile, nil
	}
	what := "not a device"
	switch {
	case m.IsDir():
		what = "a directory"
	case m&fs.ModeSocket != 0:
		what = "a socket"
	case m&fs.ModeDevice != 0:
		what = "a block device"
	}
	return 0, fmt.Errorf("%s is %s: want a device (/dev/input/eventN, /dev/input/jsN, a serial port), joy:N, a FIFO or a recording file", path, what)
}

// DetectFormat tells a live source's format from its path, as the
// package's DetectFormat does, after taking away the System's Root.
func (s *System) DetectFormat(path string) (string, error) {
	if s.Root != "" {
		if rel, ok := strings.CutPrefix(filepath.ToSlash(path), filepath.ToSlash(s.Root)); ok && strings.HasPrefix(rel, "/") {
			if f, err := DetectFormat(rel); err == nil {
				return f, nil
			}
		}
	}
	return DetectFormat(path)
}

// FileFormat tells a recording's format from its name: .evdev is an evdev
// capture, .js a joystick-interface capture, anything else CSV.
func FileFormat(path string) string {
	switch {
	case strings.HasSuffix(path, ".evdev"):
		return FormatEvdev
	case strings.HasSuffix(path, ".js"):
		return FormatJoystick
	}
	return FormatCSV
}

func (s *System) open(name string) (*os.File, error) {
	if s.OpenFile != nil {
		return s.OpenFile(name)
	}
	return os.Open(name)
}

func (s *System) now() time.Time {
	if s.Now != nil {
		return s.Now()
	}
	return time.Now()
}

func (s *System) sleep(d time.Duration) {
	if s.Sleep != nil {
		s.Sleep(d)
		return
	}
	time.Sleep(d)
}

// rooted puts the System's Root in front of an absolute path.
func (s *System) rooted(path string) string {
	if s.Root == "" {
		return path
	}
	return filepath.Join(s.Root, filepath.FromSlash(path))
}
