package input

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestEVIOCGABS: the request numbers worked by hand from
// include/uapi/asm-generic/ioctl.h, _IOR('E', 0x40 + abs, struct
// input_absinfo): read (2) << 30 | 24 bytes << 16 | 'E' (0x45) << 8 |
// 0x40 + abs; the same values a C program printing EVIOCGABS gives on
// x86-64.
func TestEVIOCGABS(t *testing.T) {
	if iocSizeBits != 14 {
		t.Skip("not the generic ioctl layout")
	}
	for code, want := range map[uint16]uintptr{ABS_X: 0x80184540, ABS_THROTTLE: 0x80184546, ABS_MAX: 0x8018457f} {
		if got := eviocgabs(code); got != want {
			t.Errorf("EVIOCGABS(%#x) = %#x, want %#x", code, got, want)
		}
	}
}

// TestAbsRangeNotADevice: a plain file answers the ioctl with an error, not
// a range.
func TestAbsRangeNotADevice(t *testing.T) {
	path := filepath.Join(t.TempDir(), "capture.evdev")
	if err := os.WriteFile(path, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, _, err := AbsRange(f, ABS_X); err == nil || !strings.Contains(err.Error(), "EVIOCGABS") {
		t.Errorf("AbsRange on a file: %v, want an EVIOCGABS error", err)
	}
	if _, _, err := AbsRange(f, 0x40); err == nil || !strings.Contains(err.Error(), "above ABS_MAX") {
		t.Errorf("AbsRange(0x40): %v", err)
	}
}

// TestRequestNumbers: the other requests, against the numbers a C program
// printing them gives on x86-64 (EVIOCGNAME(256) 0x81004506, EVIOCGID
// 0x80084502, JSIOCGAXES 0x80016a11, JSIOCGNAME(256) 0x81006a13,
// JSIOCGAXMAP 0x80406a32), and EVIOCGBIT(EV_ABS, 8) worked by hand:
// 2 << 30 | 8 << 16 | 'E' << 8 | 0x20 + 3.
func TestRequestNumbers(t *testing.T) {
	if iocSizeBits != 14 {
		t.Skip("not the generic ioctl layout")
	}
	for name, tc := range map[string][2]uintptr{
		"EVIOCGNAME(256)":   {eviocgname(256), 0x81004506},
		"EVIOCGID":          {eviocgid, 0x80084502},
		"EVIOCGBIT(EV_ABS)": {eviocgbitAbs(8), 0x80084523},
		"JSIOCGAXES":        {jsiocgaxes, 0x80016a11},
		"JSIOCGNAME(256)":   {jsiocgname(256), 0x81006a13},
		"JSIOCGAXMAP":       {jsiocgaxmp, 0x80406a32},
	} {
		if tc[0] != tc[1] {
			t.Errorf("%s = %#x, want %#x", name, tc[0], tc[1])
		}
	}
}

// TestIoctlNotADevice: a regular file is not a device to the real requests.
func TestIoctlNotADevice(t *testing.T) {
	path := filepath.Join(t.TempDir(), "event3")
	if err := os.WriteFile(path, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if _, err := hostIoctl().Evdev(f); !errors.Is(err, ErrNotDevice) {
		t.Errorf("Evdev on a file: %v", err)
	}
	if _, err := hostIoctl().Joystick(f); !errors.Is(err, ErrNotDevice) {
		t.Errorf("Joystick on a file: %v", err)
	}
	// /dev/null is a character device but not an input device: the kernel
	// refuses the request (ENOTTY), also ErrNotDevice.
	null, err := os.Open("/dev/null")
	if err != nil {
		t.Skip(err)
	}
	defer null.Close()
	if _, err := hostIoctl().Evdev(null); !errors.Is(err, ErrNotDevice) {
		t.Errorf("Evdev on /dev/null: %v", err)
	}
}
