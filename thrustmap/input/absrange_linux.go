//go:build linux

package input

import (
	"fmt"
	"os"
	"unsafe"

	"golang.org/x/sys/unix"
)

// absinfo is struct input_absinfo (include/uapi/linux/input.h): value,
// minimum, maximum, fuzz, flat, resolution, each s32.
type absinfo struct {
	Value, Minimum, Maximum, Fuzz, Flat, Resolution int32
}

// eviocgabs is EVIOCGABS(code) = _IOR('E', 0x40 + code, struct
// input_absinfo), encoded as _IOC in include/uapi/asm-generic/ioctl.h:
// direction above size above type above number.
func eviocgabs(code uint16) uintptr {
	const nrBits, typeBits = 8, 8
	size := uintptr(unsafe.Sizeof(absinfo{}))
	return iocRead<<(nrBits+typeBits+iocSizeBits) | size<<(nrBits+typeBits) | uintptr('E')<<nrBits | uintptr(0x40+code)
}

// AbsRange returns the range (minimum, maximum) of absolute axis code of the
// evdev device f, read with the EVIOCGABS ioctl (Documentation/input/input.rst).
// It reaches the descriptor without f.Fd, so f stays non-blocking and Close
// still ends a pending Read.
func AbsRange(f *os.File, code uint16) (min, max int32, err error) {
	if code > ABS_MAX {
		return 0, 0, fmt.Errorf("%s: axis code %#x is above ABS_MAX (%#x)", f.Name(), code, ABS_MAX)
	}
	rc, err := f.SyscallConn()
	if err != nil {
		return 0, 0, fmt.Errorf("%s: %w", f.Name(), err)
	}
	var info absinfo
	var errno unix.Errno
	err = rc.Control(func(fd uintptr) {
		_, _, errno = unix.Syscall(unix.SYS_IOCTL, fd, eviocgabs(code), uintptr(unsafe.Pointer(&info)))
	})
	if err != nil {
		return 0, 0, fmt.Errorf("%s: %w", f.Name(), err)
	}
	if errno != 0 {
		return 0, 0, fmt.Errorf("%s: EVIOCGABS(%#x): %w (is it an evdev device?)", f.Name(), code, errno)
	}
	return info.Minimum, info.Maximum, nil
}
