package input

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"slices"
	"strings"
	"testing"
)

// jsEvent is struct js_event as laid out in
// Documentation/input/joydev/joystick-api.rst: u32 time (ms), s16 value, u8
// type, u8 number; 8 bytes.
type jsEvent struct {
	Time   uint32
	Value  int16
	Type   uint8
	Number uint8
}

func jsStream(t testing.TB, events ...jsEvent) []byte {
	var b bytes.Buffer
	for _, e := range events {
		if err := binary.Write(&b, binary.LittleEndian, e); err != nil {
			t.Fatal(err)
		}
	}
	return b.Bytes()
}

func TestJoystickRecordSize(t *testing.T) {
	if n := binary.Size(jsEvent{}); n != JoystickRecordSize {
		t.Fatalf("struct js_event encodes to %d bytes, JoystickRecordSize is %d", n, JoystickRecordSize)
	}
}

// TestJoystickReader: axis events of mapped numbers, initial-state events
// included (joystick-api.rst: JS_EVENT_INIT is OR-ed into the type).
func TestJoystickReader(t *testing.T) {
	axes := map[uint8]int{0: 1, 2: 2}
	tests := []struct {
		name   string
		events []jsEvent
		want   []Sample
	}{{
		name: "initial state then motion",
		events: []jsEvent{
			{5000, -32767, JS_EVENT_INIT | JS_EVENT_AXIS, 0},
			{5000, 0, JS_EVENT_INIT | JS_EVENT_AXIS, 1}, // unmapped
			{5000, 12000, JS_EVENT_INIT | JS_EVENT_AXIS, 2},
			{5000, 0, JS_EVENT_INIT | JS_EVENT_BUTTON, 0}, // a button
			{5040, -30000, JS_EVENT_AXIS, 0},
			{5041, 1, JS_EVENT_BUTTON, 2},
			{5100, 32767, JS_EVENT_AXIS, 2},
		},
		want: []Sample{{0, 1, -32767}, {0, 2, 12000}, {40, 1, -30000}, {100, 2, 32767}},
	}, {
		name: "the millisecond clock wraps at 2³²",
		events: []jsEvent{
			{0xFFFF_FFF0, 1, JS_EVENT_AXIS, 0},
			{0x0000_0010, 2, JS_EVENT_AXIS, 0}, // 0x20 = 32 ms later
		},
		want: []Sample{{0, 1, 1}, {32, 1, 2}},
	}}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := readAll(NewJoystickReader(bytes.NewReader(jsStream(t, tc.events...)), axes))
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got, tc.want) {
				t.Errorf("samples\n got %v\nwant %v", got, tc.want)
			}
		})
	}
}

func TestJoystickReaderTruncated(t *testing.T) {
	data := jsStream(t, jsEvent{0, 5, JS_EVENT_AXIS, 0}, jsEvent{1, 6, JS_EVENT_AXIS, 0})
	r := NewJoystickReader(bytes.NewReader(data[:13]), map[uint8]int{0: 1})
	got, err := readAll(r)
	if !slices.Equal(got, []Sample{{0, 1, 5}}) {
		t.Errorf("got %v, want the whole record's sample", got)
	}
	if !errors.Is(err, io.ErrUnexpectedEOF) || !strings.Contains(err.Error(), "byte offset 8: 5 of 8 bytes") {
		t.Fatalf("error %v: want io.ErrUnexpectedEOF at byte offset 8", err)
	}
}

func TestJoystickWarning(t *testing.T) {
	w := NewJoystickReader(bytes.NewReader(nil), nil).Warning()
	for _, want := range []string{"rescales", "−32767..32767", "dead zone", "correction", "evdev"} {
		if !strings.Contains(w, want) {
			t.Errorf("warning %q does not say %q", w, want)
		}
	}
}
