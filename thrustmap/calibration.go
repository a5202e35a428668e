package thrustmap

import (
	"bytes"
	"cmp"
	"embed"
	"fmt"
	"math"
	"path"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// CalibrationSchema is the calibration file format version this build
// reads and writes.
const CalibrationSchema = 1

// LeverSpec is one lever's calibration as plain data: what the file holds
// and what sweep analysis or a hand edit produces. NewLeverCalibration checks
// it and builds the map.
type LeverSpec struct {
	ID               int          // the lever's identifier everywhere
	RawMin, RawMax   float64      // the device's range of raw counts
	Fit              grid.Method  // linear or monotone
	Points           [][2]float64 // (raw, TLA°) pairs, strictly monotone in raw and in TLA
	Deadband         float64      // counts: a reading is held until it moves more than this
	NoiseSigma       float64      // counts, measured
	MinCaptureDeg    float64      // floor on every gate's capture half-width
	MinHysteresisDeg float64      // floor on every gate's hysteresis
	// Axis is the device axis the lever is wired to, for live input: an
	// evdev axis name or code ("ABS_Z", "2") or a joystick-interface axis
	// number; "" when not recorded.
	Axis string
}

// LeverCalibration maps one lever's raw counts to TLA and back. It is
// immutable and safe for concurrent use.
type LeverCalibration struct {
	spec     LeverSpec
	forward  *grid.Curve // raw (increasing) → TLA
	inverse  *grid.Curve // TLA (increasing) → raw, for a linear fit
	inverted bool        // TLA falls as raw rises
	rawLo    float64     // the calibrated raw range
	rawHi    float64
	tlaLo    float64 // the calibrated TLA range
	tlaHi    float64
}

// NewLeverCalibration checks a lever spec and builds its maps. Points may
// run in either direction (an inverted lever is normal) but must be strictly
// monotone in raw and in TLA, inside the device range.
func NewLeverCalibration(spec LeverSpec) (*LeverCalibration, error) {
	if err := checkLeverSpec(&spec); err != nil {
		return nil, err
	}
	pts := slices.Clone(spec.Points)
	spec.Points = slices.Clone(spec.Points)
	slices.SortFunc(pts, func(a, b [2]float64) int { return cmp.Compare(a[0], b[0]) })
	raws := make([]float64, len(pts))
	tlas := make([]float64, len(pts))
	for i, p := range pts {
		raws[i], tlas[i] = p[0], p[1]
	}
	lc := &LeverCalibration{spec: spec, inverted: tlas[0] > tlas[len(tlas)-1],
		rawLo: raws[0], rawHi: raws[len(raws)-1]}
	var err error
	if lc.forward, err = grid.NewCurve(raws, tlas, spec.Fit); err != nil {
		return nil, fmt.Errorf("lever %d: %w", spec.ID, err)
	}
	if lc.inverted {
		slices.Reverse(raws)
		slices.Reverse(tlas)
	}
	lc.tlaLo, lc.tlaHi = tlas[0], tlas[len(tlas)-1]
	if lc.inverse, err = grid.NewCurve(tlas, raws, grid.Linear); err != nil {
		return nil, fmt.Errorf("lever %d: %w", spec.ID, err)
	}
	return lc, nil
}

// checkLeverSpec reports the first fault of a spec, naming the lever and,
// for a bad point, its index.
func checkLeverSpec(s *LeverSpec) error {
	bad := func(format string, args ...any) error {
		return fmt.Errorf("lever %d: %s", s.ID, fmt.Sprintf(format, args...))
	}
	if !finite(s.RawMin) || !finite(s.RawMax) || !(s.RawMin < s.RawMax) {
		return bad("raw_min %g and raw_max %g: want finite counts with raw_min below raw_max", s.RawMin, s.RawMax)
	}
	if len(s.Points) < 2 {
		return bad("has %d point(s), want at least 2 (raw, TLA) pairs", len(s.Points))
	}
	dirRaw, dirTLA := 0, 0
	for i, p := range s.Points {
		if !finite(p[0]) || !finite(p[1]) {
			return bad("point %d (%g, %g) is not finite", i, p[0], p[1])
		}
		if p[0] < s.RawMin || p[0] > s.RawMax {
			return bad("point %d: raw %g is outside the device range %g to %g", i, p[0], s.RawMin, s.RawMax)
		}
		if i == 0 {
			continue
		}
		q := s.Points[i-1]
		dr, dt := cmp.Compare(p[0], q[0]), cmp.Compare(p[1], q[1])
		if dr == 0 || dt == 0 {
			return bad("point %d (%g, %g) repeats the raw or the TLA of point %d (%g, %g): points must be strictly monotone", i, p[0], p[1], i-1, q[0], q[1])
		}
		if i == 1 {
			dirRaw, dirTLA = dr, dt
		} else if dr != dirRaw || dt != dirTLA {
			return bad("point %d (%g, %g) turns back: points must be strictly monotone in raw and in TLA", i, p[0], p[1])
		}
	}
	switch {
	case !finite(s.Deadband) || s.Deadband < 0:
		return bad("deadband %g: want counts ≥ 0", s.Deadband)
	case !finite(s.NoiseSigma) || s.NoiseSigma < 0:
		return bad("noise_sigma %g: want counts ≥ 0", s.NoiseSigma)
	case !finite(s.MinCaptureDeg) || s.MinCaptureDeg < 0:
		return bad("min_capture_deg %g: want degrees ≥ 0", s.MinCaptureDeg)
	case !finite(s.MinHysteresisDeg) || s.MinHysteresisDeg < 0:
		return bad("min_hysteresis_deg %g: want degrees ≥ 0", s.MinHysteresisDeg)
	}
	return nil
}

// Spec returns a copy of the lever's calibration data.
func (l *LeverCalibration) Spec() LeverSpec {
	s := l.spec
	s.Points = slices.Clone(s.Points)
	return s
}

// ID returns the lever's identifier.
func (l *LeverCalibration) ID() int { return l.spec.ID }

// Inverted reports whether TLA falls as the raw count rises.
func (l *LeverCalibration) Inverted() bool { return l.inverted }

// TLA maps a raw count to the lever angle in degrees. Beyond the calibrated
// points the angle is held at the end point's and ClampRaw is set; beyond the
// device range ClampDevice is set as well. raw must not be NaN.
func (l *LeverCalibration) TLA(raw float64) (float64, Clamped) {
	tla, clamped := l.forward.At(raw)
	var cl Clamped
	if clamped {
		cl |= ClampRaw
	}
	if raw < l.spec.RawMin || raw > l.spec.RawMax {
		cl |= ClampDevice
	}
	return tla, cl
}

// Raw maps a lever angle back to a raw count, for marking notches and
// driving motorised levers. Angles beyond the calibrated range are held at
// the end point and reported clamped. For a monotone fit the forward map is
// inverted numerically to a thousandth of a count.
func (l *LeverCalibration) Raw(tlaDeg float64) (raw float64, clamped bool) {
	if math.IsNaN(tlaDeg) {
		return math.NaN(), true
	}
	raw, clamped = l.inverse.At(tlaDeg)
	if l.forward.Method() == grid.Linear || clamped {
		return raw, clamped
	}
	// Bisect the monotone forward map between the calibrated ends.
	lo, hi := l.rawLo, l.rawHi
	for hi-lo > 1e-3 {
		mid := (lo + hi) / 2
		t, _ := l.forward.At(mid)
		if (t < tlaDeg) != l.inverted {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2, false
}

// WithPoint returns the lever's calibration with the point (raw, tlaDeg)
// added, replacing a point at the same angle — a point measured by hand
// between notches, where a sweep cannot see the pot's taper. The points must
// stay strictly monotone.
func (l *LeverCalibration) WithPoint(raw, tlaDeg float64) (*LeverCalibration, error) {
	spec := l.Spec()
	spec.Points = slices.DeleteFunc(spec.Points, func(p [2]float64) bool { return p[1] == tlaDeg })
	spec.Points = append(spec.Points, [2]float64{raw, tlaDeg})
	slices.SortFunc(spec.Points, func(a, b [2]float64) int { return cmp.Compare(a[1], b[1]) })
	return NewLeverCalibration(spec)
}

// Calibration is the hardware calibration of a quadrant's levers, one entry
// per lever id. It is immutable and safe for concurrent use.
type Calibration struct {
	source string
	levers []*LeverCalibration
}

// NewCalibration gathers lever calibrations; ids must be unique.
func NewCalibration(levers ...*LeverCalibration) (*Calibration, error) {
	c := &Calibration{}
	for _, l := range levers {
		if c.Lever(l.ID()) != nil {
			return nil, fmt.Errorf("lever %d is calibrated twice", l.ID())
		}
		c.levers = append(c.levers, l)
	}
	return c, nil
}

// Source returns the file the calibration was read from, if any.
func (c *Calibration) Source() string { return c.source }

// Levers returns the lever calibrations in file order.
func (c *Calibration) Levers() []*LeverCalibration { return slices.Clone(c.levers) }

// Lever returns the calibration of lever id, or nil.
func (c *Calibration) Lever(id int) *LeverCalibration {
	for _, l := range c.levers {
		if l.spec.ID == id {
			return l
		}
	}
	return nil
}

// With returns a calibration with lever l added or replacing the one of the
// same id; c is unchanged.
func (c *Calibration) With(l *LeverCalibration) *Calibration {
	out := &Calibration{source: c.source}
	replaced := false
	for _, old := range c.levers {
		if old.spec.ID == l.spec.ID {
			out.levers = append(out.levers, l)
			replaced = true
		} else {
			out.levers = append(out.levers, old)
		}
	}
	if !replaced {
		out.levers = append(out.levers, l)
	}
	return out
}

type calibrationFile struct {
	Schema int              `toml:"schema"`
	Lever  []leverCalibFile `toml:"lever"`
}

type leverCalibFile struct {
	ID               *int        `toml:"id"`
	RawMin           *float64    `toml:"raw_min"`
	RawMax           *float64    `toml:"raw_max"`
	Fit              string      `toml:"fit"`
	Points           [][]float64 `toml:"points"`
	Deadband         float64     `toml:"deadband"`
	NoiseSigma       float64     `toml:"noise_sigma"`
	MinCaptureDeg    float64     `toml:"min_capture_deg"`
	MinHysteresisDeg float64     `toml:"min_hysteresis_deg"`
	Axis             string      `toml:"axis"`
}

//go:embed calibrations/*.toml
var embeddedCalibrations embed.FS

// EmbeddedCalibrationText returns the TOML text of the calibration built in
// for an embedded profile (an invented quadrant for the demos).
func EmbeddedCalibrationText(name string) ([]byte, bool) {
	b, err := embeddedCalibrations.ReadFile(path.Join("calibrations", name+".toml"))
	return b, err == nil
}

// LoadCalibration reads a calibration file, or selects the calibration
// built in for an embedded profile when nameOrPath is that profile's name
// (an argument that holds a "/" or ends in ".toml" is always a path).
func LoadCalibration(nameOrPath string) (*Calibration, error) {
	src, b, err := readNamed(nameOrPath, EmbeddedCalibrationText)
	if err != nil {
		return nil, err
	}
	return ParseCalibration(src, b)
}

// ParseCalibration decodes and checks a calibration's TOML text; faults are
// FileErrors naming the line and key.
func ParseCalibration(file string, data []byte) (*Calibration, error) {
	var f calibrationFile
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil {
		return nil, tomlError(file, err, reflect.TypeFor[calibrationFile]())
	}
	c := &collector{file: file, lines: indexKeyLines(data)}
	if f.Schema != CalibrationSchema {
		c.add("schema", "is %d; this build reads calibration schema %d", f.Schema, CalibrationSchema)
	}
	if len(f.Lever) == 0 {
		c.add("lever", "no [[lever]] tables: a calibration needs at least one lever")
	}
	cal := &Calibration{source: file}
	for i, lf := range f.Lever {
		key := fmt.Sprintf("lever[%d]", i)
		if lf.ID == nil || lf.RawMin == nil || lf.RawMax == nil {
			c.add(key, "needs id, raw_min and raw_max")
			continue
		}
		fit, err := grid.ParseMethod(lf.Fit)
		if err != nil {
			c.add(key+".fit", "%v", err)
			continue
		}
		spec := LeverSpec{ID: *lf.ID, RawMin: *lf.RawMin, RawMax: *lf.RawMax, Fit: fit, Deadband: lf.Deadband,
			NoiseSigma: lf.NoiseSigma, MinCaptureDeg: lf.MinCaptureDeg, MinHysteresisDeg: lf.MinHysteresisDeg, Axis: lf.Axis}
		shapeOK := true
		for j, p := range lf.Points {
			if len(p) != 2 {
				c.add(fmt.Sprintf("%s.points[%d]", key, j), "has %d numbers, want a [raw, TLA] pair", len(p))
				shapeOK = false
				continue
			}
			spec.Points = append(spec.Points, [2]float64{p[0], p[1]})
		}
		if !shapeOK {
			continue
		}
		l, err := NewLeverCalibration(spec)
		if err != nil {
			c.add(key+pointKey(err, len(spec.Points)), "%v", err)
			continue
		}
		if cal.Lever(spec.ID) != nil {
			c.add(key+".id", "lever %d is calibrated twice", spec.ID)
			continue
		}
		cal.levers = append(cal.levers, l)
	}
	if err := c.err(); err != nil {
		return nil, err
	}
	return cal, nil
}

// pointKey finds "point N" in a spec error so the fault's line is the
// point's own.
func pointKey(err error, n int) string {
	msg := err.Error()
	if i := strings.Index(msg, ": point "); i >= 0 {
		rest := msg[i+len(": point "):]
		end := strings.IndexAny(rest, " :")
		if end > 0 {
			if j, err := strconv.Atoi(rest[:end]); err == nil && j < n {
				return fmt.Sprintf(".points[%d]", j)
			}
		}
	}
	return ""
}

// Encode returns the calibration as TOML in the file format.
func (c *Calibration) Encode() []byte {
	var b bytes.Buffer
	b.WriteString("# thrustmap lever calibration, written by the tool. Simulation only.\n")
	fmt.Fprintf(&b, "schema = %d\n", CalibrationSchema)
	num := func(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
	for _, l := range c.levers {
		s := l.spec
		fmt.Fprintf(&b, "\n[[lever]]\nid = %d\nraw_min = %s\nraw_max = %s\nfit = %q\npoints = [",
			s.ID, num(s.RawMin), num(s.RawMax), s.Fit.String())
		for i, p := range s.Points {
			if i > 0 {
				b.WriteString(", ")
			}
			fmt.Fprintf(&b, "[%s, %s]", num(p[0]), num(p[1]))
		}
		fmt.Fprintf(&b, "]\ndeadband = %s\nnoise_sigma = %s\nmin_capture_deg = %s\nmin_hysteresis_deg = %s\n",
			num(s.Deadband), num(s.NoiseSigma), num(s.MinCaptureDeg), num(s.MinHysteresisDeg))
		if s.Axis != "" {
			fmt.Fprintf(&b, "axis = %q\n", s.Axis)
		}
	}
	return b.Bytes()
}

// WriteFile writes the calibration atomically (temporary file, fsync,
// rename), keeping the previous file as path+".bak".
func (c *Calibration) WriteFile(path string) error {
	return atomicfile.WriteFile(path, c.Encode(), 0o644, true)
}
