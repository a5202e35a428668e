// Package sweep finds a lever's notches in a recording of it being moved end
// to end and rested in each notch, and writes the calibration that puts the
// profile's gates on them (docs/methods.md, Sweep analysis).
//
// The analysis streams: each lever keeps a fixed window of recent samples,
// histograms for its noise estimate and the dwell segments it has found, so
// memory does not grow with the length of the recording.
package sweep

import (
	"math"
	"slices"

	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// window is the number of recent samples a lever keeps to tell rest from
// motion: the means of its older and newer halves agree while the lever
// rests.
const window = 32

// Options tune the analysis; the zero value takes the defaults.
type Options struct {
	// MinDwellMs is the shortest rest that counts as a dwell (default 250).
	MinDwellMs int64
	// MaxJumps caps the jumps kept per lever (default 200); the count goes on.
	MaxJumps int
}

func (o Options) withDefaults() Options {
	if o.MinDwellMs <= 0 {
		o.MinDwellMs = 250
	}
	if o.MaxJumps <= 0 {
		o.MaxJumps = 200
	}
	return o
}

// Dwell is a stretch of time in which the lever rested.
type Dwell struct {
	StartMs, EndMs int64
	N              int64   // samples
	Raw            float64 // trimmed mean reading
	Sigma          float64 // noise of the readings about it, counts
	// Dir is the direction of travel that brought the lever here: +1 up in
	// raw, −1 down, 0 unknown (the recording started here).
	Dir int
}

// Jump is a step between consecutive readings far larger than noise and
// motion explain: a dead or scratchy spot on the track.
type Jump struct {
	From, To float64
	TMs      int64
}

// Analyzer takes samples of any number of levers, in time order per lever.
type Analyzer struct {
	opts   Options
	levers []*leverScan
}

// NewAnalyzer returns an analyzer with options o.
func NewAnalyzer(o Options) *Analyzer { return &Analyzer{opts: o.withDefaults()} }

// Add takes one sample. It allocates only when a lever is first seen, a
// dwell ends or a jump is found.
func (a *Analyzer) Add(s input.Sample) {
	a.lever(s.Lever).add(s, &a.opts)
}

func (a *Analyzer) lever(id int) *leverScan {
	for _, l := range a.levers {
		if l.id == id {
			return l
		}
	}
	l := &leverScan{id: id, minSeen: math.Inf(1), maxSeen: math.Inf(-1)}
	a.levers = append(a.levers, l)
	return l
}

// Levers returns the ids of the levers seen, in order of appearance.
func (a *Analyzer) Levers() []int {
	ids := make([]int, len(a.levers))
	for i, l := range a.levers {
		ids[i] = l.id
	}
	return ids
}

// Scan is what the analysis saw of one lever.
type Scan struct {
	Lever            int
	Samples          int64
	RawMinSeen       float64
	RawMaxSeen       float64
	Dwells           []Dwell
	Jumps            []Jump
	JumpCount        int     // all jumps, kept or not
	NoiseSigma       float64 // pooled noise of the dwells, counts
	MotionNoiseSigma float64 // noise estimated from second differences over the whole recording
}

// Scan finishes the lever's analysis (closing a dwell still open) and
// returns it; ok is false for a lever never seen.
func (a *Analyzer) Scan(lever int) (Scan, bool) {
	for _, l := range a.levers {
		if l.id == lever {
			l.finish(&a.opts)
			return l.scan(), true
		}
	}
	return Scan{}, false
}

// Progress is what the analysis has seen of one lever so far, for a live
// view while a sweep is being recorded. Taking it does not end the lever's
// analysis: samples may go on being added.
type Progress struct {
	Lever      int
	Samples    int64
	Raw        float64 // the latest reading
	RawMinSeen float64
	RawMaxSeen float64
	Resting    bool // the lever rests now
	// Rests are the rest positions found so far, in raw order: the dwells
	// (the one going on included, once it is long enough to count)
	// clustered as Calibrate clusters them.
	Rests []float64
}

// Progress returns lever's progress so far; ok is false for a lever never
// seen. It allocates, so call it to redraw a view, not for every sample.
func (a *Analyzer) Progress(lever int) (p Progress, ok bool) {
	for _, l := range a.levers {
		if l.id != lever {
			continue
		}
		sc := l.scan()
		if l.resting && !l.finished {
			open := l.cur // a copy: finishing it leaves the dwell open
			if d, ok := open.finish(&a.opts, l.sigma()); ok {
				sc.Dwells = append(sc.Dwells, d)
			}
		}
		p = Progress{Lever: l.id, Samples: l.n, Raw: l.prev[1], RawMinSeen: l.minSeen, RawMaxSeen: l.maxSeen, Resting: l.resting}
		for _, c := range restClusters(sc) {
			p.Rests = append(p.Rests, c.raw)
		}
		return p, true
	}
	return Progress{}, false
}

// leverScan is the streaming state of one lever.
type leverScan struct {
	id               int
	n                int64
	minSeen, maxSeen float64

	// The last window samples, ring-buffered, with the sums of the older
	// and newer halves.
	ring     [window]input.Sample
	head     int // index of the oldest sample
	size     int
	sumOld   float64
	sumNew   float64
	resting  bool
	lastDir  int // direction of the last motion seen
	prev     [2]float64
	nPrev    int
	d2Hist   hist // |second differences|, for the noise during motion
	sigmaEst float64

	cur      dwellAcc
	dwells   []Dwell
	jumps    []Jump
	jumpSeen int
	finished bool
}

// hist is a histogram of non-negative values in bins of a quarter count,
// for medians in constant memory.
type hist struct {
	bins [1024]int64
	n    int64
}

func (h *hist) add(v float64) {
	b := int(v * 4)
	if b >= len(h.bins) {
		b = len(h.bins) - 1
	}
	h.bins[b]++
	h.n++
}

// median returns the histogram's median, 0 when empty.
func (h *hist) median() float64 {
	half, run := (h.n+1)/2, int64(0)
	for b, c := range h.bins {
		run += c
		if run >= half && c > 0 {
			return (float64(b) + 0.5) / 4
		}
	}
	return 0
}

func (l *leverScan) add(s input.Sample, o *Options) {
	x := s.Raw
	l.n++
	l.minSeen, l.maxSeen = math.Min(l.minSeen, x), math.Max(l.maxSeen, x)

	// Noise from second differences: they cancel steady motion, and for
	// white noise of σ their spread is σ·√6.
	if l.nPrev == 2 {
		l.d2Hist.add(math.Abs(x - 2*l.prev[1] + l.prev[0]))
		// Re-estimate at 16, 32, 64, 128 samples, then every 256.
		if n := l.d2Hist.n; (n >= 16 && n&(n-1) == 0) || n&255 == 0 {
			l.sigmaEst = 1.4826 * l.d2Hist.median() / math.Sqrt(6)
		}
	}
	if l.nPrev >= 1 {
		l.checkJump(s, o)
	}
	l.prev[0], l.prev[1] = l.prev[1], x
	l.nPrev = min(l.nPrev+1, 2)

	if l.size < window {
		l.ring[(l.head+l.size)%window] = s
		l.size++
		if l.size <= window/2 {
			l.sumOld += x
		} else {
			l.sumNew += x
		}
		return
	}
	// Slide: the oldest leaves, the middle moves from newer to older half.
	oldest := l.ring[l.head]
	mid := l.ring[(l.head+window/2)%window].Raw
	l.ring[l.head] = s
	l.head = (l.head + 1) % window
	l.sumOld += mid - oldest.Raw
	l.sumNew += x - mid

	trend := (l.sumNew - l.sumOld) / (window / 2)
	// The half means of a resting lever differ by noise alone, with a
	// spread of σ·2/√window: a rest begins within four of those (and a
	// quarter count) and ends beyond six, so noise cannot toggle it.
	spread := l.sigma() * 2 / math.Sqrt(window)
	rest := math.Abs(trend) <= 4*spread+0.25
	if l.resting {
		rest = math.Abs(trend) <= 6*spread+0.25
	}
	switch {
	case rest && !l.resting:
		l.cur.start(oldest, l.lastDir)
	case !rest:
		if l.resting {
			l.closeDwell(o)
		}
		if trend > 0 {
			l.lastDir = 1
		} else {
			l.lastDir = -1
		}
	}
	l.resting = rest
	if rest {
		l.cur.add(oldest)
	}
}

// sigma is the running noise estimate; 2 counts until 16 samples are in.
func (l *leverScan) sigma() float64 {
	if l.d2Hist.n < 16 {
		return 2
	}
	return l.sigmaEst
}

// checkJump records a step between consecutive readings that departs from
// the recent motion by more than six noise σ of a difference (σ·√2) plus
// three counts: far beyond noise, so a dead or scratchy spot.
func (l *leverScan) checkJump(s input.Sample, o *Options) {
	step := s.Raw - l.prev[1]
	expected := 0.0
	if l.size == window {
		expected = (l.sumNew - l.sumOld) / (window / 2) / (window / 2)
	}
	if math.Abs(step-expected) <= 6*math.Sqrt2*l.sigma()+3 {
		return
	}
	l.jumpSeen++
	if len(l.jumps) < o.MaxJumps {
		l.jumps = append(l.jumps, Jump{From: l.prev[1], To: s.Raw, TMs: s.TMs})
	}
}

func (l *leverScan) closeDwell(o *Options) {
	if d, ok := l.cur.finish(o, l.sigma()); ok {
		l.dwells = append(l.dwells, d)
	}
}

func (l *leverScan) finish(o *Options) {
	if l.finished {
		return
	}
	l.finished = true
	if l.resting {
		// The samples still in the window rested too.
		for i := 0; i < l.size; i++ {
			l.cur.add(l.ring[(l.head+i)%window])
		}
		l.closeDwell(o)
		l.resting = false
	}
}

func (l *leverScan) scan() Scan {
	s := Scan{Lever: l.id, Samples: l.n, RawMinSeen: l.minSeen, RawMaxSeen: l.maxSeen,
		Dwells: slices.Clone(l.dwells), Jumps: slices.Clone(l.jumps), JumpCount: l.jumpSeen,
		MotionNoiseSigma: 1.4826 * l.d2Hist.median() / math.Sqrt(6)}
	var ss, dof float64
	for _, d := range l.dwells {
		ss += d.Sigma * d.Sigma * float64(d.N-1)
		dof += float64(d.N - 1)
	}
	if dof > 0 {
		s.NoiseSigma = math.Sqrt(ss / dof)
	} else {
		s.NoiseSigma = s.MotionNoiseSigma
	}
	return s
}

// dwellAcc gathers one dwell's readings in a histogram around its first
// reading, so its trimmed mean costs constant memory.
type dwellAcc struct {
	open        bool
	base        float64
	startMs     int64
	endMs       int64
	dir         int
	bins        [512]int32 // readings base−256 … base+255, rounded
	n           int64
	outside     int64
	first, last int
}

func (d *dwellAcc) start(s input.Sample, dir int) {
	if d.open {
		return
	}
	*d = dwellAcc{open: true, base: math.Round(s.Raw), startMs: s.TMs, dir: dir, first: len(d.bins), last: -1}
}

func (d *dwellAcc) add(s input.Sample) {
	if !d.open {
		return
	}
	d.endMs = s.TMs
	b := int(math.Round(s.Raw-d.base)) + len(d.bins)/2
	if b < 0 || b >= len(d.bins) {
		d.outside++
		return
	}
	d.bins[b]++
	d.n++
	d.first, d.last = min(d.first, b), max(d.last, b)
}

// finish closes the dwell: its median, then the mean and σ of the readings
// within four noise σ (at least three counts) of it. A dwell shorter than
// MinDwellMs or 16 samples is dropped.
func (d *dwellAcc) finish(o *Options, sigma float64) (Dwell, bool) {
	if !d.open {
		return Dwell{}, false
	}
	d.open = false
	if d.n < 16 || d.endMs-d.startMs < o.MinDwellMs {
		return Dwell{}, false
	}
	half, run, med := (d.n+1)/2, int64(0), d.first
	for b := d.first; b <= d.last; b++ {
		run += int64(d.bins[b])
		if run >= half {
			med = b
			break
		}
	}
	r := int(math.Ceil(math.Max(4*sigma, 3)))
	var n, sum, sum2 float64
	for b := max(d.first, med-r); b <= min(d.last, med+r); b++ {
		c := float64(d.bins[b])
		v := float64(b - len(d.bins)/2)
		n += c
		sum += c * v
		sum2 += c * v * v
	}
	mean := sum / n
	sd := 0.0
	if n > 1 {
		sd = math.Sqrt(math.Max(0, (sum2-n*mean*mean)/(n-1)))
	}
	return Dwell{StartMs: d.startMs, EndMs: d.endMs, N: int64(n), Raw: d.base + mean, Sigma: sd, Dir: d.dir}, true
}
