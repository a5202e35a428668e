package input

import (
	"io"
	"slices"
	"testing"
	"time"
)

// TestPaced: at speed 10 a recording of 0, 100 and 250 ms waits 10 ms for
// the second sample and 15 ms more for the third ((250 − 100) / 10); a
// sample already due waits not at all; Close ends a wait.
func TestPaced(t *testing.T) {
	src := &sliceReader{samples: []Sample{{0, 1, 1}, {100, 1, 2}, {250, 1, 3}, {250, 2, 4}}}
	p, err := NewPaced(src, 10)
	if err != nil {
		t.Fatal(err)
	}
	now := time.Unix(0, 0)
	var waits []time.Duration
	p.now = func() time.Time { return now }
	p.wait = func(d time.Duration) bool { waits = append(waits, d); now = now.Add(d); return true }
	got, err := readAll(p)
	if err != nil || !slices.Equal(got, src.samples) {
		t.Fatalf("samples %v, %v", got, err)
	}
	if want := []time.Duration{10 * time.Millisecond, 15 * time.Millisecond}; !slices.Equal(waits, want) {
		t.Errorf("waits %v, want %v", waits, want)
	}

	p, _ = NewPaced(&sliceReader{samples: []Sample{{0, 1, 1}, {1_000_000, 1, 2}}}, 1)
	if _, err := p.Next(); err != nil {
		t.Fatal(err)
	}
	go func() { time.Sleep(10 * time.Millisecond); p.Close() }()
	if _, err := p.Next(); err != io.EOF {
		t.Errorf("after Close: %v, want io.EOF", err)
	}
	for _, bad := range []float64{0, -1} {
		if _, err := NewPaced(src, bad); err == nil {
			t.Errorf("speed %g accepted", bad)
		}
	}
}

type sliceReader struct {
	samples []Sample
	i       int
}

func (r *sliceReader) Next() (Sample, error) {
	if r.i >= len(r.samples) {
		return Sample{}, io.EOF
	}
	r.i++
	return r.samples[r.i-1], nil
}
