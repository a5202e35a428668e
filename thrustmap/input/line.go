package input

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"time"
)

// maxLine is the longest line a LineReader takes; longer lines are skipped.
const maxLine = 256

// LineReader reads text lines "LEVER RAW" (two integers separated by
// spaces, as a microcontroller board on a serial port might print "1 2048";
// or by a comma, colon, semicolon or "=", see LineForms) and stamps each
// sample with the time it was read. Lines it
// cannot use are skipped and remembered; blank lines and lines starting with
// '#' are ignored.
type LineReader struct {
	name  string
	br    *bufio.Reader
	start time.Time
	now   func() time.Time
	line  int
	skips skipLog
	err   error
}

// NewLineReader returns a reader of "LEVER RAW" lines from r; name is used
// in errors, TMs is now() − start in milliseconds (time.Now when now is
// nil).
func NewLineReader(r io.Reader, name string, start time.Time, now func() time.Time) *LineReader {
	if now == nil {
		now = time.Now
	}
	return &LineReader{name: name, br: bufio.NewReaderSize(r, maxLine), start: start, now: now}
}

// Next returns the next usable sample, io.EOF at the end of the stream, or
// the read error.
func (r *LineReader) Next() (Sample, error) {
	if r.err != nil {
		return Sample{}, r.err
	}
	for {
		b, err := r.br.ReadSlice('\n')
		long := ""
		if errors.Is(err, bufio.ErrBufferFull) {
			long = string(b)                          // b is overwritten by the next read
			for errors.Is(err, bufio.ErrBufferFull) { // drop the rest of the line
				_, err = r.br.ReadSlice('\n')
			}
		}
		if len(b) == 0 && long == "" && err != nil {
			r.fail(err)
			return Sample{}, r.err
		}
		r.line++
		if long != "" {
			r.skips.add(r.line, long, fmt.Sprintf("longer than %d bytes: want LEVER RAW", maxLine))
		} else if s, ok := r.parse(b); ok {
			return s, nil
		}
		if err != nil {
			r.fail(err)
			return Sample{}, r.err
		}
	}
}

func (r *LineReader) fail(err error) {
	if err == io.EOF {
		r.err = io.EOF
	} else {
		r.err = fmt.Errorf("%s: %w", r.name, err)
	}
}

// LineForms describes the lines a LineReader accepts, for messages.
const LineForms = `"LEVER RAW": two whole numbers, the lever id and the raw count, separated by spaces, a comma, a colon, a semicolon or "=" ("1 2048", "1,2048", "1: 2048"); blank lines and lines starting with # are ignored`

// lineSeps are the separators of LEVER and RAW other than spaces.
const lineSeps = ",:;="

// parse reads one line, or skips it with the reason.
func (r *LineReader) parse(b []byte) (Sample, bool) {
	b = bytes.TrimSpace(b)
	if len(b) == 0 || b[0] == '#' {
		return Sample{}, false
	}
	first, second, ok := splitLine(b)
	if !ok {
		r.skips.add(r.line, string(b), "want two whole numbers: LEVER RAW")
		return Sample{}, false
	}
	lever, ok1 := parseInt(first)
	raw, ok2 := parseInt(second)
	if !ok1 || !ok2 || lever != int64(int(lever)) {
		r.skips.add(r.line, string(b), "want two whole numbers: LEVER RAW")
		return Sample{}, false
	}
	return Sample{TMs: r.now().Sub(r.start).Milliseconds(), Lever: int(lever), Raw: float64(raw)}, true
}

// splitLine cuts a trimmed line into two fields separated by spaces or
// tabs, or by one of lineSeps with optional spaces around it.
func splitLine(b []byte) (first, second []byte, ok bool) {
	i := bytes.IndexAny(b, " \t"+lineSeps)
	if i <= 0 {
		return nil, nil, false
	}
	first, rest := b[:i], bytes.TrimLeft(b[i:], " \t")
	if len(rest) > 0 && bytes.IndexByte([]byte(lineSeps), rest[0]) >= 0 {
		rest = bytes.TrimLeft(rest[1:], " \t")
	}
	if len(rest) == 0 || bytes.ContainsAny(rest, " \t"+lineSeps) {
		return nil, nil, false
	}
	return first, rest, true
}

// Skipped returns the first MaxSkipped lines that were skipped, in order.
func (r *LineReader) Skipped() []Skipped { return r.skips.skipped() }

// SkippedCount returns how many lines were skipped in all.
func (r *LineReader) SkippedCount() int { return r.skips.count }
