package input

import (
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// absByCode is absNames the other way round.
var absByCode = func() map[uint16]string {
	m := make(map[uint16]string, len(absNames))
	for name, code := range absNames {
		m[code] = name
	}
	return m
}()

// AbsName returns an axis code's name ("ABS_THROTTLE") or its number in hex.
func AbsName(code uint16) string {
	if name, ok := absByCode[code]; ok {
		return name
	}
	return fmt.Sprintf("0x%02x", code)
}

// JoyAxisNames are a game controller's axes as the Windows multimedia
// joystick interface names them (JOYINFOEX dwXpos … dwVpos), in order.
var JoyAxisNames = [JoyAxes]string{"X", "Y", "Z", "R", "U", "V"}

// JoyAxes is the number of axes a game controller can have.
const JoyAxes = 6

// ParseAxis reads a device axis as --axis CODE=LEVER and a calibration's
// axis key give it, for a source of format: an evdev axis name or code
// (ABS_THROTTLE, throttle, 6, 0x06), a joystick-interface axis number
// (0 to 255), or a game controller's axis letter (X, Y, Z, R, U, V, any
// case) or number (0 to 5). Serial and CSV lines carry lever ids, so they
// have no axes.
func ParseAxis(format, s string) (int, error) {
	s = strings.TrimSpace(s)
	switch format {
	case FormatEvdev:
		c, err := ParseAbsCode(s)
		return int(c), err
	case FormatJoystick:
		n, ok := parseCode(s)
		if !ok || n > 255 {
			return 0, fmt.Errorf("axis %q: want a joystick-interface axis number from 0 to 255", s)
		}
		return int(n), nil
	case FormatJoy:
		up := toUpperASCII(s)
		if i := slices.Index(JoyAxisNames[:], up); i >= 0 {
			return i, nil
		}
		if n, ok := parseCode(s); ok && n < JoyAxes {
			return int(n), nil
		}
		return 0, fmt.Errorf("axis %q: want a game controller axis: X, Y, Z, R, U or V", s)
	case FormatSerial, FormatCSV:
		return 0, fmt.Errorf("axis %q: %s lines carry lever ids themselves: there are no axes to map", s, format)
	}
	return 0, fmt.Errorf("axis %q: format %q has no axes", s, format)
}

// AxisName names a device axis of a source of format, as ParseAxis reads
// it back: "ABS_Z", "2" (joystick interface), "Z" (game controller).
func AxisName(format string, code int) string {
	switch format {
	case FormatEvdev:
		if code >= 0 && code <= ABS_MAX {
			return AbsName(uint16(code))
		}
	case FormatJoy:
		if code >= 0 && code < JoyAxes {
			return JoyAxisNames[code]
		}
	}
	return strconv.Itoa(code)
}

// ParseJoyID reads a game controller's name, joy:N (N from 0 to 15, the
// controllers the Windows multimedia joystick interface numbers). ok is
// false when s does not start with "joy:"; err is set when it does but N is
// not a controller number.
func ParseJoyID(s string) (id int, ok bool, err error) {
	rest, found := strings.CutPrefix(s, "joy:")
	if !found {
		if len(s) >= 4 && strings.EqualFold(s[:4], "joy:") {
			rest, found = s[4:], true
		} else {
			return 0, false, nil
		}
	}
	n, good := parseCode(rest)
	if !good || n >= MaxControllers || strings.HasPrefix(rest, "0x") || strings.HasPrefix(rest, "0X") {
		return 0, true, fmt.Errorf("--device %q: want joy:N, N a game controller number from 0 to %d (devices lists them)", s, MaxControllers-1)
	}
	return int(n), true, nil
}
