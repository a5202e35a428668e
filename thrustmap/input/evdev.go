package input

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
)

// Event types and codes of the Linux input layer, from the kernel's
// include/uapi/linux/input-event-codes.h (described in
// Documentation/input/event-codes.rst).
const (
	EV_SYN = 0x00 // synchronisation: groups events into one report
	EV_KEY = 0x01 // keys and buttons
	EV_ABS = 0x03 // absolute axes: a lever's position

	SYN_REPORT  = 0 // end of one report
	SYN_DROPPED = 3 // the kernel's queue overflowed: events were lost
)

// Absolute axis codes (EV_ABS), from include/uapi/linux/input-event-codes.h.
const (
	ABS_X        = 0x00
	ABS_Y        = 0x01
	ABS_Z        = 0x02
	ABS_RX       = 0x03
	ABS_RY       = 0x04
	ABS_RZ       = 0x05
	ABS_THROTTLE = 0x06
	ABS_RUDDER   = 0x07
	ABS_WHEEL    = 0x08
	ABS_GAS      = 0x09
	ABS_BRAKE    = 0x0a
	ABS_MISC     = 0x28
	ABS_MAX      = 0x3f // the largest axis code
)

// absNames are the axis names ParseAbsCode accepts and AbsName gives, from
// include/uapi/linux/input-event-codes.h (the multi-touch codes from 0x2f
// up are left out: no lever reports them).
var absNames = map[string]uint16{
	"ABS_X": ABS_X, "ABS_Y": ABS_Y, "ABS_Z": ABS_Z, "ABS_RX": ABS_RX, "ABS_RY": ABS_RY,
	"ABS_RZ": ABS_RZ, "ABS_THROTTLE": ABS_THROTTLE, "ABS_RUDDER": ABS_RUDDER,
	"ABS_WHEEL": ABS_WHEEL, "ABS_GAS": ABS_GAS, "ABS_BRAKE": ABS_BRAKE,
	"ABS_HAT0X": 0x10, "ABS_HAT0Y": 0x11, "ABS_HAT1X": 0x12, "ABS_HAT1Y": 0x13,
	"ABS_HAT2X": 0x14, "ABS_HAT2Y": 0x15, "ABS_HAT3X": 0x16, "ABS_HAT3Y": 0x17,
	"ABS_PRESSURE": 0x18, "ABS_DISTANCE": 0x19, "ABS_TILT_X": 0x1a, "ABS_TILT_Y": 0x1b,
	"ABS_TOOL_WIDTH": 0x1c, "ABS_VOLUME": 0x20, "ABS_PROFILE": 0x21, "ABS_MISC": ABS_MISC,
}

// EvdevRecordSize is the size of one struct input_event on 64-bit Linux:
// struct timeval {int64 tv_sec; int64 tv_usec} (16 bytes), u16 type, u16
// code, s32 value (Documentation/input/input.rst, "Event interface").
const EvdevRecordSize = 24

// EvdevReader reads a stream of Linux struct input_event records (a live
// /dev/input/eventN device or a capture of one), little-endian, and yields a
// Sample for each EV_ABS event of a mapped axis. TMs counts from the first
// event of the stream. Other events are ignored; after a SYN_DROPPED the
// events up to the next SYN_REPORT are dropped, as event-codes.rst asks.
type EvdevReader struct {
	br       *bufio.Reader
	size     int // bytes per record: 24, or 16 for 32-bit kernels
	axes     map[uint16]int
	ranges   map[int][2]int32
	buf      [EvdevRecordSize]byte
	off      int64 // bytes read
	started  bool
	t0       int64 // µs of the first event
	dropping bool  // between SYN_DROPPED and SYN_REPORT
	dropped  int
	err      error
}

// NewEvdevReader returns a reader of 24-byte input_event records from r;
// axes maps an EV_ABS code to a lever id.
func NewEvdevReader(r io.Reader, axes map[uint16]int) *EvdevReader {
	return newEvdevReader(r, axes, EvdevRecordSize)
}

func newEvdevReader(r io.Reader, axes map[uint16]int, size int) *EvdevReader {
	m := make(map[uint16]int, len(axes))
	for k, v := range axes {
		m[k] = v
	}
	return &EvdevReader{br: bufio.NewReaderSize(r, 170*size), size: size, axes: m}
}

// Next returns the next sample of a mapped axis, io.EOF at the end of the
// stream, or an error wrapping io.ErrUnexpectedEOF (with its byte offset)
// for a truncated last record.
func (r *EvdevReader) Next() (Sample, error) {
	if r.err != nil {
		return Sample{}, r.err
	}
	for {
		rec := r.buf[:r.size]
		n, err := io.ReadFull(r.br, rec)
		if err != nil {
			if err == io.ErrUnexpectedEOF {
				err = fmt.Errorf("evdev: truncated record at byte offset %d: %d of %d bytes: %w", r.off, n, r.size, err)
			} else if err != io.EOF {
				err = fmt.Errorf("evdev: read at byte offset %d: %w", r.off, err)
			}
			r.err = err
			return Sample{}, err
		}
		r.off += int64(r.size)
		var sec, usec int64
		if r.size == EvdevRecordSize {
			sec = int64(binary.LittleEndian.Uint64(rec[0:]))
			usec = int64(binary.LittleEndian.Uint64(rec[8:]))
		} else {
			// 32-bit kernels: __kernel_ulong_t __sec, __usec (include/uapi/linux/input.h).
			sec = int64(binary.LittleEndian.Uint32(rec[0:]))
			usec = int64(binary.LittleEndian.Uint32(rec[4:]))
		}
		tail := rec[r.size-8:]
		typ := binary.LittleEndian.Uint16(tail[0:])
		code := binary.LittleEndian.Uint16(tail[2:])
		value := int32(binary.LittleEndian.Uint32(tail[4:]))

		us := micros(sec, usec)
		if !r.started {
			r.started, r.t0 = true, us
		}
		switch {
		case typ == EV_SYN && code == SYN_DROPPED:
			r.dropping = true
			r.dropped++
			continue
		case typ == EV_SYN && code == SYN_REPORT:
			r.dropping = false
			continue
		case r.dropping || typ != EV_ABS:
			continue
		}
		lever, ok := r.axes[code]
		if !ok {
			continue
		}
		return Sample{TMs: (us - r.t0) / 1000, Lever: lever, Raw: float64(value)}, nil
	}
}

// micros is a timeval in microseconds, saturating instead of wrapping for
// timestamps no clock produces.
func micros(sec, usec int64) int64 {
	const lim = math.MaxInt64/1_000_000 - 1
	sec = min(max(sec, -lim), lim)
	usec = min(max(usec, -999_999), 999_999)
	return sec*1_000_000 + usec
}

// Dropped returns how many times the kernel reported lost events
// (SYN_DROPPED).
func (r *EvdevReader) Dropped() int { return r.dropped }

// Ranges returns each mapped lever's device range (minimum, maximum) as the
// device reported it through EVIOCGABS, when the reader was opened on a
// device by OpenDevice; nil for a capture.
func (r *EvdevReader) Ranges() map[int][2]int32 {
	if r.ranges == nil {
		return nil
	}
	out := make(map[int][2]int32, len(r.ranges))
	for k, v := range r.ranges {
		out[k] = v
	}
	return out
}

// ParseAbsCode reads an absolute axis code: a name ("ABS_THROTTLE",
// "throttle", any case) or a number (6, 0x06) up to ABS_MAX.
func ParseAbsCode(s string) (uint16, error) {
	up := toUpperASCII(s)
	if c, ok := absNames[up]; ok {
		return c, nil
	}
	if c, ok := absNames["ABS_"+up]; ok {
		return c, nil
	}
	v, ok := parseCode(s)
	if !ok || v > ABS_MAX {
		return 0, fmt.Errorf("axis %q: want an ABS_ name (ABS_X, ABS_Y, ABS_Z, ABS_RX, ABS_RY, ABS_RZ, ABS_THROTTLE, ABS_RUDDER, ...) or a code from 0 to %#x", s, ABS_MAX)
	}
	return uint16(v), nil
}

func toUpperASCII(s string) string {
	b := []byte(s)
	for i, c := range b {
		if c >= 'a' && c <= 'z' {
			b[i] = c - 'a' + 'A'
		}
	}
	return string(b)
}

// parseCode reads a small non-negative decimal or 0x-prefixed hex number.
func parseCode(s string) (uint64, bool) {
	base := 10
	if len(s) > 2 && s[0] == '0' && (s[1] == 'x' || s[1] == 'X') {
		s, base = s[2:], 16
	}
	if s == "" || len(s) > 8 {
		return 0, false
	}
	var v uint64
	for i := 0; i < len(s); i++ {
		var d uint64
		switch c := s[i]; {
		case c >= '0' && c <= '9':
			d = uint64(c - '0')
		case base == 16 && c >= 'a' && c <= 'f':
			d = uint64(c-'a') + 10
		case base == 16 && c >= 'A' && c <= 'F':
			d = uint64(c-'A') + 10
		default:
			return 0, false
		}
		v = v*uint64(base) + d
	}
	return v, true
}
