package input

import (
	"bytes"
	"errors"
	"io"
	"math"
	"testing"
	"time"
)

// checkRecords drains a reader of binary records and fails on a
// non-finite sample, more samples than records, or an error other than
// io.EOF or a truncated last record.
func checkRecords(t *testing.T, r Reader, records int) {
	for n := 0; ; n++ {
		s, err := r.Next()
		if err == io.EOF || errors.Is(err, io.ErrUnexpectedEOF) {
			return
		}
		if err != nil {
			t.Fatalf("unexpected error %v", err)
		}
		if math.IsNaN(s.Raw) || math.IsInf(s.Raw, 0) {
			t.Fatalf("sample %d: raw %g is not finite", n, s.Raw)
		}
		if n >= records {
			t.Fatalf("more samples than the %d records", records)
		}
	}
}

// FuzzCSVReader: any input reads without panicking, yields only finite
// samples and keeps at most MaxSkipped skipped lines.
func FuzzCSVReader(f *testing.F) {
	f.Add([]byte("t_ms,lever,raw\n0,1,1218\n10,1,2588\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		r := NewCSVReader(bytes.NewReader(data), "fuzz.csv")
		last := map[int]int64{}
		for {
			s, err := r.Next()
			if err != nil {
				break
			}
			if math.IsNaN(s.Raw) || math.IsInf(s.Raw, 0) {
				t.Fatalf("raw %g is not finite", s.Raw)
			}
			if prev, ok := last[s.Lever]; ok && s.TMs < prev {
				t.Fatalf("lever %d goes back in time: %d after %d", s.Lever, s.TMs, prev)
			}
			last[s.Lever] = s.TMs
		}
		if len(r.Skipped()) > MaxSkipped || r.SkippedCount() < len(r.Skipped()) {
			t.Fatalf("kept %d skips, counted %d", len(r.Skipped()), r.SkippedCount())
		}
	})
}

// FuzzEvdevReader: any byte stream reads without panicking and yields only
// finite samples; the only error is a truncated last record.
func FuzzEvdevReader(f *testing.F) {
	f.Add(evdevStream(f, inputEvent{1, 0, EV_ABS, ABS_X, 1218}, inputEvent{1, 0, EV_SYN, SYN_REPORT, 0}))
	f.Fuzz(func(t *testing.T, data []byte) {
		r := NewEvdevReader(bytes.NewReader(data), map[uint16]int{ABS_X: 1, ABS_Y: 2, ABS_THROTTLE: 3})
		checkRecords(t, r, len(data)/EvdevRecordSize)
	})
}

// FuzzJoystickReader: as FuzzEvdevReader, for js_event records.
func FuzzJoystickReader(f *testing.F) {
	f.Add(jsStream(f, jsEvent{0, -32767, JS_EVENT_INIT | JS_EVENT_AXIS, 0}, jsEvent{10, 100, JS_EVENT_AXIS, 1}))
	f.Fuzz(func(t *testing.T, data []byte) {
		r := NewJoystickReader(bytes.NewReader(data), map[uint8]int{0: 1, 1: 2})
		checkRecords(t, r, len(data)/JoystickRecordSize)
	})
}

// FuzzLineReader: serial-style lines read without panicking.
func FuzzLineReader(f *testing.F) {
	f.Add([]byte("1 2048\n2 -5\nready\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		start := time.Unix(0, 0)
		r := NewLineReader(bytes.NewReader(data), "fuzz", start, func() time.Time { return start })
		for {
			s, err := r.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("unexpected error %v", err)
			}
			if math.IsNaN(s.Raw) || math.IsInf(s.Raw, 0) {
				t.Fatalf("raw %g is not finite", s.Raw)
			}
		}
		if len(r.Skipped()) > MaxSkipped {
			t.Fatalf("kept %d skips", len(r.Skipped()))
		}
	})
}
