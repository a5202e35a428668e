package input

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// Inventory is what Scan found, each list in order.
type Inventory struct {
	Event       []EventDevice    // /dev/input/eventN
	Joystick    []JoystickDevice // /dev/input/jsN
	Serial      []SerialPort
	Controllers []Controller // game controllers (Windows)
	// Problems are lists that could not be read (the serial ports, say).
	Problems []string
}

// EventDevice is an evdev device.
type EventDevice struct {
	Path string
	// EvdevInfo is what the device says of itself; when it cannot be read,
	// its name, ids and axes (without ranges) as /sys gives them.
	EvdevInfo
	// Err is why the device cannot be read (a *PermissionError for lack of
	// permission), or nil.
	Err error
}

// JoystickDevice is a joystick-interface device.
type JoystickDevice struct {
	Path string
	// JoystickInfo is what the device says of itself; when it cannot be
	// read, only the name /sys gives (and Axes nil).
	JoystickInfo
	Err error
}

// Controller is a connected game controller, joy:ID.
type Controller struct {
	ID int
	JoyCaps
}

// Scan lists the devices that can give lever readings: evdev and
// joystick-interface devices under Root/dev/input (with their names and
// axes, asked of the device or, when it cannot be read, found in
// Root/sys/class/input), the serial ports and the game controllers. It does
// not open serial ports: opening one resets many boards.
func (s *System) Scan() Inventory {
	var inv Inventory
	for _, path := range s.devicePaths("event") {
		inv.Event = append(inv.Event, s.scanEvent(path))
	}
	for _, path := range s.devicePaths("js") {
		inv.Joystick = append(inv.Joystick, s.scanJoystick(path))
	}
	if s.SerialPorts != nil {
		ports, err := s.SerialPorts()
		if err != nil {
			inv.Problems = append(inv.Problems, fmt.Sprintf("the serial ports could not be listed: %v", err))
		}
		for _, p := range ports {
			if s.Access != nil {
				if err := s.Access(p.Port); err != nil {
					p.Err = s.permissionError(p.Port, true, err)
				}
			}
			inv.Serial = append(inv.Serial, p)
		}
	}
	if s.Controllers != nil {
		for id := range MaxControllers {
			if _, err := s.Controllers.Position(id); err != nil {
				continue // nothing connected as id
			}
			caps, err := s.Controllers.Caps(id)
			if err != nil {
				inv.Problems = append(inv.Problems, fmt.Sprintf("game controller joy:%d: %v", id, err))
				continue
			}
			inv.Controllers = append(inv.Controllers, Controller{ID: id, JoyCaps: caps})
		}
	}
	return inv
}

// devicePaths lists Root/dev/input/PREFIXn in the order of n.
func (s *System) devicePaths(prefix string) []string {
	matches, _ := filepath.Glob(s.rooted("/dev/input/" + prefix + "*"))
	type numbered struct {
		path string
		n    int
	}
	var found []numbered
	for _, m := range matches {
		n, err := strconv.Atoi(strings.TrimPrefix(filepath.Base(m), prefix))
		if err != nil || n < 0 {
			continue
		}
		found = append(found, numbered{m, n})
	}
	slices.SortFunc(found, func(a, b numbered) int { return a.n - b.n })
	out := make([]string, len(found))
	for i, f := range found {
		out[i] = f.path
	}
	return out
}

// openForScan opens a device file, but not a FIFO standing in for one
// (opening it would wait for a writer).
func (s *System) openForScan(path string) (*os.File, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, err
	}
	if fi.Mode()&fs.ModeNamedPipe != 0 {
		return nil, fmt.Errorf("%s: %w (a FIFO)", path, ErrNotDevice)
	}
	return s.open(path)
}

func (s *System) scanEvent(path string) EventDevice {
	d := EventDevice{Path: path, EvdevInfo: s.sysfsInput(filepath.Base(path))}
	info, err := scanInfo(s, path, Ioctl.Evdev)
	if info != nil {
		d.EvdevInfo = *info
	}
	d.Err = err
	return d
}

func (s *System) scanJoystick(path string) JoystickDevice {
	d := JoystickDevice{Path: path, JoystickInfo: JoystickInfo{Name: s.sysfsInput(filepath.Base(path)).Name}}
	info, err := scanInfo(s, path, Ioctl.Joystick)
	if info != nil {
		d.JoystickInfo = *info
	}
	d.Err = err
	return d
}

// scanInfo opens path for a scan and asks it what it is with ask: the
// answer; nil when path is not a device of that kind or no ioctls are at
// hand; or the error to report (a permission error says how to mend it).
func scanInfo[T any](s *System, path string, ask func(Ioctl, *os.File) (T, error)) (*T, error) {
	f, err := s.openForScan(path)
	if err != nil {
		if errors.Is(err, ErrNotDevice) {
			return nil, nil
		}
		return nil, s.permissionError(path, false, err)
	}
	defer f.Close()
	if s.Ioctl == nil {
		return nil, nil
	}
	return askDevice(f, func(f *os.File) (T, error) { return ask(s.Ioctl, f) })
}

// askDevice asks the open file f what it is with ask (an ioctl): the
// answer, nil with no error when f is not a device of that kind (a regular
// file or FIFO standing in for one), or the error.
func askDevice[T any](f *os.File, ask func(*os.File) (T, error)) (*T, error) {
	info, err := ask(f)
	switch {
	case errors.Is(err, ErrNotDevice):
		return nil, nil
	case err != nil:
		return nil, err
	}
	return &info, nil
}

// sysfsInput reads what /sys/class/input/NAME/device (the input device
// behind eventN or jsN) says: name, id/{bustype,vendor,product,version}
// and capabilities/abs. Anything missing is left empty.
func (s *System) sysfsInput(base string) EvdevInfo {
	dir := s.rooted("/sys/class/input/" + base + "/device")
	info := EvdevInfo{Name: readSysfs(filepath.Join(dir, "name"))}
	hex16 := func(name string) uint16 {
		v, _ := strconv.ParseUint(readSysfs(filepath.Join(dir, "id", name)), 16, 16)
		return uint16(v)
	}
	info.ID = InputID{Bustype: hex16("bustype"), Vendor: hex16("vendor"), Product: hex16("product"), Version: hex16("version")}
	codes, _ := ParseAbsCapabilities(readSysfs(filepath.Join(dir, "capabilities", "abs")))
	for _, c := range codes {
		info.Axes = append(info.Axes, AbsAxis{Code: c})
	}
	return info
}

// ParseAbsCapabilities reads an input device's absolute-axis bitmap as
// /sys/class/input/*/device/capabilities/abs prints it: hexadecimal words
// of the kernel's long, most significant first, with leading zero words
// left out (drivers/input/input.c, input_print_bitmap). ABS_MAX + 1 = 64
// bits are one word on a 64-bit kernel, so two words are a 32-bit kernel's.
// It returns the codes of the bits set, in order.
func ParseAbsCapabilities(text string) ([]uint16, error) {
	fields := strings.Fields(text)
	if len(fields) == 0 {
		return nil, nil
	}
	if len(fields) > 2 {
		return nil, fmt.Errorf("absolute-axis bitmap %q: %d words, want at most 2", text, len(fields))
	}
	width := 64
	if len(fields) == 2 {
		width = 32
	}
	var codes []uint16
	for i, f := range fields {
		v, err := strconv.ParseUint(f, 16, width)
		if err != nil {
			return nil, fmt.Errorf("absolute-axis bitmap %q: word %q is not a %d-bit hexadecimal number", text, f, width)
		}
		base := (len(fields) - 1 - i) * width
		for bit := range width {
			if v>>bit&1 != 0 {
				codes = append(codes, uint16(base+bit))
			}
		}
	}
	slices.Sort(codes)
	return codes, nil
}

// HasAbsAxes reports whether the device has absolute axes: a lever, a
// joystick or a throttle, not a keyboard or a mouse.
func (d EventDevice) HasAbsAxes() bool { return len(d.Axes) > 0 }
