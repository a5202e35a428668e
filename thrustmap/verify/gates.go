package verify

import (
	"fmt"
	"math"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// tlaStep is the lever step of the monotone-command walk, degrees.
const tlaStep = 0.5

// checkGates runs the gate checks at the sampled conditions: the forward
// command never falls as the lever moves up (nor the reverse command as it
// is pulled back); gates whose own target the runtime must raise; and
// expression gates that fail or leave the parameter's physical range.
func checkGates(r *Report, p *thrustmap.Profile, cal *thrustmap.Calibration, s sampler) {
	m, err := thrustmap.NewModel(p, nil)
	if err != nil {
		r.errorf(CheckCalibrationLoad, p.Source(), "%v", err)
		return
	}
	gates := p.Gates()
	lv := p.Lever()
	idle := lv.TLAMinDeg
	for _, g := range gates {
		if g.Name == lv.IdleGate {
			idle = g.TLADeg
		}
	}
	type gateCount struct {
		active, raised int
		first          thrustmap.Conditions
	}
	counts := make([]gateCount, len(gates))
	lo, hi := p.Parameter().Bounds()
	fell, exprFailed, exprBounds := false, map[int]bool{}, map[int]bool{}
	s.each(func(c thrustmap.Conditions) {
		var st thrustmap.LeverState
		// Forward walk, then the reverse walk from idle back.
		for _, dir := range []float64{+1, -1} {
			prev := math.Inf(-1)
			for tla := idle; tla >= lv.TLAMinDeg-1e-9 && tla <= lv.TLAMaxDeg+1e-9; tla += dir * tlaStep {
				cmd, err := m.CommandAtTLA(&st, thrustmap.NoLever, tla, c)
				if err != nil {
					return
				}
				if cmd.Value < prev-1e-9 && !fell {
					what := "forward of idle the command falls as the lever moves up"
					if dir < 0 {
						what = "in reverse the command falls as the lever is pulled back"
					}
					r.errorf(CheckCommandFalls, fmt.Sprintf("TLA %.2f°", tla), "%s: %.4g after %.4g, at %s", what, cmd.Value, prev, cond(c))
					fell = true
				}
				prev = cmd.Value
			}
		}
		for i, g := range gates {
			cmd, err := m.CommandAtTLA(&st, thrustmap.NoLever, g.TLADeg, c)
			if err != nil || cmd.Gate != i {
				continue // the gate is not active here
			}
			if g.Target != "" || g.When != "" {
				if cmd.Flags&thrustmap.Fallback != 0 && !exprFailed[i] {
					r.errorf(CheckExpressionFails, "gate "+g.Name, "an expression failed or was not finite at %s: the gate fell back", cond(c))
					exprFailed[i] = true
				}
				if (cmd.Value < lo || cmd.Value > hi) && !exprBounds[i] {
					r.errorf(CheckExpressionBounds, "gate "+g.Name, "commands %.4g at %s, outside %s's physical range %g to %g", cmd.Value, cond(c), p.Parameter(), lo, hi)
					exprBounds[i] = true
				}
			}
			counts[i].active++
			if cmd.Flags&thrustmap.Raised != 0 {
				if counts[i].raised == 0 {
					counts[i].first = c
				}
				counts[i].raised++
			}
		}
	})
	for i, n := range counts {
		switch {
		case n.raised == 0:
		case n.raised == n.active:
			r.errorf(CheckGateAlwaysRaised, "gate "+gates[i].Name, "its target is below the gate nearer idle at every one of %d sampled conditions: the runtime always raises it, so it commands nothing of its own", n.active)
		default:
			r.warnf(CheckGateRaised, "gate "+gates[i].Name, "its target is below the gate nearer idle at %d of %d sampled conditions, first at %s: the runtime raises it there", n.raised, n.active, cond(n.first))
		}
	}
}

// checkCalibration checks a calibration against the profile: every notch
// and end stop has a point, each gate's capture holds the lever's noise,
// and the levers agree on where the notches are.
func checkCalibration(r *Report, p *thrustmap.Profile, cal *thrustmap.Calibration) {
	m, err := thrustmap.NewModel(p, cal)
	if err != nil {
		r.errorf(CheckCalibrationLoad, cal.Source(), "%v", err)
		return
	}
	notches := p.NotchPositions()
	gates := p.Gates()
	offsets := make([][]float64, len(notches)) // per notch, each lever's point offset
	for _, l := range cal.Levers() {
		spec := l.Spec()
		where := fmt.Sprintf("lever %d", spec.ID)
		checkLeverSpan(r, p.Lever(), spec, where)
		var missing []string
		for k, n := range notches {
			best := math.Inf(1)
			for _, pt := range spec.Points {
				if d := pt[1] - n.TLADeg; math.Abs(d) < math.Abs(best) {
					best = d
				}
			}
			capture, hyst := zoneAt(m, spec.ID, gates, n.TLADeg)
			if math.Abs(best) > capture+hyst {
				missing = append(missing, fmt.Sprintf("%s (%g°)", n.Name, n.TLADeg))
				continue
			}
			offsets[k] = append(offsets[k], best)
		}
		if len(missing) > 0 {
			r.errorf(CheckNotchCount, where, "has no calibration point at %d of %d notches and end stops: %v; run a sweep or add the points", len(missing), len(notches), missing)
		}
		for i, g := range gates {
			raw, _ := l.Raw(g.TLADeg)
			t1, _ := l.TLA(raw + 1)
			t0, _ := l.TLA(raw - 1)
			dpc := math.Abs(t1-t0) / 2
			capture, _, _ := m.EffectiveZone(spec.ID, i)
			r.notef(CheckDegreesPerCount, fmt.Sprintf("%s, gate %s", where, g.Name), "%.4f° per count at raw %.0f", dpc, raw)
			if noise := 4 * spec.NoiseSigma * dpc; noise > capture {
				r.errorf(CheckCaptureNoise, fmt.Sprintf("%s, gate %s", where, g.Name),
					"capture ±%.2f° is less than 4 σ of the lever's noise (4 × %.2g counts × %.4f°/count = %.2f°): a resting lever can wander out", capture, spec.NoiseSigma, dpc, noise)
			}
		}
	}
	for k, offs := range offsets {
		if len(offs) < 2 {
			continue
		}
		lo, hi := offs[0], offs[0]
		for _, o := range offs {
			lo, hi = math.Min(lo, o), math.Max(hi, o)
		}
		capture, _ := zoneAt(m, thrustmap.NoLever, gates, notches[k].TLADeg)
		if hi-lo > capture/2 {
			r.warnf(CheckLeverSplit, notches[k].Name, "the levers' calibration points for this notch differ by %.2f°: resting side by side in it they read different angles", hi-lo)
		}
	}
}

// spanTolDeg is how far a calibration's end may sit from an end stop and
// still be taken as reaching it, degrees.
const spanTolDeg = 0.05

// checkLeverSpan: a lever's calibrated angles run from the profile's aft
// end stop to its forward one. Short of a stop, the lever cannot command the
// gates there; past one, the angles beyond it are held at the stop and
// flagged (clamped "lever").
func checkLeverSpan(r *Report, lv thrustmap.Lever, spec thrustmap.LeverSpec, where string) {
	if !(lv.TLAMinDeg < lv.TLAMaxDeg) || len(spec.Points) == 0 {
		return
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, pt := range spec.Points {
		lo, hi = math.Min(lo, pt[1]), math.Max(hi, pt[1])
	}
	var faults []string
	switch {
	case lo > lv.TLAMinDeg+spanTolDeg:
		faults = append(faults, fmt.Sprintf("stops short of the aft end stop %g°: angles below %g° cannot be commanded", lv.TLAMinDeg, lo))
	case lo < lv.TLAMinDeg-spanTolDeg:
		faults = append(faults, fmt.Sprintf("runs past the aft end stop %g° (to %g°): angles there are held at the stop and flagged", lv.TLAMinDeg, lo))
	}
	switch {
	case hi < lv.TLAMaxDeg-spanTolDeg:
		faults = append(faults, fmt.Sprintf("stops short of the forward end stop %g°: angles above %g° cannot be commanded", lv.TLAMaxDeg, hi))
	case hi > lv.TLAMaxDeg+spanTolDeg:
		faults = append(faults, fmt.Sprintf("runs past the forward end stop %g° (to %g°): angles there are held at the stop and flagged", lv.TLAMaxDeg, hi))
	}
	if len(faults) > 0 {
		r.errorf(CheckLeverSpan, where, "calibrated from %g° to %g°, the profile's lever from %g° to %g°: it %s; calibrate the lever from stop to stop or correct tla_min_deg/tla_max_deg",
			lo, hi, lv.TLAMinDeg, lv.TLAMaxDeg, strings.Join(faults, ", and "))
	}
}

// zoneAt returns the capture and hysteresis of the gate at tla for a lever,
// or a tolerance of half a degree at an end stop with no gate.
func zoneAt(m *thrustmap.Model, lever int, gates []thrustmap.Gate, tla float64) (float64, float64) {
	for i, g := range gates {
		if g.TLADeg == tla {
			c, h, err := m.EffectiveZone(lever, i)
			if err == nil {
				return c, h
			}
		}
	}
	return 0.5, 0
}
