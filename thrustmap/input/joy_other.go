//go:build !windows

package input

// hostControllers is nil: game controllers are read only on Windows (on
// Linux their evdev devices are read instead).
func hostControllers() JoyAPI { return nil }
