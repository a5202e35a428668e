//go:build !darwin || cgo

package input

import "go.bug.st/serial/enumerator"

// hostSerialPorts lists the serial ports with their USB details
// (go.bug.st/serial/enumerator).
func hostSerialPorts() ([]SerialPort, error) {
	ports, err := enumerator.GetDetailedPortsList()
	if err != nil {
		return nil, err
	}
	out := make([]SerialPort, 0, len(ports))
	for _, p := range ports {
		if p.Name == "" {
			continue
		}
		out = append(out, SerialPort{Port: p.Name, USB: p.IsUSB, VID: p.VID, PID: p.PID,
			Product: p.Product, Manufacturer: p.Manufacturer, SerialNumber: p.SerialNumber})
	}
	return out, nil
}
