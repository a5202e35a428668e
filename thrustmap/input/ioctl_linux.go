//go:build linux

package input

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"unsafe"

	"golang.org/x/sys/unix"
)

// ioc encodes an ioctl request number as _IOC does in
// include/uapi/asm-generic/ioctl.h: direction above size above type above
// number.
func ioc(dir, typ, nr, size uintptr) uintptr {
	const nrBits, typeBits = 8, 8
	return dir<<(nrBits+typeBits+iocSizeBits) | size<<(nrBits+typeBits) | typ<<nrBits | nr
}

// The requests of include/uapi/linux/input.h and
// include/uapi/linux/joystick.h.
var (
	eviocgid   = ioc(iocRead, 'E', 0x02, unsafe.Sizeof(InputID{}))             // EVIOCGID
	jsiocgaxes = ioc(iocRead, 'j', 0x11, 1)                                    // JSIOCGAXES: __u8
	jsiocgaxmp = ioc(iocRead, 'j', 0x32, ABS_MAX+1)                            // JSIOCGAXMAP: __u8[ABS_CNT]
	eviocgname = func(n uintptr) uintptr { return ioc(iocRead, 'E', 0x06, n) } // EVIOCGNAME(len)
	jsiocgname = func(n uintptr) uintptr { return ioc(iocRead, 'j', 0x13, n) } // JSIOCGNAME(len)
	// EVIOCGBIT(EV_ABS, len)
	eviocgbitAbs = func(n uintptr) uintptr { return ioc(iocRead, 'E', 0x20+EV_ABS, n) }
)

// ioctl issues request req on f with argument arg. It reaches the
// descriptor without f.Fd, so f stays non-blocking and Close still ends a
// pending Read.
func ioctl(f *os.File, req uintptr, arg unsafe.Pointer) error {
	rc, err := f.SyscallConn()
	if err != nil {
		return err
	}
	var errno unix.Errno
	err = rc.Control(func(fd uintptr) {
		_, _, errno = unix.Syscall(unix.SYS_IOCTL, fd, req, uintptr(arg))
	})
	if err != nil {
		return err
	}
	if errno != 0 {
		return errno
	}
	return nil
}

func hostIoctl() Ioctl { return linuxIoctl{} }

// linuxIoctl asks the kernel.
type linuxIoctl struct{}

// notDevice returns ErrNotDevice, wrapped with the file's name, unless f
// is a character device.
func notDevice(f *os.File) error {
	fi, err := f.Stat()
	if err != nil {
		return err
	}
	if fi.Mode()&fs.ModeCharDevice == 0 {
		return fmt.Errorf("%s: %w", f.Name(), ErrNotDevice)
	}
	return nil
}

// refused wraps an error of a request a device does not know (ENOTTY,
// EINVAL) as ErrNotDevice.
func refused(f *os.File, what string, err error) error {
	if errors.Is(err, unix.ENOTTY) || errors.Is(err, unix.EINVAL) {
		return fmt.Errorf("%s: %s: %w (%w)", f.Name(), what, ErrNotDevice, err)
	}
	return fmt.Errorf("%s: %s: %w", f.Name(), what, err)
}

func cString(b []byte) string {
	if i := bytes.IndexByte(b, 0); i >= 0 {
		b = b[:i]
	}
	return string(b)
}

func (linuxIoctl) Evdev(f *os.File) (EvdevInfo, error) {
	var info EvdevInfo
	if err := notDevice(f); err != nil {
		return info, err
	}
	var name [256]byte
	if err := ioctl(f, eviocgname(uintptr(len(name))), unsafe.Pointer(&name[0])); err != nil {
		return info, refused(f, "EVIOCGNAME", err)
	}
	info.Name = cString(name[:])
	if err := ioctl(f, eviocgid, unsafe.Pointer(&info.ID)); err != nil {
		return info, refused(f, "EVIOCGID", err)
	}
	// The bitmap is an array of C longs (uintptr on Linux), bit i in word
	// i / bits-per-long.
	const wordBits = 8 * unsafe.Sizeof(uintptr(0))
	var bits [(ABS_MAX + 1) / wordBits]uintptr
	if err := ioctl(f, eviocgbitAbs(unsafe.Sizeof(bits)), unsafe.Pointer(&bits[0])); err != nil {
		return info, refused(f, "EVIOCGBIT(EV_ABS)", err)
	}
	for code := uint16(0); code <= ABS_MAX; code++ {
		if bits[uintptr(code)/wordBits]>>(uintptr(code)%wordBits)&1 == 0 {
			continue
		}
		var ai absinfo
		if err := ioctl(f, eviocgabs(code), unsafe.Pointer(&ai)); err != nil {
			return info, refused(f, fmt.Sprintf("EVIOCGABS(%s)", AbsName(code)), err)
		}
		info.Axes = append(info.Axes, AbsAxis{Code: code, Value: ai.Value, Min: ai.Minimum, Max: ai.Maximum,
			Fuzz: ai.Fuzz, Flat: ai.Flat, Resolution: ai.Resolution, HasRange: true})
	}
	return info, nil
}

func (linuxIoctl) Joystick(f *os.File) (JoystickInfo, error) {
	var info JoystickInfo
	if err := notDevice(f); err != nil {
		return info, err
	}
	var name [256]byte
	if err := ioctl(f, jsiocgname(uintptr(len(name))), unsafe.Pointer(&name[0])); err != nil {
		return info, refused(f, "JSIOCGNAME", err)
	}
	info.Name = cString(name[:])
	var n uint8
	if err := ioctl(f, jsiocgaxes, unsafe.Pointer(&n)); err != nil {
		return info, refused(f, "JSIOCGAXES", err)
	}
	var axmap [ABS_MAX + 1]uint8
	if err := ioctl(f, jsiocgaxmp, unsafe.Pointer(&axmap[0])); err != nil {
		return info, refused(f, "JSIOCGAXMAP", err)
	}
	for i := 0; i < int(n) && i < len(axmap); i++ {
		info.Axes = append(info.Axes, uint16(axmap[i]))
	}
	return info, nil
}
