package input

// SerialPort is a serial port found on the machine.
type SerialPort struct {
	Port         string // /dev/ttyACM0, COM3
	USB          bool
	VID, PID     string // USB vendor and product ids (hex), when known
	Product      string // the USB product name, when known
	Manufacturer string
	SerialNumber string
	// Err is why the port cannot be opened (a *PermissionError), or nil.
	Err error
}
