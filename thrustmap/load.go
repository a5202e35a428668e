package thrustmap

import (
	"bytes"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path"
	"path/filepath"
	"reflect"
	"slices"
	"strings"

	"github.com/pelletier/go-toml/v2"

	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

// The embedded profiles, and any table files they name, live in profiles/.
//
//go:embed profiles
var embedded embed.FS

// EmbeddedPrefix starts the Source of an embedded profile.
const EmbeddedPrefix = "embedded:"

// EmbeddedProfiles returns the names of the profiles built into the program
// ("demo", "demo-epr", "demo-turboprop").
func EmbeddedProfiles() []string {
	entries, _ := embedded.ReadDir("profiles")
	var names []string
	for _, e := range entries {
		if name, ok := strings.CutSuffix(e.Name(), ".toml"); ok {
			names = append(names, name)
		}
	}
	return names
}

// EmbeddedProfileText returns the TOML text of an embedded profile.
func EmbeddedProfileText(name string) ([]byte, bool) {
	b, err := embedded.ReadFile(path.Join("profiles", name+".toml"))
	return b, err == nil
}

// LoadProfile reads a profile from a file, or selects an embedded one when
// nameOrPath is an embedded profile's name (an argument that holds a "/" or
// ends in ".toml" is always a path). The table files a profile names
// (table_file, thrust_file, delta_file) are read relative to the profile
// file's directory; an embedded profile's from the embedded profiles.
func LoadProfile(nameOrPath string) (*Profile, error) {
	src, b, err := readNamed(nameOrPath, EmbeddedProfileText)
	if err != nil {
		if os.IsNotExist(err) && !strings.ContainsAny(nameOrPath, "/.") {
			return nil, fmt.Errorf("profile %q: no such file and no embedded profile of that name (embedded: %s)", nameOrPath, strings.Join(EmbeddedProfiles(), ", "))
		}
		return nil, err
	}
	if name, ok := strings.CutPrefix(src, EmbeddedPrefix); ok {
		files := fsTables(embedded, path.Join("profiles", name+".toml"))
		return parseProfile(src, b, func(ref string) (string, []byte, error) {
			name, data, err := files(ref)
			return EmbeddedPrefix + strings.TrimPrefix(name, "profiles/"), data, err
		})
	}
	return parseProfile(src, b, diskTables(filepath.Dir(src)))
}

// tableReader reads a table file a profile names (table_file, thrust_file,
// delta_file) and returns the name to report it by and its text. A nil
// tableReader means the profile has no directory to read from.
type tableReader func(ref string) (name string, data []byte, err error)

// diskTables reads table files relative to dir (absolute names as they are).
func diskTables(dir string) tableReader {
	return func(ref string) (string, []byte, error) {
		name := filepath.FromSlash(ref)
		if !filepath.IsAbs(name) {
			name = filepath.Join(dir, name)
		}
		data, err := os.ReadFile(name)
		return name, data, err
	}
}

// fsTables reads table files from fsys relative to the directory of the
// profile at file.
func fsTables(fsys fs.FS, file string) tableReader {
	return func(ref string) (string, []byte, error) {
		name := path.Join(path.Dir(file), ref)
		if path.IsAbs(ref) || !fs.ValidPath(name) {
			return name, nil, fmt.Errorf("%q is outside the directory tree the profile was loaded from", ref)
		}
		data, err := fs.ReadFile(fsys, name)
		return name, data, err
	}
}

// readNamed returns the text of an embedded file when nameOrPath is a name
// embedded finds (and holds no "/" and does not end in ".toml"), else of
// the file at nameOrPath, with its source name for messages.
func readNamed(nameOrPath string, embedded func(string) ([]byte, bool)) (string, []byte, error) {
	if !strings.ContainsRune(nameOrPath, '/') && !strings.HasSuffix(nameOrPath, ".toml") {
		if b, ok := embedded(nameOrPath); ok {
			return EmbeddedPrefix + nameOrPath, b, nil
		}
	}
	b, err := os.ReadFile(nameOrPath)
	return nameOrPath, b, err
}

// profileFile mirrors the profile's TOML for strict decoding.
type profileFile struct {
	Schema      int              `toml:"schema"`
	Name        string           `toml:"name"`
	Description string           `toml:"description"`
	Parameter   string           `toml:"parameter"`
	Bleeds      []string         `toml:"bleeds"`
	Engines     *int             `toml:"engines"`
	Rating      []ratingFile     `toml:"rating"`
	Correction  []correctionFile `toml:"correction"`
	Assumed     *assumedFile     `toml:"assumed_temperature"`
	Limits      *limitsFile      `toml:"limits"`
	Lever       *leverFile       `toml:"lever"`
	Gate        []gateFile       `toml:"gate"`
	Envelope    *envelopeFile    `toml:"envelope"`
	Verify      *verifyFile      `toml:"verify"`
}

// envelopeFile is the declared operating envelope the data must cover.
type envelopeFile struct {
	AltitudeFt   []float64 `toml:"altitude_ft"`
	TemperatureC []float64 `toml:"temperature_c"`
	Mach         []float64 `toml:"mach"`
	Ratings      []string  `toml:"ratings"`
}

// verifyFile holds what the data verifier checks beyond the defaults.
type verifyFile struct {
	// Order lists chains of ratings, each at least the next wherever both
	// are defined, e.g. [["takeoff", "go-around", "continuous"]].
	Order [][]string `toml:"order"`
}

type ratingFile struct {
	Name          string    `toml:"name"`
	Description   string    `toml:"description"`
	Temperature   string    `toml:"temperature"`
	AltitudeFt    []float64 `toml:"altitude_ft"`
	TemperatureC  []float64 `toml:"temperature_c"`
	Mach          []float64 `toml:"mach"`
	Values        any       `toml:"values"`
	TableFile     string    `toml:"table_file"` // CSV with the axes and values instead
	Interpolation string    `toml:"interpolation"`
	ThrustKN      any       `toml:"thrust_kn"`
	ThrustFile    string    `toml:"thrust_file"` // CSV with the thrust grid instead
	CornerISADevC *float64  `toml:"corner_isa_dev_c"`
	CornerC       []float64 `toml:"corner_c"`
}

type correctionFile struct {
	Rating        string    `toml:"rating"`
	Bleed         string    `toml:"bleed"`
	Delta         *float64  `toml:"delta"`
	AltitudeFt    []float64 `toml:"altitude_ft"`
	TemperatureC  []float64 `toml:"temperature_c"`
	Mach          []float64 `toml:"mach"`
	DeltaValues   any       `toml:"delta_values"`
	DeltaFile     string    `toml:"delta_file"` // CSV with the axes and delta values instead
	Interpolation string    `toml:"interpolation"`
}

type assumedFile struct {
	Rating          string   `toml:"rating"`
	Ratings         []string `toml:"ratings"`
	MaxC            *float64 `toml:"max_c"`
	Method          string   `toml:"method"`
	MaxReductionPct *float64 `toml:"max_reduction_pct"`
}

type limitsFile struct {
	Max *float64 `toml:"max"`
}

type leverFile struct {
	TLAMinDeg           *float64 `toml:"tla_min_deg"`
	TLAMaxDeg           *float64 `toml:"tla_max_deg"`
	IdleGate            string   `toml:"idle_gate"`
	ReverseOnGroundOnly bool     `toml:"reverse_on_ground_only"`
}

type gateFile struct {
	Name          string   `toml:"name"`
	TLADeg        *float64 `toml:"tla_deg"`
	CaptureDeg    float64  `toml:"capture_deg"`
	HysteresisDeg float64  `toml:"hysteresis_deg"`
	Rating        string   `toml:"rating"`
	Target        string   `toml:"target"`
	When          string   `toml:"when"`
	Notch         bool     `toml:"notch"`
}

// ProfileSchema is the profile file format version this build reads.
const ProfileSchema = 1

// ParseProfile decodes and checks a profile's TOML text. file names the
// source in errors and in Source. Every fault found is reported, each with
// its line and key path, as FileErrors. ParseProfile has no directory to
// read table files from: a profile that names one (table_file, thrust_file,
// delta_file) is an error here; load it with LoadProfile or ParseProfileFS.
func ParseProfile(file string, data []byte) (*Profile, error) {
	return parseProfile(file, data, nil)
}

// ParseProfileFS is ParseProfile for a profile that lives in fsys at file (a
// slash-separated path, as fs.ValidPath wants): the table files it names are
// read from fsys relative to file's directory, and may not lead out of
// fsys. file names the profile in errors and in Source, and a table file's
// path in fsys names it in errors.
func ParseProfileFS(fsys fs.FS, file string, data []byte) (*Profile, error) {
	return parseProfile(file, data, fsTables(fsys, file))
}

func parseProfile(file string, data []byte, files tableReader) (*Profile, error) {
	var f profileFile
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil {
		return nil, tomlError(file, err, reflect.TypeFor[profileFile]())
	}
	c := &collector{file: file, lines: indexKeyLines(data), broken: map[string]bool{}}
	p := buildProfile(c, &f, files)
	if err := c.err(); err != nil {
		return nil, err
	}
	p.source = file
	return p, nil
}

// buildProfile checks the decoded file and builds the profile, recording
// every fault in c.
func buildProfile(c *collector, f *profileFile, files tableReader) *Profile {
	p := &Profile{name: f.Name, description: f.Description, byName: map[string]*Rating{}, redline: math.Inf(1), engines: 1}
	if f.Schema != ProfileSchema {
		if !c.lines.has("schema") {
			c.add("schema", "missing: want schema = %d", ProfileSchema)
		} else {
			c.add("schema", "is %d; this build reads schema %d", f.Schema, ProfileSchema)
		}
	}
	param, err := ParseParameter(f.Parameter)
	if err != nil {
		c.add("parameter", "%v", err)
	}
	p.parameter = param
	if f.Engines != nil {
		if *f.Engines < 1 || *f.Engines > 16 {
			c.add("engines", "is %d, want 1 to 16", *f.Engines)
		} else {
			p.engines = *f.Engines
		}
	}
	if len(f.Bleeds) > MaxBleeds {
		c.add("bleeds", "has %d names, at most %d are allowed", len(f.Bleeds), MaxBleeds)
	}
	for i, b := range f.Bleeds {
		key := fmt.Sprintf("bleeds[%d]", i)
		switch {
		case b == "":
			c.add(key, "is empty, want a name")
		case slices.Index(f.Bleeds, b) < i:
			c.add(key, "%q is declared twice", b)
		}
	}
	p.bleeds = append([]string(nil), f.Bleeds...)

	if len(f.Rating) == 0 {
		c.add("rating", "no [[rating]] tables: a profile needs at least one rating")
	}
	for i := range f.Rating {
		r := buildRating(c, fmt.Sprintf("rating[%d]", i), &f.Rating[i], param, files)
		if r == nil && f.Rating[i].Name != "" {
			c.broken[f.Rating[i].Name] = true // its own faults are reported; do not echo them
		}
		if r != nil {
			if _, dup := p.byName[r.name]; dup {
				c.add(fmt.Sprintf("rating[%d].name", i), "rating %q is declared twice", r.name)
				continue
			}
			p.ratings = append(p.ratings, r)
			p.byName[r.name] = r
		}
	}
	for i := range f.Correction {
		buildCorrection(c, fmt.Sprintf("correction[%d]", i), &f.Correction[i], p, files)
	}
	if f.Assumed != nil {
		p.assumed = buildAssumed(c, f.Assumed, p)
	}
	if f.Limits != nil && f.Limits.Max != nil {
		lo, hi := param.Bounds()
		if m := *f.Limits.Max; !(m > lo && m <= hi) {
			c.add("limits.max", "is %g, want a %s redline above %g and at most %g", m, param, lo, hi)
		} else {
			p.redline = m
		}
	}
	buildLever(c, f, p)
	buildEnvelope(c, f.Envelope, p)
	if f.Verify != nil {
		for i, chain := range f.Verify.Order {
			key := fmt.Sprintf("verify.order[%d]", i)
			if len(chain) < 2 {
				c.add(key, "has %d rating(s), want a chain of at least 2, highest first", len(chain))
			}
			for _, name := range chain {
				if p.byName[name] == nil {
					c.addCode(CheckReference, key, "names rating %q, which the profile does not declare (ratings: %s)", name, listOrNone(ratingNames(p)))
				}
			}
		}
		p.order = f.Verify.Order
	}
	return p
}

// buildEnvelope checks [envelope]: each range two finite, increasing numbers.
func buildEnvelope(c *collector, f *envelopeFile, p *Profile) {
	if f == nil {
		return
	}
	e := Envelope{}
	for _, r := range []struct {
		key string
		v   []float64
		out *[2]float64
	}{{"altitude_ft", f.AltitudeFt, &e.AltitudeFt}, {"temperature_c", f.TemperatureC, &e.OATC}, {"mach", f.Mach, &e.Mach}} {
		if r.v == nil {
			continue
		}
		if len(r.v) != 2 || !finite(r.v[0]) || !finite(r.v[1]) || !(r.v[0] <= r.v[1]) {
			c.add("envelope."+r.key, "want [lowest, highest], two finite numbers in order")
			continue
		}
		*r.out = [2]float64{r.v[0], r.v[1]}
	}
	if f.AltitudeFt == nil || f.TemperatureC == nil {
		c.add("envelope", "needs altitude_ft and temperature_c ranges ([lowest, highest])")
		return
	}
	for i, name := range f.Ratings {
		if p.byName[name] == nil && !c.broken[name] {
			c.addCode(CheckReference, fmt.Sprintf("envelope.ratings[%d]", i), "names rating %q, which the profile does not declare (ratings: %s)", name, listOrNone(ratingNames(p)))
		}
	}
	e.Ratings = append([]string(nil), f.Ratings...)
	if e.AltitudeFt[0] < atmos.MinAltitudeFt || e.AltitudeFt[1] > atmos.MaxAltitudeFt {
		c.add("envelope.altitude_ft", "runs outside the standard atmosphere (%.0f to %.0f ft)", atmos.MinAltitudeFt, atmos.MaxAltitudeFt)
		return
	}
	p.envelope = &e
}

// buildRating checks one [[rating]] table; it returns nil when the rating
// cannot be built (the faults are in c).
func buildRating(c *collector, key string, f *ratingFile, param Parameter, files tableReader) *Rating {
	r := &Rating{name: f.Name, description: f.Description}
	if f.Name == "" {
		c.add(key+".name", "missing: every rating needs a name")
	}
	basis, err := ParseTemperatureBasis(f.Temperature)
	if err != nil {
		c.add(key+".temperature", "%v", err)
	}
	r.basis = basis
	method, err := grid.ParseMethod(f.Interpolation)
	if err != nil {
		c.add(key+".interpolation", "%v", err)
	}
	lo, hi := param.Bounds()
	inBounds := func(v float64) string {
		if v < lo || v > hi {
			return fmt.Sprintf("%g is outside the physical range of %s (%g to %g)", v, param, lo, hi)
		}
		return ""
	}
	thrustBounds := func(v float64) string {
		if v < 0 {
			return fmt.Sprintf("%g kN is negative", v)
		}
		return ""
	}
	var axes [grid.NumAxes][]float64
	var table *grid.Grid
	rows := "" // where the altitude rows are, for messages
	if c.lines.has(key + ".table_file") {
		notWithFile(c, key, "table_file", map[string]bool{"altitude_ft": f.AltitudeFt != nil, "temperature_c": f.TemperatureC != nil,
			"mach": f.Mach != nil, "values": f.Values != nil})
		t := readTable(c, files, key+".table_file", f.TableFile)
		if t == nil || !checkTable(c, t, inBounds) {
			for a := range axes {
				axes[a] = []float64{} // unknown: checks against the axes are skipped
			}
		} else {
			axes, rows = t.Axes, " of "+t.File
			table = tableGrid(c, key+".table_file", t, method)
		}
	} else {
		axes = axesOf(c, key, f.AltitudeFt, f.TemperatureC, f.Mach)
		if f.Values == nil {
			c.add(key+".values", "missing: every rating needs values (or a table_file)")
			return nil
		}
		table = gridOf(c, key, "values", f.Values, axes, method, inBounds)
	}
	switch hasFile := c.lines.has(key + ".thrust_file"); {
	case hasFile && f.ThrustKN != nil:
		c.add(key+".thrust_file", "give thrust_kn or thrust_file, not both")
	case hasFile:
		t := readTable(c, files, key+".thrust_file", f.ThrustFile)
		if t != nil && checkTable(c, t, thrustBounds) && sameAxes(c, t, axes) {
			r.thrust = tableGrid(c, key+".thrust_file", t, method)
		}
	case f.ThrustKN != nil:
		r.thrust = gridOf(c, key, "thrust_kn", f.ThrustKN, axes, method, thrustBounds)
	}
	switch {
	case f.CornerISADevC != nil && f.CornerC != nil:
		c.add(key+".corner_c", "give corner_isa_dev_c or corner_c, not both")
	case f.CornerISADevC != nil:
		d := *f.CornerISADevC
		if math.IsNaN(d) || d < -60 || d > 60 {
			c.add(key+".corner_isa_dev_c", "is %g, want an ISA deviation from -60 to 60 °C", d)
		}
		r.corner = corner{kind: cornerISADev, isaDev: d}
	case f.CornerC != nil:
		switch {
		case !usableAxes(axes):
			// the axes' own faults are reported
		case axes[grid.Altitude] == nil:
			c.add(key+".corner_c", "needs an altitude_ft axis (one corner per altitude row); use corner_isa_dev_c for a table without one")
		case len(f.CornerC) != len(axes[grid.Altitude]):
			c.add(key+".corner_c", "has %d temperatures, want %d (one per altitude_ft row%s)", len(f.CornerC), len(axes[grid.Altitude]), rows)
		default:
			for i, t := range f.CornerC {
				if math.IsNaN(t) || t < -90 || t > 90 {
					c.add(fmt.Sprintf("%s.corner_c[%d]", key, i), "is %g, want an OAT from -90 to 90 °C", t)
				}
			}
			r.corner = corner{kind: cornerPerAltitude, alts: axes[grid.Altitude], oats: append([]float64(nil), f.CornerC...)}
		}
	}
	if table == nil {
		return nil
	}
	r.table = table
	r.needsISA = basis == ISADev
	return r
}

// axesOf checks the three axis keys of a table and returns them (nil for an
// absent axis).
func axesOf(c *collector, key string, alt, temp, mach []float64) [grid.NumAxes][]float64 {
	axes := [grid.NumAxes][]float64{alt, temp, mach}
	for a, xs := range axes {
		k := key + "." + AxisColumn(grid.Axis(a))
		if xs == nil && !c.lines.has(k) {
			continue
		}
		bad := false
		if len(xs) < 2 {
			c.add(k, "has %d point(s), want at least 2 (leave the key out for a table without this axis)", len(xs))
			bad = true
		}
		for i, x := range xs {
			switch {
			case math.IsNaN(x) || math.IsInf(x, 0):
				c.addCode(CheckNotFinite, fmt.Sprintf("%s[%d]", k, i), "is not a finite number")
				bad = true
			case i > 0 && !(x > xs[i-1]):
				c.addCode(CheckAxisOrder, fmt.Sprintf("%s[%d]", k, i), "is %g, not above the point before it (%g): an axis must be strictly increasing", x, xs[i-1])
				bad = true
			}
		}
		if a == int(grid.Mach) && !bad && (xs[0] < 0 || xs[len(xs)-1] > 5) {
			c.add(k, "runs from %g to %g, want Mach numbers from 0 to 5", xs[0], xs[len(xs)-1])
			bad = true
		}
		if bad {
			axes[a] = []float64{} // present but unusable: the grid is not built
		}
	}
	return axes
}

// gridOf flattens a nested TOML array (one dimension per present axis, in
// axis order) and builds its grid; check names a value outside its bounds.
func gridOf(c *collector, key, field string, raw any, axes [grid.NumAxes][]float64, method grid.Method, check func(float64) string) *grid.Grid {
	var shape []int
	var names []string
	usable := true
	for a, xs := range axes {
		if xs == nil {
			continue
		}
		if len(xs) < 2 {
			usable = false
		}
		shape = append(shape, len(xs))
		names = append(names, AxisColumn(grid.Axis(a)))
	}
	if !usable {
		return nil
	}
	var flat []float64
	before := len(c.errs)
	flatten(c, key+"."+field, raw, shape, names, &flat, check)
	if len(c.errs) > before {
		return nil
	}
	g, err := grid.New(axes, flat, method)
	if err != nil {
		c.add(key+"."+field, "%v", err) // unreachable after the checks above
		return nil
	}
	return g
}

// notWithFile reports each inline key given (present[key]) beside the table
// file key fileKey, which holds them instead; it returns whether any was.
func notWithFile(c *collector, key, fileKey string, present map[string]bool) bool {
	var given []string
	for k, ok := range present {
		if ok {
			given = append(given, k)
		}
	}
	slices.SortFunc(given, func(a, b string) int { return c.lines.line(key+"."+a) - c.lines.line(key+"."+b) })
	for _, k := range given {
		c.add(key+"."+k, "give %s or %s, not both: the CSV file holds the axes and the numbers", k, fileKey)
	}
	return len(given) > 0
}

// readTable reads and parses the table file ref that key names; nil when it
// cannot (the faults are in c, those inside the file with its lines and
// columns).
func readTable(c *collector, files tableReader, key, ref string) *TableCSV {
	if strings.TrimSpace(ref) == "" {
		c.add(key, "is empty, want the name of a CSV file (relative to the profile's directory)")
		return nil
	}
	if files == nil {
		c.addCode(CheckTableFile, key, "cannot read %q: the profile was parsed without a directory to read it from (load the profile from its file)", ref)
		return nil
	}
	name, data, err := files(ref)
	if err != nil {
		c.addCode(CheckTableFile, key, "cannot read %q: %v", ref, err)
		return nil
	}
	t, err := ParseTableCSV(name, data)
	if err != nil {
		var list FileErrors
		if errors.As(err, &list) {
			for _, e := range list {
				c.addFileError(e)
			}
		} else {
			c.addCode(CheckTableFile, key, "%s: %v", name, err)
		}
		return nil
	}
	return t
}

// addFileError records a fault found in another file (a table file).
func (c *collector) addFileError(e *FileError) {
	if len(c.errs) < maxFileErrors {
		c.errs = append(c.errs, e)
	}
}

// checkTable applies a profile's checks to a table read from a file, naming
// the file, line and column of what it rejects: check on every value, and
// Mach from 0 to 5 (as axesOf for inline axes). It reports whether the
// table passed.
func checkTable(c *collector, t *TableCSV, check func(float64) string) bool {
	before := len(c.errs)
	if xs := t.Axes[grid.Mach]; xs != nil && (xs[0] < 0 || xs[len(xs)-1] > 5) {
		i := 0
		if xs[0] >= 0 {
			i = len(xs) - 1
		}
		c.addFileError(t.errAt(t.axisAt[grid.Mach][i], CheckInvalid, "mach runs from %g to %g, want Mach numbers from 0 to 5", xs[0], xs[len(xs)-1]))
	}
	for i, v := range t.Values {
		if msg := check(v); msg != "" {
			c.addFileError(t.errAt(t.valueAt[i], CheckBounds, "%s: %s", t.point(i), msg))
		}
	}
	return len(c.errs) == before
}

// tableGrid builds the grid of a table read from a file.
func tableGrid(c *collector, key string, t *TableCSV, method grid.Method) *grid.Grid {
	g, err := t.Grid(method)
	if err != nil {
		c.add(key, "%s: %v", t.File, err) // unreachable: ParseTableCSV checks what grid.New does
	}
	return g
}

// usableAxes reports whether every present axis has the two points a grid
// needs (an axis whose faults were reported is left empty).
func usableAxes(axes [grid.NumAxes][]float64) bool {
	for _, xs := range axes {
		if xs != nil && len(xs) < 2 {
			return false
		}
	}
	return true
}

// sameAxes reports whether the thrust table t has exactly the rating's axes
// (a thrust grid is on the values' grid), recording the first difference at
// its place in t; unusable axes are not compared.
func sameAxes(c *collector, t *TableCSV, axes [grid.NumAxes][]float64) bool {
	if !usableAxes(axes) {
		return false
	}
	const why = "thrust_file must be on the grid of the rating's values"
	for a := grid.Altitude; a < grid.NumAxes; a++ {
		name, got, want := AxisColumn(a), t.Axes[a], axes[a]
		switch {
		case got == nil && want == nil:
		case got == nil:
			c.addFileError(t.errAt(t.header, CheckGridShape, "has no %s axis; the values have %d %s points from %g to %g (%s)", name, len(want), name, want[0], want[len(want)-1], why))
			return false
		case want == nil:
			c.addFileError(t.errAt(t.axisAt[a][0], CheckGridShape, "has a %s axis; the values have none (%s)", name, why))
			return false
		default:
			for i := range max(len(got), len(want)) {
				switch {
				case i >= len(got):
					c.addFileError(t.errAt(t.axisAt[a][len(got)-1], CheckGridShape, "has %d %s points, the values have %d: %s %g is missing (%s)", len(got), name, len(want), name, want[i], why))
					return false
				case i >= len(want):
					c.addFileError(t.errAt(t.axisAt[a][i], CheckGridShape, "has %d %s points, the values have %d: %s %g is extra (%s)", len(got), name, len(want), name, got[i], why))
					return false
				case got[i] != want[i]:
					c.addFileError(t.errAt(t.axisAt[a][i], CheckGridShape, "%s point %d is %g where the values have %g (%s)", name, i+1, got[i], want[i], why))
					return false
				}
			}
		}
	}
	return true
}

// flatten appends the numbers of a nested array of the given shape to flat,
// recording misshapen rows and bad numbers with their index paths.
func flatten(c *collector, key string, v any, shape []int, names []string, flat *[]float64, check func(float64) string) {
	if len(shape) == 0 {
		x, ok := number(v)
		switch {
		case !ok:
			c.addCode(CheckGridShape, key, "is %s, want a number", typeName(v))
		case math.IsNaN(x) || math.IsInf(x, 0):
			c.addCode(CheckNotFinite, key, "is not a finite number")
		default:
			if msg := check(x); msg != "" {
				c.addCode(CheckBounds, key, "%s", msg)
			}
		}
		*flat = append(*flat, x)
		return
	}
	list, ok := v.([]any)
	if !ok {
		c.addCode(CheckGridShape, key, "is %s, want an array of %d entries (one per %s point)", typeName(v), shape[0], names[0])
		return
	}
	if len(list) != shape[0] {
		c.addCode(CheckGridShape, key, "has %d entries, want %d (one per %s point)", len(list), shape[0], names[0])
		return
	}
	for i, e := range list {
		flatten(c, fmt.Sprintf("%s[%d]", key, i), e, shape[1:], names[1:], flat, check)
	}
}

func number(v any) (float64, bool) {
	switch x := v.(type) {
	case float64:
		return x, true
	case int64:
		return float64(x), true
	}
	return 0, false
}

func typeName(v any) string {
	switch v.(type) {
	case []any:
		return "an array"
	case string:
		return "a string"
	case bool:
		return "a boolean"
	case map[string]any:
		return "a table"
	}
	return fmt.Sprintf("a %T", v)
}

// buildCorrection checks one [[correction]] and attaches it to its rating.
func buildCorrection(c *collector, key string, f *correctionFile, p *Profile, files tableReader) {
	r, ok := p.byName[f.Rating]
	if c.broken[f.Rating] {
		return
	}
	if !ok {
		c.addCode(CheckReference, key+".rating", "names rating %q, which the profile does not declare (ratings: %s)", f.Rating, listOrNone(ratingNames(p)))
	}
	bleed := p.bleedIndex(f.Bleed)
	if bleed < 0 {
		c.addCode(CheckReference, key+".bleed", "names bleed %q, which the profile does not declare (bleeds: %s)", f.Bleed, listOrNone(p.bleeds))
	}
	corr := Correction{Bleed: bleed}
	switch {
	case c.lines.has(key + ".delta_file"):
		if notWithFile(c, key, "delta_file", map[string]bool{"delta": f.Delta != nil, "delta_values": f.DeltaValues != nil,
			"altitude_ft": f.AltitudeFt != nil, "temperature_c": f.TemperatureC != nil, "mach": f.Mach != nil}) {
			return
		}
		method, err := grid.ParseMethod(f.Interpolation)
		if err != nil {
			c.add(key+".interpolation", "%v", err)
		}
		t := readTable(c, files, key+".delta_file", f.DeltaFile)
		if t == nil || !checkTable(c, t, func(float64) string { return "" }) {
			return
		}
		if corr.Grid = tableGrid(c, key+".delta_file", t, method); corr.Grid == nil {
			return
		}
	case f.Delta != nil && f.DeltaValues != nil:
		c.add(key+".delta_values", "give delta or delta_values, not both")
		return
	case f.Delta != nil:
		if d := *f.Delta; math.IsNaN(d) || math.IsInf(d, 0) {
			c.addCode(CheckNotFinite, key+".delta", "is not a finite number")
			return
		}
		corr.Delta = *f.Delta
		if f.AltitudeFt != nil || f.TemperatureC != nil || f.Mach != nil {
			c.add(key, "axes are for delta_values; a constant delta takes none")
		}
	case f.DeltaValues != nil:
		method, err := grid.ParseMethod(f.Interpolation)
		if err != nil {
			c.add(key+".interpolation", "%v", err)
		}
		axes := axesOf(c, key, f.AltitudeFt, f.TemperatureC, f.Mach)
		corr.Grid = gridOf(c, key, "delta_values", f.DeltaValues, axes, method, func(float64) string { return "" })
		if corr.Grid == nil {
			return
		}
	default:
		c.add(key, "needs delta (a constant), delta_values (a grid) or delta_file (a grid in a CSV file)")
		return
	}
	if !ok || bleed < 0 {
		return
	}
	for _, other := range r.corrections {
		if other.Bleed == bleed {
			c.add(key, "rating %q already has a correction for bleed %q", f.Rating, f.Bleed)
			return
		}
	}
	r.corrections = append(r.corrections, corr)
}

func ratingNames(p *Profile) []string {
	names := make([]string, len(p.ratings))
	for i, r := range p.ratings {
		names[i] = r.name
	}
	return names
}

// buildAssumed checks [assumed_temperature].
func buildAssumed(c *collector, f *assumedFile, p *Profile) *AssumedTemperature {
	const key = "assumed_temperature"
	a := &AssumedTemperature{Corrected: true, MaxReductionPct: 25}
	switch {
	case f.Rating != "" && f.Ratings != nil:
		c.add(key+".ratings", "give rating or ratings, not both")
	case f.Rating != "":
		a.Ratings = []string{f.Rating}
	case len(f.Ratings) > 0:
		a.Ratings = append([]string(nil), f.Ratings...)
	default:
		c.add(key, "needs rating = \"NAME\" or ratings = [...]")
	}
	for i, name := range a.Ratings {
		k := key + ".rating"
		if f.Ratings != nil {
			k = fmt.Sprintf("%s.ratings[%d]", key, i)
		}
		r, ok := p.byName[name]
		switch {
		case c.broken[name]:
		case !ok:
			c.addCode(CheckReference, k, "names rating %q, which the profile does not declare (ratings: %s)", name, listOrNone(ratingNames(p)))
		case !r.table.Has(grid.Temperature):
			c.add(k, "rating %q has no temperature axis, so an assumed temperature cannot change it", name)
		case r.assumed:
			c.add(k, "rating %q is listed twice", name)
		default:
			r.assumed = true
		}
	}
	if f.MaxC == nil {
		c.add(key, "needs max_c, the highest assumed temperature in °C")
	} else if m := *f.MaxC; math.IsNaN(m) || m < -60 || m > 100 {
		c.add(key+".max_c", "is %g, want a temperature from -60 to 100 °C", m)
	} else {
		a.MaxC = m
	}
	switch f.Method {
	case "", "corrected":
	case "table":
		a.Corrected = false
	default:
		c.add(key+".method", "is %q, want corrected or table", f.Method)
	}
	if f.MaxReductionPct != nil {
		// Above 25 % is legal to load (a check in verify flags it against
		// FAA AC 25-13), but it must be a percentage below 100.
		if m := *f.MaxReductionPct; !(m > 0 && m < 100) {
			c.add(key+".max_reduction_pct", "is %g, want a percentage above 0 and below 100 (25 per FAA AC 25-13)", m)
		} else {
			a.MaxReductionPct = m
		}
	}
	return a
}

// buildLever checks [lever] and the [[gate]] tables: names, ratings or
// targets, TLA order and the spacing rule of the gate layout.
func buildLever(c *collector, f *profileFile, p *Profile) {
	if f.Lever == nil {
		if len(f.Gate) > 0 {
			c.add("gate", "gates need a [lever] table with tla_min_deg and tla_max_deg")
		}
		return
	}
	l := f.Lever
	switch {
	case l.TLAMinDeg == nil:
		c.add("lever", "needs tla_min_deg, the aft end stop in degrees")
	case l.TLAMaxDeg == nil:
		c.add("lever", "needs tla_max_deg, the forward end stop in degrees")
	case !(*l.TLAMinDeg < *l.TLAMaxDeg) || math.IsInf(*l.TLAMinDeg, 0) || math.IsInf(*l.TLAMaxDeg, 0):
		c.add("lever.tla_max_deg", "is %g, want finite end stops with tla_min_deg (%g) below tla_max_deg", *l.TLAMaxDeg, *l.TLAMinDeg)
	default:
		p.lever.TLAMinDeg, p.lever.TLAMaxDeg = *l.TLAMinDeg, *l.TLAMaxDeg
	}
	if len(f.Gate) > MaxGates {
		c.add("gate", "%d gates declared, at most %d are allowed", len(f.Gate), MaxGates)
		return
	}
	p.lever.IdleGate = l.IdleGate
	p.lever.ReverseOnGroundOnly = l.ReverseOnGroundOnly
	for i := range f.Gate {
		g := &f.Gate[i]
		key := fmt.Sprintf("gate[%d]", i)
		gate := Gate{Name: g.Name, CaptureDeg: g.CaptureDeg, HysteresisDeg: g.HysteresisDeg,
			Rating: g.Rating, Target: g.Target, When: g.When, Notch: g.Notch}
		if g.Name == "" {
			c.add(key+".name", "missing: every gate needs a name")
		} else if slices.ContainsFunc(p.gates, func(o Gate) bool { return o.Name == g.Name }) {
			c.add(key+".name", "gate %q is declared twice", g.Name)
		}
		if g.TLADeg == nil {
			c.add(key, "needs tla_deg, the gate's lever angle")
			continue
		}
		gate.TLADeg = *g.TLADeg
		if t := gate.TLADeg; !(t >= p.lever.TLAMinDeg && t <= p.lever.TLAMaxDeg) {
			c.add(key+".tla_deg", "is %g, outside the lever's travel %g to %g", t, p.lever.TLAMinDeg, p.lever.TLAMaxDeg)
		}
		if !(g.CaptureDeg >= 0) || math.IsInf(g.CaptureDeg, 0) {
			c.add(key+".capture_deg", "is %g, want a finite angle ≥ 0", g.CaptureDeg)
		}
		if !(g.HysteresisDeg >= 0) || math.IsInf(g.HysteresisDeg, 0) {
			c.add(key+".hysteresis_deg", "is %g, want a finite angle ≥ 0", g.HysteresisDeg)
		}
		var ge gateExprs
		if g.Rating == "" && g.Target == "" {
			c.add(key, "needs rating = \"NAME\" or target = \"EXPRESSION\" (or both: the rating is then the fallback)")
		}
		if g.Rating != "" && !c.broken[g.Rating] {
			if _, ok := p.byName[g.Rating]; !ok {
				c.addCode(CheckReference, key+".rating", "names rating %q, which the profile does not declare (ratings: %s)", g.Rating, listOrNone(ratingNames(p)))
			}
		}
		if g.Target != "" {
			var err error
			if ge.target, err = compileExpr(p, g.Target, false); err != nil && !c.namesBroken(g.Target) {
				c.addCode(CheckExpression, key+".target", "expression %q: %v", g.Target, err)
			}
		}
		if g.When != "" {
			var err error
			if ge.when, err = compileExpr(p, g.When, true); err != nil && !c.namesBroken(g.When) {
				c.addCode(CheckExpression, key+".when", "expression %q: %v", g.When, err)
			}
		}
		if n := len(p.gates); n > 0 {
			lo := p.gates[n-1]
			switch {
			case !(gate.TLADeg > lo.TLADeg):
				c.addCode(CheckGateOrder, key+".tla_deg", "is %g, not above gate %q at %g: gates must be listed in increasing TLA", gate.TLADeg, lo.Name, lo.TLADeg)
			case !(lo.TLADeg+lo.CaptureDeg+lo.HysteresisDeg < gate.TLADeg-gate.CaptureDeg):
				c.addCode(CheckGateSpacing, key+".tla_deg", "gate %q (%g ± %g, hysteresis %g) is too close to gate %q (%g ± %g): need lo.tla + lo.capture + lo.hysteresis < hi.tla − hi.capture",
					gate.Name, gate.TLADeg, gate.CaptureDeg, gate.HysteresisDeg, lo.Name, lo.TLADeg, lo.CaptureDeg)
			}
		}
		p.gates = append(p.gates, gate)
		p.gateExprs = append(p.gateExprs, ge)
	}
	if l.IdleGate != "" && !slices.ContainsFunc(p.gates, func(g Gate) bool { return g.Name == l.IdleGate }) {
		c.addCode(CheckReference, "lever.idle_gate", "names gate %q, which the profile does not declare", l.IdleGate)
	}
}
