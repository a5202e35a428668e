package thrustmap

import (
	"errors"
	"fmt"
	"math"
	mathbits "math/bits"
	"sync/atomic"
)

// MaxGates is the most gates a profile may declare: a lever state keeps its
// per-gate working values in fixed arrays so the hot path never allocates.
const MaxGates = 16

// NoLever selects the profile's own gate geometry, without any lever's
// calibration floors, in CommandAtTLA.
const NoLever = -1

// Model is a profile with a calibration: everything needed to turn raw lever
// counts into engine commands. It is immutable once built and safe for
// concurrent use; each lever of each goroutine keeps its own LeverState.
type Model struct {
	profile *Profile
	cal     *Calibration
	ratings []*Rating   // the rating of gates[i], or nil
	idle    int         // index of the idle gate; -1 when none (no reverse range)
	anyTLA  bool        // an expression reads tla: gates are re-evaluated at every position
	always  uint16      // bit i: gate i is active at any conditions (a rating, no when)
	levers  []leverGeom // per calibrated lever; plus the profile's own at the end

	// chainMax[i] bounds from above the effective target of gate i and of
	// every gate between it and idle, at any conditions (+Inf where an
	// expression takes part): a gate whose own target is at least the bound
	// of the next gate towards idle cannot be raised, and its chain need
	// not be worked out.
	chainMax [MaxGates]float64
	// shareable: the gate targets at one set of conditions are the same for
	// every lever, so a Frame may carry them from lever to lever (no
	// expression reads tla, no gate falls back to a lever's last command).
	shareable bool
}

// leverGeom is the gate geometry one lever sees: the profile's capture and
// hysteresis raised to the lever calibration's floors.
type leverGeom struct {
	cal        *LeverCalibration // nil for the profile's own geometry
	id         int
	capture    [MaxGates]float64
	hysteresis [MaxGates]float64
}

// ErrLever is wrapped by errors about lever ids, raw values and gate layouts.
var ErrLever = errors.New("lever")

// NewModel combines a profile with a calibration (nil for a model that only
// maps TLA). Each lever's effective capture and hysteresis are the larger of
// the profile's and the calibration's floors, and must still keep the gates
// apart by the spacing rule.
func NewModel(p *Profile, cal *Calibration) (*Model, error) {
	if len(p.gates) == 0 {
		return nil, fmt.Errorf("%w: profile %s declares no gates", ErrLever, p.source)
	}
	m := &Model{profile: p, cal: cal, idle: -1}
	for i, g := range p.gates {
		if g.Rating != "" {
			m.ratings = append(m.ratings, p.byName[g.Rating])
		} else {
			m.ratings = append(m.ratings, nil)
		}
		if g.Name == p.lever.IdleGate && p.lever.IdleGate != "" {
			m.idle = i
		}
		ge := p.gateExprs[i]
		if ge.when == nil && (ge.target == nil || g.Rating != "") {
			m.always |= 1 << i
		}
		m.anyTLA = m.anyTLA || (ge.target != nil && ge.target.usesTLA) || (ge.when != nil && ge.when.usesTLA)
	}
	m.boundChains()
	m.shareable = !m.anyTLA
	for i, ge := range p.gateExprs {
		if ge.target != nil && m.ratings[i] == nil {
			m.shareable = false
		}
	}
	if cal != nil {
		for _, l := range cal.levers {
			geom, err := m.geometry(l)
			if err != nil {
				return nil, err
			}
			m.levers = append(m.levers, geom)
		}
	}
	own, err := m.geometry(nil)
	if err != nil {
		return nil, err
	}
	m.levers = append(m.levers, own)
	return m, nil
}

// boundChains sets chainMax from the gates' own target bounds, gate by gate
// away from idle on either side.
func (m *Model) boundChains() {
	base := max(m.idle, 0)
	n := len(m.profile.gates)
	for i := base; i < n; i++ {
		m.chainMax[i] = m.ownMax(i)
		if i > base {
			m.chainMax[i] = math.Max(m.chainMax[i], m.chainMax[i-1])
		}
	}
	for i := base - 1; i >= 0; i-- {
		m.chainMax[i] = math.Max(m.ownMax(i), m.chainMax[i+1])
	}
}

// ownMax bounds gate i's own target from above at any conditions: its
// rating's greatest node plus every positive bleed correction, cut to the
// redline. A gate with an expression gets +Inf: a target expression may
// give anything, and skipping a `when` would skip the fallback it may flag.
func (m *Model) ownMax(i int) float64 {
	r := m.ratings[i]
	if ge := m.profile.gateExprs[i]; r == nil || ge.target != nil || ge.when != nil {
		return math.Inf(1)
	}
	_, hi := r.table.Bounds()
	for _, c := range r.corrections {
		d := c.Delta
		if c.Grid != nil {
			_, d = c.Grid.Bounds()
		}
		hi += math.Max(d, 0)
	}
	return math.Min(hi, m.profile.redline)
}

// geometry floors the profile's gate zones with lever l's calibration and
// checks the spacing rule.
func (m *Model) geometry(l *LeverCalibration) (leverGeom, error) {
	geom := leverGeom{cal: l, id: NoLever}
	var minCap, minHyst float64
	if l != nil {
		geom.id = l.spec.ID
		minCap, minHyst = l.spec.MinCaptureDeg, l.spec.MinHysteresisDeg
	}
	gates := m.profile.gates
	for i, g := range gates {
		geom.capture[i] = math.Max(g.CaptureDeg, minCap)
		geom.hysteresis[i] = math.Max(g.HysteresisDeg, minHyst)
		if i > 0 {
			lo := gates[i-1]
			if !(lo.TLADeg+geom.capture[i-1]+geom.hysteresis[i-1] < g.TLADeg-geom.capture[i]) {
				return geom, fmt.Errorf("%w %d: with the calibration's floors (capture ≥ %g°, hysteresis ≥ %g°) gates %q and %q overlap: need %g + %g + %g < %g − %g",
					ErrLever, geom.id, minCap, minHyst, lo.Name, g.Name, lo.TLADeg, geom.capture[i-1], geom.hysteresis[i-1], g.TLADeg, geom.capture[i])
			}
		}
	}
	return geom, nil
}

// Profile returns the model's profile.
func (m *Model) Profile() *Profile { return m.profile }

// Calibration returns the model's calibration, or nil.
func (m *Model) Calibration() *Calibration { return m.cal }

// GateName returns the name of gate i, or "" for -1.
func (m *Model) GateName(i int) string {
	if i < 0 || i >= len(m.profile.gates) {
		return ""
	}
	return m.profile.gates[i].Name
}

// EffectiveZone returns gate i's capture half-width and hysteresis for lever
// id (NoLever for the profile's own values).
func (m *Model) EffectiveZone(lever, i int) (captureDeg, hysteresisDeg float64, err error) {
	g, err := m.geom(lever)
	if err != nil {
		return 0, 0, err
	}
	return g.capture[i], g.hysteresis[i], nil
}

func (m *Model) geom(lever int) (*leverGeom, error) {
	for i := range m.levers {
		if m.levers[i].id == lever {
			return &m.levers[i], nil
		}
	}
	if m.cal == nil {
		return nil, fmt.Errorf("%w %d: the model has no calibration", ErrLever, lever)
	}
	return nil, fmt.Errorf("%w %d is not in calibration %s", ErrLever, lever, m.cal.source)
}

// LeverCommand is the engine command for one lever sample.
type LeverCommand struct {
	Lever     int     // the lever's calibration id (NoLever for a TLA-only command)
	Raw       float64 // the raw count as given
	TLADeg    float64 // the calibrated lever angle
	Gate      int     // the reported gate (with hysteresis), or -1
	Lower     int     // the gates interpolated between, or -1 inside a capture zone
	Upper     int
	Fraction  float64 // position between Lower's and Upper's zone edges, 0 to 1
	Value     float64 // the commanded parameter
	Parameter Parameter
	Reverse   bool    // the lever is in the reverse range
	Clamped   Clamped // table axes, raw or device range clamped
	Flags     Flags
}

// Unit returns "percent" or "ratio".
func (c LeverCommand) Unit() string { return c.Parameter.Unit() }

// Between reports whether the command was interpolated between two gates.
func (c LeverCommand) Between() bool { return c.Lower >= 0 }

// LeverState is the caller-owned state of one lever: the deadband's held
// reading, the reported gate and the gate targets worked out at the last
// conditions. Its zero value is ready (uncaptured). Use one per lever per
// goroutine; it may be moved to a new model, which resets it.
type LeverState struct {
	held    float64
	holding bool
	gate    int // reported gate + 1; 0 when none
	last    float64
	hasLast bool

	// The gate values at cond, for model and geom, worked out lazily: bit i
	// of a mask is gate i.
	model      *Model
	geom       *leverGeom
	cond       Conditions
	whenFailed bool // a `when` failed to evaluate at these conditions
	gateCache

	scratch *exprScratch
}

// gateCache is the gate values worked out at one set of conditions: bit i
// of a mask is gate i.
type gateCache struct {
	whenKnown uint16 // `when` evaluated
	whenTrue  uint16
	ownKnown  uint16 // own target worked out
	effKnown  uint16 // effective target worked out
	gates     [MaxGates]gateEval
}

// merge adds to c what from worked out (at the same conditions) and c has
// not.
func (c *gateCache) merge(from *gateCache) {
	for bits := (from.ownKnown &^ c.ownKnown) | (from.effKnown &^ c.effKnown); bits != 0; bits &= bits - 1 {
		i := mathbits.TrailingZeros16(bits)
		c.gates[i] = from.gates[i]
	}
	c.ownKnown |= from.ownKnown
	c.effKnown |= from.effKnown
	c.whenTrue = c.whenTrue&c.whenKnown | from.whenTrue&from.whenKnown&^c.whenKnown
	c.whenKnown |= from.whenKnown
}

// gateEval is one gate's working values at the state's conditions.
type gateEval struct {
	hasOwn   bool    // the gate has a target (its own, a fallback or the last command)
	own      float64 // the gate's own target
	ownFlags Flags
	ownClamp Clamped
	eff      float64 // raised to the active gate next nearer idle
	flags    Flags   // of eff
	clamp    Clamped // of eff
}

// Reset returns the state to uncaptured with no held reading.
func (s *LeverState) Reset() {
	scratch := s.scratch
	*s = LeverState{scratch: scratch}
}

// Command maps a raw lever count to the engine command at conditions c:
// deadband, calibration, gates, targets. The gate targets are worked out
// when the conditions differ from the last call's and reused otherwise. It
// allocates nothing unless an expression gate is evaluated (see
// BenchmarkCommandExpr) or it returns an error.
func (m *Model) Command(s *LeverState, lever int, raw float64, c Conditions) (LeverCommand, error) {
	var out LeverCommand
	err := m.command(s, lever, raw, c, &out)
	return out, err
}

// command is Command filling *out, which must be zero (left zero on an error).
func (m *Model) command(s *LeverState, lever int, raw float64, c Conditions, out *LeverCommand) error {
	geom := s.geom
	if s.model != m || geom == nil || geom.id != lever {
		var err error
		if geom, err = m.geom(lever); err != nil {
			return err
		}
		s.holding = false
	}
	if geom.cal == nil {
		return fmt.Errorf("%w %d has no calibration: use CommandAtTLA", ErrLever, lever)
	}
	if math.IsNaN(raw) || math.IsInf(raw, 0) {
		return fmt.Errorf("%w %d: raw %g is not a finite count", ErrLever, lever, raw)
	}
	if !s.holding || math.Abs(raw-s.held) > geom.cal.spec.Deadband {
		s.held, s.holding = raw, true
	}
	tla, cl := geom.cal.TLA(s.held)
	if raw < geom.cal.spec.RawMin || raw > geom.cal.spec.RawMax {
		cl |= ClampDevice
	}
	if err := m.commandAt(s, geom, raw, tla, cl, c, out); err != nil {
		*out = LeverCommand{}
		return err
	}
	return nil
}

// Frame carries the gate targets worked out for one lever to the next
// levers commanded at the same conditions in the same frame, so a quadrant
// works them out once, not once per lever. Its zero value is ready; keep one
// per goroutine and pass it to every lever of every frame: a frame at new
// conditions starts it afresh.
type Frame struct {
	model *Model
	cond  Conditions
	gateCache
}

// CommandFrame is Command for one of several levers commanded at the same
// conditions c in a frame: the gate targets that earlier levers of frame f
// worked out are reused, and those this lever works out are added to f. The
// results are those of Command. Models whose gate targets depend on the
// lever (an expression reading tla, a gate that may fall back to a lever's
// last command) share nothing. It allocates nothing.
func (m *Model) CommandFrame(f *Frame, s *LeverState, lever int, raw float64, c Conditions) (LeverCommand, error) {
	shared := m.shareable && f.model == m && f.cond == c
	if shared {
		s.adopt(m, f)
	}
	var out LeverCommand
	err := m.command(s, lever, raw, c, &out)
	if err == nil && m.shareable && s.model == m && s.cond == c && !s.whenFailed {
		if !shared {
			// The gates' entries are read only under their mask bits.
			f.model, f.cond = m, c
			f.whenKnown, f.whenTrue, f.ownKnown, f.effKnown = 0, 0, 0, 0
		}
		f.merge(&s.gateCache) // s worked them out at f's conditions, no `when` failing
	}
	return out, err
}

// adopt gives s the gate targets f holds that s has not worked out, when s
// is already set up on m (a fresh state works out its own).
func (s *LeverState) adopt(m *Model, f *Frame) {
	if s.model != m || s.geom == nil {
		return
	}
	if s.cond != f.cond {
		s.invalidate(f.cond)
	}
	if !s.whenFailed {
		s.merge(&f.gateCache)
	}
}

// CommandAtTLA is Command from a lever angle instead of raw counts, with the
// gate zones of lever id (NoLever: the profile's own).
func (m *Model) CommandAtTLA(s *LeverState, lever int, tlaDeg float64, c Conditions) (LeverCommand, error) {
	geom, err := m.geom(lever)
	if err != nil {
		return LeverCommand{}, err
	}
	if math.IsNaN(tlaDeg) || math.IsInf(tlaDeg, 0) {
		return LeverCommand{}, fmt.Errorf("%w: TLA %g is not a finite angle", ErrLever, tlaDeg)
	}
	var out LeverCommand
	err = m.commandAt(s, geom, math.NaN(), tlaDeg, 0, c, &out)
	return out, err
}

// commandAt is the gate logic (docs/methods.md, Gate rules) at lever angle
// tla; it fills *out, which must be zero.
func (m *Model) commandAt(s *LeverState, geom *leverGeom, raw, tla float64, cl Clamped, c Conditions, out *LeverCommand) error {
	switch {
	case s.model != m || s.geom != geom:
		if err := checkConditions(c); err != nil {
			return err
		}
		s.model, s.geom, s.gate, s.hasLast = m, geom, 0, false
		s.invalidate(c)
	case s.cond != c:
		if err := checkConditions(c); err != nil {
			return err
		}
		s.invalidate(c)
	case m.anyTLA:
		s.invalidate(c)
	}
	// A lever angle beyond the end stops (a calibration that runs past
	// them, or an angle given so) is held at the stop and reported.
	if lv := &m.profile.lever; lv.TLAMinDeg < lv.TLAMaxDeg {
		if tla < lv.TLAMinDeg {
			tla, cl = lv.TLAMinDeg, cl|ClampLever
		} else if tla > lv.TLAMaxDeg {
			tla, cl = lv.TLAMaxDeg, cl|ClampLever
		}
	}
	out.Lever, out.Raw, out.TLADeg, out.Parameter, out.Clamped = geom.id, raw, tla, m.profile.parameter, cl
	out.Gate, out.Lower, out.Upper = -1, -1, -1
	gates := m.profile.gates

	// The capture zone the lever is in, or the active gates either side.
	zone, lo, hi := -1, -1, -1
	for i := range gates {
		if m.always&(1<<i) == 0 && !s.active(m, i, tla) {
			continue
		}
		d := tla - gates[i].TLADeg
		if math.Abs(d) <= geom.capture[i] {
			zone = i
			break
		}
		if d > 0 {
			lo = i
		} else {
			hi = i
			break
		}
	}

	// The reported gate keeps its capture through the hysteresis band.
	rep := s.gate - 1
	if rep >= 0 && (!s.active(m, rep, tla) || math.Abs(tla-gates[rep].TLADeg) > geom.capture[rep]+geom.hysteresis[rep]) {
		rep = -1
	}
	if zone >= 0 {
		rep = zone
	}
	s.gate = rep + 1
	out.Gate = rep

	switch {
	case zone >= 0:
		e := s.effective(m, zone, tla)
		out.Value, out.Flags, out.Clamped = e.eff, e.flags, cl|e.clamp
	case lo >= 0 && hi >= 0:
		loEdge := gates[lo].TLADeg + geom.capture[lo]
		hiEdge := gates[hi].TLADeg - geom.capture[hi]
		f := (tla - loEdge) / (hiEdge - loEdge)
		a, b := s.effective(m, lo, tla), s.effective(m, hi, tla)
		out.Value = a.eff + (b.eff-a.eff)*f
		out.Flags, out.Clamped = a.flags|b.flags, cl|a.clamp|b.clamp
		out.Lower, out.Upper, out.Fraction = lo, hi, f
	case lo >= 0: // forward of the forwardmost active gate: hold it
		e := s.effective(m, lo, tla)
		out.Value, out.Flags, out.Clamped = e.eff, e.flags, cl|e.clamp
	case hi >= 0: // aft of the aftmost active gate
		e := s.effective(m, hi, tla)
		out.Value, out.Flags, out.Clamped = e.eff, e.flags, cl|e.clamp
	default:
		return fmt.Errorf("%w: no gate is active at these conditions", ErrLever)
	}

	if idle := m.idle; idle >= 0 && tla < gates[idle].TLADeg-geom.capture[idle] {
		out.Reverse = true
		if m.profile.lever.ReverseOnGroundOnly && !c.OnGround {
			// Reverse selected in the air: hold idle.
			e := s.effective(m, idle, tla)
			out.Value, out.Flags, out.Clamped = e.eff, e.flags|Interlock, cl|e.clamp
		}
	}
	if s.whenFailed {
		out.Flags |= Fallback
	}
	s.last, s.hasLast = out.Value, true
	return nil
}

// invalidate drops the gate values worked out at other conditions.
func (s *LeverState) invalidate(c Conditions) {
	s.cond, s.whenFailed = c, false
	s.whenKnown, s.ownKnown, s.effKnown = 0, 0, 0
}

// active reports whether gate i takes part at the state's conditions: its
// `when` holds and it has a target (its own, its fallback rating, or the last
// good command). A gate commanding a rating with no `when` always does.
func (s *LeverState) active(m *Model, i int, tla float64) bool {
	bit := uint16(1) << i
	ge := &m.profile.gateExprs[i]
	if ge.when != nil {
		if s.whenKnown&bit == 0 {
			s.whenKnown |= bit
			ok, err := s.exprs(m, tla).truth(ge.when)
			if err != nil {
				s.whenFailed = true // the gate drops out and every command says so
			}
			if err == nil && ok {
				s.whenTrue |= bit
			} else {
				s.whenTrue &^= bit
			}
		}
		if s.whenTrue&bit == 0 {
			return false
		}
	}
	if ge.target == nil || m.ratings[i] != nil {
		return true
	}
	return s.own(m, i, tla).hasOwn
}

// own works out gate i's own target once per conditions.
func (s *LeverState) own(m *Model, i int, tla float64) *gateEval {
	e := &s.gates[i]
	bit := uint16(1) << i
	if s.ownKnown&bit != 0 {
		return e
	}
	s.ownKnown |= bit
	*e = gateEval{}
	p := m.profile
	if ge := &p.gateExprs[i]; ge.target != nil {
		v, err := s.exprs(m, tla).number(ge.target)
		if err == nil {
			e.own, e.ownFlags = p.limit(v)
			e.hasOwn = true
			return e
		}
		e.ownFlags = Fallback
		if m.ratings[i] == nil {
			e.own, e.hasOwn = s.last, s.hasLast
			return e
		}
	}
	v, f, cl := p.plainValue(m.ratings[i], &s.cond)
	e.own, e.hasOwn = v, true
	e.ownFlags |= f
	e.ownClamp = cl
	return e
}

// effective returns gate g (active) with its effective target: its own,
// raised to the effective target of the active gate next nearer idle
// (docs/methods.md, Gate rules: monotone command), worked out along the chain
// from idle.
func (s *LeverState) effective(m *Model, g int, tla float64) *gateEval {
	e := &s.gates[g]
	if s.effKnown&(1<<g) != 0 {
		return e
	}
	base, step := max(m.idle, 0), -1
	if g < base {
		step = 1
	}
	s.own(m, g, tla)
	e.eff, e.flags, e.clamp = e.own, e.ownFlags, e.ownClamp
	// Nothing between g and idle can raise an own target at or above their
	// bound: then the chain is not worked out at all.
	if next := g + step; g != base && next >= 0 && next < len(m.profile.gates) && e.own < m.chainMax[next] {
		prev := -1
		for i := next; i >= 0 && (step < 0 && i >= base || step > 0 && i <= base); i += step {
			if m.always&(1<<i) != 0 || s.active(m, i, tla) {
				prev = i
				break
			}
		}
		if prev >= 0 {
			if p := s.effective(m, prev, tla); p.eff > e.own {
				e.eff, e.flags, e.clamp = p.eff, p.flags|Raised, p.clamp
			}
		}
	}
	s.effKnown |= 1 << g
	return e
}

// exprs returns the state's expression scratch, loaded with the conditions.
func (s *LeverState) exprs(m *Model, tla float64) *exprScratch {
	if s.scratch == nil || s.scratch.profile != m.profile {
		s.scratch = newExprScratch(m.profile)
	}
	s.scratch.set(s.cond, tla)
	return s.scratch
}

// Split returns the spread of lever angles across commands: the largest TLA
// minus the smallest, 0 for fewer than two.
func Split(cmds ...LeverCommand) float64 {
	if len(cmds) < 2 {
		return 0
	}
	lo, hi := cmds[0].TLADeg, cmds[0].TLADeg
	for _, c := range cmds[1:] {
		lo, hi = math.Min(lo, c.TLADeg), math.Max(hi, c.TLADeg)
	}
	return hi - lo
}

// Holder holds the current model for readers on other goroutines and lets a
// reload swap in a new one atomically; readers never see a half-built model.
type Holder struct {
	model atomic.Pointer[Model]
}

// NewHolder returns a holder of m.
func NewHolder(m *Model) *Holder {
	h := &Holder{}
	h.model.Store(m)
	return h
}

// Model returns the current model.
func (h *Holder) Model() *Model { return h.model.Load() }

// Swap installs m and returns the previous model.
func (h *Holder) Swap(m *Model) *Model { return h.model.Swap(m) }

// Reload builds a model with load and installs it; on error the current
// model stays in place.
func (h *Holder) Reload(load func() (*Model, error)) error {
	m, err := load()
	if err != nil {
		return err
	}
	h.model.Store(m)
	return nil
}

// LoadModel loads a profile (file or embedded name) and, when calPath is
// not empty, a calibration, and builds the model.
func LoadModel(profile, calPath string) (*Model, error) {
	p, err := LoadProfile(profile)
	if err != nil {
		return nil, err
	}
	var cal *Calibration
	if calPath != "" {
		if cal, err = LoadCalibration(calPath); err != nil {
			return nil, err
		}
	}
	return NewModel(p, cal)
}
