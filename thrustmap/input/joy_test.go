package input

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"
	"unicode/utf16"
)

// joyCapsW is JOYCAPSW as the Windows SDK's joystickapi.h declares it,
// field by field: WORD wMid, wPid; WCHAR szPname[MAXPNAMELEN = 32]; UINT
// wXmin … wMaxButtons (19 of them); WCHAR szRegKey[32];
// WCHAR szOEMVxD[MAX_JOYSTICKOEMVXDNAME = 260]. Written with
// encoding/binary it has no padding, as in the SDK's packing.
type joyCapsW struct {
	Mid, Pid                       uint16
	Pname                          [32]uint16
	Xmin, Xmax, Ymin, Ymax         uint32
	Zmin, Zmax                     uint32
	NumButtons, PeriodMin          uint32
	PeriodMax                      uint32
	Rmin, Rmax, Umin, Umax         uint32
	Vmin, Vmax                     uint32
	Caps, MaxAxes, NumAxes, MaxBtn uint32
	RegKey                         [32]uint16
	OEMVxD                         [260]uint16
}

func (c joyCapsW) words(t testing.TB) [joyCapsSize / 4]uint32 {
	var b bytes.Buffer
	if err := binary.Write(&b, binary.LittleEndian, c); err != nil {
		t.Fatal(err)
	}
	var w [joyCapsSize / 4]uint32
	if err := binary.Read(&b, binary.LittleEndian, &w); err != nil {
		t.Fatal(err)
	}
	return w
}

func wname(s string) [32]uint16 {
	var n [32]uint16
	copy(n[:], utf16.Encode([]rune(s)))
	return n
}

// fakeDLL answers joyGetDevCapsW and joyGetPosEx as winmm.dll does: the
// caps of the controllers it has, their positions (JOYINFOEX: dwSize,
// dwFlags, dwXpos … dwVpos, …), JOYERR_UNPLUGGED (167) for the others.
type fakeDLL struct {
	caps map[int]joyCapsW
	pos  map[int][JoyAxes]uint32
	t    testing.TB
}

func (f fakeDLL) getDevCaps(id int, buf *[joyCapsSize / 4]uint32) uint32 {
	c, ok := f.caps[id]
	if !ok {
		return 165 // JOYERR_PARMS
	}
	*buf = c.words(f.t)
	return 0
}

func (f fakeDLL) getPosEx(id int, buf *[joyInfoExSize / 4]uint32) uint32 {
	if buf[0] != 52 || buf[1] != 0xff { // sizeof(JOYINFOEX), JOY_RETURNALL
		f.t.Errorf("joyGetPosEx given dwSize %d, dwFlags %#x", buf[0], buf[1])
	}
	p, ok := f.pos[id]
	if !ok {
		return 167 // JOYERR_UNPLUGGED
	}
	copy(buf[2:8], p[:])
	return 0
}

// TestJoyCapsLayout: the structure declared after the SDK header is 728
// bytes (2·2 + 32·2 + 19·4 + 32·2 + 260·2), the size the decoder takes.
func TestJoyCapsLayout(t *testing.T) {
	n := binary.Size(joyCapsW{})
	if n != 2*2+32*2+19*4+32*2+260*2 {
		t.Errorf("sizeof(JOYCAPSW) = %d", n)
	}
	if n != joyCapsSize {
		t.Errorf("decoder takes %d bytes, the structure has %d", joyCapsSize, n)
	}
	if _, err := decodeJoyCaps(make([]byte, 100)); err == nil {
		t.Error("a short JOYCAPSW decoded")
	}
}

// TestWinmm: controllers read through the multimedia joystick interface,
// with a fake DLL: names, axes present by wCaps (JOYCAPS_HASZ 1, HASR 2,
// HASU 4, HASV 8), ranges, positions, and the unplugged ones skipped.
func TestWinmm(t *testing.T) {
	dll := fakeDLL{t: t,
		caps: map[int]joyCapsW{
			0: {Mid: 0x1209, Pid: 0x0001, Pname: wname("Invented Quadrant Ä"), Xmax: 65535, Ymax: 65535, Zmax: 65535, Rmax: 1023, Umin: 10, Umax: 4000,
				Caps: 0x01 | 0x02 | 0x04, NumAxes: 5, NumButtons: 12},
			2: {Pname: wname("Invented Pedals"), Xmax: 65535, Ymax: 65535},
		},
		pos: map[int][JoyAxes]uint32{0: {100, 200, 300, 400, 500, 0}, 2: {1, 2, 0, 0, 0, 0}},
	}
	s := &System{Controllers: winmmAPI{dll}}
	inv := s.Scan()
	if len(inv.Controllers) != 2 || inv.Controllers[0].ID != 0 || inv.Controllers[1].ID != 2 {
		t.Fatalf("controllers %+v", inv.Controllers)
	}
	c := inv.Controllers[0]
	want := []JoyAxis{{0, 0, 65535}, {1, 0, 65535}, {2, 0, 65535}, {3, 0, 1023}, {4, 10, 4000}}
	if c.Name != "Invented Quadrant Ä" || c.Mid != 0x1209 || c.Buttons != 12 || !slices.Equal(c.Axes, want) {
		t.Errorf("controller 0: %+v", c)
	}
	if len(inv.Controllers[1].Axes) != 2 {
		t.Errorf("controller 2 axes %+v, want X and Y", inv.Controllers[1].Axes)
	}
	pos, err := s.Controllers.Position(0)
	if err != nil || pos != [JoyAxes]uint32{100, 200, 300, 400, 500, 0} {
		t.Errorf("position %v, %v", pos, err)
	}
	if _, err := s.Controllers.Position(1); !errors.Is(err, ErrUnplugged) {
		t.Errorf("joy:1: %v, want ErrUnplugged", err)
	}
	for code, want := range map[uint32]string{6: "MMSYSERR_NODRIVER", 166: "JOYERR_NOCANDO", 2: "no such game controller", 999: "MMRESULT 999"} {
		if err := mmError("joyGetPosEx", 0, code); !strings.Contains(err.Error(), want) {
			t.Errorf("MMRESULT %d: %v, want %q", code, err, want)
		}
	}
}

// fakeJoy is a controller whose positions follow a script, one entry a
// poll (the last repeats); unplugAt > 0 unplugs it at that poll.
type fakeJoy struct {
	mu       sync.Mutex
	script   [][JoyAxes]uint32
	polls    int
	unplugAt int
}

func (f *fakeJoy) Caps(id int) (JoyCaps, error) {
	return JoyCaps{Name: "Invented Quadrant", Axes: []JoyAxis{{0, 0, 65535}, {1, 0, 65535}, {2, 0, 65535}}}, nil
}

func (f *fakeJoy) Position(id int) ([JoyAxes]uint32, error) {
	f.mu.Lock()
	defer f.mu.Unlock()
	if id != 0 || (f.unplugAt > 0 && f.polls >= f.unplugAt) {
		return [JoyAxes]uint32{}, ErrUnplugged
	}
	p := f.script[min(f.polls, len(f.script)-1)]
	f.polls++
	return p, nil
}

// stepClock is a clock that a fake sleep moves on.
type stepClock struct {
	mu sync.Mutex
	t  time.Time
}

func (c *stepClock) now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.t
}

func (c *stepClock) sleep(d time.Duration) {
	c.mu.Lock()
	c.t = c.t.Add(d)
	c.mu.Unlock()
}

// TestJoyReader: polled every 5 ms; the first poll gives every mapped axis,
// later polls only the axes that changed; the unmapped axis (Y) never; an
// unplugged controller ends the stream with ErrUnplugged.
func TestJoyReader(t *testing.T) {
	joy := &fakeJoy{script: [][JoyAxes]uint32{
		{0, 0, 0},      // poll 0: Open asks whether the controller is there
		{100, 7, 3000}, // poll 1, t 0
		{100, 8, 3000}, // poll 2, t 5: only Y moved (not mapped)
		{150, 8, 3000}, // poll 3, t 10: X
		{150, 8, 2990}, // poll 4, t 15: Z
		{160, 9, 2980}, // poll 5, t 20: X and Z
	}, unplugAt: 7}
	clock := &stepClock{t: time.Unix(1000, 0)}
	s := &System{Controllers: joy, Now: clock.now, Sleep: clock.sleep}
	d, err := s.Open("joy:0", OpenOptions{Axes: map[int]int{0: 1, 2: 2}})
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	if d.Format != FormatJoy || d.Name != "Invented Quadrant" || !strings.Contains(d.Warning, "clear that calibration") {
		t.Errorf("device %+v", d)
	}
	var got []Sample
	for {
		s, err := d.Next()
		if err != nil {
			if !errors.Is(err, ErrUnplugged) || !strings.HasPrefix(err.Error(), "joy:0: ") {
				t.Errorf("end: %v, want ErrUnplugged", err)
			}
			break
		}
		got = append(got, s)
	}
	want := []Sample{{0, 1, 100}, {0, 2, 3000}, {10, 1, 150}, {15, 2, 2990}, {20, 1, 160}, {20, 2, 2980}}
	if !slices.Equal(got, want) {
		t.Errorf("samples\n got %v\nwant %v", got, want)
	}

	// Axes the controller does not have, and controllers not connected.
	s.Controllers = &fakeJoy{script: [][JoyAxes]uint32{{}}}
	if _, err := s.Open("joy:0", OpenOptions{Axes: map[int]int{4: 1}}); err == nil ||
		!strings.Contains(err.Error(), "joy:0 has no axis U: its axes are X 0 to 65535, Y 0 to 65535, Z 0 to 65535") {
		t.Errorf("axis U: %v", err)
	}
	if _, err := s.Open("joy:3", OpenOptions{}); err == nil || !strings.Contains(err.Error(), "no game controller is connected as number 3") {
		t.Errorf("joy:3: %v", err)
	}
}

// TestJoyReaderClose: Close from another goroutine ends a reader that is
// polling (run with -race).
func TestJoyReaderClose(t *testing.T) {
	joy := &fakeJoy{script: [][JoyAxes]uint32{{1, 1, 1}, {2, 1, 1}}}
	s := &System{Controllers: joy, PollInterval: time.Millisecond}
	d, err := s.Open("joy:0", OpenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Axes) != 3 || d.Axes[2] != (MappedAxis{2, "Z", 3, 0, 65535, true}) {
		t.Errorf("default axes %+v", d.Axes)
	}
	done := make(chan error)
	go func() {
		for {
			if _, err := d.Next(); err != nil {
				done <- err
				return
			}
		}
	}()
	time.Sleep(20 * time.Millisecond)
	d.Close()
	select {
	case err := <-done:
		if err != io.EOF {
			t.Errorf("after Close: %v, want io.EOF", err)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("Next did not return after Close")
	}
}
