package chart

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// leverSamples is how many raw counts and lever angles a lever chart's lines
// are evaluated at, besides the calibration points and zone edges.
const leverSamples = 800

// Colours of the lever chart's areas.
var (
	zoneColor    = rgb(0x3a, 0x6e, 0xc8)
	reverseColor = rgb(0xe0, 0x7a, 0x1f)
	offColor     = rgb(0x99, 0x99, 0x99)
)

// Lever charts lever id lever of model m in two panels: the calibration,
// raw counts → TLA, with the calibration points marked (dashed where the
// reading is held beyond the end points); and the command against TLA at
// conditions c, from m.CommandAtTLA with the lever's own gate zones, the
// capture zones and hysteresis bands shaded and named, gates switched off
// at c shaded grey, and the reverse range shaded and labelled "reverse".
func Lever(m *thrustmap.Model, lever int, c thrustmap.Conditions) (*Chart, error) {
	if m == nil {
		return nil, fmt.Errorf("lever chart: no model")
	}
	cal := m.Calibration()
	if cal == nil {
		return nil, fmt.Errorf("lever chart: the model of profile %s has no calibration", m.Profile().Source())
	}
	l := cal.Lever(lever)
	if l == nil {
		ids := make([]string, 0, len(cal.Levers()))
		for _, x := range cal.Levers() {
			ids = append(ids, strconv.Itoa(x.ID()))
		}
		return nil, fmt.Errorf("lever chart: calibration %s has no lever %d (levers: %s)", cal.Source(), lever, strings.Join(ids, ", "))
	}
	top, topLeg, err := calibrationPanel(l)
	if err != nil {
		return nil, fmt.Errorf("lever chart, lever %d: %w", lever, err)
	}
	bottom, bottomLeg, err := commandPanel(m, l, c)
	if err != nil {
		return nil, fmt.Errorf("lever chart, lever %d: %w", lever, err)
	}
	return newChart(8, 9, Panel{Plot: top, Legend: topLeg}, Panel{Plot: bottom, Legend: bottomLeg}), nil
}

// calibrationPanel plots raw → TLA over the device range.
func calibrationPanel(l *thrustmap.LeverCalibration) (*plot.Plot, plot.Legend, error) {
	spec := l.Spec()
	pl := newPlot(fmt.Sprintf("Lever %d calibration (%s fit, %d points, deadband %g counts)", spec.ID, spec.Fit, len(spec.Points), spec.Deadband),
		"raw (counts)", "TLA (°)")
	leg := newLegend()
	raws := make([]float64, 0, leverSamples+len(spec.Points)+1)
	for i := 0; i <= leverSamples; i++ {
		raws = append(raws, spec.RawMin+(spec.RawMax-spec.RawMin)*float64(i)/leverSamples)
	}
	pts := make(plotter.XYs, len(spec.Points))
	for i, p := range spec.Points {
		raws = append(raws, p[0])
		pts[i] = plotter.XY{X: p[0], Y: p[1]}
	}
	slices.Sort(raws)
	raws = slices.Compact(raws)
	curve := make(plotter.XYs, len(raws))
	held := make([]bool, len(raws))
	for i, raw := range raws {
		tla, cl := l.TLA(raw)
		curve[i] = plotter.XY{X: raw, Y: tla}
		held[i] = cl&thrustmap.ClampRaw != 0
	}
	col := seriesColor(0)
	anyHeld := false
	for _, r := range runs(held) {
		ln, err := line(curve[r.from:r.to+1], col, 1.5)
		if err != nil {
			return nil, leg, err
		}
		if r.clamped {
			ln.Dashes = dashes
			anyHeld = true
		}
		pl.Add(ln)
	}
	thumb, _ := line(plotter.XYs{{}, {X: 1}}, col, 1.5)
	leg.Add("raw → TLA", thumb)
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return nil, leg, err
	}
	sc.GlyphStyle = draw.GlyphStyle{Color: seriesColor(1), Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}
	pl.Add(sc)
	leg.Add("calibration point", sc)
	if anyHeld {
		th, _ := line(plotter.XYs{{}, {X: 1}}, col, 1.5)
		th.Dashes = dashes
		leg.Add("held beyond the points", th)
	}
	pl.X.Min, pl.X.Max = spec.RawMin, spec.RawMax
	return pl, leg, nil
}

// commandPanel plots the command against TLA at conditions c with the
// lever's gate zones.
func commandPanel(m *thrustmap.Model, l *thrustmap.LeverCalibration, c thrustmap.Conditions) (*plot.Plot, plot.Legend, error) {
	p := m.Profile()
	gates := p.Gates()
	id := l.ID()
	lo, hi := tlaRange(p, l)

	// Zone edges are sampled exactly so the plateaus are drawn square.
	tlas := make([]float64, 0, leverSamples+4*len(gates)+1)
	for i := 0; i <= leverSamples; i++ {
		tlas = append(tlas, lo+(hi-lo)*float64(i)/leverSamples)
	}
	type zone struct{ capture, hysteresis float64 }
	zones := make([]zone, len(gates))
	for i, g := range gates {
		capt, hyst, err := m.EffectiveZone(id, i)
		if err != nil {
			return nil, plot.Legend{}, err
		}
		zones[i] = zone{capt, hyst}
		for _, t := range []float64{g.TLADeg - capt, g.TLADeg + capt} {
			if t > lo && t < hi {
				tlas = append(tlas, t)
			}
		}
	}
	slices.Sort(tlas)
	tlas = slices.Compact(tlas)

	var st thrustmap.LeverState
	curve := make(plotter.XYs, len(tlas))
	ymin, ymax := math.Inf(1), math.Inf(-1)
	for i, t := range tlas {
		cmd, err := m.CommandAtTLA(&st, id, t, c)
		if err != nil {
			return nil, plot.Legend{}, err
		}
		curve[i] = plotter.XY{X: t, Y: cmd.Value}
		ymin, ymax = math.Min(ymin, cmd.Value), math.Max(ymax, cmd.Value)
	}
	// A gate is on at c when the lever standing on it reports it.
	on := make([]bool, len(gates))
	for i, g := range gates {
		var fresh thrustmap.LeverState
		cmd, err := m.CommandAtTLA(&fresh, id, g.TLADeg, c)
		if err != nil {
			return nil, plot.Legend{}, err
		}
		on[i] = cmd.Gate == i
	}

	span := ymax - ymin
	if span < 1e-9 {
		span = math.Max(1, math.Abs(ymax)*0.1)
	}
	yLo, yHi := ymin-0.08*span, ymax+0.32*span
	pl := newPlot(commandTitle(m, id, c), "TLA (°)", ParameterLabel(p.Parameter()))
	pl.X.Min, pl.X.Max = lo, hi
	pl.Y.Min, pl.Y.Max = yLo, yHi
	leg := newLegend()

	// The reverse range: aft of the idle gate's capture zone.
	lv := p.Lever()
	idle := slices.IndexFunc(gates, func(g thrustmap.Gate) bool { return g.Name == lv.IdleGate && lv.IdleGate != "" })
	if idle >= 0 {
		edge := gates[idle].TLADeg - zones[idle].capture
		if edge > lo {
			rb, err := band(lo, edge, yLo, yHi, tint(reverseColor, 48))
			if err != nil {
				return nil, leg, err
			}
			pl.Add(rb)
			name := "reverse range"
			if lv.ReverseOnGroundOnly && !c.OnGround {
				name = "reverse range (in the air: holds idle)"
			}
			leg.Add(name, rb)
			lb, err := labels(plotter.XYs{{X: (lo + edge) / 2, Y: yHi - 0.01*span}}, []string{"reverse"}, 10, 0, text.XCenter, text.YTop)
			if err != nil {
				return nil, leg, err
			}
			pl.Add(lb)
		}
	}

	// Capture zones and hysteresis bands, named above the data in two
	// staggered rows so neighbouring names do not collide.
	var names []string
	var at plotter.XYs
	anyOff := false
	for i, g := range gates {
		z := zones[i]
		col := zoneColor
		if !on[i] {
			col, anyOff = offColor, true
		}
		for _, b := range [][2]float64{
			{g.TLADeg - z.capture - z.hysteresis, g.TLADeg - z.capture},
			{g.TLADeg + z.capture, g.TLADeg + z.capture + z.hysteresis},
		} {
			if z.hysteresis <= 0 {
				break
			}
			hb, err := band(b[0], b[1], yLo, yHi, tint(col, 28))
			if err != nil {
				return nil, leg, err
			}
			pl.Add(hb)
		}
		zb, err := band(g.TLADeg-z.capture, g.TLADeg+z.capture, yLo, yHi, tint(col, 80))
		if err != nil {
			return nil, leg, err
		}
		pl.Add(zb)
		name := g.Name
		if !on[i] {
			name += " (off)"
		}
		names = append(names, name)
		row := 0.10
		if i%2 == 1 {
			row = 0.20
		}
		at = append(at, plotter.XY{X: g.TLADeg, Y: ymax + row*span})
	}
	if len(gates) > 0 {
		zb, _ := band(0, 1, 0, 1, tint(zoneColor, 80))
		leg.Add("capture zone", zb)
		hb, _ := band(0, 1, 0, 1, tint(zoneColor, 28))
		leg.Add("hysteresis band", hb)
		if anyOff {
			ob, _ := band(0, 1, 0, 1, tint(offColor, 80))
			leg.Add("gate off at these conditions", ob)
		}
		lb, err := labels(at, names, 9, 0, text.XCenter, text.YBottom)
		if err != nil {
			return nil, leg, err
		}
		pl.Add(lb)
	}

	ln, err := line(curve, rgb(0, 0, 0), 1.8)
	if err != nil {
		return nil, leg, err
	}
	pl.Add(ln)
	leg.Add("command", ln)
	return pl, leg, nil
}

// tlaRange is the TLA axis of a command panel: the lever's travel, widened
// to the calibrated angles and the gates' zones.
func tlaRange(p *thrustmap.Profile, l *thrustmap.LeverCalibration) (lo, hi float64) {
	lv := p.Lever()
	lo, hi = lv.TLAMinDeg, lv.TLAMaxDeg
	for _, pt := range l.Spec().Points {
		lo, hi = math.Min(lo, pt[1]), math.Max(hi, pt[1])
	}
	for _, g := range p.Gates() {
		lo, hi = math.Min(lo, g.TLADeg-g.CaptureDeg), math.Max(hi, g.TLADeg+g.CaptureDeg)
	}
	if !(lo < hi) {
		lo, hi = lo-1, hi+1
	}
	return lo, hi
}

// commandTitle names the lever and the conditions of a command panel.
func commandTitle(m *thrustmap.Model, id int, c thrustmap.Conditions) string {
	parts := []string{fmt.Sprintf("%g ft", c.AltitudeFt), fmt.Sprintf("OAT %g °C", c.OATC), fmt.Sprintf("Mach %.2f", c.Mach)}
	if b := m.Profile().BleedNames(c.Bleeds); len(b) > 0 {
		parts = append(parts, "bleeds: "+strings.Join(b, ", "))
	}
	if c.OnGround {
		parts = append(parts, "on ground")
	} else {
		parts = append(parts, "in the air")
	}
	if c.AssumedSet {
		parts = append(parts, fmt.Sprintf("assumed %g °C", c.AssumedC))
	}
	return fmt.Sprintf("Lever %d command at %s", id, strings.Join(parts, ", "))
}
