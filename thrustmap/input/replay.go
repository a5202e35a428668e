package input

import (
	"fmt"
	"io"
	"sync"
	"time"
)

// Paced yields the samples of a recording at their own timing, sped up by a
// factor: a sample comes (TMs − the first sample's TMs) / speed after the
// first came, so a recording replays as if it were live. Close, from any
// goroutine, ends a wait: Next then returns io.EOF.
type Paced struct {
	r       Reader
	speed   float64
	now     func() time.Time
	wait    func(time.Duration) bool // false when closed first
	started bool
	t0      int64
	start   time.Time
	done    chan struct{}
	once    sync.Once
}

// NewPaced paces r at speed (1 is real time, 10 ten times faster).
func NewPaced(r Reader, speed float64) (*Paced, error) {
	if !(speed > 0) || speed-speed != 0 {
		return nil, fmt.Errorf("speed %g: want a positive factor (1 is real time)", speed)
	}
	p := &Paced{r: r, speed: speed, now: time.Now, done: make(chan struct{})}
	p.wait = p.timerWait
	return p, nil
}

// Next returns the next sample when its time has come.
func (p *Paced) Next() (Sample, error) {
	s, err := p.r.Next()
	if err != nil {
		return s, err
	}
	if !p.started {
		p.started, p.t0, p.start = true, s.TMs, p.now()
		return s, nil
	}
	due := p.start.Add(time.Duration(float64(s.TMs-p.t0) / p.speed * float64(time.Millisecond)))
	if d := due.Sub(p.now()); d > 0 && !p.wait(d) {
		return Sample{}, io.EOF
	}
	return s, nil
}

// Close ends a wait in progress and any later one.
func (p *Paced) Close() error {
	p.once.Do(func() { close(p.done) })
	return nil
}

func (p *Paced) timerWait(d time.Duration) bool {
	t := time.NewTimer(d)
	defer t.Stop()
	select {
	case <-t.C:
		return true
	case <-p.done:
		return false
	}
}
