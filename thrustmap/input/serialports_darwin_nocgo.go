//go:build darwin && !cgo

package input

import "go.bug.st/serial"

// hostSerialPorts lists the serial ports by name: the USB details need cgo
// on macOS (go.bug.st/serial/enumerator uses IOKit).
func hostSerialPorts() ([]SerialPort, error) {
	names, err := serial.GetPortsList()
	if err != nil {
		return nil, err
	}
	out := make([]SerialPort, 0, len(names))
	for _, n := range names {
		out = append(out, SerialPort{Port: n})
	}
	return out, nil
}
