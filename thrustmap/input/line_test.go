package input

import (
	"errors"
	"io"
	"slices"
	"strings"
	"testing"
	"time"
)

// fakeClock advances 10 ms at each reading.
func fakeClock(start time.Time) func() time.Time {
	t := start
	return func() time.Time {
		t = t.Add(10 * time.Millisecond)
		return t
	}
}

// TestLineReader: "LEVER RAW" lines stamped by the clock; bad lines skipped
// with their line numbers.
func TestLineReader(t *testing.T) {
	start := time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC)
	in := "1 2048\r\n" + // 1
		"2\t-17\n" + // 2
		"\n" + // 3: blank
		"# board ready\n" + // 4: comment
		"ready\n" + // 5: bad
		"1 2048 9\n" + // 6: three fields
		"1 20.5\n" + // 7: not an integer
		strings.Repeat("9", 300) + " 1\n" + // 8: too long
		"  3   4095  \n" + // 9
		"1 1218" // 10: no final newline
	r := NewLineReader(strings.NewReader(in), "board", start, fakeClock(start))
	got, err := readAll(r)
	if err != nil {
		t.Fatal(err)
	}
	want := []Sample{{10, 1, 2048}, {20, 2, -17}, {30, 3, 4095}, {40, 1, 1218}}
	if !slices.Equal(got, want) {
		t.Errorf("samples\n got %v\nwant %v", got, want)
	}
	var lines []int
	for _, s := range r.Skipped() {
		lines = append(lines, s.Line)
	}
	if want := []int{5, 6, 7, 8}; !slices.Equal(lines, want) || r.SkippedCount() != 4 {
		t.Errorf("skipped %v (count %d), want lines %v", r.Skipped(), r.SkippedCount(), want)
	}
	if s := r.Skipped()[3]; !strings.Contains(s.Reason, "longer than") || len(s.Text) > maxSkippedText+len("…") {
		t.Errorf("long line skipped as %+v", s)
	}
}

func TestLineReaderError(t *testing.T) {
	boom := errors.New("port closed")
	r := NewLineReader(&errReader{strings.NewReader("1 5\n"), boom}, "/dev/ttyUSB0", time.Now(), nil)
	got, err := readAll(r)
	if len(got) != 1 || !errors.Is(err, boom) || !strings.HasPrefix(err.Error(), "/dev/ttyUSB0: ") {
		t.Fatalf("got %v, %v", got, err)
	}
	if _, err := NewLineReader(strings.NewReader(""), "x", time.Now(), nil).Next(); err != io.EOF {
		t.Errorf("empty input: %v, want io.EOF", err)
	}
}

// TestLineForms: the separators LineForms lists; anything else is skipped.
func TestLineForms(t *testing.T) {
	start := time.Unix(0, 0)
	good := []string{"1 2048", "1\t2048", "1,2048", "1, 2048", "1:2048", "1: 2048", "1 = 2048", "1;2048", "  1   2048  "}
	bad := []string{"1,,2048", "1, 2048, 3", ",2048", "1 2048 3", "1:", "1 : : 2048", "a,b", "1/2048"}
	for _, line := range good {
		r := NewLineReader(strings.NewReader(line+"\n"), "board", start, fakeClock(start))
		got, err := readAll(r)
		if err != nil || len(got) != 1 || got[0].Lever != 1 || got[0].Raw != 2048 {
			t.Errorf("%q: %v, %v", line, got, err)
		}
	}
	for _, line := range bad {
		r := NewLineReader(strings.NewReader(line+"\n"), "board", start, fakeClock(start))
		if got, _ := readAll(r); len(got) != 0 || r.SkippedCount() != 1 {
			t.Errorf("%q read as %v", line, got)
		}
	}
}
