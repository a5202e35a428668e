//go:build unix

package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// quadrantTree is a fake machine with an invented two-lever quadrant
// (event3, js0), a second one the user may not read (event4, USB ids
// 16c0:27dc, known to /sys), a keyboard (event0) and two serial ports, one
// the user may not open (ttyACM0, USB 2341:8036 behind
// /sys/class/tty/ttyACM0/device).
func quadrantTree(t *testing.T) (*fakeTree, *input.System) {
	ft := newFakeTree(t)
	event3 := ft.file(t, "dev/input/event3", "")
	event4 := ft.file(t, "dev/input/event4", "")
	event0 := ft.file(t, "dev/input/event0", "")
	js0 := ft.file(t, "dev/input/js0", "")
	acm := ft.file(t, "dev/ttyACM0", "")
	usb := ft.file(t, "dev/ttyUSB0", "")
	ft.file(t, "sys/class/input/event4/device/name", "Invented Quadrant B\n")
	ft.file(t, "sys/class/input/event4/device/id/bustype", "0003\n")
	ft.file(t, "sys/class/input/event4/device/id/vendor", "16c0\n")
	ft.file(t, "sys/class/input/event4/device/id/product", "27dc\n")
	ft.file(t, "sys/class/input/event4/device/capabilities/abs", "3\n")
	ft.file(t, "sys/devices/usb1/1-3/idVendor", "2341\n")
	ft.file(t, "sys/devices/usb1/1-3/idProduct", "8036\n")
	ft.file(t, "sys/devices/usb1/1-3/1-3:1.0/interface", "CDC ACM\n")
	if err := os.MkdirAll(filepath.Join(ft.root, "sys/class/tty/ttyACM0"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(ft.root, "sys/devices/usb1/1-3/1-3:1.0"), filepath.Join(ft.root, "sys/class/tty/ttyACM0/device")); err != nil {
		t.Fatal(err)
	}
	ft.ioctl.evdev[event3] = input.EvdevInfo{Name: "Invented Quadrant A", ID: input.InputID{Bustype: 3, Vendor: 0x1209, Product: 1},
		Axes: []input.AbsAxis{
			{Code: input.ABS_X, Value: 1218, Max: 4095, HasRange: true},
			{Code: input.ABS_Z, Value: 3021, Max: 4095, Flat: 15, HasRange: true},
		}}
	ft.ioctl.evdev[event0] = input.EvdevInfo{Name: "Invented Keyboard", ID: input.InputID{Bustype: 0x11, Vendor: 1, Product: 1}}
	ft.ioctl.js[js0] = input.JoystickInfo{Name: "Invented Quadrant A", Axes: []uint16{input.ABS_X, input.ABS_Z}}
	ft.denied[event4], ft.denied[acm] = true, true
	s := ft.system()
	s.SerialPorts = func() ([]input.SerialPort, error) {
		return []input.SerialPort{
			{Port: acm, USB: true, VID: "2341", PID: "8036", Product: "Invented Lever Board"},
			{Port: usb, USB: true, VID: "0403", PID: "6001", Product: "Invented Serial Cable"},
		}, nil
	}
	return ft, s
}

// TestDevices lists the fake machine: each device with what is needed to
// choose it, and the fix for those that cannot be read.
func TestDevices(t *testing.T) {
	ft, s := quadrantTree(t)
	useSystem(t, s)
	var stdout, stderr bytes.Buffer
	if c := run([]string{"devices"}, &stdout, &stderr); c != 0 {
		t.Fatalf("exit %d: %s", c, stderr.String())
	}
	out := strings.ReplaceAll(stdout.String(), ft.root, "")
	for _, want := range []string{
		`/dev/input/event3  "Invented Quadrant A"  [1209:0001]`,
		"ABS_X                0 to 4095    now 1218",
		"ABS_Z                0 to 4095    now 3021  (fuzz 0, flat 15)",
		`/dev/input/event4  "Invented Quadrant B"  [16c0:27dc]`,
		"not readable: permission denied (fix below)",
		"axes ABS_X, ABS_Y (ranges unknown until it can be read)",
		"Input devices without absolute axes (keyboards, mice, buttons): 1",
		`/dev/input/event0 "Invented Keyboard"`,
		"2 axes: 0 (ABS_X), 1 (ABS_Z)",
		`/dev/ttyACM0  [2341:8036]  "Invented Lever Board"`,
		`/dev/ttyUSB0  [0403:6001]  "Invented Serial Cable"`,
		`SUBSYSTEM=="input", ATTRS{idVendor}=="16c0", ATTRS{idProduct}=="27dc", MODE="0660", TAG+="uaccess"`,
		`SUBSYSTEM=="tty", ATTRS{idVendor}=="2341", ATTRS{idProduct}=="8036", MODE="0660", TAG+="uaccess"`,
		"/etc/udev/rules.d/70-thrustmap.rules",
		"sudo udevadm control --reload && sudo udevadm trigger",
		"sudo usermod -aG dialout $USER",
		"Record a sweep with: thrustmap record --device",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("devices does not say %q:\n%s", want, out)
		}
	}

	stdout.Reset()
	if c := run([]string{"devices", "--json"}, &stdout, &stderr); c != 0 {
		t.Fatalf("exit %d: %s", c, stderr.String())
	}
	var j devicesJSON
	if err := json.Unmarshal(stdout.Bytes(), &j); err != nil {
		t.Fatal(err)
	}
	if len(j.EventDevices) != 3 || len(j.JoystickDevices) != 1 || len(j.SerialPorts) != 2 || len(j.GameControllers) != 0 {
		t.Fatalf("JSON lists %d event, %d js, %d serial, %d controllers", len(j.EventDevices), len(j.JoystickDevices), len(j.SerialPorts), len(j.GameControllers))
	}
	e3, e4 := j.EventDevices[1], j.EventDevices[2]
	if !e3.Readable || e3.Vendor != "1209" || len(e3.Axes) != 2 || e3.Axes[1].Name != "ABS_Z" || *e3.Axes[1].Max != 4095 || *e3.Axes[1].Value != 3021 || e3.Axes[1].Flat != 15 {
		t.Errorf("event3 JSON %+v", e3)
	}
	if e4.Readable || e4.Vendor != "16c0" || e4.Axes[0].Min != nil || !strings.Contains(e4.UdevRule, `ATTRS{idProduct}=="27dc"`) || !strings.Contains(e4.Fix, "usermod") {
		t.Errorf("event4 JSON %+v", e4)
	}
	if p := j.SerialPorts[0]; p.Accessible || p.Vendor != "2341" || p.UdevRule == "" {
		t.Errorf("ttyACM0 JSON %+v", p)
	}
	if p := j.SerialPorts[1]; !p.Accessible || p.Error != "" {
		t.Errorf("ttyUSB0 JSON %+v", p)
	}
}

// TestDevicesNone: nothing found says so, and what to check.
func TestDevicesNone(t *testing.T) {
	ft := newFakeTree(t)
	useSystem(t, ft.system())
	var stdout, stderr bytes.Buffer
	if c := run([]string{"devices"}, &stdout, &stderr); c != 0 {
		t.Fatalf("exit %d: %s", c, stderr.String())
	}
	if !strings.Contains(stdout.String(), "No lever device found") || !strings.Contains(stdout.String(), "Check: is the device plugged in (lsusb") {
		t.Errorf("stdout:\n%s", stdout.String())
	}
	stdout.Reset()
	if c := run([]string{"devices", "--json"}, &stdout, &stderr); c != 0 || !strings.Contains(stdout.String(), `"event_devices": []`) {
		t.Errorf("exit %d, JSON:\n%s", c, stdout.String())
	}
}

// TestDevicePermission: watch and record on a device the user may not read
// exit 2 with the fix.
func TestDevicePermission(t *testing.T) {
	ft, s := quadrantTree(t)
	useSystem(t, s)
	event4 := filepath.Join(ft.root, "dev/input/event4")
	for _, args := range [][]string{
		append([]string{"watch", "--device", event4, "--format", "evdev"}, demoArgs...),
		{"record", "--device", event4, "--format", "evdev", "-o", filepath.Join(t.TempDir(), "rec.csv")},
	} {
		var stdout, stderr bytes.Buffer
		if c := run(args, &stdout, &stderr); c != exitUsage {
			t.Errorf("%s: exit %d, want %d", args[0], c, exitUsage)
		}
		for _, want := range []string{"permission denied", `ATTRS{idVendor}=="16c0", ATTRS{idProduct}=="27dc"`, "sudo udevadm control --reload", "sudo usermod -aG input $USER"} {
			if !strings.Contains(stderr.String(), want) {
				t.Errorf("%s: stderr does not say %q:\n%s", args[0], want, stderr.String())
			}
		}
	}
}

// TestDeviceAxes: an axis mapping naming an axis the device does not have
// is a usage error (exit 2) listing the axes it has.
func TestDeviceAxes(t *testing.T) {
	ft, s := quadrantTree(t)
	useSystem(t, s)
	event3 := filepath.Join(ft.root, "dev/input/event3")
	for _, args := range [][]string{
		append([]string{"watch", "--device", event3, "--format", "evdev", "--axis", "ABS_Y=2", "--axis", "ABS_X=1"}, demoArgs...),
		{"record", "--device", event3, "--format", "evdev", "--axis", "ABS_Y=2", "-o", filepath.Join(t.TempDir(), "rec.csv")},
	} {
		var stdout, stderr bytes.Buffer
		if c := run(args, &stdout, &stderr); c != exitUsage {
			t.Errorf("%s: exit %d, want %d", args[0], c, exitUsage)
		}
		if want := "event3 has no axis ABS_Y: its axes are ABS_X 0 to 4095, ABS_Z 0 to 4095"; !strings.Contains(stderr.String(), want) {
			t.Errorf("%s: stderr %q, want %q", args[0], stderr.String(), want)
		}
	}
}
