package input

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
)

// Event types of the Linux joystick interface, from
// Documentation/input/joydev/joystick-api.rst (include/uapi/linux/joystick.h).
const (
	JS_EVENT_BUTTON = 0x01 // button pressed or released
	JS_EVENT_AXIS   = 0x02 // axis moved
	JS_EVENT_INIT   = 0x80 // OR-ed in: the initial state, sent when the device is opened
)

// JoystickRecordSize is the size of one struct js_event: u32 time (ms),
// s16 value, u8 type, u8 number (Documentation/input/joydev/joystick-api.rst).
const JoystickRecordSize = 8

// joystickWarning is JoystickReader.Warning's sentence.
const joystickWarning = "The joystick interface (/dev/input/js*) rescales raw counts to −32767..32767 " +
	"and may apply a centre dead zone unless its correction is switched off (JSIOCSCORR with JS_CORR_NONE); " +
	"an evdev device (/dev/input/event*) gives the true counts."

// JoystickReader reads a stream of struct js_event records (a live
// /dev/input/jsN device or a capture of one), little-endian, and yields a
// Sample for each axis event of a mapped axis number, initial-state events
// included. TMs counts from the first event; the 32-bit millisecond clock
// may wrap.
type JoystickReader struct {
	br      *bufio.Reader
	axes    map[uint8]int
	buf     [JoystickRecordSize]byte
	off     int64
	started bool
	prev    uint32 // the last event's time
	tms     int64  // ms since the first event
	err     error
}

// NewJoystickReader returns a reader of js_event records from r; axes maps
// an axis number to a lever id.
func NewJoystickReader(r io.Reader, axes map[uint8]int) *JoystickReader {
	m := make(map[uint8]int, len(axes))
	for k, v := range axes {
		m[k] = v
	}
	return &JoystickReader{br: bufio.NewReaderSize(r, 512*JoystickRecordSize), axes: m}
}

// Next returns the next sample of a mapped axis, io.EOF at the end of the
// stream, or an error wrapping io.ErrUnexpectedEOF (with its byte offset)
// for a truncated last record.
func (r *JoystickReader) Next() (Sample, error) {
	if r.err != nil {
		return Sample{}, r.err
	}
	for {
		n, err := io.ReadFull(r.br, r.buf[:])
		if err != nil {
			if err == io.ErrUnexpectedEOF {
				err = fmt.Errorf("joystick: truncated record at byte offset %d: %d of %d bytes: %w", r.off, n, JoystickRecordSize, err)
			} else if err != io.EOF {
				err = fmt.Errorf("joystick: read at byte offset %d: %w", r.off, err)
			}
			r.err = err
			return Sample{}, err
		}
		r.off += JoystickRecordSize
		t := binary.LittleEndian.Uint32(r.buf[0:])
		value := int16(binary.LittleEndian.Uint16(r.buf[4:]))
		typ, number := r.buf[6], r.buf[7]
		if r.started {
			// A signed step: the clock wrapping at 2³² ms moves forward.
			r.tms += int64(int32(t - r.prev))
		}
		r.started, r.prev = true, t
		if typ&^JS_EVENT_INIT != JS_EVENT_AXIS {
			continue
		}
		lever, ok := r.axes[number]
		if !ok {
			continue
		}
		return Sample{TMs: r.tms, Lever: lever, Raw: float64(value)}, nil
	}
}

// Warning returns a fixed sentence for the user: the joystick interface
// rescales counts and may add a centre dead zone, evdev does not.
func (r *JoystickReader) Warning() string { return joystickWarning }
