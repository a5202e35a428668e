package input

import (
	"strings"
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
	}
	for _, tc := range tests {
		got, err := DetectFormat(tc.path)
		if got != tc.want || (err != nil) != (tc.want == "") {
			t.Errorf("DetectFormat(%q) = %q, %v; want %q", tc.path, got, err, tc.want)
		}
	}
}

func TestOpenDeviceErrors(t *testing.T) {
	tests := []struct {
		name, path, format string
		axes               map[int]int
		want               string
	}{
		{"unknown path", "/tmp/lever.fifo", "", nil, "cannot tell the input format"},
		{"unknown format", "/tmp/x", "usb", nil, `format "usb": want evdev, js or serial`},
		{"evdev code too large", "/tmp/x", FormatEvdev, map[int]int{64: 1}, "axis code 64: want an EV_ABS code from 0 to 63"},
		{"js number too large", "/tmp/x", FormatJoystick, map[int]int{256: 1}, "axis number 256: want 0 to 255"},
		{"serial with axes", "/tmp/x", FormatSerial, map[int]int{0: 1}, "an axis map does not apply"},
		{"missing device", t.TempDir() + "/event9", FormatEvdev, nil, "no such file"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, _, _, err := OpenDevice(tc.path, tc.format, tc.axes, 9600)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want it to contain %q", err, tc.want)
			}
		})
	}
	if _, err := OpenSerial("/dev/null", 0); err == nil || !strings.Contains(err.Error(), "baud rate 0") {
		t.Errorf("OpenSerial at 0 baud: %v", err)
	}
}
