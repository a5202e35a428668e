//go:build linux

package input

import (
	"fmt"
	"os"
	"unsafe"
)

// absinfo is struct input_absinfo (include/uapi/linux/input.h): value,
// minimum, maximum, fuzz, flat, resolution, each s32.
type absinfo struct {
	Value, Minimum, Maximum, Fuzz, Flat, Resolution int32
}

// eviocgabs is EVIOCGABS(code) = _IOR('E', 0x40 + code, struct
// input_absinfo).
func eviocgabs(code uint16) uintptr {
	return ioc(iocRead, 'E', uintptr(0x40+code), unsafe.Sizeof(absinfo{}))
}

// AbsRange returns the range (minimum, maximum) of absolute axis code of the
// evdev device f, read with the EVIOCGABS ioctl (Documentation/input/input.rst).
// It reaches the descriptor without f.Fd, so f stays non-blocking and Close
// still ends a pending Read.
func AbsRange(f *os.File, code uint16) (min, max int32, err error) {
	if code > ABS_MAX {
		return 0, 0, fmt.Errorf("%s: axis code %#x is above ABS_MAX (%#x)", f.Name(), code, ABS_MAX)
	}
	var info absinfo
	if err := ioctl(f, eviocgabs(code), unsafe.Pointer(&info)); err != nil {
		return 0, 0, fmt.Errorf("%s: EVIOCGABS(%#x): %w (is it an evdev device?)", f.Name(), code, err)
	}
	return info.Minimum, info.Maximum, nil
}
