//go:build unix

package input

import (
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

func TestDetectFormat(t *testing.T) {
	tests := []struct{ path, want string }{
		{"/dev/input/event3", FormatEvdev},
		{"/dev/input/js0", FormatJoystick},
		{"/dev/ttyUSB0", FormatSerial},
		{"/dev/ttyACM1", FormatSerial},
		{"/dev/serial/by-id/usb-board-if00", FormatSerial},
		{"/tmp/lever.fifo", ""},
		{"/dev/input/mouse0", ""},
		{"/dev/cu.usbmodem14201", FormatSerial},
		{"COM3", FormatSerial},
		{`\\.\COM12`, FormatSerial},
		{"joy:0", FormatJoy},
	}
	for _, tc := range tests {
		got, err := DetectFormat(tc.path)
		if got != tc.want || (err != nil) != (tc.want == "") {
			t.Errorf("DetectFormat(%q) = %q, %v; want %q", tc.path, got, err, tc.want)
		}
	}
}

func TestOpenDeviceErrors(t *testing.T) {
	fifo := filepath.Join(t.TempDir(), "lever.fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	tests := []struct {
		name, path, format string
		axes               map[int]int
		want               string
	}{
		{"unknown path", fifo, "", nil, "cannot tell the input format"},
		{"unknown format", fifo, "usb", nil, `format "usb": want evdev, js, serial, csv or joy`},
		{"evdev code too large", fifo, FormatEvdev, map[int]int{64: 1}, "axis code 64: want an EV_ABS code from 0 to 63"},
		{"js number too large", fifo, FormatJoystick, map[int]int{256: 1}, "axis number 256: want 0 to 255"},
		{"serial with axes", fifo, FormatSerial, map[int]int{0: 1}, "an axis map does not apply"},
		{"csv with axes", fifo, FormatCSV, map[int]int{0: 1}, "an axis map does not apply"},
		{"joy format on a FIFO", fifo, FormatJoy, nil, "for game controllers named joy:N"},
		{"missing device", t.TempDir() + "/event9", FormatEvdev, nil, "no such file"},
		{"a directory", t.TempDir(), FormatEvdev, nil, "is a directory: want a device"},
		{"controller number too large", "joy:16", "", nil, "N a game controller number from 0 to 15"},
		{"no controllers here", "joy:0", "", nil, "game controllers are read as joy:N on Windows only"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := (&System{}).Open(tc.path, OpenOptions{Format: tc.format, Axes: tc.axes, Baud: 9600})
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want it to contain %q", err, tc.want)
			}
		})
	}
	if _, err := OpenSerial("/dev/null", 0); err == nil || !strings.Contains(err.Error(), "baud rate 0") {
		t.Errorf("OpenSerial at 0 baud: %v", err)
	}
}
