package input

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// readAll drains r, returning the samples and the error that ended it (nil
// for io.EOF).
func readAll(r Reader) ([]Sample, error) {
	var out []Sample
	for {
		s, err := r.Next()
		if err == io.EOF {
			return out, nil
		}
		if err != nil {
			return out, err
		}
		out = append(out, s)
	}
}

// TestCSVReader reads hand-written recordings; the expected samples are the
// lines' own numbers, the expected skips the lines written to be bad.
func TestCSVReader(t *testing.T) {
	tests := []struct {
		name      string
		in        string
		want      []Sample
		skipLines []int // 1-based lines expected skipped
		reasons   []string
	}{{
		name: "plain",
		in:   "t_ms,lever,raw\n0,1,1218\n10,1,1220\n10,2,3021\n",
		want: []Sample{{0, 1, 1218}, {10, 1, 1220}, {10, 2, 3021}},
	}, {
		name: "columns in any order, others ignored, spaces and case",
		in:   "Raw, note ,LEVER,T_MS\n2048.5,start,1,5\n 2050 , x , 2 , 6 \n",
		want: []Sample{{5, 1, 2048.5}, {6, 2, 2050}},
	}, {
		name: "byte-order mark, CRLF, comments and blank lines",
		in:   "\uFEFFt_ms,lever,raw\r\n# lever 1 at idle\r\n\r\n0,1,1218\r\n\n# end\n",
		want: []Sample{{0, 1, 1218}},
	}, {
		name: "quoted fields",
		in:   "\"t_ms\",\"lever\",\"raw\"\n\"0\",\"1\",\"-3\"\n",
		want: []Sample{{0, 1, -3}},
	}, {
		name: "bad lines skipped with their line numbers",
		in: "t_ms,lever,raw\n" + // 1
			"0,1,100\n" + // 2
			"abc,1,100\n" + // 3: non-numeric time
			"5,1\n" + // 4: missing field
			"6,1,NaN\n" + // 5: not finite
			"7,1,+Inf\n" + // 6: not finite
			"8,1,1e999\n" + // 7: overflows to infinity
			"9,x,100\n" + // 8: non-numeric lever
			"9.5,1,100\n" + // 9: fractional time
			"20,1,110\n" + // 10
			"15,1,105\n" + // 11: back in time for lever 1
			"15,2,300\n" + // 12: lever 2's own clock
			"26,1,1.5e3\n", // 13
		want:      []Sample{{0, 1, 100}, {20, 1, 110}, {15, 2, 300}, {26, 1, 1500}},
		skipLines: []int{3, 4, 5, 6, 7, 8, 9, 11},
		reasons: []string{`t_ms "abc" is not a whole number`, "has 2 fields, want at least 3", `raw "NaN" is not a finite`,
			`raw "+Inf" is not a finite`, `raw "1e999" is not a finite`, `lever "x" is not a whole-number`,
			`t_ms "9.5" is not a whole number`, "t_ms 15 goes back from 20"},
	}, {
		name:      "a bare quote is skipped, reading goes on",
		in:        "t_ms,lever,raw\n1,1,2\"3\n2,1,4\n",
		want:      []Sample{{2, 1, 4}},
		skipLines: []int{2},
		reasons:   []string{"not CSV"},
	}}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := NewCSVReader(strings.NewReader(tc.in), "rec.csv")
			got, err := readAll(r)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got, tc.want) {
				t.Errorf("samples\n got %v\nwant %v", got, tc.want)
			}
			var lines []int
			for _, s := range r.Skipped() {
				lines = append(lines, s.Line)
			}
			if !slices.Equal(lines, tc.skipLines) {
				t.Errorf("skipped lines %v, want %v (%v)", lines, tc.skipLines, r.Skipped())
			}
			if r.SkippedCount() != len(tc.skipLines) {
				t.Errorf("SkippedCount %d, want %d", r.SkippedCount(), len(tc.skipLines))
			}
			for i, want := range tc.reasons {
				if i < len(r.Skipped()) && !strings.Contains(r.Skipped()[i].Reason, want) {
					t.Errorf("skip %d: reason %q, want it to contain %q", i, r.Skipped()[i].Reason, want)
				}
			}
		})
	}
}

// TestCSVReaderHeaderErrors: a missing or broken header is an error naming
// the file and the header's line.
func TestCSVReaderHeaderErrors(t *testing.T) {
	tests := []struct {
		name, in, want string
		line           int
	}{
		{"no raw column", "t_ms,lever,value\n0,1,2\n", `rec.csv:1: header "t_ms,lever,value" has no raw column`, 1},
		{"numbers instead of a header", "0,1,1218\n", "rec.csv:1: header \"0,1,1218\" has no t_ms column", 1},
		{"after comments", "# made by hand\n\nlever,raw\n", "rec.csv:3: header \"lever,raw\" has no t_ms column", 3},
		{"column twice", "t_ms,lever,raw,raw\n", "rec.csv:1: header names column raw twice (fields 3 and 4)", 1},
		{"empty", "", "rec.csv: no header", 0},
		{"only comments", "# nothing\n\n", "rec.csv: no header", 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := NewCSVReader(strings.NewReader(tc.in), "rec.csv")
			_, err := r.Next()
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want it to contain %q", err, tc.want)
			}
			var fe *thrustmap.FileError
			if !errors.As(err, &fe) || fe.Line != tc.line {
				t.Errorf("error %#v: want a FileError on line %d", err, tc.line)
			}
			if _, again := r.Next(); again != err {
				t.Errorf("second Next: %v, want the same error", again)
			}
		})
	}
}

// errReader fails after its data.
type errReader struct {
	data io.Reader
	err  error
}

func (e *errReader) Read(p []byte) (int, error) {
	n, err := e.data.Read(p)
	if err == io.EOF {
		return n, e.err
	}
	return n, err
}

func TestCSVReaderReadError(t *testing.T) {
	boom := errors.New("boom")
	r := NewCSVReader(&errReader{strings.NewReader("t_ms,lever,raw\n0,1,2\n"), boom}, "rec.csv")
	got, err := readAll(r)
	if len(got) != 1 || !errors.Is(err, boom) || !strings.HasPrefix(err.Error(), "rec.csv: ") {
		t.Fatalf("got %v, %v: want one sample then rec.csv: boom", got, err)
	}
}

// TestCSVReaderSkipCap: the reader keeps MaxSkipped entries and counts all.
func TestCSVReaderSkipCap(t *testing.T) {
	var b strings.Builder
	b.WriteString("t_ms,lever,raw\n")
	for i := range 250 {
		fmt.Fprintf(&b, "%d,1,bad\n", i)
	}
	b.WriteString("300,1,7\n")
	r := NewCSVReader(strings.NewReader(b.String()), "rec.csv")
	got, err := readAll(r)
	if err != nil || len(got) != 1 {
		t.Fatalf("got %v, %v", got, err)
	}
	if len(r.Skipped()) != MaxSkipped || r.SkippedCount() != 250 {
		t.Errorf("kept %d skips, counted %d: want %d and 250", len(r.Skipped()), r.SkippedCount(), MaxSkipped)
	}
	if r.Skipped()[0].Line != 2 || r.Skipped()[MaxSkipped-1].Line != MaxSkipped+1 {
		t.Errorf("kept lines %d..%d, want the first ones, 2..%d", r.Skipped()[0].Line, r.Skipped()[MaxSkipped-1].Line, MaxSkipped+1)
	}
}

// endless is an io.Reader of a header and then lines forever: a reader that
// tried to take in the whole file would never return.
type endless struct {
	n     int
	buf   []byte // unread part of store
	store []byte
}

func (e *endless) Read(p []byte) (int, error) {
	if len(e.buf) == 0 {
		if e.n == 0 {
			e.buf = []byte("t_ms,lever,raw\n")
		} else {
			b := strconv.AppendInt(e.store[:0], int64(e.n), 10)
			b = append(b, ',')
			b = strconv.AppendInt(b, int64(e.n%4+1), 10)
			b = append(b, ',')
			b = strconv.AppendInt(b, int64(1000+e.n%3000), 10)
			e.store = append(b, '\n')
			e.buf = e.store
		}
		e.n++
	}
	n := copy(p, e.buf)
	e.buf = e.buf[n:]
	return n, nil
}

// TestCSVReaderStreams reads a prefix of an endless recording, with a
// bounded number of allocations per line.
func TestCSVReaderStreams(t *testing.T) {
	r := NewCSVReader(&endless{}, "endless.csv")
	for i := range 1000 {
		s, err := r.Next()
		if err != nil || s.TMs != int64(i+1) {
			t.Fatalf("sample %d: %v, %v", i, s, err)
		}
	}
	// encoding/csv makes one string per record; the parsing adds nothing.
	allocs := testing.AllocsPerRun(2000, func() {
		if _, err := r.Next(); err != nil {
			t.Fatal(err)
		}
	})
	if allocs > 1 {
		t.Errorf("%.1f allocations per line, want at most 1", allocs)
	}
}

// benchRecording is n lines of a plain four-lever recording.
func benchRecording(n int) []byte {
	var b bytes.Buffer
	b.WriteString("t_ms,lever,raw\n")
	for i := range n {
		fmt.Fprintf(&b, "%d,%d,%d\n", i/4*5, i%4+1, 1000+(i*7)%3000)
	}
	return b.Bytes()
}

// BenchmarkCSVReader reads a plain recording; lines/s is the figure to
// watch (the goal is 2 million or more on one core).
func BenchmarkCSVReader(b *testing.B) {
	const lines = 100_000
	data := benchRecording(lines)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		r := NewCSVReader(bytes.NewReader(data), "bench.csv")
		n := 0
		for {
			_, err := r.Next()
			if err != nil {
				break
			}
			n++
		}
		if n != lines {
			b.Fatalf("read %d samples, want %d", n, lines)
		}
	}
	b.ReportMetric(float64(lines)*float64(b.N)/b.Elapsed().Seconds(), "lines/s")
}

// TestCSVHeaderOptional: a live source may start without its header, or
// with a line cut short before it.
func TestCSVHeaderOptional(t *testing.T) {
	tests := []struct {
		name, in string
		want     []Sample
		skipped  int
	}{
		{"no header", "0,1,1218\n5,1,1219\n5,2,3021\n", []Sample{{0, 1, 1218}, {5, 1, 1219}, {5, 2, 3021}}, 0},
		{"a header", "t_ms,lever,raw\n0,1,1218\n", []Sample{{0, 1, 1218}}, 0},
		{"a cut line, then the header", "18\nt_ms,lever,raw\n0,1,5\n", []Sample{{0, 1, 5}}, 1},
		{"a cut line, then data", "218\n0,1,5\n", []Sample{{0, 1, 5}}, 1},
		{"nothing", "", nil, 0},
	}
	for _, tc := range tests {
		r := NewCSVReader(strings.NewReader(tc.in), "board")
		r.HeaderOptional()
		got, err := readAll(r)
		if err != nil || !slices.Equal(got, tc.want) || r.SkippedCount() != tc.skipped {
			t.Errorf("%s: %v, %v, skipped %v", tc.name, got, err, r.Skipped())
		}
	}
	// Without it, a file must start with its header.
	if _, err := readAll(NewCSVReader(strings.NewReader("0,1,1218\n"), "rec.csv")); err == nil || !strings.Contains(err.Error(), "has no t_ms column") {
		t.Errorf("headerless file: %v", err)
	}
}
