//go:build !linux

package input

import (
	"fmt"
	"os"
)

// AbsRange returns the range of an evdev axis; evdev exists only on Linux,
// so here it always fails.
func AbsRange(f *os.File, code uint16) (min, max int32, err error) {
	return 0, 0, fmt.Errorf("%s: evdev axis ranges (EVIOCGABS) are read only on Linux", f.Name())
}

// hostIoctl is nil: only Linux has evdev and joystick-interface devices.
func hostIoctl() Ioctl { return nil }
