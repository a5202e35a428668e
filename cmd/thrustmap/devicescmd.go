package main

import (
	"errors"
	"fmt"
	"io"
	"runtime"
	"strings"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// devicesJSON is the devices command's JSON, described in
// docs/recordings.md.
type devicesJSON struct {
	EventDevices    []eventDeviceJSON    `json:"event_devices"`
	JoystickDevices []joystickDeviceJSON `json:"joystick_devices"`
	SerialPorts     []serialPortJSON     `json:"serial_ports"`
	GameControllers []controllerJSON     `json:"game_controllers"`
	Problems        []string             `json:"problems"`
}

type eventDeviceJSON struct {
	Path     string        `json:"path"`
	Name     string        `json:"name"`
	Vendor   string        `json:"vendor"`  // hex, "" when unknown
	Product  string        `json:"product"` // hex
	Readable bool          `json:"readable"`
	Error    string        `json:"error,omitempty"`
	Fix      string        `json:"fix,omitempty"`
	UdevRule string        `json:"udev_rule,omitempty"`
	Axes     []absAxisJSON `json:"axes"`
}

type absAxisJSON struct {
	Code       uint16 `json:"code"`
	Name       string `json:"name"`
	Min        *int32 `json:"min"` // null when the device could not be asked
	Max        *int32 `json:"max"`
	Value      *int32 `json:"value"`
	Fuzz       int32  `json:"fuzz"`
	Flat       int32  `json:"flat"`
	Resolution int32  `json:"resolution"`
}

type joystickDeviceJSON struct {
	Path     string   `json:"path"`
	Name     string   `json:"name"`
	Readable bool     `json:"readable"`
	Error    string   `json:"error,omitempty"`
	Fix      string   `json:"fix,omitempty"`
	UdevRule string   `json:"udev_rule,omitempty"`
	Axes     []string `json:"axes"` // the evdev axis behind each axis number; null when unknown
}

type serialPortJSON struct {
	Port         string `json:"port"`
	USB          bool   `json:"usb"`
	Vendor       string `json:"vendor"`
	Product      string `json:"product"`
	ProductName  string `json:"product_name"`
	Manufacturer string `json:"manufacturer"`
	SerialNumber string `json:"serial_number"`
	Accessible   bool   `json:"accessible"`
	Error        string `json:"error,omitempty"`
	Fix          string `json:"fix,omitempty"`
	UdevRule     string `json:"udev_rule,omitempty"`
}

type controllerJSON struct {
	Device       string        `json:"device"` // joy:N
	Name         string        `json:"name"`
	Manufacturer uint16        `json:"manufacturer_id"`
	Product      uint16        `json:"product_id"`
	Buttons      int           `json:"buttons"`
	Axes         []joyAxisJSON `json:"axes"`
}

type joyAxisJSON struct {
	Name string `json:"name"`
	Min  uint32 `json:"min"`
	Max  uint32 `json:"max"`
}

// errorFix splits a device's error into its message, the fix and the udev
// rule (for a *input.PermissionError).
func errorFix(err error) (msg, fix, rule string) {
	if err == nil {
		return "", "", ""
	}
	var pe *input.PermissionError
	if errors.As(err, &pe) {
		return pe.Err.Error(), strings.TrimSpace(pe.Fix()), pe.UdevRule()
	}
	return err.Error(), "", ""
}

func hexID(v uint16) string {
	if v == 0 {
		return ""
	}
	return fmt.Sprintf("%04x", v)
}

func newDevicesJSON(inv input.Inventory) devicesJSON {
	out := devicesJSON{EventDevices: []eventDeviceJSON{}, JoystickDevices: []joystickDeviceJSON{}, SerialPorts: []serialPortJSON{},
		GameControllers: []controllerJSON{}, Problems: append([]string{}, inv.Problems...)}
	for _, d := range inv.Event {
		j := eventDeviceJSON{Path: d.Path, Name: d.Name, Vendor: hexID(d.ID.Vendor), Product: hexID(d.ID.Product), Readable: d.Err == nil, Axes: []absAxisJSON{}}
		j.Error, j.Fix, j.UdevRule = errorFix(d.Err)
		for _, a := range d.Axes {
			aj := absAxisJSON{Code: a.Code, Name: a.Name(), Fuzz: a.Fuzz, Flat: a.Flat, Resolution: a.Resolution}
			if a.HasRange {
				aj.Min, aj.Max, aj.Value = &a.Min, &a.Max, &a.Value
			}
			j.Axes = append(j.Axes, aj)
		}
		out.EventDevices = append(out.EventDevices, j)
	}
	for _, d := range inv.Joystick {
		j := joystickDeviceJSON{Path: d.Path, Name: d.Name, Readable: d.Err == nil}
		j.Error, j.Fix, j.UdevRule = errorFix(d.Err)
		if d.Axes != nil {
			j.Axes = []string{}
			for _, code := range d.Axes {
				j.Axes = append(j.Axes, input.AbsName(code))
			}
		}
		out.JoystickDevices = append(out.JoystickDevices, j)
	}
	for _, p := range inv.Serial {
		j := serialPortJSON{Port: p.Port, USB: p.USB, Vendor: strings.ToLower(p.VID), Product: strings.ToLower(p.PID), ProductName: p.Product,
			Manufacturer: p.Manufacturer, SerialNumber: p.SerialNumber, Accessible: p.Err == nil}
		j.Error, j.Fix, j.UdevRule = errorFix(p.Err)
		out.SerialPorts = append(out.SerialPorts, j)
	}
	for _, c := range inv.Controllers {
		j := controllerJSON{Device: fmt.Sprintf("joy:%d", c.ID), Name: c.Name, Manufacturer: c.Mid, Product: c.Pid, Buttons: c.Buttons, Axes: []joyAxisJSON{}}
		for _, a := range c.Axes {
			j.Axes = append(j.Axes, joyAxisJSON{Name: a.Name(), Min: a.Min, Max: a.Max})
		}
		out.GameControllers = append(out.GameControllers, j)
	}
	return out
}

func newDevicesCmd() *cobra.Command {
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "devices [--json]",
		Short: "List the devices levers can be read from: input devices and their axes, serial ports, game controllers",
		Long: `devices lists what thrustmap can read levers from, with what is needed to
choose the --device and --axis of record, watch and sweep:

  - Linux evdev devices (/dev/input/eventN): the name, the USB vendor and
    product, and each absolute axis with its code name, range and current
    reading (a lever, a throttle or a joystick has them; keyboards and mice
    do not, and are only counted). A device the user may not read is listed
    from /sys (name and axes, without ranges) with the fix: the udev rule
    for its vendor and product, or the group to join.
  - Linux joystick-interface devices (/dev/input/jsN): name and axes. They
    rescale the counts; prefer the evdev device of the same hardware.
  - Serial ports: the port, and for USB ones the vendor, product and name.
    Ports are not opened (opening one resets many boards); one the user may
    not open gets the fix.
  - On Windows, the game controllers (joy:N) with their axes X, Y, Z, R, U,
    V and ranges.

With nothing found it says so and what to check.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			inv := devSystem.Scan()
			if asJSON {
				return writeJSON(cmd.OutOrStdout(), newDevicesJSON(inv))
			}
			printDevices(cmd.OutOrStdout(), inv)
			return nil
		},
	}
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	return cmd
}

// printDevices lists an inventory for people.
func printDevices(w io.Writer, inv input.Inventory) {
	var fixes []string
	addFix := func(path string, err error) string {
		msg, fix, _ := errorFix(err)
		if fix != "" {
			fixes = append(fixes, fmt.Sprintf("%s cannot be read (%s).\n%s", path, msg, fix))
			return "not readable: permission denied (fix below)"
		}
		return "not readable: " + msg
	}
	usb := func(vendor, product uint16) string {
		if vendor == 0 && product == 0 {
			return ""
		}
		return fmt.Sprintf("  [%04x:%04x]", vendor, product)
	}
	found := 0
	var withAxes []input.EventDevice
	var others []string
	for _, d := range inv.Event {
		if d.HasAbsAxes() || d.Err != nil {
			withAxes = append(withAxes, d)
		} else {
			others = append(others, fmt.Sprintf("%s %q", d.Path, d.Name))
		}
	}
	if len(withAxes) > 0 {
		fmt.Fprintln(w, "Input devices (evdev), with their absolute axes:")
		for _, d := range withAxes {
			found++
			fmt.Fprintf(w, "  %s  %q%s\n", d.Path, d.Name, usb(d.ID.Vendor, d.ID.Product))
			if d.Err != nil {
				fmt.Fprintf(w, "      %s\n", addFix(d.Path, d.Err))
			}
			var unranged []string
			for _, a := range d.Axes {
				if !a.HasRange {
					unranged = append(unranged, a.Name())
					continue
				}
				notes := ""
				if a.Flat != 0 || a.Fuzz != 0 {
					notes = fmt.Sprintf("  (fuzz %d, flat %d)", a.Fuzz, a.Flat)
				}
				fmt.Fprintf(w, "      %-14s %7d to %-7d now %d%s\n", a.Name(), a.Min, a.Max, a.Value, notes)
			}
			if len(unranged) > 0 {
				fmt.Fprintf(w, "      axes %s (ranges unknown until it can be read)\n", strings.Join(unranged, ", "))
			}
		}
	}
	if len(others) > 0 {
		fmt.Fprintf(w, "Input devices without absolute axes (keyboards, mice, buttons): %d\n", len(others))
		for _, o := range others {
			fmt.Fprintf(w, "  %s\n", o)
		}
	}
	if len(inv.Joystick) > 0 {
		fmt.Fprintln(w, "Joystick-interface devices (rescaled counts: prefer the evdev device of the same hardware):")
		for _, d := range inv.Joystick {
			found++
			fmt.Fprintf(w, "  %s  %q\n", d.Path, d.Name)
			switch {
			case d.Err != nil:
				fmt.Fprintf(w, "      %s\n", addFix(d.Path, d.Err))
			case d.Axes != nil:
				var axes []string
				for n, code := range d.Axes {
					axes = append(axes, fmt.Sprintf("%d (%s)", n, input.AbsName(code)))
				}
				fmt.Fprintf(w, "      %d axes: %s\n", len(d.Axes), strings.Join(axes, ", "))
			}
		}
	}
	if len(inv.Serial) > 0 {
		fmt.Fprintln(w, "Serial ports:")
		for _, p := range inv.Serial {
			found++
			line := "  " + p.Port
			if p.USB {
				line += fmt.Sprintf("  [%s:%s]", strings.ToLower(p.VID), strings.ToLower(p.PID))
			}
			if p.Product != "" {
				line += fmt.Sprintf("  %q", p.Product)
			}
			fmt.Fprintln(w, line)
			if p.Err != nil {
				fmt.Fprintf(w, "      %s\n", addFix(p.Port, p.Err))
			}
		}
	}
	if len(inv.Controllers) > 0 {
		fmt.Fprintln(w, "Game controllers (counts as the Windows driver reports them, after any calibration set in Windows):")
		for _, c := range inv.Controllers {
			found++
			var axes []string
			for _, a := range c.Axes {
				axes = append(axes, fmt.Sprintf("%s %d to %d", a.Name(), a.Min, a.Max))
			}
			fmt.Fprintf(w, "  joy:%d  %q  axes %s\n", c.ID, c.Name, strings.Join(axes, ", "))
		}
	}
	for _, p := range inv.Problems {
		fmt.Fprintf(w, "warning: %s\n", p)
	}
	if found == 0 {
		fmt.Fprintln(w, "No lever device found: no input device with axes, joystick device, serial port or game controller.")
		fmt.Fprintln(w, nothingFoundHelp())
	}
	for _, f := range fixes {
		fmt.Fprintf(w, "\n%s\n", f)
	}
	if found > 0 {
		fmt.Fprintln(w, "\nRecord a sweep with: thrustmap record --device DEVICE [--axis CODE=LEVER]... -p PROFILE -o rec.csv --calibrate cal.toml")
	}
}

// nothingFoundHelp says what to check when no device is found, for the
// system the program runs on.
func nothingFoundHelp() string {
	switch runtime.GOOS {
	case "windows":
		return `Check: is the controller plugged in and listed under "Set up USB game controllers"
(joy.cpl)? A board on a serial port shows as a COM port in Device Manager.`
	case "darwin":
		return `Check: is the board plugged in? On macOS serial boards show as /dev/cu.*;
reading game controllers is not supported on macOS yet (use a board printing
"LEVER RAW" lines, or record on Linux or Windows).`
	}
	return `Check: is the device plugged in (lsusb lists USB devices)? Input devices appear
in /dev/input once the kernel has a driver for them (dmesg shows it); a board
on a serial port appears as /dev/ttyACM* or /dev/ttyUSB*. A device in
/dev/input that is not listed may have no absolute axes.`
}
