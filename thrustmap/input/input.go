// Package input reads raw lever readings from recordings and live devices:
// CSV recordings (t_ms,lever,raw), Linux evdev event streams (struct
// input_event), the older Linux joystick interface (struct js_event),
// line-oriented serial boards printing "LEVER RAW", and game controllers
// through the Windows multimedia joystick interface. A System finds the
// devices there are (Scan) and opens them (Open), saying how to get access
// when the user may not read one (PermissionError).
//
// Every source is a Reader of Samples in order. Readers of text skip lines
// they cannot use and remember where (Skipped); readers of binary records
// stop at the first record they cannot read.
package input

import (
	"strconv"
	"unicode/utf8"
)

// Sample is one raw lever reading.
type Sample struct {
	TMs   int64   // milliseconds from the start of the recording or device
	Lever int     // lever id (calibration id)
	Raw   float64 // raw device count
}

// Reader yields samples in order; Next returns io.EOF at the end.
type Reader interface {
	Next() (Sample, error)
}

// Skipped is a line or record the reader could not use.
type Skipped struct {
	Line   int    `json:"line"`   // 1-based line (record index for binary input)
	Text   string `json:"text"`   // the line as read, shortened when long
	Reason string `json:"reason"` // what was wrong, and what was expected
}

// String prints "line N: reason: text".
func (s Skipped) String() string {
	return "line " + strconv.Itoa(s.Line) + ": " + s.Reason + ": " + strconv.Quote(s.Text)
}

// MaxSkipped is how many skipped lines a reader remembers; it counts them
// all.
const MaxSkipped = 100

// maxSkippedText is how many bytes of a skipped line are kept.
const maxSkippedText = 120

// skipLog remembers the first MaxSkipped skipped lines and counts them all,
// so memory stays bounded on a long bad file.
type skipLog struct {
	list  []Skipped
	count int
}

func (l *skipLog) add(line int, text, reason string) {
	l.count++
	if len(l.list) >= MaxSkipped {
		return
	}
	if len(text) > maxSkippedText {
		cut := maxSkippedText
		for cut > 0 && !utf8.RuneStart(text[cut]) {
			cut--
		}
		text = text[:cut] + "…"
	}
	l.list = append(l.list, Skipped{Line: line, Text: text, Reason: reason})
}

// skipped returns a copy of the remembered entries.
func (l *skipLog) skipped() []Skipped {
	return append([]Skipped(nil), l.list...)
}

// parseInt reads a plain decimal integer ("-12", "+7", "2048") without
// going through strconv, which allocates an error on failure; ok is false
// for anything else, including values that do not fit in 18 digits.
func parseInt[T string | []byte](s T) (v int64, ok bool) {
	neg := false
	if len(s) > 0 && (s[0] == '-' || s[0] == '+') {
		neg = s[0] == '-'
		s = s[1:]
	}
	if len(s) == 0 || len(s) > 18 {
		return 0, false
	}
	for i := 0; i < len(s); i++ {
		c := s[i] - '0'
		if c > 9 {
			return 0, false
		}
		v = v*10 + int64(c)
	}
	if neg {
		v = -v
	}
	return v, true
}

// parseNumber reads a finite decimal number: the integer fast path first,
// strconv for the rest.
func parseNumber(s string) (float64, bool) {
	if v, ok := parseInt(s); ok {
		return float64(v), true
	}
	if !looksNumeric(s) {
		return 0, false
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || v-v != 0 {
		return 0, false
	}
	return v, true
}

// parseWhole reads an integer of up to 64 bits.
func parseWhole(s string) (int64, bool) {
	if v, ok := parseInt(s); ok {
		return v, true
	}
	if !looksNumeric(s) {
		return 0, false
	}
	v, err := strconv.ParseInt(s, 10, 64)
	return v, err == nil
}

// looksNumeric rejects, without allocating, strings strconv would reject
// for holding no digit; strconv's own spellings of infinity and NaN are
// refused later as not finite.
func looksNumeric(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] >= '0' && s[i] <= '9' {
			return true
		}
	}
	return false
}
