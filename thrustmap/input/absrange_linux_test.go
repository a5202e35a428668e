package input

import (
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
