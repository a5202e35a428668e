package input

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"go.bug.st/serial"
)

// UdevRulesFile is where the udev rule a PermissionError suggests goes. Its
// number is below 73 so that the uaccess tag is seen by the rule that grants
// the logged-in user access (systemd's 73-seat-late.rules; common practice).
const UdevRulesFile = "/etc/udev/rules.d/70-thrustmap.rules"

// PermissionError is a device the user may not read, with what to do about
// it (Fix). It matches fs.ErrPermission.
type PermissionError struct {
	Path   string
	Serial bool // a serial port; otherwise an input device
	// Vendor and Product are the device's USB ids, four hex digits as udev
	// matches them; "" when unknown (not USB, or not found in /sys).
	Vendor, Product string
	// Group owns the device file ("input", "dialout"): the group to join.
	Group string
	Err   error
}

// Error is the error's own line, then the fix.
func (e *PermissionError) Error() string {
	return e.Err.Error() + "\n" + e.Fix()
}

// Unwrap gives the error from the system and fs.ErrPermission.
func (e *PermissionError) Unwrap() []error { return []error{e.Err, fs.ErrPermission} }

// UdevRule is the line of a udev rule that lets the logged-in user read and
// write this device, or "" when its USB ids are unknown.
func (e *PermissionError) UdevRule() string {
	if e.Vendor == "" || e.Product == "" {
		return ""
	}
	subsystem := "input"
	if e.Serial {
		subsystem = "tty"
	}
	return fmt.Sprintf(`SUBSYSTEM=="%s", ATTRS{idVendor}=="%s", ATTRS{idProduct}=="%s", MODE="0660", TAG+="uaccess"`,
		subsystem, e.Vendor, e.Product)
}

// Fix tells, in a few indented lines, how to get read access: a udev rule
// for the device's vendor and product (where to put it and how to load it),
// or joining the group that owns the device.
func (e *PermissionError) Fix() string {
	var b strings.Builder
	join := fmt.Sprintf("add your user to the %s group: sudo usermod -aG %s $USER, then log out and back in", e.Group, e.Group)
	if rule := e.UdevRule(); rule != "" {
		fmt.Fprintf(&b, "  To read it as yourself, either\n")
		fmt.Fprintf(&b, "  - put this udev rule in %s:\n", UdevRulesFile)
		fmt.Fprintf(&b, "      %s\n", rule)
		fmt.Fprintf(&b, "    then run: sudo udevadm control --reload && sudo udevadm trigger\n")
		fmt.Fprintf(&b, "    (and plug the device in again if it still cannot be read),\n")
		fmt.Fprintf(&b, "  - or %s.", join)
	} else {
		fmt.Fprintf(&b, "  To read it as yourself, %s.", join)
	}
	return b.String()
}

// isPermission reports whether err is a lack of permission, from the
// operating system or from the serial-port library.
func isPermission(err error) bool {
	var pe *serial.PortError
	return errors.Is(err, fs.ErrPermission) || (errors.As(err, &pe) && pe.Code() == serial.PermissionDenied)
}

// permissionError returns err, or, when it is a lack of permission on
// Linux, a *PermissionError with the device's USB ids and group found in
// /sys and the device file.
func (s *System) permissionError(path string, serialPort bool, err error) error {
	if err == nil || !isPermission(err) || runtime.GOOS != "linux" {
		return err
	}
	var already *PermissionError
	if errors.As(err, &already) {
		return err
	}
	if !strings.Contains(err.Error(), path) {
		err = fmt.Errorf("%s: %w", path, err)
	}
	e := &PermissionError{Path: path, Serial: serialPort, Err: err, Group: deviceGroup(path)}
	if e.Group == "" || e.Group == "root" {
		e.Group = "input"
		if serialPort {
			e.Group = "dialout"
		}
	}
	e.Vendor, e.Product = s.usbIDs(path, serialPort)
	return e
}

// usbIDs finds the USB vendor and product of a device in /sys: an input
// device's id/ (when its bus is USB), or a serial port's USB parent.
func (s *System) usbIDs(path string, serialPort bool) (vendor, product string) {
	base := filepath.Base(path)
	if resolved, err := filepath.EvalSymlinks(path); err == nil {
		base = filepath.Base(resolved)
	}
	if !serialPort {
		id := s.rooted("/sys/class/input/" + base + "/device/id")
		if readSysfs(filepath.Join(id, "bustype")) != "0003" { // BUS_USB, include/uapi/linux/input.h
			return "", ""
		}
		return readSysfs(filepath.Join(id, "vendor")), readSysfs(filepath.Join(id, "product"))
	}
	dir, err := filepath.EvalSymlinks(s.rooted("/sys/class/tty/" + base + "/device"))
	if err != nil {
		return "", ""
	}
	for range 4 { // the USB device is a few levels above the tty's interface
		if v := readSysfs(filepath.Join(dir, "idVendor")); v != "" {
			return v, readSysfs(filepath.Join(dir, "idProduct"))
		}
		dir = filepath.Dir(dir)
	}
	return "", ""
}

// readSysfs reads a one-line /sys attribute, "" when there is none.
func readSysfs(path string) string {
	b, err := os.ReadFile(path)
	if err != nil {
		return ""
	}
	return strings.TrimSpace(string(b))
}
