package thrustmap

import (
	"errors"
	"fmt"
	"math"

	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// Conditions are the air data and configuration a target is computed at.
type Conditions struct {
	AltitudeFt float64 // pressure altitude, ft
	OATC       float64 // outside (static) air temperature, °C
	Mach       float64
	Bleeds     Bleeds // bleed flags that are on
	OnGround   bool
	AssumedSet bool    // an assumed temperature is selected
	AssumedC   float64 // the assumed temperature, °C, when AssumedSet
}

// Clamped is the set of inputs that were clamped to the edge of their table
// or range. The first three bits are those of grid.Clamped.
type Clamped uint8

// The clamp bits.
const (
	ClampAltitude    Clamped = 1 << iota // pressure altitude beyond a table's axis
	ClampTemperature                     // temperature beyond a table's axis
	ClampMach                            // Mach beyond a table's axis
	ClampRaw                             // raw lever counts beyond the calibrated points
	ClampDevice                          // raw lever counts beyond the device's range
	ClampLever                           // a lever angle beyond the profile's end stops (tla_min_deg, tla_max_deg)
)

var clampNames = []string{"altitude", "temperature", "mach", "raw", "device", "lever"}

// Names returns the clamped inputs' names in a fixed order, as in JSON
// output; empty and non-nil for none.
func (c Clamped) Names() []string { return bitNames(uint64(c), clampNames) }

// Flags mark how a command was shaped after the table look-up.
type Flags uint8

// The flags.
const (
	// Raised: a gate's target was below the effective target of the gate
	// nearer idle, so the command was raised to it (monotone command).
	Raised Flags = 1 << iota
	// Limited: the value was cut to the profile's redline ([limits] max).
	Limited
	// Interlock: reverse was selected in the air with reverse_on_ground_only;
	// the command holds idle.
	Interlock
	// Fallback: a gate expression failed to evaluate or gave a non-finite
	// value; the gate used its rating or the last good command instead.
	Fallback
)

var flagNames = []string{"raised", "limited", "interlock", "fallback"}

// Names returns the flag names in a fixed order; empty and non-nil for none.
func (f Flags) Names() []string { return bitNames(uint64(f), flagNames) }

// Reasons are the reason codes of the assumed-temperature method, in the
// order its rules apply (after FAA AC 25-13; docs/methods.md,
// Assumed-temperature method).
type Reasons uint8

// The reason codes.
const (
	TANotAboveOAT       Reasons = 1 << iota // Ta ≤ OAT: full rating
	TABelowCorner                           // Ta ≤ corner: rated thrust is flat, full rating
	TAAboveMax                              // Ta above max_c: Ta = max_c
	ReductionLimited                        // the thrust reduction limit lowered Ta
	ReductionNotChecked                     // no thrust grid: the limit could not be checked
)

var reasonNames = []string{"ta_not_above_oat", "ta_below_corner", "ta_above_max", "reduction_limited", "reduction_not_checked"}

// Names returns the reason codes in rule order; empty and non-nil for none.
// Reduction.ReasonNames gives them in the order they acted.
func (r Reasons) Names() []string { return bitNames(uint64(r), reasonNames) }

func bitNames(bits uint64, names []string) []string {
	out := []string{}
	for i, n := range names {
		if bits&(1<<uint(i)) != 0 {
			out = append(out, n)
		}
	}
	return out
}

// Reduction reports the assumed-temperature method's work on a target.
type Reduction struct {
	Evaluated  bool    // an assumed temperature was set for an assumed-temperature rating
	AssumedC   float64 // the assumed temperature as asked, °C
	EffectiveC float64 // the temperature the value was taken at, °C
	Applied    bool    // the value was reduced (the effective temperature is above OAT)
	ValueFull  float64 // the full rated value at the actual conditions
	Reasons    Reasons
	// ThrustReductionPct is the rated-thrust reduction at the effective
	// temperature, percent; meaningful only when ThrustChecked.
	ThrustReductionPct float64
	ThrustChecked      bool // the rating has a thrust grid

	order [maxReasonsActed]Reasons // the codes of Reasons in the order the rules acted
	acted uint8
}

// maxReasonsActed bounds how many rules can act on one reduction: rule 2,
// rule 1 again, and rule 3.
const maxReasonsActed = 4

// Result is a rating target at a set of conditions.
type Result struct {
	Rating    string
	Value     float64
	Parameter Parameter
	Clamped   Clamped // axes on which a look-up was clamped to the grid edge
	Flags     Flags
	Reduction Reduction
}

// Unit returns the result's unit: "percent" or "ratio".
func (r Result) Unit() string { return r.Parameter.Unit() }

// ErrConditions is wrapped by Target's errors about its Conditions.
var ErrConditions = errors.New("bad conditions")

// ErrUnknownRating is wrapped when a rating name is not in the profile.
var ErrUnknownRating = errors.New("unknown rating")

// Target returns the named rating's target at c: the table value (reduced by
// the assumed-temperature method when c.AssumedSet and the rating is one of
// the profile's assumed-temperature ratings), plus the bleed corrections of
// the flags that are on, cut to the redline. It allocates nothing unless it
// returns an error.
func (p *Profile) Target(rating string, c Conditions) (res Result, err error) {
	r := p.find(rating)
	if r == nil {
		return res, fmt.Errorf("%w %q (the profile has %s)", ErrUnknownRating, rating, listOrNone(ratingNames(p)))
	}
	err = p.target(r, c, &res)
	return res, err
}

// find returns the named rating or nil, by a linear scan: profiles hold a
// handful of ratings, and this beats hashing the name.
func (p *Profile) find(name string) *Rating {
	for _, r := range p.ratings {
		if r.name == name {
			return r
		}
	}
	return nil
}

// RatingTarget is Target for a rating already looked up with Rating.
func (p *Profile) RatingTarget(r *Rating, c Conditions) (res Result, err error) {
	err = p.target(r, c, &res)
	return res, err
}

// target fills res, which must be zero.
func (p *Profile) target(r *Rating, c Conditions, res *Result) error {
	if err := checkConditions(c); err != nil {
		return err
	}
	// The ISA temperature is needed only for ISA_DEV axes, corners and
	// reductions; NaN marks it not yet computed.
	isa := math.NaN()
	if r.needsISA || c.AssumedSet {
		isa = isaTemperature(c.AltitudeFt)
	}
	res.Rating, res.Parameter = r.name, p.parameter
	full, cl := r.base(c.AltitudeFt, c.OATC, c.Mach, isa)
	res.Clamped = Clamped(cl)
	value := full
	if c.AssumedSet && r.assumed {
		value = p.reduce(r, c, isa, full, res)
	}
	corr := r.correction(&c, isa, &res.Clamped)
	res.Value, res.Flags = p.limit(value + corr)
	if res.Reduction.Evaluated {
		res.Reduction.ValueFull, _ = p.limit(full + corr)
	}
	return nil
}

// RatingValue is the rating's value at c with the bleed corrections and
// without any reduction: the value gate expressions call rating("name").
func (p *Profile) RatingValue(r *Rating, c Conditions) (float64, error) {
	if err := checkConditions(c); err != nil {
		return 0, err
	}
	v, _, _ := p.plainValue(r, &c)
	return v, nil
}

// plainValue is the rating's value at checked conditions, corrections
// included, cut to the redline, without any reduction.
func (p *Profile) plainValue(r *Rating, c *Conditions) (float64, Flags, Clamped) {
	isa := math.NaN()
	if r.needsISA {
		isa = isaTemperature(c.AltitudeFt)
	}
	v, gc := r.base(c.AltitudeFt, c.OATC, c.Mach, isa)
	cl := Clamped(gc)
	if c.Bleeds != 0 {
		v += r.correction(c, isa, &cl)
	}
	v, f := p.limit(v)
	return v, f, cl
}

// checkConditions rejects non-finite or out-of-atmosphere conditions.
func checkConditions(c Conditions) error {
	if !finite(c.AltitudeFt) || !finite(c.OATC) || !finite(c.Mach) || (c.AssumedSet && !finite(c.AssumedC)) {
		return fmt.Errorf("%w: altitude %g ft, OAT %g °C, Mach %g, assumed %g °C: all must be finite numbers", ErrConditions, c.AltitudeFt, c.OATC, c.Mach, c.AssumedC)
	}
	if c.AltitudeFt < atmos.MinAltitudeFt || c.AltitudeFt > atmos.MaxAltitudeFt {
		return fmt.Errorf("%w: pressure altitude %g ft is outside the standard atmosphere (%.0f to %.0f ft)", ErrConditions, c.AltitudeFt, atmos.MinAltitudeFt, atmos.MaxAltitudeFt)
	}
	if c.Mach < 0 || c.Mach > 5 {
		return fmt.Errorf("%w: Mach %g is outside 0 to 5", ErrConditions, c.Mach)
	}
	if c.OATC <= -atmos.KelvinOffset || (c.AssumedSet && c.AssumedC <= -atmos.KelvinOffset) {
		return fmt.Errorf("%w: temperature below absolute zero", ErrConditions)
	}
	return nil
}

// isaTemperature is the ISA temperature at an altitude checkConditions passed.
func isaTemperature(altFt float64) float64 {
	t, _ := atmos.ISATemperatureC(altFt)
	return t
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// basisTemp converts an OAT to the rating's temperature basis.
func basisTemp(b TemperatureBasis, oatC, mach, isaC float64) float64 {
	switch b {
	case TAT:
		return (oatC+atmos.KelvinOffset)*(1+0.2*mach*mach) - atmos.KelvinOffset
	case ISADev:
		return oatC - isaC
	}
	return oatC
}

// base is the rating table's value at an OAT.
func (r *Rating) base(alt, oat, mach, isa float64) (float64, grid.Clamped) {
	return r.table.At([grid.NumAxes]float64{alt, basisTemp(r.basis, oat, mach, isa), mach})
}

// thrustAt is the rated thrust at an OAT (the rating must have a thrust grid).
func (r *Rating) thrustAt(alt, oat, mach, isa float64) float64 {
	v, _ := r.thrust.At([grid.NumAxes]float64{alt, basisTemp(r.basis, oat, mach, isa), mach})
	return v
}

// correction sums the corrections of the bleeds on in c, at the actual
// conditions, adding the axes clamped to cl.
func (r *Rating) correction(c *Conditions, isa float64, cl *Clamped) float64 {
	if c.Bleeds == 0 {
		return 0
	}
	sum := 0.0
	for i := range r.corrections {
		k := &r.corrections[i]
		if !c.Bleeds.Has(k.Bleed) {
			continue
		}
		if k.Grid == nil {
			sum += k.Delta
			continue
		}
		v, gc := k.Grid.At([grid.NumAxes]float64{c.AltitudeFt, basisTemp(r.basis, c.OATC, c.Mach, isa), c.Mach})
		*cl |= Clamped(gc)
		sum += v
	}
	return sum
}

// limit cuts v to the redline.
func (p *Profile) limit(v float64) (float64, Flags) {
	if v > p.redline {
		return p.redline, Limited
	}
	return v, 0
}

// reduce applies the assumed-temperature method (after FAA AC 25-13;
// docs/methods.md, Assumed-temperature method) rule by rule and returns the table value to use, before bleed
// corrections; full is the rated value at the actual OAT.
func (p *Profile) reduce(r *Rating, c Conditions, isa, full float64, res *Result) float64 {
	a := p.assumed
	red := &res.Reduction
	*red = Reduction{Evaluated: true, AssumedC: c.AssumedC, EffectiveC: c.OATC, ThrustChecked: r.thrust != nil}
	alt, oat, mach := c.AltitudeFt, c.OATC, c.Mach
	ta := c.AssumedC

	corner, hasCorner := r.CornerOAT(alt, isa)

	// Rule 1: no reduction at or below the OAT, nor at or below the corner.
	if red.fullRating(ta, oat, corner, hasCorner) {
		return full
	}
	// Rule 2: no higher than the maximum assumed temperature; rule 1 then
	// applies again at the temperature cut to.
	if ta > a.MaxC {
		ta = a.MaxC
		red.add(TAAboveMax)
		if red.fullRating(ta, oat, corner, hasCorner) {
			return full
		}
	}
	// Rule 3: the thrust reduction limit.
	if r.thrust == nil {
		red.add(ReductionNotChecked)
	} else {
		thrustFull := r.thrustAt(alt, oat, mach, isa)
		floor := (1 - a.MaxReductionPct/100) * thrustFull
		if r.thrustAt(alt, ta, mach, isa) < floor {
			ta = r.largestMeeting(floor, alt, oat, ta, mach, isa)
			red.add(ReductionLimited)
		}
		if thrustFull > 0 {
			red.ThrustReductionPct = 100 * (1 - r.thrustAt(alt, ta, mach, isa)/thrustFull)
		}
	}
	// Rule 4: the value at the effective temperature, never above full.
	red.EffectiveC = ta
	red.Applied = true
	v, cl := r.base(alt, ta, mach, isa)
	res.Clamped |= Clamped(cl)
	if p.parameter == N1 && a.Corrected {
		// Same corrected speed N1/√θ as at Ta, so physical N1 scales by
		// √(T_OAT/T_a) with temperatures in kelvin.
		v *= math.Sqrt((oat + atmos.KelvinOffset) / (ta + atmos.KelvinOffset))
	}
	return min(v, full)
}

// TemperatureTolC is the tolerance of the assumed-temperature method's
// comparisons of an assumed temperature with the OAT and the corner, °C: a
// micro-degree, so that an assumed temperature typed at the corner (ISA+15
// at 2000 ft is 26.0376 °C, which computes to 26.037599999999998) counts as
// at the corner.
const TemperatureTolC = 1e-6

// notAbove reports whether temperature t is at or below limit, within
// TemperatureTolC: the one comparison rule 1 makes.
func notAbove(t, limit float64) bool { return t <= limit+TemperatureTolC }

// fullRating applies rule 1 at assumed temperature ta: at or below the OAT,
// or at or below the corner (below it rated thrust is flat), there is no
// reduction; it records the reason and reports whether the rule acted.
func (red *Reduction) fullRating(ta, oat, corner float64, hasCorner bool) bool {
	switch {
	case notAbove(ta, oat):
		red.add(TANotAboveOAT)
	case hasCorner && notAbove(ta, corner):
		red.add(TABelowCorner)
	default:
		return false
	}
	return true
}

// add records that the rule with reason code c acted, after those before it.
func (red *Reduction) add(c Reasons) {
	red.Reasons |= c
	red.order[red.acted] = c
	red.acted++
}

// ReasonNames returns the reason codes of the rules that acted, in the
// order they acted (a cut to max_c comes before the rule-1 test it leads
// to); empty and non-nil for none.
func (red *Reduction) ReasonNames() []string {
	out := []string{}
	for _, c := range red.order[:red.acted] {
		out = append(out, c.Names()...)
	}
	return out
}

// largestMeeting returns the largest temperature in [lo, hi] at which the
// rated thrust is at least floor, given thrust(lo) ≥ floor > thrust(hi). It
// walks the thrust grid's temperature nodes down from hi to find the segment
// of the last crossing, then solves within it: exactly for a linear grid
// (thrust is linear in OAT between nodes, for every basis), by bisection for
// a monotone one.
func (r *Rating) largestMeeting(floor, alt, lo, hi, mach, isa float64) float64 {
	thrust := func(t float64) float64 { return r.thrustAt(alt, t, mach, isa) }
	top := hi
	for i := r.thrust.Points(grid.Temperature) - 1; i >= 0; i-- {
		t := oatOf(r.basis, r.thrust.Point(grid.Temperature, i), mach, isa)
		if t >= top {
			continue
		}
		if t <= lo {
			break
		}
		if thrust(t) >= floor {
			lo = t
			break
		}
		top = t
	}
	// thrust(lo) ≥ floor > thrust(top), with no node strictly between.
	fLo, fTop := thrust(lo), thrust(top)
	if r.thrust.Method() == grid.Linear && fLo != fTop {
		t := lo + (floor-fLo)/(fTop-fLo)*(top-lo)
		// Guard the last bit of rounding: the answer must meet the floor.
		for thrust(t) < floor && t > lo {
			t = math.Nextafter(t, lo)
		}
		return t
	}
	for range 100 {
		mid := (lo + top) / 2
		if mid == lo || mid == top {
			break
		}
		if thrust(mid) >= floor {
			lo = mid
		} else {
			top = mid
		}
	}
	return lo
}

// oatOf converts a temperature in a rating basis back to an OAT.
func oatOf(b TemperatureBasis, t, mach, isaC float64) float64 {
	switch b {
	case TAT:
		return (t+atmos.KelvinOffset)/(1+0.2*mach*mach) - atmos.KelvinOffset
	case ISADev:
		return t + isaC
	}
	return t
}
