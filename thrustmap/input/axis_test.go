package input

import (
	"strings"
	"testing"
)

// TestParseAxis: each format's axis spellings; the evdev codes are those
// of include/uapi/linux/input-event-codes.h, the controller letters those
// of JOYINFOEX (dwXpos … dwVpos).
func TestParseAxis(t *testing.T) {
	tests := []struct {
		format, in string
		want       int
		err        string
	}{
		{FormatEvdev, "ABS_THROTTLE", 0x06, ""},
		{FormatEvdev, "rz", 0x05, ""},
		{FormatEvdev, "ABS_HAT0X", 0x10, ""},
		{FormatEvdev, "0x28", 0x28, ""},
		{FormatEvdev, "ABS_TILLER", 0, "want an ABS_ name"},
		{FormatJoystick, "3", 3, ""},
		{FormatJoystick, "255", 255, ""},
		{FormatJoystick, "256", 0, "0 to 255"},
		{FormatJoystick, "X", 0, "0 to 255"},
		{FormatJoy, "X", 0, ""},
		{FormatJoy, " r ", 3, ""},
		{FormatJoy, "V", 5, ""},
		{FormatJoy, "4", 4, ""},
		{FormatJoy, "6", 0, "X, Y, Z, R, U or V"},
		{FormatJoy, "W", 0, "X, Y, Z, R, U or V"},
		{FormatSerial, "0", 0, "carry lever ids"},
		{FormatCSV, "0", 0, "carry lever ids"},
	}
	for _, tc := range tests {
		got, err := ParseAxis(tc.format, tc.in)
		if got != tc.want || (err == nil) != (tc.err == "") || (err != nil && !strings.Contains(err.Error(), tc.err)) {
			t.Errorf("ParseAxis(%s, %q) = %d, %v; want %d, %q", tc.format, tc.in, got, err, tc.want, tc.err)
		}
		if err == nil {
			// AxisName reads back.
			if again, err := ParseAxis(tc.format, AxisName(tc.format, got)); err != nil || again != got {
				t.Errorf("ParseAxis(%s, AxisName(%d) = %q) = %d, %v", tc.format, got, AxisName(tc.format, got), again, err)
			}
		}
	}
}

func TestParseJoyID(t *testing.T) {
	tests := []struct {
		in      string
		id      int
		ok, ok2 bool // ok: a joy: name; ok2: a valid one
	}{
		{"joy:0", 0, true, true},
		{"JOY:15", 15, true, true},
		{"joy:16", 0, true, false},
		{"joy:", 0, true, false},
		{"joy:-1", 0, true, false},
		{"joy:0x1", 0, true, false},
		{"/dev/input/js0", 0, false, true},
		{"joystick", 0, false, true},
	}
	for _, tc := range tests {
		id, ok, err := ParseJoyID(tc.in)
		if id != tc.id || ok != tc.ok || (err == nil) != tc.ok2 {
			t.Errorf("ParseJoyID(%q) = %d, %v, %v", tc.in, id, ok, err)
		}
	}
}
