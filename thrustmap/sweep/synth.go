package sweep

import (
	"math"
	"math/rand/v2"
	"slices"

	"github.com/thrustmap/thrustmap/thrustmap/input"
)

// SynthLever describes one invented lever for a synthetic sweep recording.
type SynthLever struct {
	ID int
	// Notches are the true raw counts at which the lever rests, end stops
	// included, in the order of increasing TLA (for an inverted lever the
	// counts fall).
	Notches    []float64
	NoiseSigma float64 // Gaussian noise on every reading, counts
	// Backlash, counts: the reading lags the lever by half of it in the
	// direction of travel, so a notch reads Backlash apart from either side.
	Backlash float64
	// Taper bends the travel between notches (0 = straight): the reading
	// follows position·(1 + Taper·(1 − position)) of each span.
	Taper float64
	// DeadSpots are raw ranges the track never reads: a reading that would
	// fall inside jumps to the far edge, as a worn pot track skips.
	DeadSpots [][2]float64
}

// SynthConfig describes a synthetic recording: every lever sampled at each
// tick, moved end to end Passes times, resting DwellMs in every notch.
type SynthConfig struct {
	Levers       []SynthLever
	SampleHz     float64 // readings per second per lever
	DwellMs      float64 // rest in each notch
	CountsPerSec float64 // travel speed between notches
	Passes       int     // end-to-end passes (1 = one way)
	Bits         int     // device resolution; readings are clamped to 0..2^Bits−1
	Seed         uint64
}

// Synthesize generates the recording described by cfg, deterministically
// for a given seed. It is for tests and demos: the data are invented.
func Synthesize(cfg SynthConfig) []input.Sample {
	var out []input.Sample
	cfg.Visit(func(s input.Sample) { out = append(out, s) })
	return out
}

// Visit generates the recording sample by sample without keeping it, in
// time order, levers interleaved at each tick.
func (cfg SynthConfig) Visit(fn func(input.Sample)) {
	rng := rand.New(rand.NewPCG(cfg.Seed, 0x7e57))
	dt := 1000 / cfg.SampleHz
	top := math.Exp2(float64(cfg.Bits)) - 1
	paths := make([][]segment, len(cfg.Levers))
	longest := 0.0
	for i, l := range cfg.Levers {
		paths[i] = l.path(cfg)
		if d := paths[i][len(paths[i])-1].end; d > longest {
			longest = d
		}
	}
	for t := 0.0; t <= longest; t += dt {
		for i, l := range cfg.Levers {
			pos, dir := at(paths[i], t)
			raw := pos - dir*l.Backlash/2
			raw = l.skipDead(raw, dir)
			raw += l.NoiseSigma * rng.NormFloat64()
			raw = math.Max(0, math.Min(top, math.Round(raw)))
			fn(input.Sample{TMs: int64(math.Round(t)), Lever: l.ID, Raw: raw})
		}
	}
}

// segment is a piece of a lever's scripted motion: from raw a to raw b
// between times start and end (a == b for a rest).
type segment struct {
	start, end float64
	a, b       float64
	taper      float64
	dir        float64 // +1 moving up in raw, −1 down, the last direction while resting
}

// path scripts the lever's motion: rest at the first end stop, then for each
// pass travel notch by notch to the other end, resting in each.
func (l SynthLever) path(cfg SynthConfig) []segment {
	stops := slices.Clone(l.Notches)
	var segs []segment
	t, dir := 0.0, 1.0
	rest := func(p float64) {
		segs = append(segs, segment{start: t, end: t + cfg.DwellMs, a: p, b: p, dir: dir})
		t += cfg.DwellMs
	}
	rest(stops[0])
	for pass := 0; pass < cfg.Passes; pass++ {
		for k := 1; k < len(stops); k++ {
			a, b := stops[k-1], stops[k]
			dir = math.Copysign(1, b-a)
			d := math.Abs(b-a) / cfg.CountsPerSec * 1000
			segs = append(segs, segment{start: t, end: t + d, a: a, b: b, taper: l.Taper, dir: dir})
			t += d
			rest(b)
		}
		slices.Reverse(stops)
	}
	return segs
}

// at returns the lever's true reading and direction of travel at time t.
func at(segs []segment, t float64) (pos, dir float64) {
	i, _ := slices.BinarySearchFunc(segs, t, func(s segment, t float64) int {
		switch {
		case s.end < t:
			return -1
		case s.start > t:
			return 1
		}
		return 0
	})
	if i >= len(segs) {
		i = len(segs) - 1
	}
	s := segs[i]
	if s.a == s.b || s.end == s.start {
		return s.a, s.dir
	}
	f := math.Max(0, math.Min(1, (t-s.start)/(s.end-s.start)))
	f *= 1 + s.taper*(1-f)
	return s.a + (s.b-s.a)*f, s.dir
}

// skipDead moves a reading out of a dead spot to its far edge in the
// direction of travel.
func (l SynthLever) skipDead(raw, dir float64) float64 {
	for _, d := range l.DeadSpots {
		if raw > d[0] && raw < d[1] {
			if dir > 0 {
				return d[1]
			}
			return d[0]
		}
	}
	return raw
}
