//go:build unix

package input

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
)

// fakeIoctl answers the device requests for the files of a fake tree, by
// path, and says ErrNotDevice for any other file.
type fakeIoctl struct {
	evdev map[string]EvdevInfo
	js    map[string]JoystickInfo
}

func (f fakeIoctl) Evdev(file *os.File) (EvdevInfo, error) {
	if i, ok := f.evdev[file.Name()]; ok {
		return i, nil
	}
	return EvdevInfo{}, fmt.Errorf("%s: %w", file.Name(), ErrNotDevice)
}

func (f fakeIoctl) Joystick(file *os.File) (JoystickInfo, error) {
	if i, ok := f.js[file.Name()]; ok {
		return i, nil
	}
	return JoystickInfo{}, fmt.Errorf("%s: %w", file.Name(), ErrNotDevice)
}

// writeTree writes files (path → contents) under root, making directories.
func writeTree(t *testing.T, root string, files map[string]string) {
	t.Helper()
	for name, text := range files {
		p := filepath.Join(root, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// quadrantAxes are the invented quadrant's axes: two 12-bit levers and a
// 10-bit one.
var quadrantAxes = []AbsAxis{
	{Code: ABS_X, Value: 1218, Min: 0, Max: 4095, HasRange: true},
	{Code: ABS_Y, Value: 3021, Min: 0, Max: 4095, HasRange: true},
	{Code: ABS_Z, Value: 7, Min: 0, Max: 1023, Flat: 15, HasRange: true},
}

// fakeSystem builds a device tree as Linux lays it out: /dev/input holds a
// keyboard (event0), an invented two-lever quadrant (event3, and js0 for
// its joystick interface), a second quadrant the user may not read
// (event5, USB ids 16c0:27dc) and event10 (to check the numeric order);
// /sys/class/input describes them as the kernel does (name, id/*,
// capabilities/abs); a USB serial board (ttyACM0, 2341:8036) sits behind
// /sys/class/tty/ttyACM0/device, a link into /sys/devices as on a real
// machine.
func fakeSystem(t *testing.T) (*System, string) {
	t.Helper()
	root := t.TempDir()
	writeTree(t, root, map[string]string{
		"dev/input/event0":                   "",
		"dev/input/event3":                   "",
		"dev/input/event5":                   "",
		"dev/input/event10":                  "",
		"dev/input/js0":                      "",
		"dev/input/mice":                     "",
		"dev/ttyACM0":                        "",
		"sys/class/input/event0/device/name": "AT Translated Set 2 keyboard\n",
		"sys/class/input/event0/device/capabilities/abs":  "0\n",
		"sys/class/input/event5/device/name":              "Invented Quadrant B\n",
		"sys/class/input/event5/device/id/bustype":        "0003\n",
		"sys/class/input/event5/device/id/vendor":         "16c0\n",
		"sys/class/input/event5/device/id/product":        "27dc\n",
		"sys/class/input/event5/device/capabilities/abs":  "7\n",
		"sys/class/input/js0/device/name":                 "Invented Quadrant A\n",
		"sys/devices/usb1/1-2/idVendor":                   "2341\n",
		"sys/devices/usb1/1-2/idProduct":                  "8036\n",
		"sys/devices/usb1/1-2/1-2:1.0/interface":          "CDC ACM\n",
		"sys/devices/usb1/1-2/1-2:1.0/tty/ttyACM0/dev":    "166:0\n",
		"sys/class/input/event10/device/name":             "Invented Pedals\n",
		"sys/class/input/event10/device/capabilities/abs": "30000 0\n", // a 32-bit kernel's two words: bits 32+16 and 32+17
	})
	if err := os.MkdirAll(filepath.Join(root, "sys/class/tty/ttyACM0"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(root, "sys/devices/usb1/1-2/1-2:1.0"), filepath.Join(root, "sys/class/tty/ttyACM0/device")); err != nil {
		t.Fatal(err)
	}
	dev := func(name string) string { return filepath.Join(root, "dev/input", name) }
	denied := map[string]bool{dev("event5"): true, filepath.Join(root, "dev/ttyACM0"): true}
	s := &System{
		Root: root,
		OpenFile: func(name string) (*os.File, error) {
			if denied[name] {
				return nil, &fs.PathError{Op: "open", Path: name, Err: syscall.EACCES}
			}
			return os.Open(name)
		},
		Ioctl: fakeIoctl{
			evdev: map[string]EvdevInfo{
				dev("event0"): {Name: "AT Translated Set 2 keyboard", ID: InputID{Bustype: 0x11, Vendor: 1, Product: 1}},
				dev("event3"): {Name: "Invented Quadrant A", ID: InputID{Bustype: 3, Vendor: 0x1209, Product: 0x0001}, Axes: quadrantAxes},
			},
			js: map[string]JoystickInfo{dev("js0"): {Name: "Invented Quadrant A", Axes: []uint16{ABS_X, ABS_Y, ABS_Z}}},
		},
		SerialPorts: func() ([]SerialPort, error) {
			return []SerialPort{{Port: filepath.Join(root, "dev/ttyACM0"), USB: true, VID: "2341", PID: "8036", Product: "Invented Lever Board"}}, nil
		},
		Access: func(path string) error {
			if denied[path] {
				return &fs.PathError{Op: "access", Path: path, Err: syscall.EACCES}
			}
			return nil
		},
	}
	return s, root
}

// TestScan lists the fake tree: devices in the order of their numbers, what
// a readable device says of itself, what /sys says of one that cannot be
// read, with the fix.
func TestScan(t *testing.T) {
	s, _ := fakeSystem(t)
	inv := s.Scan()
	var paths []string
	for _, d := range inv.Event {
		paths = append(paths, filepath.Base(d.Path))
	}
	if want := []string{"event0", "event3", "event5", "event10"}; !slices.Equal(paths, want) {
		t.Fatalf("event devices %v, want %v", paths, want)
	}
	kbd, quad, denied, pedals := inv.Event[0], inv.Event[1], inv.Event[2], inv.Event[3]
	if kbd.HasAbsAxes() || kbd.Err != nil {
		t.Errorf("keyboard: %+v", kbd)
	}
	if quad.Err != nil || quad.Name != "Invented Quadrant A" || !slices.Equal(quad.Axes, quadrantAxes) {
		t.Errorf("quadrant: %+v", quad)
	}
	var pe *PermissionError
	if !errors.As(denied.Err, &pe) || !errors.Is(denied.Err, fs.ErrPermission) {
		t.Fatalf("event5: error %v, want a *PermissionError", denied.Err)
	}
	if pe.Vendor != "16c0" || pe.Product != "27dc" || pe.Serial {
		t.Errorf("event5: ids %s:%s serial %v", pe.Vendor, pe.Product, pe.Serial)
	}
	// Unreadable, its name and axes come from /sys: capabilities/abs "7" is
	// bits 0, 1, 2: ABS_X, ABS_Y, ABS_Z, without ranges.
	if denied.Name != "Invented Quadrant B" || len(denied.Axes) != 3 || denied.Axes[2] != (AbsAxis{Code: ABS_Z}) {
		t.Errorf("event5 from /sys: %+v", denied.EvdevInfo)
	}
	// "30000 0": two 32-bit words, the high one 0x30000: bits 32+16, 32+17.
	if len(pedals.Axes) != 2 || pedals.Axes[0].Code != 48 || pedals.Axes[1].Code != 49 {
		t.Errorf("event10 axes %+v, want codes 48 and 49", pedals.Axes)
	}
	if len(inv.Joystick) != 1 || inv.Joystick[0].Name != "Invented Quadrant A" || len(inv.Joystick[0].Axes) != 3 {
		t.Errorf("joystick devices %+v", inv.Joystick)
	}
	if len(inv.Serial) != 1 {
		t.Fatalf("serial ports %+v", inv.Serial)
	}
	if !errors.As(inv.Serial[0].Err, &pe) || pe.Vendor != "2341" || pe.Product != "8036" || !pe.Serial {
		t.Errorf("serial port error %v, want a *PermissionError for 2341:8036", inv.Serial[0].Err)
	}
	if len(inv.Controllers) != 0 || len(inv.Problems) != 0 {
		t.Errorf("controllers %v, problems %v", inv.Controllers, inv.Problems)
	}
}

// TestPermissionFix: the fix names the rule for the device's vendor and
// product (udev's match keys ATTRS{idVendor}, ATTRS{idProduct}, as udev(7)
// documents them), where it goes, how to load it, and the group to join.
func TestPermissionFix(t *testing.T) {
	tests := []struct {
		name string
		err  PermissionError
		want []string
		not  []string
	}{{
		name: "input device with USB ids",
		err:  PermissionError{Path: "/dev/input/event5", Vendor: "16c0", Product: "27dc", Group: "input", Err: fs.ErrPermission},
		want: []string{
			`SUBSYSTEM=="input", ATTRS{idVendor}=="16c0", ATTRS{idProduct}=="27dc", MODE="0660", TAG+="uaccess"`,
			"/etc/udev/rules.d/70-thrustmap.rules",
			"sudo udevadm control --reload && sudo udevadm trigger",
			"sudo usermod -aG input $USER",
		},
	}, {
		name: "serial port",
		err:  PermissionError{Path: "/dev/ttyACM0", Serial: true, Vendor: "2341", Product: "8036", Group: "dialout", Err: fs.ErrPermission},
		want: []string{`SUBSYSTEM=="tty", ATTRS{idVendor}=="2341", ATTRS{idProduct}=="8036"`, "sudo usermod -aG dialout $USER"},
	}, {
		name: "ids unknown: the group only",
		err:  PermissionError{Path: "/dev/input/event2", Group: "input", Err: fs.ErrPermission},
		want: []string{"sudo usermod -aG input $USER"},
		not:  []string{"udev"},
	}}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			msg := tc.err.Error()
			for _, w := range tc.want {
				if !strings.Contains(msg, w) {
					t.Errorf("message does not contain %q:\n%s", w, msg)
				}
			}
			for _, n := range tc.not {
				if strings.Contains(msg, n) {
					t.Errorf("message contains %q:\n%s", n, msg)
				}
			}
		})
	}
}

// TestOpenAxes: a device that tells its axes takes them all by default,
// with their ranges, and refuses a map naming one it does not have, listing
// those it has.
func TestOpenAxes(t *testing.T) {
	s, root := fakeSystem(t)
	event3, js0 := filepath.Join(root, "dev/input/event3"), filepath.Join(root, "dev/input/js0")
	d, err := s.Open(event3, OpenOptions{Format: FormatEvdev})
	if err != nil {
		t.Fatal(err)
	}
	d.Close()
	want := []MappedAxis{{0, "ABS_X", 1, 0, 4095, true}, {1, "ABS_Y", 2, 0, 4095, true}, {2, "ABS_Z", 3, 0, 1023, true}}
	if !slices.Equal(d.Axes, want) || d.Name != "Invented Quadrant A" {
		t.Errorf("axes %+v, name %q", d.Axes, d.Name)
	}
	if r := d.Reader.(*EvdevReader).Ranges(); r[3] != [2]int32{0, 1023} {
		t.Errorf("reader ranges %v", r)
	}

	tests := []struct {
		path, format string
		axes         map[int]int
		want         string
	}{
		{event3, FormatEvdev, map[int]int{ABS_RZ: 1}, "event3 has no axis ABS_RZ: its axes are ABS_X 0 to 4095, ABS_Y 0 to 4095, ABS_Z 0 to 1023"},
		{event3, FormatEvdev, map[int]int{ABS_X: 1, ABS_THROTTLE: 2, ABS_RUDDER: 3}, "has no axes ABS_RUDDER, ABS_THROTTLE:"},
		{js0, FormatJoystick, map[int]int{5: 1}, "js0 has no axis 5: its axes are axis 0 (ABS_X) -32767 to 32767, axis 1 (ABS_Y) -32767 to 32767, axis 2 (ABS_Z) -32767 to 32767"},
	}
	for _, tc := range tests {
		_, err := s.Open(tc.path, OpenOptions{Format: tc.format, Axes: tc.axes})
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("Open(%s, %v): %v, want %q", filepath.Base(tc.path), tc.axes, err, tc.want)
		}
	}

	// A capture (no device to ask): axes 0 to 7 are levers 1 to 8.
	capture := filepath.Join(t.TempDir(), "q.evdev")
	writeTree(t, filepath.Dir(capture), map[string]string{"q.evdev": ""})
	d, err = s.Open(capture, OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	d.Close()
	if d.Format != FormatEvdev || d.Kind != KindFile || len(d.Axes) != 8 || d.Axes[7] != (MappedAxis{Code: 7, Name: "ABS_RUDDER", Lever: 8}) {
		t.Errorf("capture: format %s kind %v axes %+v", d.Format, d.Kind, d.Axes)
	}

	// Permission: the error says how to get access.
	_, err = s.Open(filepath.Join(root, "dev/input/event5"), OpenOptions{Format: FormatEvdev})
	var pe *PermissionError
	if !errors.As(err, &pe) || pe.UdevRule() == "" || !errors.Is(err, fs.ErrPermission) {
		t.Errorf("unreadable device: %v", err)
	}
}

// TestDetectFormatUnderRoot: a FIFO standing in for /dev/input/event3 in a
// fake tree is told evdev from its path below the root.
func TestDetectFormatUnderRoot(t *testing.T) {
	s, root := fakeSystem(t)
	fifo := filepath.Join(root, "dev/input/event7")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	if f, err := s.DetectFormat(fifo); err != nil || f != FormatEvdev {
		t.Errorf("DetectFormat = %q, %v", f, err)
	}
	if k, err := s.Classify(fifo); err != nil || k != KindFIFO {
		t.Errorf("Classify = %v, %v", k, err)
	}
	// Scanning does not open a FIFO (it would wait for a writer).
	inv := s.Scan()
	for _, d := range inv.Event {
		if filepath.Base(d.Path) == "event7" && d.Err != nil {
			t.Errorf("event7: %v", d.Err)
		}
	}
}

// TestParseAbsCapabilities: the bitmap as drivers/input/input.c
// (input_print_bitmap) prints it, worked by hand.
func TestParseAbsCapabilities(t *testing.T) {
	tests := []struct {
		in   string
		want []uint16
		err  bool
	}{
		{"", nil, false},
		{"0", nil, false},
		{"3", []uint16{0, 1}, false},                   // ABS_X, ABS_Y
		{"7\n", []uint16{0, 1, 2}, false},              // ABS_X, ABS_Y, ABS_Z
		{"30063", []uint16{0, 1, 5, 6, 16, 17}, false}, // 0x30063 = bits 0,1,5,6,16,17: X, Y, RZ, THROTTLE, HAT0X, HAT0Y
		{"1000000000003", []uint16{0, 1, 48}, false},   // one 64-bit word: bit 48 = 0x1000000000000
		{"30000 3", []uint16{0, 1, 48, 49}, false},     // two 32-bit words: 0x30000 << 32 = bits 48, 49
		{"8000000000000000", []uint16{63}, false},      // ABS_MAX
		{"1 2 3", nil, true},                           // more words than 64 bits need
		{"100000000 0", nil, true},                     // a first word wider than 32 bits
		{"zz", nil, true},                              // not hexadecimal
		{"10000000000000000", nil, true},               // 65 bits
	}
	for _, tc := range tests {
		got, err := ParseAbsCapabilities(tc.in)
		if (err != nil) != tc.err || !slices.Equal(got, tc.want) {
			t.Errorf("ParseAbsCapabilities(%q) = %v, %v; want %v, error %v", tc.in, got, err, tc.want, tc.err)
		}
	}
}

// TestClassify: what a --device path names.
func TestClassify(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "rec.csv")
	writeTree(t, dir, map[string]string{"rec.csv": "t_ms,lever,raw\n"})
	s := &System{}
	tests := []struct {
		path string
		want Kind
		err  string
	}{
		{file, KindFile, ""},
		{"/dev/null", KindDevice, ""},
		{"joy:3", KindController, ""},
		{"COM4", KindDevice, ""},
		{dir, 0, "is a directory"},
		{filepath.Join(dir, "nothing"), 0, "no such file"},
		{"joy:x", KindController, "want joy:N"},
	}
	for _, tc := range tests {
		k, err := s.Classify(tc.path)
		if k != tc.want || (err == nil) != (tc.err == "") || (err != nil && !strings.Contains(err.Error(), tc.err)) {
			t.Errorf("Classify(%q) = %v, %v; want %v, %q", tc.path, k, err, tc.want, tc.err)
		}
	}
}
