// Package verify finds what is wrong in a profile before anyone flies it:
// faults in rating data and gate layouts that would make a simulated engine
// behave wrongly, each with a stable check code and its place.
package verify

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// The check codes this package adds to the load checks of thrustmap
// (thrustmap.CheckSyntax and the rest). They are stable: scripts rely on them.
const (
	CheckRatingOrder       = "rating_order"             // a rating above one it should not exceed
	CheckFallsBelowCorner  = "falls_below_corner"       // takeoff falls with temperature below the corner
	CheckRisesPastCorner   = "rises_past_corner"        // takeoff rises with temperature past the corner
	CheckCornerColumn      = "corner_between_columns"   // no temperature column at the corner
	CheckCornerCut         = "corner_cut"               // between altitude rows interpolation cuts the flat region below the corner
	CheckMonotoneBump      = "monotone_bump"            // a monotone table turns between grid lines where its data do not
	CheckOutlier           = "outlier"                  // a cell out of line with its neighbours
	CheckEnvelope          = "envelope_not_covered"     // the declared envelope outside a grid
	CheckCommandFalls      = "command_falls"            // the forward command falls as TLA rises
	CheckGateRaised        = "gate_raised"              // a gate's target below its lower neighbour's
	CheckGateAlwaysRaised  = "gate_always_raised"       // ... at every sampled condition
	CheckExpressionFails   = "expression_fails"         // a gate expression errs or is not finite
	CheckExpressionBounds  = "expression_bounds"        // a gate expression outside physical bounds
	CheckAssumedMax        = "assumed_max_outside"      // max assumed temperature beyond the table
	CheckAssumedUnused     = "assumed_unused"           // [assumed_temperature] but no gate commands the reduction
	CheckAssumedMaxCorner  = "assumed_max_below_corner" // max_c at or below a corner: no reduction is possible there
	CheckReductionLimit    = "reduction_limit"          // max_reduction_pct above the AC 25-13 25 %
	CheckReductionBinds    = "reduction_limit_binds"    // the thrust limit binds inside the assumed range
	CheckEPRBelowOne       = "epr_below_one"            // a forward EPR target below 1.0
	CheckNotchCount        = "notch_count"              // calibration points vs notch gates
	CheckCaptureNoise      = "capture_below_noise"      // capture under 4 σ of the lever's noise
	CheckNotchPointMissing = "notch_point_missing"      // no calibration point at a notch gate
	CheckLeverSplit        = "lever_split"              // levers put one gate at different angles
	CheckLeverSpan         = "lever_span"               // a calibration that misses or overruns the end stops
	CheckCalibrationLoad   = "calibration_invalid"      // the calibration does not fit the profile
	CheckDegreesPerCount   = "degrees_per_count"        // (note) resolution at each gate
	CheckFile              = "file"                     // the file cannot be read
	checkInternal          = "internal"                 // a bug in a check
)

// Finding is one fault, with its stable check code and where it is.
type Finding struct {
	Check   string `json:"check"`
	Where   string `json:"where"`
	Message string `json:"message"`
}

// Report is everything found in one profile.
type Report struct {
	Path     string    `json:"path"`
	Errors   []Finding `json:"errors"`
	Warnings []Finding `json:"warnings"`
	Notes    []Finding `json:"notes"`
}

// OK reports whether no error was found.
func (r *Report) OK() bool { return len(r.Errors) == 0 }

func (r *Report) errorf(check, where, format string, args ...any) {
	r.Errors = append(r.Errors, Finding{check, where, fmt.Sprintf(format, args...)})
}

func (r *Report) warnf(check, where, format string, args ...any) {
	r.Warnings = append(r.Warnings, Finding{check, where, fmt.Sprintf(format, args...)})
}

func (r *Report) notef(check, where, format string, args ...any) {
	r.Notes = append(r.Notes, Finding{check, where, fmt.Sprintf(format, args...)})
}

// File verifies the profile at path (a file or an embedded name), with the
// calibration at calPath when it is not empty.
func File(path, calPath string) Report {
	r := Report{Path: path, Errors: []Finding{}, Warnings: []Finding{}, Notes: []Finding{}}
	p, err := thrustmap.LoadProfile(path)
	if err != nil {
		loadFindings(&r, err)
		return r
	}
	var cal *thrustmap.Calibration
	if calPath != "" {
		if cal, err = thrustmap.LoadCalibration(calPath); err != nil {
			r.errorf(CheckCalibrationLoad, calPath, "%v", err)
		}
	}
	Profile(&r, p, cal)
	return r
}

// loadFindings turns the faults that stopped a profile loading into findings.
func loadFindings(r *Report, err error) {
	var list thrustmap.FileErrors
	if !errors.As(err, &list) {
		r.errorf(CheckFile, r.Path, "%v", err)
		return
	}
	for _, e := range list {
		where := e.Key
		switch {
		case e.File != r.Path && e.File != thrustmap.EmbeddedPrefix+r.Path:
			// in a file the profile names (a table_file): FILE:LINE:COL
			where = strings.TrimSuffix(e.Place()+": "+e.Key, ": ")
		case e.Line > 0:
			where = fmt.Sprintf("line %d: %s", e.Line, e.Key)
		}
		r.errorf(e.Code, where, "%v", e.Err)
	}
}

// Profile runs every check on a loaded profile (and calibration, if not
// nil), adding the findings to r.
func Profile(r *Report, p *thrustmap.Profile, cal *thrustmap.Calibration) {
	if r.Errors == nil {
		r.Errors, r.Warnings, r.Notes = []Finding{}, []Finding{}, []Finding{}
	}
	defer func() {
		// A check that panics is a bug; report it rather than lose the rest.
		if v := recover(); v != nil {
			r.errorf(checkInternal, r.Path, "a check failed unexpectedly: %v", v)
		}
	}()
	s := newSampler(p)
	checkOrder(r, p, s)
	for _, rt := range p.Ratings() {
		checkCorner(r, p, rt)
		checkCornerCut(r, rt)
		checkOutliers(r, rt)
		checkMonotoneBump(r, p, rt)
	}
	checkEnvelope(r, p)
	checkAssumed(r, p, s)
	checkAssumedUsed(r, p)
	checkEPR(r, p, s)
	if len(p.Gates()) > 0 {
		checkGates(r, p, cal, s)
	}
	if cal != nil {
		checkCalibration(r, p, cal)
	}
}

// sampler is the set of conditions checks evaluate at: the declared
// envelope, or the takeoff-range data's own, on a coarse grid.
type sampler struct {
	alts, oats, machs []float64
}

func newSampler(p *thrustmap.Profile) sampler {
	// Without a declared envelope: the takeoff range, at takeoff Mach.
	altLo, altHi, oatLo, oatHi := 0.0, 10000.0, -30.0, 45.0
	machLo, machHi := 0.0, 0.25
	if e, ok := p.Envelope(); ok {
		altLo, altHi, oatLo, oatHi = e.AltitudeFt[0], e.AltitudeFt[1], e.OATC[0], e.OATC[1]
		if e.Mach[1] > 0 {
			machLo, machHi = e.Mach[0], e.Mach[1]
		}
	} else if rt, ok := p.Rating("takeoff"); ok && rt.Table().Has(grid.Altitude) {
		altLo, altHi = rt.Table().Range(grid.Altitude)
	}
	return sampler{alts: spread(altLo, altHi, 5), oats: spread(oatLo, oatHi, 5), machs: spread(machLo, machHi, 2)}
}

func spread(lo, hi float64, n int) []float64 {
	if hi <= lo {
		return []float64{lo}
	}
	out := make([]float64, n)
	for i := range out {
		out[i] = lo + (hi-lo)*float64(i)/float64(n-1)
	}
	return out
}

// each calls fn at every sampled condition (ground and air, assumed
// temperature off and ISA+35).
func (s sampler) each(fn func(c thrustmap.Conditions)) {
	for _, alt := range s.alts {
		for _, oat := range s.oats {
			for _, m := range s.machs {
				for _, ground := range []bool{true, false} {
					c := thrustmap.Conditions{AltitudeFt: alt, OATC: oat, Mach: m, OnGround: ground}
					fn(c)
					if ground {
						c.AssumedSet, c.AssumedC = true, oat+25
						fn(c)
					}
				}
			}
		}
	}
}

func cond(c thrustmap.Conditions) string {
	s := fmt.Sprintf("%.0f ft, OAT %.1f °C, Mach %.2f", c.AltitudeFt, c.OATC, c.Mach)
	if c.OnGround {
		s += ", on ground"
	}
	if c.AssumedSet {
		s += fmt.Sprintf(", assumed %.0f °C", c.AssumedC)
	}
	return s
}

// checkOrder: each rating of a chain at least the next, point by point
// (common practice; declared in [verify] order, DefaultOrder otherwise).
func checkOrder(r *Report, p *thrustmap.Profile, s sampler) {
	for _, chain := range p.Order() {
		for i := 0; i+1 < len(chain); i++ {
			hi, _ := p.Rating(chain[i])
			lo, _ := p.Rating(chain[i+1])
			bad, first := 0, thrustmap.Conditions{}
			var firstHi, firstLo float64
			s.each(func(c thrustmap.Conditions) {
				if c.AssumedSet {
					return
				}
				a, err1 := p.RatingValue(hi, c)
				b, err2 := p.RatingValue(lo, c)
				if err1 == nil && err2 == nil && a < b-1e-9 {
					if bad == 0 {
						first, firstHi, firstLo = c, a, b
					}
					bad++
				}
			})
			if bad > 0 {
				r.errorf(CheckRatingOrder, chain[i]+" ≥ "+chain[i+1],
					"%s is below %s at %d sampled condition(s), first at %s (%.4g < %.4g)", chain[i], chain[i+1], bad, cond(first), firstHi, firstLo)
			}
		}
	}
}

// checkCorner: below the flat-rating corner a takeoff-type rating must not
// fall with temperature (error); past it, it should not rise (warning); the
// corner should be a temperature column so interpolation keeps the kink.
func checkCorner(r *Report, p *thrustmap.Profile, rt *thrustmap.Rating) {
	t := rt.Table()
	if !t.Has(grid.Temperature) || !t.Has(grid.Altitude) {
		return
	}
	alts := t.Axis(grid.Altitude)
	temps := t.Axis(grid.Temperature)
	tol := 1e-9
	var between []string
	defer func() {
		if len(between) > 0 {
			r.warnf(CheckCornerColumn, rt.Name(), "the corner falls between temperature columns at %s: interpolation cuts the kink (an ISA_DEV axis keeps it on one column)", strings.Join(between, ", "))
		}
	}()
	for i, alt := range alts {
		isa, err := atmos.ISATemperatureC(alt)
		if err != nil {
			continue
		}
		corner, ok := rt.CornerOAT(alt, isa)
		if !ok {
			return
		}
		cornerAxis := corner // in the axis's own terms
		if rt.Basis() == thrustmap.ISADev {
			cornerAxis = corner - isa
		}
		if rt.Basis() == thrustmap.TAT {
			return // corners are declared on OAT or ISA_DEV tables
		}
		if !slices.ContainsFunc(temps, func(x float64) bool { return math.Abs(x-cornerAxis) < 0.05 }) {
			between = append(between, fmt.Sprintf("%.0f ft (%.1f °C)", alt, cornerAxis))
		}
		for j := 1; j < len(temps); j++ {
			if t.Has(grid.Mach) {
				break
			}
			v0, v1 := t.Node([grid.NumAxes]int{i, j - 1, 0}), t.Node([grid.NumAxes]int{i, j, 0})
			where := fmt.Sprintf("%s, altitude %.0f ft, %g → %g °C", rt.Name(), alt, temps[j-1], temps[j])
			switch {
			case temps[j] <= cornerAxis+tol && v1 < v0-tol:
				r.errorf(CheckFallsBelowCorner, where, "falls from %.4g to %.4g below the corner (%.1f °C), where the rating is flat", v0, v1, cornerAxis)
			case temps[j-1] >= cornerAxis-tol && v1 > v0+tol:
				r.warnf(CheckRisesPastCorner, where, "rises from %.4g to %.4g past the corner (%.1f °C), where the engine is temperature limited", v0, v1, cornerAxis)
			}
		}
	}
}

// checkOutliers: a cell whose second difference along an axis stands far
// out from its row's — the typical typo in hand-typed data. The spread is
// the median absolute deviation of the row's second differences, with a
// floor so smooth tables do not flag rounding.
func checkOutliers(r *Report, rt *thrustmap.Rating) {
	t := rt.Table()
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		n := t.Points(a)
		if n < 5 {
			continue
		}
		var idx [grid.NumAxes]int
		var others []grid.Axis
		for b := grid.Altitude; b < grid.NumAxes; b++ {
			if b != a && t.Has(b) {
				others = append(others, b)
			}
		}
		var visit func(k int)
		visit = func(k int) {
			if k < len(others) {
				for i := 0; i < t.Points(others[k]); i++ {
					idx[others[k]] = i
					visit(k + 1)
				}
				return
			}
			line := make([]float64, n)
			for i := range line {
				idx[a] = i
				line[i] = t.Node(idx)
			}
			d2 := make([]float64, n-2)
			for i := range d2 {
				d2[i] = line[i] - 2*line[i+1] + line[i+2]
			}
			// A typo of δ in one cell gives second differences δ, −2δ, δ
			// around it; a genuine kink (a corner) gives one spike alone.
			// Each cell is measured against the median absolute deviation of
			// the second differences away from it, with a floor so smooth
			// tables do not flag rounding.
			floor := 0.002 * math.Max(1, math.Abs(median(line)))
			for i := 1; i+1 < len(d2); i++ {
				rest := append(slices.Clone(d2[:i-1]), d2[i+2:]...)
				med := median(rest)
				dev := make([]float64, len(rest))
				for k, d := range rest {
					dev[k] = math.Abs(d - med)
				}
				scale := math.Max(1.4826*median(dev), floor)
				c, l, rr := d2[i]-med, d2[i-1]-med, d2[i+1]-med
				typo := math.Abs(c) > 8*scale && l*c < 0 && rr*c < 0 &&
					math.Abs(l) > 0.25*math.Abs(c) && math.Abs(rr) > 0.25*math.Abs(c)
				if typo {
					idx[a] = i + 1
					r.warnf(CheckOutlier, fmt.Sprintf("%s, cell %s", rt.Name(), cellName(t, idx)),
						"%.4g is out of line with its neighbours along %s (%.4g and %.4g): a typo?", line[i+1], a, line[i], line[i+2])
				}
			}
		}
		visit(0)
	}
}

func cellName(t *grid.Grid, idx [grid.NumAxes]int) string {
	var parts []string
	names := [grid.NumAxes]string{"altitude", "temperature", "mach"}
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		if t.Has(a) {
			parts = append(parts, fmt.Sprintf("%s %g", names[a], t.Point(a, idx[a])))
		}
	}
	return strings.Join(parts, ", ")
}

func median(xs []float64) float64 {
	s := slices.Clone(xs)
	slices.Sort(s)
	if len(s) == 0 {
		return 0
	}
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}

// checkEnvelope: the declared envelope inside each named rating's grid.
func checkEnvelope(r *Report, p *thrustmap.Profile) {
	e, ok := p.Envelope()
	if !ok {
		return
	}
	names := e.Ratings
	if len(names) == 0 {
		for _, rt := range p.Ratings() {
			names = append(names, rt.Name())
		}
	}
	for _, name := range names {
		rt, _ := p.Rating(name)
		t := rt.Table()
		if t.Has(grid.Altitude) {
			lo, hi := t.Range(grid.Altitude)
			if e.AltitudeFt[0] < lo || e.AltitudeFt[1] > hi {
				r.warnf(CheckEnvelope, name, "altitude axis %g to %g ft does not cover the envelope's %g to %g ft: values are held at the edge", lo, hi, e.AltitudeFt[0], e.AltitudeFt[1])
			}
		}
		if t.Has(grid.Temperature) && rt.Basis() != thrustmap.TAT {
			lo, hi := t.Range(grid.Temperature)
			for _, alt := range []float64{e.AltitudeFt[0], e.AltitudeFt[1]} {
				isa, _ := atmos.ISATemperatureC(alt)
				a, b := e.OATC[0], e.OATC[1]
				if rt.Basis() == thrustmap.ISADev {
					a, b = a-isa, b-isa
				}
				if a < lo-1e-9 || b > hi+1e-9 {
					r.warnf(CheckEnvelope, fmt.Sprintf("%s, altitude %.0f ft", name, alt), "temperature axis %g to %g does not cover the envelope's %.1f to %.1f (%s): values are held at the edge", lo, hi, a, b, rt.Basis())
					break
				}
			}
		}
	}
}

// checkAssumed: the assumed-temperature limits against FAA AC 25-13 and
// the rating tables.
func checkAssumed(r *Report, p *thrustmap.Profile, s sampler) {
	a := p.AssumedTemperature()
	if a == nil {
		return
	}
	if a.MaxReductionPct > 25 {
		r.errorf(CheckReductionLimit, "assumed_temperature.max_reduction_pct", "%g %% exceeds the 25 %% limit of FAA AC 25-13", a.MaxReductionPct)
	}
	for _, name := range a.Ratings {
		rt, _ := p.Rating(name)
		checkMaxAboveCorner(r, a, rt, s)
		t := rt.Table()
		lo, hi := t.Range(grid.Temperature)
		for _, alt := range s.alts {
			isa, _ := atmos.ISATemperatureC(alt)
			top := a.MaxC
			if rt.Basis() == thrustmap.ISADev {
				top -= isa
			}
			if rt.Basis() != thrustmap.TAT && (top > hi+1e-9 || top < lo) {
				what := fmt.Sprintf("outside the table's OATs (%g to %g °C)", lo, hi)
				if rt.Basis() == thrustmap.ISADev {
					what = fmt.Sprintf("ISA%+.3g at %s, outside the table's ISA deviations (%+g to %+g)", top, altitudeName(alt), lo, hi)
				}
				r.errorf(CheckAssumedMax, fmt.Sprintf("%s, altitude %.0f ft", name, alt), "max assumed temperature %g °C is %s: the reduced value would be held at the edge", a.MaxC, what)
				break
			}
		}
		if rt.Thrust() == nil {
			continue
		}
		// Where the thrust limit binds below max_c, say from which OAT.
		var binds []string
		for _, alt := range s.alts {
			for _, oat := range s.oats {
				c := thrustmap.Conditions{AltitudeFt: alt, OATC: oat, OnGround: true, AssumedSet: true, AssumedC: a.MaxC}
				res, err := p.Target(name, c)
				if err == nil && res.Reduction.Reasons&thrustmap.ReductionLimited != 0 {
					binds = append(binds, fmt.Sprintf("%.0f ft from OAT %.0f °C (held at %.1f °C)", alt, oat, res.Reduction.EffectiveC))
					break
				}
			}
		}
		if len(binds) > 0 {
			r.warnf(CheckReductionBinds, name, "the %g %% thrust limit binds below max_c %g °C at %s; the runtime limits the assumed temperature there",
				a.MaxReductionPct, a.MaxC, strings.Join(binds, "; "))
		}
	}
}

// checkMaxAboveCorner: max_c above the rating's corner at every sampled
// altitude. At or below the corner rated thrust is flat, so the method gives
// the full rating there whatever the assumed temperature (docs/methods.md,
// Assumed-temperature method, rules 1 and 2).
func checkMaxAboveCorner(r *Report, a *thrustmap.AssumedTemperature, rt *thrustmap.Rating, s sampler) {
	for _, alt := range s.alts {
		isa, err := atmos.ISATemperatureC(alt)
		if err != nil {
			continue
		}
		if corner, ok := rt.CornerOAT(alt, isa); ok && a.MaxC <= corner+thrustmap.TemperatureTolC {
			r.errorf(CheckAssumedMaxCorner, fmt.Sprintf("%s, altitude %.0f ft", rt.Name(), alt),
				"max assumed temperature %g °C is at or below the corner (%.1f °C OAT, ISA%+.3g) at %s: no assumed temperature can reduce thrust there; raise max_c above the corner",
				a.MaxC, corner, corner-isa, altitudeName(alt))
			return
		}
	}
}

// altitudeName says "sea level" for 0 ft, else the altitude in feet.
func altitudeName(alt float64) string {
	if alt == 0 {
		return "sea level"
	}
	return fmt.Sprintf("%.0f ft", alt)
}

// checkAssumedUsed: a profile with gates and [assumed_temperature] has a
// gate that commands the reduction; a gate naming a rating commands its full
// value, so without one the assumed temperature changes nothing at the lever.
func checkAssumedUsed(r *Report, p *thrustmap.Profile) {
	a := p.AssumedTemperature()
	if a == nil || len(p.Gates()) == 0 {
		return
	}
	for i := range p.Gates() {
		if p.GateReduces(i) {
			return
		}
	}
	name := a.Ratings[0]
	r.warnf(CheckAssumedUnused, "assumed_temperature", "no gate commands the reduction, so an assumed temperature changes nothing at the lever: "+
		"a gate with rating = %q commands the full rating; give a gate target = \"assumed('%s')\" (a reduced-takeoff gate of its own, with when = \"on_ground && assumed_set\"), "+
		"or apply it inside the takeoff gate with target = \"assumed_set ? assumed('%s') : rating('%s')\"", name, name, name, name)
}

// checkEPR: forward EPR targets are at least 1.0.
func checkEPR(r *Report, p *thrustmap.Profile, s sampler) {
	if p.Parameter() != thrustmap.EPR {
		return
	}
	for _, rt := range p.Ratings() {
		if rt.Name() == "reverse" || strings.Contains(rt.Name(), "reverse") {
			continue
		}
		worst, at := math.Inf(1), thrustmap.Conditions{}
		s.each(func(c thrustmap.Conditions) {
			if v, err := p.RatingValue(rt, c); err == nil && v < worst {
				worst, at = v, c
			}
		})
		if worst < 1 {
			r.errorf(CheckEPRBelowOne, rt.Name(), "EPR %.4g below 1.0 at %s: a forward target must be a pressure rise", worst, cond(at))
		}
	}
}
