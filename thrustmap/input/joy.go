package input

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"sync/atomic"
	"time"
	"unicode/utf16"
)

// MaxControllers is how many game controllers the Windows multimedia
// joystick interface numbers: joy:0 to joy:15.
const MaxControllers = 16

// JoyAPI reads game controllers. On Windows it is the multimedia joystick
// interface of winmm.dll (joyGetDevCapsW, joyGetPosEx); tests use a fake.
type JoyAPI interface {
	// Caps returns what controller id is: its name and axes.
	Caps(id int) (JoyCaps, error)
	// Position reads the axes X, Y, Z, R, U, V now; an error matching
	// ErrUnplugged when no controller is connected as id.
	Position(id int) ([JoyAxes]uint32, error)
}

// ErrUnplugged is matched when no game controller is connected under a
// number.
var ErrUnplugged = errors.New("no game controller connected")

// JoyCaps is what a game controller says of itself.
type JoyCaps struct {
	Name     string
	Mid, Pid uint16    // manufacturer and product ids
	Axes     []JoyAxis // the axes it has, in the order X, Y, Z, R, U, V
	Buttons  int
}

// JoyAxis is one axis of a game controller with its range.
type JoyAxis struct {
	Index    int // 0 to 5: X, Y, Z, R, U, V
	Min, Max uint32
}

// Name returns the axis letter.
func (a JoyAxis) Name() string { return JoyAxisNames[a.Index] }

// joyWarning is a game controller's Warning.
const joyWarning = "Game controller counts are what the Windows driver reports (0 to 65535), after any " +
	"calibration set in the Windows game controller settings: clear that calibration there first."

// JoyReader polls a game controller and yields a Sample for each mapped
// axis whose reading changed since the last poll (every mapped axis at the
// first). TMs counts from the first poll. Close may be called from another
// goroutine: Next then returns io.EOF within one poll.
type JoyReader struct {
	api      JoyAPI
	id       int
	axes     []MappedAxis
	interval time.Duration
	now      func() time.Time
	sleep    func(time.Duration)
	start    time.Time
	started  bool
	last     [JoyAxes]uint32
	queue    []Sample
	closed   atomic.Bool
	err      error
}

func newJoyReader(s *System, id int, axes []MappedAxis) *JoyReader {
	interval := s.PollInterval
	if interval <= 0 {
		interval = 5 * time.Millisecond
	}
	return &JoyReader{api: s.Controllers, id: id, axes: axes, interval: interval, now: s.now, sleep: s.sleep}
}

// Next returns the next changed reading; io.EOF after Close; an error
// matching ErrUnplugged when the controller went away.
func (r *JoyReader) Next() (Sample, error) {
	for {
		if len(r.queue) > 0 {
			s := r.queue[0]
			r.queue = r.queue[1:]
			return s, nil
		}
		if r.err != nil {
			return Sample{}, r.err
		}
		if r.closed.Load() {
			r.err = io.EOF
			continue
		}
		if r.started {
			r.sleep(r.interval)
			if r.closed.Load() {
				continue
			}
		}
		pos, err := r.api.Position(r.id)
		if err != nil {
			r.err = fmt.Errorf("joy:%d: %w", r.id, err)
			continue
		}
		t := r.now()
		if !r.started {
			r.start = t
		}
		tms := t.Sub(r.start).Milliseconds()
		for _, a := range r.axes {
			if v := pos[a.Code]; !r.started || v != r.last[a.Code] {
				r.queue = append(r.queue, Sample{TMs: tms, Lever: a.Lever, Raw: float64(v)})
			}
		}
		r.last, r.started = pos, true
	}
}

// Close ends the polling.
func (r *JoyReader) Close() error {
	r.closed.Store(true)
	return nil
}

// The multimedia joystick interface of winmm.dll
// (joystickapi.h; the Windows SDK documents joyGetDevCapsW and joyGetPosEx).
const (
	joyCapsSize   = 728 // sizeof(JOYCAPSW): 2 WORDs, WCHAR[32], 19 UINTs, WCHAR[32], WCHAR[260]
	joyInfoExSize = 52  // sizeof(JOYINFOEX): 13 DWORDs

	joyReturnAll = 0xff // JOY_RETURNALL: X, Y, Z, R, U, V, POV and buttons; not JOY_RETURNRAWDATA

	joyCapsHasZ = 0x01 // JOYCAPS_HASZ
	joyCapsHasR = 0x02 // JOYCAPS_HASR
	joyCapsHasU = 0x04 // JOYCAPS_HASU
	joyCapsHasV = 0x08 // JOYCAPS_HASV

	mmsyserrBadDeviceID = 2   // MMSYSERR_BADDEVICEID
	mmsyserrNoDriver    = 6   // MMSYSERR_NODRIVER
	mmsyserrInvalParam  = 11  // MMSYSERR_INVALPARAM
	joyerrParms         = 165 // JOYERR_PARMS (JOYERR_BASE 160 + 5)
	joyerrNoCanDo       = 166 // JOYERR_NOCANDO
	joyerrUnplugged     = 167 // JOYERR_UNPLUGGED
)

// joyDLL is the calls into winmm.dll, each filling a buffer laid out as
// the C structure and returning the MMRESULT. joy_windows.go makes them;
// everything else here is shared, and tested with a fake.
type joyDLL interface {
	getDevCaps(id int, caps *[joyCapsSize / 4]uint32) uint32 // joyGetDevCapsW
	getPosEx(id int, info *[joyInfoExSize / 4]uint32) uint32 // joyGetPosEx
}

// winmmAPI is JoyAPI over winmm.dll.
type winmmAPI struct{ dll joyDLL }

func (w winmmAPI) Caps(id int) (JoyCaps, error) {
	var buf [joyCapsSize / 4]uint32
	if r := w.dll.getDevCaps(id, &buf); r != 0 {
		return JoyCaps{}, mmError("joyGetDevCapsW", id, r)
	}
	return decodeJoyCaps(wordsToBytes(buf[:]))
}

func (w winmmAPI) Position(id int) ([JoyAxes]uint32, error) {
	var buf [joyInfoExSize / 4]uint32
	buf[0], buf[1] = joyInfoExSize, joyReturnAll // dwSize, dwFlags
	if r := w.dll.getPosEx(id, &buf); r != 0 {
		return [JoyAxes]uint32{}, mmError("joyGetPosEx", id, r)
	}
	var pos [JoyAxes]uint32
	copy(pos[:], buf[2:2+JoyAxes]) // dwXpos, dwYpos, dwZpos, dwRpos, dwUpos, dwVpos
	return pos, nil
}

// mmError turns an MMRESULT into an error.
func mmError(call string, id int, r uint32) error {
	switch r {
	case joyerrUnplugged:
		return fmt.Errorf("%s(%d): JOYERR_UNPLUGGED: %w", call, id, ErrUnplugged)
	case joyerrParms, mmsyserrBadDeviceID, mmsyserrInvalParam:
		return fmt.Errorf("%s(%d): no such game controller number (MMRESULT %d): %w", call, id, r, ErrUnplugged)
	case mmsyserrNoDriver:
		return fmt.Errorf("%s(%d): MMSYSERR_NODRIVER: no game controller driver", call, id)
	case joyerrNoCanDo:
		return fmt.Errorf("%s(%d): JOYERR_NOCANDO: the driver cannot read the controller now", call, id)
	}
	return fmt.Errorf("%s(%d): MMRESULT %d", call, id, r)
}

// wordsToBytes lays 32-bit words out as the little-endian bytes Windows
// keeps them in.
func wordsToBytes(w []uint32) []byte {
	b := make([]byte, 4*len(w))
	for i, v := range w {
		binary.LittleEndian.PutUint32(b[4*i:], v)
	}
	return b
}

// decodeJoyCaps reads a JOYCAPSW structure: wMid, wPid, szPname[32], then
// the UINTs wXmin, wXmax, wYmin, wYmax, wZmin, wZmax, wNumButtons,
// wPeriodMin, wPeriodMax, wRmin, wRmax, wUmin, wUmax, wVmin, wVmax, wCaps,
// wMaxAxes, wNumAxes, wMaxButtons, then szRegKey[32] and szOEMVxD[260].
// X and Y are always axes; Z, R, U and V when wCaps says so.
func decodeJoyCaps(b []byte) (JoyCaps, error) {
	if len(b) != joyCapsSize {
		return JoyCaps{}, fmt.Errorf("JOYCAPSW: %d bytes, want %d", len(b), joyCapsSize)
	}
	u32 := func(off int) uint32 { return binary.LittleEndian.Uint32(b[off:]) }
	c := JoyCaps{
		Mid:     binary.LittleEndian.Uint16(b[0:]),
		Pid:     binary.LittleEndian.Uint16(b[2:]),
		Name:    utf16String(b[4:68]),
		Buttons: int(u32(92)),
	}
	caps := u32(128)
	ranges := [JoyAxes][2]int{{68, 72}, {76, 80}, {84, 88}, {104, 108}, {112, 116}, {120, 124}}
	has := [JoyAxes]bool{true, true, caps&joyCapsHasZ != 0, caps&joyCapsHasR != 0, caps&joyCapsHasU != 0, caps&joyCapsHasV != 0}
	for i, r := range ranges {
		if has[i] {
			c.Axes = append(c.Axes, JoyAxis{Index: i, Min: u32(r[0]), Max: u32(r[1])})
		}
	}
	return c, nil
}

// utf16String reads a NUL-terminated little-endian UTF-16 string.
func utf16String(b []byte) string {
	u := make([]uint16, 0, len(b)/2)
	for i := 0; i+1 < len(b); i += 2 {
		c := binary.LittleEndian.Uint16(b[i:])
		if c == 0 {
			break
		}
		u = append(u, c)
	}
	return string(utf16.Decode(u))
}
