package sweep

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// Names of the end stops in a result when no notch gate sits there.
const (
	AftStop     = thrustmap.AftStop
	ForwardStop = thrustmap.ForwardStop
)

// Orientation says which way a lever's raw counts run.
type Orientation int

// The orientations.
const (
	AutoOrientation Orientation = iota // decide from the recording
	Forward                            // raw rises with TLA
	Inverted                           // raw falls as TLA rises
)

// CalOptions tune how a scan becomes a calibration.
type CalOptions struct {
	// RawMin and RawMax are the device's range, when known (HasRange).
	RawMin, RawMax float64
	HasRange       bool
	Fit            grid.Method
	Orientation    Orientation
}

// Notch is a rest position matched to a gate with a notch or an end stop.
type Notch struct {
	Gate       string
	TLADeg     float64
	Raw        float64 // midpoint of the two directions of approach when both were seen
	Sigma      float64 // noise of the readings at the notch, counts
	DwellMs    int64   // time spent resting here
	Backlash   float64 // counts between the two directions; NaN when one was seen
	Directions int     // directions of approach seen: 1 or 2
}

// Result is a lever's sweep analysis matched to a profile.
type Result struct {
	Scan     Scan
	Inverted bool
	Notches  []Notch // in TLA order
	// BacklashCounts is the median backlash over the notches approached
	// from both sides (0 when none was).
	BacklashCounts float64
	Warnings       []string
	Spec           thrustmap.LeverSpec // the calibration
}

// ErrNotchCount is wrapped when the rest positions found do not match the
// profile's notches and end stops.
var ErrNotchCount = errors.New("notch count mismatch")

// cluster is the dwells at one rest position.
type cluster struct {
	dwells []Dwell
	raw    float64
}

// Calibrate matches a lever's scan to the profile's notches and end stops
// and builds its calibration. The notch positions come from the dwells
// clustered by position; with backlash a notch is the midpoint of the means
// from either direction. The noise σ sets the calibration's floors:
//
//   - deadband = ⌈3σ⌉ counts: a resting reading stays within 3σ of its mean
//     99.7 % of the time (Gaussian noise), so a held reading rarely moves;
//   - min_capture_deg = 4σ in degrees at the steepest span, so noise alone
//     cannot carry a lever resting at a gate out of its zone;
//   - min_hysteresis_deg = 3σ in degrees at the steepest span, so a lever
//     resting on a zone edge does not chatter.
//
// These multiples of σ are common practice, not a standard.
func Calibrate(p *thrustmap.Profile, sc Scan, o CalOptions) (Result, error) {
	res := Result{Scan: sc}
	if len(sc.Dwells) == 0 {
		return res, fmt.Errorf("lever %d: no rest found in %d samples: rest the lever at each end stop and in each notch for at least a quarter second", sc.Lever, sc.Samples)
	}
	sigma := sc.NoiseSigma
	clusters := restClusters(sc)
	want := p.NotchPositions()
	if len(clusters) == 1 && len(want) > 1 {
		return res, fmt.Errorf("%w: lever %d rested at one place only (raw %.0f) and travelled %g counts (raw %g to %g): move it from end stop to end stop, resting at each end and in each notch",
			ErrNotchCount, sc.Lever, clusters[0].raw, sc.RawMaxSeen-sc.RawMinSeen, sc.RawMinSeen, sc.RawMaxSeen)
	}
	if len(clusters) != len(want) {
		found := make([]string, len(clusters))
		for i, c := range clusters {
			found[i] = fmt.Sprintf("%.0f", c.raw)
		}
		names := make([]string, len(want))
		for i, w := range want {
			names[i] = w.Name
		}
		return res, fmt.Errorf("%w: lever %d rested at %d places (raw %s) but profile %s expects %d (%s)",
			ErrNotchCount, sc.Lever, len(clusters), strings.Join(found, ", "), p.Source(), len(want), strings.Join(names, ", "))
	}

	// Orientation: the raw order that fits the TLAs best, unless told.
	raws := make([]float64, len(clusters))
	for i, c := range clusters {
		raws[i] = c.raw
	}
	inverted := o.Orientation == Inverted
	if o.Orientation == AutoOrientation {
		fwd, inv := fitResidual(raws, want, false), fitResidual(raws, want, true)
		inverted = inv < fwd
		if math.Abs(fwd-inv) < 0.05*math.Max(fwd, inv) || len(want) < 3 {
			// The spacing cannot tell: take the end the recording started at
			// as the aft stop.
			first := nearest(clusters, sc.Dwells[0].Raw)
			inverted = first == len(clusters)-1
			res.Warnings = append(res.Warnings, fmt.Sprintf(
				"the notch spacing does not show which way the lever runs; took the end the recording started at (raw %.0f) as the aft stop: give the orientation if that is wrong", clusters[first].raw))
		}
	}
	res.Inverted = inverted

	var backlashes []float64
	for i, c := range clusters {
		w := want[i]
		if inverted {
			w = want[len(want)-1-i]
		}
		n := notchOf(c)
		n.Gate, n.TLADeg = w.Name, w.TLADeg
		inner := i > 0 && i < len(clusters)-1
		switch {
		case n.Directions == 2 && inner:
			backlashes = append(backlashes, n.Backlash)
		case inner:
			res.Warnings = append(res.Warnings, fmt.Sprintf("notch %s (raw %.0f) was approached from one side only: its backlash is unknown", n.Gate, n.Raw))
		}
		res.Notches = append(res.Notches, n)
	}
	slices.SortFunc(res.Notches, func(a, b Notch) int { return cmp.Compare(a.TLADeg, b.TLADeg) })
	if len(backlashes) > 0 {
		slices.Sort(backlashes)
		res.BacklashCounts = backlashes[len(backlashes)/2]
	}
	res.Warnings = append(res.Warnings, passWarnings(sc, clusters, sigma)...)
	if sc.JumpCount > 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("%d jump(s) in the readings larger than noise and motion explain: a dead or scratchy spot on the track (see jumps)", sc.JumpCount))
	}

	spec, warn, err := buildSpec(sc, res.Notches, sigma, o)
	if err != nil {
		return res, err
	}
	if warn != "" {
		res.Warnings = append(res.Warnings, warn)
	}
	res.Spec = spec
	return res, nil
}

// restClusters groups a scan's dwells into rest positions: dwells within
// 12 noise σ (at least 30 counts) of each other are one position.
func restClusters(sc Scan) []cluster {
	return clusterDwells(sc.Dwells, math.Max(12*sc.NoiseSigma, 30))
}

// clusterDwells groups dwells whose positions lie within gap of each other.
func clusterDwells(dwells []Dwell, gap float64) []cluster {
	sorted := slices.Clone(dwells)
	slices.SortFunc(sorted, func(a, b Dwell) int { return cmp.Compare(a.Raw, b.Raw) })
	var out []cluster
	for _, d := range sorted {
		if n := len(out); n > 0 && d.Raw-out[n-1].dwells[len(out[n-1].dwells)-1].Raw <= gap {
			out[n-1].dwells = append(out[n-1].dwells, d)
			continue
		}
		out = append(out, cluster{dwells: []Dwell{d}})
	}
	for i := range out {
		var w, s float64
		for _, d := range out[i].dwells {
			w += float64(d.N)
			s += float64(d.N) * d.Raw
		}
		out[i].raw = s / w
	}
	return out
}

// notchOf merges a cluster's dwells: sample-weighted means per direction of
// approach, and their midpoint.
func notchOf(c cluster) Notch {
	var n Notch
	var sum, cnt [3]float64 // by direction −1, 0, +1
	var ss, dof float64
	for _, d := range c.dwells {
		k := d.Dir + 1
		sum[k] += float64(d.N) * d.Raw
		cnt[k] += float64(d.N)
		ss += d.Sigma * d.Sigma * float64(d.N-1)
		dof += float64(d.N - 1)
		n.DwellMs += d.EndMs - d.StartMs
	}
	if dof > 0 {
		n.Sigma = math.Sqrt(ss / dof)
	}
	n.Backlash = math.NaN()
	if cnt[0] > 0 && cnt[2] > 0 {
		down, up := sum[0]/cnt[0], sum[2]/cnt[2]
		n.Raw, n.Backlash, n.Directions = (down+up)/2, math.Abs(down-up), 2
		return n
	}
	n.Raw, n.Directions = c.raw, 1
	return n
}

// fitResidual is the RMS residual of a straight line through (raw, TLA)
// pairs, as a fraction of the TLA range, for one orientation.
func fitResidual(raws []float64, want []thrustmap.NotchPosition, inverted bool) float64 {
	n := float64(len(raws))
	var sx, sy, sxx, sxy float64
	ys := make([]float64, len(raws))
	for i, x := range raws {
		y := want[i].TLADeg
		if inverted {
			y = want[len(want)-1-i].TLADeg
		}
		ys[i] = y
		sx, sy, sxx, sxy = sx+x, sy+y, sxx+x*x, sxy+x*y
	}
	slope := (n*sxy - sx*sy) / (n*sxx - sx*sx)
	icpt := (sy - slope*sx) / n
	var ss float64
	for i, x := range raws {
		r := ys[i] - (icpt + slope*x)
		ss += r * r
	}
	span := math.Abs(want[len(want)-1].TLADeg - want[0].TLADeg)
	return math.Sqrt(ss/n) / span
}

func nearest(clusters []cluster, raw float64) int {
	best := 0
	for i, c := range clusters {
		if math.Abs(c.raw-raw) < math.Abs(clusters[best].raw-raw) {
			best = i
		}
	}
	return best
}

// passWarnings checks the order of the rests in time: every pass should run
// from one end stop to the other, and the lever should rest at each end it
// reaches.
func passWarnings(sc Scan, clusters []cluster, sigma float64) []string {
	var warns []string
	last := len(clusters) - 1
	seq := make([]int, 0, len(sc.Dwells))
	byTime := slices.Clone(sc.Dwells)
	slices.SortFunc(byTime, func(a, b Dwell) int { return int(a.StartMs - b.StartMs) })
	for _, d := range byTime {
		k := nearest(clusters, d.Raw)
		if len(seq) == 0 || seq[len(seq)-1] != k {
			seq = append(seq, k)
		}
	}
	for i := 1; i+1 < len(seq); i++ {
		turn := (seq[i]-seq[i-1])*(seq[i+1]-seq[i]) < 0
		if turn && seq[i] != 0 && seq[i] != last {
			warns = append(warns, fmt.Sprintf("a pass turned back at raw %.0f without reaching the end stop", clusters[seq[i]].raw))
		}
	}
	margin := 6*sigma + 10
	if sc.RawMinSeen < clusters[0].raw-margin {
		warns = append(warns, fmt.Sprintf("the lever went to raw %.0f, beyond its lowest rest (raw %.0f), without resting there: rest at each end stop", sc.RawMinSeen, clusters[0].raw))
	}
	if sc.RawMaxSeen > clusters[last].raw+margin {
		warns = append(warns, fmt.Sprintf("the lever went to raw %.0f, beyond its highest rest (raw %.0f), without resting there: rest at each end stop", sc.RawMaxSeen, clusters[last].raw))
	}
	return warns
}

// buildSpec writes the calibration: the notches as points, the device
// range, and the floors from the noise (see Calibrate).
func buildSpec(sc Scan, notches []Notch, sigma float64, o CalOptions) (thrustmap.LeverSpec, string, error) {
	spec := thrustmap.LeverSpec{ID: sc.Lever, Fit: o.Fit, RawMin: o.RawMin, RawMax: o.RawMax}
	warn := ""
	if !o.HasRange {
		spec.RawMin, spec.RawMax = guessRange(sc.RawMinSeen, sc.RawMaxSeen)
		warn = fmt.Sprintf("the device range was not given: took %.0f to %.0f from the readings", spec.RawMin, spec.RawMax)
	}
	steepest := 0.0
	for i, n := range notches {
		spec.Points = append(spec.Points, [2]float64{math.Round(n.Raw*10) / 10, n.TLADeg})
		if i > 0 {
			steepest = math.Max(steepest, math.Abs(n.TLADeg-notches[i-1].TLADeg)/math.Abs(n.Raw-notches[i-1].Raw))
		}
	}
	spec.NoiseSigma = math.Round(sigma*100) / 100
	spec.Deadband = math.Ceil(3 * sigma)
	spec.MinCaptureDeg = math.Round(4*sigma*steepest*1000) / 1000
	spec.MinHysteresisDeg = math.Round(3*sigma*steepest*1000) / 1000
	if _, err := thrustmap.NewLeverCalibration(spec); err != nil {
		return spec, warn, fmt.Errorf("the notches found do not make a calibration: %w", err)
	}
	return spec, warn, nil
}

// guessRange takes the smallest power-of-two device range holding the
// readings: 0..2ⁿ−1, or ±(2ⁿ−1) when readings are negative (the joystick
// interface's −32767..32767).
func guessRange(lo, hi float64) (float64, float64) {
	m := math.Max(math.Abs(lo), math.Abs(hi))
	bits := math.Max(8, math.Ceil(math.Log2(m+1)))
	top := math.Exp2(bits) - 1
	if lo < 0 {
		return -top, top
	}
	return 0, top
}
