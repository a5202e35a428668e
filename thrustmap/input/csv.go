package input

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// CSV column names of a recording (docs/recordings.md, CSV recordings).
const (
	ColTime  = "t_ms"
	ColLever = "lever"
	ColRaw   = "raw"
)

// CSVReader reads a CSV recording with a header naming the columns t_ms,
// lever and raw (in any order, other columns ignored). Lines it cannot use
// are skipped and remembered; blank lines and lines starting with '#' are
// ignored. It streams: memory does not grow with the file.
type CSVReader struct {
	name    string
	cr      *csv.Reader
	started bool
	err     error         // sticky: the header error, the read error or io.EOF
	col     [3]int        // field index of t_ms, lever, raw
	need    int           // fields a line needs: the largest index + 1
	last    map[int]int64 // the last time of each lever
	skips   skipLog
	// optional: a first line of data, not a header, is taken as
	// t_ms,lever,raw in that order (HeaderOptional); pending holds it.
	optional bool
	pending  []string
}

// HeaderOptional lets the source start without a header: when its first
// line is three numbers and names no column, the columns are taken to be
// t_ms, lever and raw in that order, and the line is read as data. It is
// for live sources (a board printing lines on a serial port), whose header
// may have gone by before anyone listened.
func (r *CSVReader) HeaderOptional() { r.optional = true }

// NewCSVReader returns a reader of the CSV recording r; name (the file's
// path) is used in errors. Nothing is read until the first Next.
func NewCSVReader(r io.Reader, name string) *CSVReader {
	cr := csv.NewReader(r)
	cr.ReuseRecord = true
	cr.FieldsPerRecord = -1
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	return &CSVReader{name: name, cr: cr, last: make(map[int]int64)}
}

// Next returns the next usable sample, io.EOF at the end, or an error for a
// missing or bad header (naming the file and line) or a failed read.
func (r *CSVReader) Next() (Sample, error) {
	if r.err != nil {
		return Sample{}, r.err
	}
	if !r.started {
		r.started = true
		if err := r.header(); err != nil {
			r.err = err
			return Sample{}, err
		}
	}
	if r.pending != nil {
		rec := r.pending
		r.pending = nil
		if s, ok := r.sample(rec); ok {
			return s, nil
		}
	}
	for {
		rec, err := r.cr.Read()
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				r.skips.add(pe.StartLine, "", "not CSV: "+pe.Err.Error())
				continue
			}
			if err == io.EOF {
				r.err = io.EOF
			} else {
				r.err = fmt.Errorf("%s: %w", r.name, err)
			}
			return Sample{}, r.err
		}
		if s, ok := r.sample(rec); ok {
			return s, nil
		}
	}
}

// sample reads one data record, or skips it with the reason.
func (r *CSVReader) sample(rec []string) (Sample, bool) {
	line, _ := r.cr.FieldPos(0)
	if len(rec) < r.need {
		r.skip(line, rec, fmt.Sprintf("has %d fields, want at least %d (the header's t_ms, lever and raw)", len(rec), r.need))
		return Sample{}, false
	}
	ts := strings.TrimSpace(rec[r.col[0]])
	t, ok := parseWhole(ts)
	if !ok {
		r.skip(line, rec, fmt.Sprintf("t_ms %q is not a whole number of milliseconds", ts))
		return Sample{}, false
	}
	ls := strings.TrimSpace(rec[r.col[1]])
	lever, ok := parseWhole(ls)
	if !ok || lever != int64(int(lever)) {
		r.skip(line, rec, fmt.Sprintf("lever %q is not a whole-number lever id", ls))
		return Sample{}, false
	}
	rs := strings.TrimSpace(rec[r.col[2]])
	raw, ok := parseNumber(rs)
	if !ok {
		r.skip(line, rec, fmt.Sprintf("raw %q is not a finite number", rs))
		return Sample{}, false
	}
	if prev, seen := r.last[int(lever)]; seen && t < prev {
		r.skip(line, rec, fmt.Sprintf("t_ms %d goes back from %d, lever %d's previous time", t, prev, lever))
		return Sample{}, false
	}
	r.last[int(lever)] = t
	return Sample{TMs: t, Lever: int(lever), Raw: raw}, true
}

func (r *CSVReader) skip(line int, rec []string, reason string) {
	r.skips.add(line, strings.Join(rec, ","), reason)
}

// header reads the first record and finds the columns by name. With
// HeaderOptional, a first line of data stands for the header t_ms,lever,raw,
// and lines that are neither are skipped until one is.
func (r *CSVReader) header() error {
	want := "want a first line naming the columns t_ms, lever and raw"
	for {
		rec, err := r.cr.Read()
		if err != nil {
			var pe *csv.ParseError
			switch {
			case err == io.EOF && r.optional:
				return io.EOF
			case err == io.EOF:
				return &thrustmap.FileError{File: r.name, Err: fmt.Errorf("no header: %s", want)}
			case errors.As(err, &pe) && r.optional:
				r.skips.add(pe.StartLine, "", "not CSV: "+pe.Err.Error())
				continue
			case errors.As(err, &pe):
				return &thrustmap.FileError{File: r.name, Line: pe.StartLine, Err: fmt.Errorf("header is not CSV (%v): %s", pe.Err, want)}
			default:
				return fmt.Errorf("%s: %w", r.name, err)
			}
		}
		line, _ := r.cr.FieldPos(0)
		if r.optional && looksLikeData(rec) {
			r.col, r.need = [3]int{0, 1, 2}, 3
			r.pending = append([]string(nil), rec...)
			return nil
		}
		err = r.columns(rec, line, want)
		if err != nil && r.optional {
			r.skip(line, rec, "neither a header naming t_ms, lever and raw nor a line t_ms,lever,raw")
			continue
		}
		return err
	}
}

// columns finds the columns t_ms, lever and raw in a header.
func (r *CSVReader) columns(rec []string, line int, want string) error {
	r.col = [3]int{-1, -1, -1}
	names := [3]string{ColTime, ColLever, ColRaw}
	for i, f := range rec {
		f = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(f, "\uFEFF")))
		for k, n := range names {
			if f != n {
				continue
			}
			if r.col[k] >= 0 {
				return &thrustmap.FileError{File: r.name, Line: line, Err: fmt.Errorf("header names column %s twice (fields %d and %d)", n, r.col[k]+1, i+1)}
			}
			r.col[k] = i
		}
	}
	for k, n := range names {
		if r.col[k] < 0 {
			return &thrustmap.FileError{File: r.name, Line: line, Err: fmt.Errorf("header %q has no %s column: %s", strings.Join(rec, ","), n, want)}
		}
		r.need = max(r.need, r.col[k]+1)
	}
	return nil
}

// Skipped returns the first MaxSkipped lines that were skipped, in order.
func (r *CSVReader) Skipped() []Skipped { return r.skips.skipped() }

// SkippedCount returns how many lines were skipped in all.
func (r *CSVReader) SkippedCount() int { return r.skips.count }

// Name returns the name given to NewCSVReader.
func (r *CSVReader) Name() string { return r.name }

// looksLikeData reports whether a first line is three or more fields that
// start with whole numbers, rather than a header.
func looksLikeData(rec []string) bool {
	if len(rec) < 3 {
		return false
	}
	for _, f := range rec[:2] {
		if _, ok := parseWhole(strings.TrimSpace(f)); !ok {
			return false
		}
	}
	return true
}
