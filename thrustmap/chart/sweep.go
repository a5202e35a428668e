package chart

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// MaxTracePoints is the most points a sweep chart's trace of raw over time
// draws: a longer recording is reduced to the lowest and highest reading in
// each of MaxTracePoints/2 equal spans of time, which keeps every excursion
// (a jump, a spike) visible.
const MaxTracePoints = 4000

// histogramBins is about how many bins the histogram of raw counts has;
// bins are whole counts wide.
const histogramBins = 240

// Colours of the sweep chart.
var (
	traceColor = rgb(0x5b, 0x84, 0xd6)
	dwellColor = rgb(0xc2, 0x41, 0x1b)
	notchColor = rgb(0x2e, 0x8b, 0x3e)
	jumpColor  = rgb(0x7b, 0x3f, 0xa0)
)

// Sweep charts one lever of a sweep recording in two panels: raw counts over
// time with the rests (dwells) the analysis found drawn as thick segments
// at their mean reading and any jumps marked; and a histogram of the raw
// counts with the notches marked by vertical lines. With res (the scan
// matched to a profile by sweep.Calibrate) the lines are the notches, named
// by their gates; without it they are the rests' readings, unnamed.
// samples may hold other levers: only scan.Lever's are drawn.
func Sweep(samples []input.Sample, scan sweep.Scan, res *sweep.Result) (*Chart, error) {
	var trace plotter.XYs
	var raws []float64
	for _, s := range samples {
		if s.Lever != scan.Lever || !finite(s.Raw) {
			continue
		}
		trace = append(trace, plotter.XY{X: float64(s.TMs) / 1000, Y: s.Raw})
		raws = append(raws, s.Raw)
	}
	if len(trace) == 0 {
		return nil, fmt.Errorf("sweep chart: no samples of lever %d", scan.Lever)
	}
	top, topLeg, err := tracePanel(trace, scan)
	if err != nil {
		return nil, fmt.Errorf("sweep chart, lever %d: %w", scan.Lever, err)
	}
	bottom, bottomLeg, err := histogramPanel(raws, scan, res)
	if err != nil {
		return nil, fmt.Errorf("sweep chart, lever %d: %w", scan.Lever, err)
	}
	return newChart(9, 8.5, Panel{Plot: top, Legend: topLeg}, Panel{Plot: bottom, Legend: bottomLeg}), nil
}

// tracePanel plots raw over time with the dwells and jumps.
func tracePanel(trace plotter.XYs, scan sweep.Scan) (*plot.Plot, plot.Legend, error) {
	leg := newLegend()
	title := fmt.Sprintf("Lever %d sweep: %d samples, %d rests, noise σ %.2f counts", scan.Lever, len(trace), len(scan.Dwells), scan.NoiseSigma)
	pl := newPlot(title, "time (s)", "raw (counts)")
	ln, err := line(decimate(trace, MaxTracePoints), traceColor, 0.8)
	if err != nil {
		return nil, leg, err
	}
	pl.Add(ln)
	leg.Add("raw reading", ln)
	for i, d := range scan.Dwells {
		if !finite(d.Raw) {
			continue
		}
		seg, err := line(plotter.XYs{{X: float64(d.StartMs) / 1000, Y: d.Raw}, {X: float64(d.EndMs) / 1000, Y: d.Raw}}, dwellColor, 4)
		if err != nil {
			return nil, leg, err
		}
		pl.Add(seg)
		if i == 0 {
			leg.Add("rest found", seg)
		}
	}
	if len(scan.Jumps) > 0 {
		var at plotter.XYs
		for _, j := range scan.Jumps {
			at = append(at, plotter.XY{X: float64(j.TMs) / 1000, Y: j.To})
		}
		sc, err := plotter.NewScatter(at)
		if err != nil {
			return nil, leg, err
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: jumpColor, Radius: vg.Points(4), Shape: draw.CrossGlyph{}}
		pl.Add(sc)
		leg.Add("jump", sc)
	}
	return pl, leg, nil
}

// histogramPanel plots the distribution of raw counts with the notches.
func histogramPanel(raws []float64, scan sweep.Scan, res *sweep.Result) (*plot.Plot, plot.Legend, error) {
	leg := newLegend()
	lo, hi := slices.Min(raws), slices.Max(raws)
	width := math.Max(1, math.Ceil((hi-lo)/histogramBins))
	lo = math.Floor(lo)
	n := int((hi-lo)/width) + 1
	bins := make([]plotter.HistogramBin, n)
	for i := range bins {
		bins[i].Min = lo + float64(i)*width
		bins[i].Max = bins[i].Min + width
	}
	for _, r := range raws {
		i := min(int((r-lo)/width), n-1)
		bins[i].Weight++
	}
	peak := 0.0
	for _, b := range bins {
		peak = math.Max(peak, b.Weight)
	}
	h := &plotter.Histogram{Bins: bins, Width: width, FillColor: tint(traceColor, 160)}
	h.LineStyle.Width = 0
	title := fmt.Sprintf("Lever %d: raw counts, %g-count bins", scan.Lever, width)
	if res != nil {
		dir := "forward"
		if res.Inverted {
			dir = "inverted"
		}
		title = fmt.Sprintf("Lever %d: raw counts, %g-count bins; %d notches matched, %s, backlash %.1f counts", scan.Lever, width, len(res.Notches), dir, res.BacklashCounts)
	}
	pl := newPlot(title, "raw (counts)", "samples")
	pl.Add(h)
	leg.Add("samples per bin", h)
	pl.Y.Min, pl.Y.Max = 0, peak*1.3

	// The notch lines: the matched notches by gate, or the rests.
	type mark struct {
		raw  float64
		name string
	}
	var marks []mark
	if res != nil {
		for _, nt := range res.Notches {
			marks = append(marks, mark{nt.Raw, nt.Gate})
		}
	} else {
		for _, d := range scan.Dwells {
			marks = append(marks, mark{raw: d.Raw})
		}
	}
	var at plotter.XYs
	var names []string
	for i, mk := range marks {
		if !finite(mk.raw) {
			continue
		}
		ln, err := line(plotter.XYs{{X: mk.raw, Y: 0}, {X: mk.raw, Y: peak * 1.12}}, notchColor, 1.2)
		if err != nil {
			return nil, leg, err
		}
		ln.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
		pl.Add(ln)
		if i == 0 {
			if res != nil {
				leg.Add("notch (gate)", ln)
			} else {
				leg.Add("rest reading", ln)
			}
		}
		if mk.name != "" {
			at = append(at, plotter.XY{X: mk.raw, Y: peak * 1.13})
			names = append(names, mk.name)
		}
	}
	if len(names) > 0 {
		lb, err := labels(at, names, 9, math.Pi/2, text.XLeft, text.YCenter)
		if err != nil {
			return nil, leg, err
		}
		pl.Add(lb)
		pl.Y.Max = peak * 1.6
	}
	return pl, leg, nil
}

// decimate reduces a trace sorted by time to at most limit points (limit ≥ 4):
// its first and last points, and the lowest and highest reading of each
// equal span of time between, in time order.
func decimate(xys plotter.XYs, limit int) plotter.XYs {
	if len(xys) <= limit {
		return xys
	}
	spans := (limit - 2) / 2
	last := len(xys) - 1
	t0, t1 := xys[0].X, xys[last].X
	out := make(plotter.XYs, 0, limit)
	out = append(out, xys[0])
	k := 1
	for s := 0; s < spans && k < last; s++ {
		end := t0 + (t1-t0)*float64(s+1)/float64(spans)
		lo, hi, j := k, k, k
		for ; j < last && (xys[j].X <= end || s == spans-1); j++ {
			if xys[j].Y < xys[lo].Y {
				lo = j
			}
			if xys[j].Y > xys[hi].Y {
				hi = j
			}
		}
		if j == k { // an empty span
			continue
		}
		out = append(out, xys[min(lo, hi)])
		if hi != lo {
			out = append(out, xys[max(lo, hi)])
		}
		k = j
	}
	return append(out, xys[last])
}
