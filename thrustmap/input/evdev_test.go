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

// inputEvent is struct input_event on 64-bit Linux as laid out in
// Documentation/input/input.rst ("Event interface") and
// include/uapi/linux/input.h: struct timeval (s64 tv_sec, s64 tv_usec), u16
// type, u16 code, s32 value; 24 bytes, no padding.
type inputEvent struct {
	Sec, Usec  int64
	Type, Code uint16
	Value      int32
}

// evdevStream encodes events little-endian, as an x86-64 or arm64 kernel
// writes them.
func evdevStream(t testing.TB, events ...inputEvent) []byte {
	var b bytes.Buffer
	for _, e := range events {
		if err := binary.Write(&b, binary.LittleEndian, e); err != nil {
			t.Fatal(err)
		}
	}
	return b.Bytes()
}

func TestEvdevRecordSize(t *testing.T) {
	if n := binary.Size(inputEvent{}); n != EvdevRecordSize {
		t.Fatalf("struct input_event encodes to %d bytes, EvdevRecordSize is %d", n, EvdevRecordSize)
	}
}

// TestEvdevReader: EV_ABS events of mapped axes become samples, TMs counted
// from the first event; the expected values are the events' own.
func TestEvdevReader(t *testing.T) {
	axes := map[uint16]int{ABS_X: 1, ABS_THROTTLE: 2}
	tests := []struct {
		name   string
		events []inputEvent
		want   []Sample
	}{{
		name: "a report of two axes, times from the first event",
		events: []inputEvent{
			{100, 250_000, EV_ABS, ABS_X, 1218},
			{100, 250_000, EV_ABS, ABS_THROTTLE, 3021},
			{100, 250_000, EV_SYN, SYN_REPORT, 0},
			{100, 262_500, EV_ABS, ABS_X, 1230}, // 12.5 ms later: 12 ms
			{101, 250_000, EV_ABS, ABS_X, -5},   // 1 s later; negative counts are s32
			{101, 250_000, EV_SYN, SYN_REPORT, 0},
		},
		want: []Sample{{0, 1, 1218}, {0, 2, 3021}, {12, 1, 1230}, {1000, 1, -5}},
	}, {
		name: "keys, unmapped axes and other types ignored; the first event sets t=0",
		events: []inputEvent{
			{5, 0, EV_SYN, SYN_REPORT, 0},
			{5, 0, EV_KEY, 0x120, 1},       // a button (BTN_TRIGGER)
			{5, 1000, EV_ABS, ABS_Y, 77},   // unmapped axis
			{5, 2000, 0x04, 0x04, 123},     // EV_MSC MSC_SCAN
			{5, 3000, EV_ABS, ABS_X, 2588}, // 3 ms after the first event
			{5, 4000, EV_KEY, ABS_X, 999},  // code 0 of another type
		},
		want: []Sample{{3, 1, 2588}},
	}, {
		name: "SYN_DROPPED: events up to the next SYN_REPORT are dropped (event-codes.rst)",
		events: []inputEvent{
			{0, 0, EV_ABS, ABS_X, 10},
			{0, 0, EV_SYN, SYN_REPORT, 0},
			{0, 5000, EV_SYN, SYN_DROPPED, 0},
			{0, 6000, EV_ABS, ABS_X, 20}, // dropped
			{0, 7000, EV_SYN, SYN_REPORT, 0},
			{0, 8000, EV_ABS, ABS_X, 30},
		},
		want: []Sample{{0, 1, 10}, {8, 1, 30}},
	}, {
		name: "extreme values",
		events: []inputEvent{
			{0, 0, EV_ABS, ABS_X, -2147483648},
			{0, 1000, EV_ABS, ABS_X, 2147483647},
		},
		want: []Sample{{0, 1, -2147483648}, {1, 1, 2147483647}},
	}}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := readAll(NewEvdevReader(bytes.NewReader(evdevStream(t, tc.events...)), axes))
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got, tc.want) {
				t.Errorf("samples\n got %v\nwant %v", got, tc.want)
			}
		})
	}
}

func TestEvdevReaderDropped(t *testing.T) {
	r := NewEvdevReader(bytes.NewReader(evdevStream(t,
		inputEvent{0, 0, EV_SYN, SYN_DROPPED, 0}, inputEvent{0, 0, EV_SYN, SYN_REPORT, 0},
		inputEvent{0, 0, EV_SYN, SYN_DROPPED, 0})), map[uint16]int{ABS_X: 1})
	if _, err := readAll(r); err != nil {
		t.Fatal(err)
	}
	if r.Dropped() != 2 {
		t.Errorf("Dropped() = %d, want 2", r.Dropped())
	}
	if r.Ranges() != nil {
		t.Errorf("Ranges() = %v for a capture, want nil", r.Ranges())
	}
}

// TestEvdevReaderTruncated: a short last record is io.ErrUnexpectedEOF with
// the offset where the record starts (two whole records: 48 bytes).
func TestEvdevReaderTruncated(t *testing.T) {
	data := evdevStream(t, inputEvent{0, 0, EV_ABS, ABS_X, 1}, inputEvent{0, 1000, EV_ABS, ABS_X, 2},
		inputEvent{0, 2000, EV_ABS, ABS_X, 3})
	r := NewEvdevReader(bytes.NewReader(data[:len(data)-10]), map[uint16]int{ABS_X: 1})
	got, err := readAll(r)
	if len(got) != 2 {
		t.Errorf("got %v, want the two whole records' samples", got)
	}
	if !errors.Is(err, io.ErrUnexpectedEOF) || !strings.Contains(err.Error(), "byte offset 48: 14 of 24 bytes") {
		t.Fatalf("error %v: want io.ErrUnexpectedEOF at byte offset 48, 14 of 24 bytes", err)
	}
	if _, again := r.Next(); again != err {
		t.Errorf("Next after the error: %v, want the same error", again)
	}
}

// TestEvdevReader32: a 32-bit process reads 16-byte records, its timeval
// two 32-bit longs (include/uapi/linux/input.h, __kernel_ulong_t).
func TestEvdevReader32(t *testing.T) {
	type inputEvent32 struct {
		Sec, Usec  uint32
		Type, Code uint16
		Value      int32
	}
	var b bytes.Buffer
	for _, e := range []inputEvent32{{7, 0, EV_ABS, ABS_Y, 40}, {7, 500_000, EV_ABS, ABS_Y, 41}} {
		binary.Write(&b, binary.LittleEndian, e)
	}
	got, err := readAll(newEvdevReader(&b, map[uint16]int{ABS_Y: 3}, 16))
	if want := []Sample{{0, 3, 40}, {500, 3, 41}}; err != nil || !slices.Equal(got, want) {
		t.Fatalf("got %v, %v; want %v", got, err, want)
	}
}

func TestParseAbsCode(t *testing.T) {
	// Codes from include/uapi/linux/input-event-codes.h.
	tests := []struct {
		in   string
		want uint16
		ok   bool
	}{
		{"ABS_X", 0x00, true}, {"abs_throttle", 0x06, true}, {"rudder", 0x07, true}, {"RZ", 0x05, true},
		{"6", 6, true}, {"0x0a", 0x0a, true}, {"63", 0x3f, true},
		{"64", 0, false}, {"0x40", 0, false}, {"ABS_NOPE", 0, false}, {"", 0, false}, {"-1", 0, false},
	}
	for _, tc := range tests {
		got, err := ParseAbsCode(tc.in)
		if (err == nil) != tc.ok || got != tc.want {
			t.Errorf("ParseAbsCode(%q) = %d, %v; want %d, ok %v", tc.in, got, err, tc.want, tc.ok)
		}
	}
	if AbsName(ABS_THROTTLE) != "ABS_THROTTLE" || AbsName(0x3e) != "0x3e" {
		t.Errorf("AbsName: %s, %s", AbsName(ABS_THROTTLE), AbsName(0x3e))
	}
}
