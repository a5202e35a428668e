package thrustmap

import (
	"fmt"
	"math"

	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// Profile is one engine type's rating data, corrections, assumed-temperature
// limits and lever gates. It is immutable once loaded and safe for concurrent
// use by any number of goroutines.
type Profile struct {
	source      string
	name        string
	description string
	parameter   Parameter
	bleeds      []string
	engines     int
	ratings     []*Rating
	byName      map[string]*Rating
	assumed     *AssumedTemperature
	redline     float64 // +Inf when none
	lever       Lever
	gates       []Gate
	gateExprs   []gateExprs // compiled target and when of gates[i]
	envelope    *Envelope
	order       [][]string
}

// Envelope is a profile's declared operating envelope: the conditions its
// rating data must cover.
type Envelope struct {
	AltitudeFt [2]float64 // pressure altitude, lowest and highest
	OATC       [2]float64 // outside air temperature, lowest and highest
	Mach       [2]float64 // Mach, lowest and highest (0, 0 when not declared)
	Ratings    []string   // the ratings that must cover it (all when empty)
}

// Envelope returns the declared envelope, or false when none is declared.
func (p *Profile) Envelope() (Envelope, bool) {
	if p.envelope == nil {
		return Envelope{}, false
	}
	e := *p.envelope
	e.Ratings = append([]string(nil), e.Ratings...)
	return e, true
}

// DefaultOrder is the rating order checked when a profile declares none
// (common practice): each at least the next wherever both are defined.
var DefaultOrder = [][]string{
	{"takeoff", "go-around", "continuous", "climb", "cruise", "idle"},
	{"takeoff", "reverse"},
}

// Order returns the chains of ratings the profile declares in [verify]
// order, or DefaultOrder restricted to its ratings.
func (p *Profile) Order() [][]string {
	if p.order != nil {
		out := make([][]string, len(p.order))
		for i, c := range p.order {
			out[i] = append([]string(nil), c...)
		}
		return out
	}
	var out [][]string
	for _, chain := range DefaultOrder {
		var kept []string
		for _, name := range chain {
			if p.byName[name] != nil {
				kept = append(kept, name)
			}
		}
		if len(kept) >= 2 {
			out = append(out, kept)
		}
	}
	return out
}

// gateExprs are a gate's compiled expressions (nil when not given).
type gateExprs struct {
	target, when *compiledExpr
}

// Rating is one rating table (takeoff, climb, ...) with its optional thrust
// grid, corner and bleed corrections.
type Rating struct {
	name        string
	description string
	basis       TemperatureBasis
	table       *grid.Grid
	thrust      *grid.Grid // nil when the rating has no thrust grid
	corner      corner
	corrections []Correction
	assumed     bool // an [assumed_temperature] rating
	needsISA    bool // the ISA temperature is needed for a look-up (ISA_DEV axis, corner)
}

// corner is a rating's flat-rating corner: none, one ISA deviation, or one
// OAT per altitude row of the table.
type corner struct {
	kind   cornerKind
	isaDev float64
	alts   []float64 // the table's altitude axis for perAltitude
	oats   []float64
}

type cornerKind int

const (
	noCorner cornerKind = iota
	cornerISADev
	cornerPerAltitude
)

// Correction is an amount added to a rating's value while a bleed flag is on:
// a constant, or a grid over its own axes (same temperature basis as the
// rating).
type Correction struct {
	Bleed int        // index into the profile's bleeds
	Delta float64    // the constant amount when Grid is nil
	Grid  *grid.Grid // a gridded amount, or nil
}

// AssumedTemperature holds the limits of reduced takeoff thrust by the
// assumed-temperature method (FAA AC 25-13).
type AssumedTemperature struct {
	Ratings []string // the ratings that may be reduced
	MaxC    float64  // the highest assumed temperature, °C
	// Corrected is true for method "corrected": an N1 value is scaled by
	// √(T_OAT/T_assumed) so the corrected speed equals that at the assumed
	// temperature. Method "table" (false) takes the table value as is.
	Corrected       bool
	MaxReductionPct float64 // thrust reduction limit, percent (25 per AC 25-13)
}

// Lever holds a profile's lever travel and reverse settings.
type Lever struct {
	TLAMinDeg           float64 // the aft end stop
	TLAMaxDeg           float64 // the forward end stop
	IdleGate            string  // below this gate's TLA is the reverse range
	ReverseOnGroundOnly bool    // hold idle and flag an interlock when reverse is selected in the air
}

// Gate is a detent position on the lever as declared in the profile.
type Gate struct {
	Name          string
	TLADeg        float64
	CaptureDeg    float64 // half-width of the zone that snaps to the gate
	HysteresisDeg float64 // extra width needed to leave the zone once inside
	Rating        string  // the rating commanded; with Target, the fallback when it fails
	Target        string  // an expression for the command, or ""
	When          string  // an expression; the gate is active while true ("" = always)
	Notch         bool    // the physical lever has a notch here
}

// Source returns where the profile came from: a file path or "embedded:NAME".
func (p *Profile) Source() string { return p.source }

// Name returns the profile's free-text name.
func (p *Profile) Name() string { return p.name }

// Description returns the profile's free-text description.
func (p *Profile) Description() string { return p.description }

// Parameter returns the rated parameter.
func (p *Profile) Parameter() Parameter { return p.parameter }

// Engines returns the number of engines (levers) the profile is for.
func (p *Profile) Engines() int { return p.engines }

// Bleeds returns a copy of the bleed flag names; bit i of a Bleeds set is
// Bleeds()[i].
func (p *Profile) Bleeds() []string { return append([]string(nil), p.bleeds...) }

// Ratings returns the ratings in file order.
func (p *Profile) Ratings() []*Rating { return append([]*Rating(nil), p.ratings...) }

// Rating returns the named rating.
func (p *Profile) Rating(name string) (*Rating, bool) {
	r, ok := p.byName[name]
	return r, ok
}

// AssumedTemperature returns the assumed-temperature limits, or nil when the
// profile has none.
func (p *Profile) AssumedTemperature() *AssumedTemperature {
	if p.assumed == nil {
		return nil
	}
	a := *p.assumed
	a.Ratings = append([]string(nil), a.Ratings...)
	return &a
}

// Redline returns the [limits] max and true, or false when none is set.
func (p *Profile) Redline() (float64, bool) {
	return p.redline, !math.IsInf(p.redline, 1)
}

// Lever returns the lever settings (zero when the profile has no [lever]).
func (p *Profile) Lever() Lever { return p.lever }

// Gates returns a copy of the gates in TLA order.
func (p *Profile) Gates() []Gate { return append([]Gate(nil), p.gates...) }

// NotchPosition is a place the physical lever rests: an end stop or a gate
// with a notch.
type NotchPosition struct {
	Name   string // the gate's name, or AftStop / ForwardStop
	TLADeg float64
}

// Names of the end stops when no notch gate sits there.
const (
	AftStop     = "aft-stop"
	ForwardStop = "forward-stop"
)

// NotchPositions lists where the lever rests, in TLA order: the aft end
// stop, the gates with notches between the stops, the forward end stop. A
// notch gate at an end stop is that stop (docs/methods.md, Sweep analysis).
func (p *Profile) NotchPositions() []NotchPosition {
	lv := p.lever
	aft, fwd := NotchPosition{AftStop, lv.TLAMinDeg}, NotchPosition{ForwardStop, lv.TLAMaxDeg}
	var inner []NotchPosition
	for _, g := range p.gates {
		switch {
		case !g.Notch:
		case g.TLADeg <= lv.TLAMinDeg:
			aft.Name = g.Name
		case g.TLADeg >= lv.TLAMaxDeg:
			fwd.Name = g.Name
		default:
			inner = append(inner, NotchPosition{g.Name, g.TLADeg})
		}
	}
	return append(append([]NotchPosition{aft}, inner...), fwd)
}

// Bleeds is a set of bleed flags: bit i is the profile's bleeds[i].
type Bleeds uint64

// MaxBleeds is the most bleed flags a profile may declare.
const MaxBleeds = 64

// Has reports whether bleed i is on.
func (b Bleeds) Has(i int) bool { return i >= 0 && i < MaxBleeds && b&(1<<uint(i)) != 0 }

// BleedSet returns the set with the named bleeds on, or an error naming an
// unknown one and listing the profile's.
func (p *Profile) BleedSet(names ...string) (Bleeds, error) {
	var set Bleeds
	for _, n := range names {
		i := p.bleedIndex(n)
		if i < 0 {
			return 0, fmt.Errorf("unknown bleed %q (the profile has %s)", n, listOrNone(p.bleeds))
		}
		set |= 1 << uint(i)
	}
	return set, nil
}

// BleedNames returns the names of the bleeds on in set.
func (p *Profile) BleedNames(set Bleeds) []string {
	names := []string{}
	for i, n := range p.bleeds {
		if set.Has(i) {
			names = append(names, n)
		}
	}
	return names
}

func (p *Profile) bleedIndex(name string) int {
	for i, n := range p.bleeds {
		if n == name {
			return i
		}
	}
	return -1
}

// Name returns the rating's name.
func (r *Rating) Name() string { return r.name }

// Description returns the rating's free-text description.
func (r *Rating) Description() string { return r.description }

// Basis returns what the rating's temperature axis means.
func (r *Rating) Basis() TemperatureBasis { return r.basis }

// Table returns the rating's value grid.
func (r *Rating) Table() *grid.Grid { return r.table }

// Thrust returns the rated-thrust grid in kN, or nil when the rating has none.
func (r *Rating) Thrust() *grid.Grid { return r.thrust }

// Corrections returns a copy of the rating's bleed corrections.
func (r *Rating) Corrections() []Correction { return append([]Correction(nil), r.corrections...) }

// Assumed reports whether the rating may be reduced by the assumed-temperature
// method.
func (r *Rating) Assumed() bool { return r.assumed }

// Corner returns the rating's flat-rating corner as declared: an ISA
// deviation (perAltitude nil), or one OAT per altitude row of the table
// (interpolated linearly between rows and held beyond them by CornerOAT);
// ok is false when the rating declares none.
func (r *Rating) Corner() (isaDev float64, alts, perAltitude []float64, ok bool) {
	switch r.corner.kind {
	case cornerISADev:
		return r.corner.isaDev, nil, nil, true
	case cornerPerAltitude:
		return 0, append([]float64(nil), r.corner.alts...), append([]float64(nil), r.corner.oats...), true
	}
	return 0, nil, nil, false
}

// CornerOAT returns the rating's corner (flat-rating kink) as an OAT at a
// pressure altitude, and false when the rating declares no corner. A
// per-altitude corner is interpolated linearly between rows and held beyond
// the first and last row.
func (r *Rating) CornerOAT(altFt, isaTempC float64) (float64, bool) {
	switch r.corner.kind {
	case cornerISADev:
		return isaTempC + r.corner.isaDev, true
	case cornerPerAltitude:
		return interp1(r.corner.alts, r.corner.oats, altFt), true
	}
	return 0, false
}

// interp1 is linear interpolation in (xs, ys) held at the ends.
func interp1(xs, ys []float64, x float64) float64 {
	n := len(xs)
	if x <= xs[0] {
		return ys[0]
	}
	if x >= xs[n-1] {
		return ys[n-1]
	}
	i := 0
	for i < n-2 && xs[i+1] <= x {
		i++
	}
	f := (x - xs[i]) / (xs[i+1] - xs[i])
	return ys[i]*(1-f) + ys[i+1]*f
}

func listOrNone(names []string) string {
	if len(names) == 0 {
		return "none"
	}
	s := ""
	for i, n := range names {
		if i > 0 {
			s += ", "
		}
		s += n
	}
	return s
}
