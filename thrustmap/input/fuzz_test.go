package input

import (
	"bytes"
	"errors"
	"io"
	"math"
	"testing"
	"time"
	"unicode/utf8"
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
		checkCSV(t, NewCSVReader(bytes.NewReader(data), "fuzz.csv"))
		live := NewCSVReader(bytes.NewReader(data), "fuzz.csv")
		live.HeaderOptional()
		checkCSV(t, live)
	})
}

// checkCSV drains a CSV reader: finite samples, each lever in time order,
// at most MaxSkipped skips kept.
func checkCSV(t *testing.T, r *CSVReader) {
	{
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
	}
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

// FuzzParseAxis: any text parses or is refused without panicking, for
// every format; what parses reads back through AxisName.
func FuzzParseAxis(f *testing.F) {
	f.Add(uint8(0), "ABS_THROTTLE")
	f.Add(uint8(2), "z")
	f.Fuzz(func(t *testing.T, which uint8, s string) {
		formats := []string{FormatEvdev, FormatJoystick, FormatJoy, FormatSerial, FormatCSV, "usb"}
		format := formats[int(which)%len(formats)]
		code, err := ParseAxis(format, s)
		if err != nil {
			return
		}
		if again, err := ParseAxis(format, AxisName(format, code)); err != nil || again != code {
			t.Fatalf("%s %q: code %d, read back as %d, %v", format, s, code, again, err)
		}
	})
}

// FuzzParseJoyID: joy:N names parse to 0..15 or are refused.
func FuzzParseJoyID(f *testing.F) {
	f.Add("joy:0")
	f.Fuzz(func(t *testing.T, s string) {
		id, ok, err := ParseJoyID(s)
		if err == nil && ok && (id < 0 || id >= MaxControllers) {
			t.Fatalf("%q: id %d", s, id)
		}
		if !ok && err != nil {
			t.Fatalf("%q: not a joy: name, yet an error %v", s, err)
		}
	})
}

// FuzzParseAbsCapabilities: any text gives axis codes in order, each at
// most ABS_MAX and once, or an error.
func FuzzParseAbsCapabilities(f *testing.F) {
	f.Add("30063")
	f.Fuzz(func(t *testing.T, s string) {
		codes, err := ParseAbsCapabilities(s)
		if err != nil {
			return
		}
		for i, c := range codes {
			if c > ABS_MAX || (i > 0 && c <= codes[i-1]) {
				t.Fatalf("%q: codes %v", s, codes)
			}
		}
	})
}

// FuzzDecodeJoyCaps: any 728 bytes decode to a controller with X and Y and
// at most six axes, each named.
func FuzzDecodeJoyCaps(f *testing.F) {
	f.Add(make([]byte, joyCapsSize))
	f.Fuzz(func(t *testing.T, data []byte) {
		b := make([]byte, joyCapsSize)
		copy(b, data)
		c, err := decodeJoyCaps(b)
		if err != nil {
			t.Fatal(err)
		}
		if len(c.Axes) < 2 || len(c.Axes) > JoyAxes || c.Axes[0].Name() != "X" || c.Axes[1].Name() != "Y" {
			t.Fatalf("axes %+v", c.Axes)
		}
		if !utf8.ValidString(c.Name) {
			t.Fatalf("name %q", c.Name)
		}
	})
}
