package script

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"github.com/expr-lang/expr/vm"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
	"github.com/thrustmap/thrustmap/thrustmap/quantity"
)

// Command describes one command of the language.
type Command struct {
	Name    string
	Usage   string
	Help    string
	Example string // lines that run on the demo profile and calibration
	run     func(c *call) error
}

var commands []*Command

func init() {
	commands = []*Command{
		{Name: "profile", Usage: "profile NAME|FILE", run: cmdProfile,
			Help:    "Load a profile: a file, or an embedded name (demo, demo-epr, demo-turboprop). Lever states and compiled expressions are reset.",
			Example: "profile demo-epr"},
		{Name: "calibration", Usage: "calibration NAME|FILE", run: cmdCalibration,
			Help:    "Load a lever calibration: a file, or an embedded demo profile's name for its built-in one.",
			Example: "calibration demo"},
		{Name: "set", Usage: "set KEY VALUE [KEY VALUE]...", run: cmdSet,
			Help:    "Set conditions. Keys: alt (ft, m, FL), oat (C, F, K), mach, assumed (a temperature or off), ground (on or off).",
			Example: "set alt FL100 oat -5 mach 0.4 ground off"},
		{Name: "field", Usage: "field ELEVATION QNH", run: cmdField,
			Help:    "Set the pressure altitude from a field elevation and QNH (hPa or inHg; a bare 850–1100 is hPa, 25–35 inHg).",
			Example: "field 5400 29.77inHg"},
		{Name: "bleed", Usage: "bleed NAME on|off", run: cmdBleed,
			Help:    "Switch a bleed flag of the profile on or off.",
			Example: "bleed engine-anti-ice on"},
		{Name: "show", Usage: "show", run: cmdShow,
			Help:    "Show the profile, calibration and conditions.",
			Example: "show"},
		{Name: "ratings", Usage: "ratings", run: cmdRatings,
			Help:    "List the profile's ratings with their axes.",
			Example: "ratings"},
		{Name: "gates", Usage: "gates", run: cmdGates,
			Help:    "List the profile's gates in TLA order.",
			Example: "gates"},
		{Name: "target", Usage: "target RATING", run: cmdTarget,
			Help:    "Compute a rating's target at the conditions (reduced by the assumed temperature when set and the rating allows it). Sets value.",
			Example: "set alt 2000 oat 30 ground on\ntarget takeoff"},
		{Name: "lever", Usage: "lever ID RAW [RAW]...", run: cmdLever,
			Help:    "Feed raw counts to a lever of the calibration, in order, through its own state (deadband, hysteresis). Sets value, gate, tla, reverse.",
			Example: "lever 1 2000 2010 2380"},
		{Name: "tla", Usage: "tla DEGREES", run: cmdTLA,
			Help:    "The command at a lever angle with the profile's own gate zones. Sets value, gate, tla, reverse.",
			Example: "tla 27"},
		{Name: "let", Usage: "let NAME = EXPRESSION", run: cmdLet,
			Help:    "Define a named value for later expressions.",
			Example: "let margin = rating('takeoff') - rating('climb')\nprint margin"},
		{Name: "print", Usage: "print EXPRESSION", run: cmdPrint,
			Help:    "Print an expression's value.",
			Example: "print isa_temp(alt) + 15"},
		{Name: "check", Usage: "check EXPRESSION [within TOL of EXPECTED]", run: cmdCheck,
			Help:    "Assert that a true-or-false expression holds, or that a number is within TOL of EXPECTED. A failed check prints the values it compared.",
			Example: "tla 27\ncheck gate == \"climb\"\ncheck value within 0.01 of rating('climb')"},
		{Name: "expect-error", Usage: "expect-error \"TEXT\" COMMAND...", run: cmdExpectError,
			Help:    "Assert that the command fails with a message containing TEXT.",
			Example: "expect-error \"unknown rating\" target warp"},
		{Name: "points", Usage: "points FILE.csv", run: cmdPoints,
			Help:    "Check test points: CSV columns rating, alt_ft, oat_c, optional mach, bleeds (names joined by +), assumed_c, then expected, tol.",
			Example: "points points.csv"},
		{Name: "include", Usage: "include FILE", run: cmdInclude,
			Help:    "Run another script (relative to this one).",
			Example: "include more-checks.script"},
		{Name: "point", Usage: "point LEVER RAW DEGREES", run: cmdPoint,
			Help:    "Add a calibration point at a known angle to a lever (for pot taper), replacing one at the same angle. Save with save.",
			Example: "point 1 1900 13"},
		{Name: "save", Usage: "save FILE", run: cmdSave,
			Help:    "Write the session's calibration atomically (the previous file kept as FILE.bak).",
			Example: "point 1 1900 13\nsave my-levers.toml"},
		{Name: "help", Usage: "help [COMMAND]", run: cmdHelp,
			Help:    "List the commands, or describe one.",
			Example: "help check"},
		{Name: "exit", Usage: "exit", run: cmdExit,
			Help:    "Leave the shell (it asks first when an edited calibration is not saved). Same as quit. A script simply ends at its last line.",
			Example: "exit"},
		{Name: "quit", Usage: "quit", run: cmdExit,
			Help:    "Leave the shell. Same as exit.",
			Example: "quit"},
	}
}

// ErrExit is returned by exit and quit: the shell leaves; a script stops
// there without error.
var ErrExit = errors.New("exit")

func cmdExit(c *call) error {
	if c.rest != "" {
		return errors.New("exit and quit take no arguments")
	}
	return ErrExit
}

// Commands returns the language's commands, for help and completion.
func Commands() []*Command { return slices.Clone(commands) }

func lookup(name string) *Command {
	for _, c := range commands {
		if c.Name == name {
			return c
		}
	}
	return nil
}

func usage(c *call, name string) error {
	return fmt.Errorf("usage: %s", lookup(name).Usage)
}

func cmdProfile(c *call) error {
	if c.rest == "" {
		return usage(c, "profile")
	}
	arg := c.rest
	if _, embedded := thrustmap.EmbeddedProfileText(arg); !embedded {
		var err error
		if arg, err = c.filePath(arg); err != nil {
			return err
		}
	}
	p, err := thrustmap.LoadProfile(arg)
	if err != nil {
		return err
	}
	if err := c.in.setProfile(p); err != nil {
		return err
	}
	c.in.printf("profile %s: %s\n", p.Source(), p.Name())
	return nil
}

func cmdCalibration(c *call) error {
	if c.rest == "" {
		return usage(c, "calibration")
	}
	arg := c.rest
	if _, embedded := thrustmap.EmbeddedCalibrationText(arg); !embedded {
		var err error
		if arg, err = c.filePath(arg); err != nil {
			return err
		}
	}
	cal, err := thrustmap.LoadCalibration(arg)
	if err != nil {
		return err
	}
	if err := c.in.setCalibration(cal); err != nil {
		return err
	}
	c.in.calEdited = false
	c.in.printf("calibration %s: %d lever(s)\n", cal.Source(), len(cal.Levers()))
	return nil
}

func cmdSet(c *call) error {
	f := c.fields()
	if len(f) == 0 || len(f)%2 != 0 {
		return usage(c, "set")
	}
	next := c.in.cond
	temps := map[string]string{} // oat and assumed as typed, checked at the final altitude
	for i := 0; i < len(f); i += 2 {
		key, val := f[i], f[i+1]
		var err error
		switch key {
		case "alt":
			next.AltitudeFt, err = quantity.Altitude(val)
			c.in.field = nil
		case "oat":
			next.OATC, err = quantity.Temperature(val)
			temps[key] = val
		case "mach":
			next.Mach, err = quantity.Mach(val)
		case "assumed":
			if val == "off" {
				next.AssumedSet = false
			} else {
				next.AssumedC, err = quantity.Temperature(val)
				next.AssumedSet = err == nil
				temps[key] = val
			}
		case "ground":
			next.OnGround, err = onOff(val)
		default:
			return fmt.Errorf("set: unknown key %q (alt, oat, mach, assumed, ground)", key)
		}
		if err != nil {
			return fmt.Errorf("set %s: %w", key, err)
		}
	}
	if _, err := atmos.ISATemperatureC(next.AltitudeFt); err != nil {
		return fmt.Errorf("set alt: %w", err)
	}
	for _, key := range []string{"oat", "assumed"} {
		if val, ok := temps[key]; ok {
			if _, err := quantity.AirTemperature(val, next.AltitudeFt); err != nil {
				return fmt.Errorf("set %s: %w", key, err)
			}
		}
	}
	c.in.cond = next
	return nil
}

func onOff(s string) (bool, error) {
	switch s {
	case "on", "true", "yes":
		return true, nil
	case "off", "false", "no":
		return false, nil
	}
	return false, fmt.Errorf("%q: want on or off", s)
}

func cmdField(c *call) error {
	f := c.fields()
	if len(f) != 2 {
		return usage(c, "field")
	}
	elev, err := quantity.Altitude(f[0])
	if err != nil {
		return err
	}
	qnh, err := quantity.QNH(f[1])
	if err != nil {
		return err
	}
	pa, err := atmos.PressureAltitudeFromQNH(elev, qnh)
	if err != nil {
		return err
	}
	c.in.cond.AltitudeFt = pa
	c.in.field = &[2]float64{elev, qnh}
	c.in.printf("pressure altitude %.0f ft (field %.0f ft, QNH %.1f hPa)\n", pa, elev, qnh)
	return nil
}

func cmdBleed(c *call) error {
	f := c.fields()
	if len(f) != 2 {
		return usage(c, "bleed")
	}
	set, err := c.in.profile.BleedSet(f[0])
	if err != nil {
		return err
	}
	on, err := onOff(f[1])
	if err != nil {
		return err
	}
	if on {
		c.in.cond.Bleeds |= set
	} else {
		c.in.cond.Bleeds &^= set
	}
	return nil
}

func cmdShow(c *call) error {
	in := c.in
	p, cond := in.profile, in.cond
	in.printf("profile      %s (%s, %s)\n", p.Source(), p.Name(), p.Parameter())
	if in.cal != nil {
		edited := ""
		if in.calEdited {
			edited = " — edited, not saved"
		}
		in.printf("calibration  %s (%d levers)%s\n", in.cal.Source(), len(in.cal.Levers()), edited)
	}
	if in.field != nil {
		in.printf("field        %.0f ft, QNH %.1f hPa\n", in.field[0], in.field[1])
	}
	isa, _ := atmos.ISATemperatureC(cond.AltitudeFt)
	in.printf("altitude     %.0f ft (pressure)\n", cond.AltitudeFt)
	in.printf("oat          %.2f °C (ISA%+.2f)\n", cond.OATC, cond.OATC-isa)
	in.printf("mach         %.3f\n", cond.Mach)
	in.printf("ground       %v\n", cond.OnGround)
	if cond.AssumedSet {
		in.printf("assumed      %.1f °C\n", cond.AssumedC)
	} else {
		in.printf("assumed      off\n")
	}
	in.printf("bleeds       %s\n", orNone(p.BleedNames(cond.Bleeds)))
	return nil
}

func orNone(s []string) string {
	if len(s) == 0 {
		return "none"
	}
	return strings.Join(s, ", ")
}

func cmdRatings(c *call) error {
	for _, r := range c.in.profile.Ratings() {
		var axes []string
		t := r.Table()
		for a, name := range []string{"altitude", r.Basis().String(), "mach"} {
			if n := t.Points(axisOf(a)); n > 0 {
				axes = append(axes, fmt.Sprintf("%s×%d", name, n))
			}
		}
		extra := ""
		if r.Assumed() {
			extra = ", assumed temperature"
		}
		if r.Thrust() != nil {
			extra += ", thrust grid"
		}
		c.in.printf("%-16s %s (%s)%s\n", r.Name(), orNone(axes), t.Method(), extra)
	}
	return nil
}

func cmdGates(c *call) error {
	for i, g := range c.in.profile.Gates() {
		what := "rating " + g.Rating
		if g.Target != "" {
			what = "target " + g.Target
		}
		when := ""
		if g.When != "" {
			when = "  when " + g.When
		}
		notch := ""
		if g.Notch {
			notch = " notch"
		}
		c.in.printf("%d %-16s %6.1f° ±%.1f (hyst %.1f)%s  %s%s\n", i, g.Name, g.TLADeg, g.CaptureDeg, g.HysteresisDeg, notch, what, when)
	}
	return nil
}

func cmdTarget(c *call) error {
	f := c.fields()
	if len(f) != 1 {
		return usage(c, "target")
	}
	in := c.in
	r, ok := in.profile.Rating(f[0])
	if !ok {
		return fmt.Errorf("unknown rating %q (the profile has %s)", f[0], ratingList(in.profile))
	}
	res, err := in.profile.RatingTarget(r, in.cond)
	if err != nil {
		return err
	}
	in.last = result{value: res.Value, flags: res.Flags.Names(), clamped: res.Clamped.Names()}
	in.printf("%s %s %s", r.Name(), res.Parameter, fmtValue(res.Value, res.Unit()))
	if red := res.Reduction; red.Evaluated {
		in.printf("  (assumed %.1f °C, effective %.1f °C, full %s", red.AssumedC, red.EffectiveC, fmtValue(red.ValueFull, res.Unit()))
		if names := red.ReasonNames(); len(names) > 0 {
			in.printf(", %s", strings.Join(names, ", "))
		}
		in.printf(")")
	}
	in.printNotes(res.Clamped.Names(), res.Flags.Names())
	return nil
}

func (in *Interpreter) printNotes(clamped, flags []string) {
	if len(clamped) > 0 {
		in.printf("  clamped: %s", strings.Join(clamped, ", "))
	}
	if len(flags) > 0 {
		in.printf("  flags: %s", strings.Join(flags, ", "))
	}
	in.printf("\n")
}

func fmtValue(v float64, unit string) string {
	if unit == "ratio" {
		return fmt.Sprintf("%.4f", v)
	}
	return fmt.Sprintf("%.2f %%", v)
}

func cmdLever(c *call) error {
	f := c.fields()
	if len(f) < 2 {
		return usage(c, "lever")
	}
	in := c.in
	id, err := strconv.Atoi(f[0])
	if err != nil {
		return fmt.Errorf("lever id %q is not a number", f[0])
	}
	if in.cal == nil {
		return errors.New("no calibration loaded (use calibration NAME|FILE)")
	}
	s := in.levers[id]
	if s == nil {
		s = &thrustmap.LeverState{}
		in.levers[id] = s
	}
	for _, a := range f[1:] {
		raw, err := strconv.ParseFloat(a, 64)
		if err != nil || math.IsNaN(raw) || math.IsInf(raw, 0) {
			return fmt.Errorf("raw %q is not a count", a)
		}
		cmd, err := in.model.Command(s, id, raw, in.cond)
		if err != nil {
			return err
		}
		in.showCommand(cmd, fmt.Sprintf("lever %d raw %g", id, raw))
	}
	return nil
}

func cmdTLA(c *call) error {
	f := c.fields()
	if len(f) != 1 {
		return usage(c, "tla")
	}
	deg, err := strconv.ParseFloat(f[0], 64)
	if err != nil {
		return fmt.Errorf("angle %q is not a number", f[0])
	}
	in := c.in
	s := in.levers[thrustmap.NoLever]
	if s == nil {
		s = &thrustmap.LeverState{}
		in.levers[thrustmap.NoLever] = s
	}
	cmd, err := in.model.CommandAtTLA(s, thrustmap.NoLever, deg, in.cond)
	if err != nil {
		return err
	}
	in.showCommand(cmd, fmt.Sprintf("tla %g", deg))
	return nil
}

// showCommand prints a lever command and makes it the last result.
func (in *Interpreter) showCommand(cmd thrustmap.LeverCommand, what string) {
	m := in.model
	in.last = result{value: cmd.Value, gate: m.GateName(cmd.Gate), tla: cmd.TLADeg, reverse: cmd.Reverse,
		flags: cmd.Flags.Names(), clamped: cmd.Clamped.Names()}
	if cmd.Between() {
		in.last.between = m.GateName(cmd.Lower) + " and " + m.GateName(cmd.Upper)
	}
	where := "gate " + m.GateName(cmd.Gate)
	switch {
	case cmd.Gate < 0 && cmd.Between():
		where = fmt.Sprintf("between %s and %s (%.2f)", m.GateName(cmd.Lower), m.GateName(cmd.Upper), cmd.Fraction)
	case cmd.Gate < 0:
		where = "no gate"
	}
	rev := ""
	if cmd.Reverse {
		rev = " reverse"
	}
	in.printf("%s: TLA %.2f°, %s, %s %s%s", what, cmd.TLADeg, where, cmd.Parameter, fmtValue(cmd.Value, cmd.Unit()), rev)
	in.printNotes(cmd.Clamped.Names(), cmd.Flags.Names())
}

func cmdLet(c *call) error {
	name, src, ok := strings.Cut(c.rest, "=")
	name, src = strings.TrimSpace(name), strings.TrimSpace(src)
	if !ok || name == "" || src == "" {
		return usage(c, "let")
	}
	if !isIdent(name) {
		return fmt.Errorf("let: %q is not a name (letters, digits and _, not starting with a digit)", name)
	}
	if reserved[name] {
		return fmt.Errorf("let: %q is a name of the environment", name)
	}
	v, err := c.in.eval(src)
	if err != nil {
		return err
	}
	if i, ok := v.(int); ok {
		v = float64(i) // one number type, so later uses compile alike
	}
	c.in.names[name] = v
	c.in.progs = map[string]*vm.Program{} // the environment's shape changed
	c.in.refreshEnv()
	return nil
}

func isIdent(s string) bool {
	for i, r := range s {
		letter := r == '_' || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')
		if !letter && (i == 0 || r < '0' || r > '9') {
			return false
		}
	}
	return s != ""
}

func cmdPrint(c *call) error {
	if c.rest == "" {
		return usage(c, "print")
	}
	v, err := c.in.eval(c.rest)
	if err != nil {
		return err
	}
	c.in.printf("%s\n", format(v))
	return nil
}

func cmdCheck(c *call) error {
	if c.rest == "" {
		return usage(c, "check")
	}
	src, tol, want, within, err := splitCheck(c.rest)
	if err != nil {
		return err
	}
	if !within {
		v, err := c.in.eval(src)
		if err != nil {
			return err
		}
		b, ok := v.(bool)
		if !ok {
			return fmt.Errorf("check %s: the expression is %s; a check without within needs true or false", src, describe(v))
		}
		return c.assert(src, b, format(v), "true", []string{src})
	}
	got, err := c.in.number(src)
	if err != nil {
		return err
	}
	t, err := c.in.number(tol)
	if err != nil {
		return err
	}
	w, err := c.in.number(want)
	if err != nil {
		return err
	}
	if t < 0 {
		return fmt.Errorf("check: tolerance %g is negative", t)
	}
	return c.assert(src, math.Abs(got-w) <= t, fmt.Sprintf("%.6g", got), fmt.Sprintf("%.6g ± %g", w, t), []string{src, tol, want})
}

// splitCheck splits "EXPR within TOL of EXPECTED" at its last "within".
func splitCheck(s string) (src, tol, want string, within bool, err error) {
	i := strings.LastIndex(s, " within ")
	if i < 0 {
		return s, "", "", false, nil
	}
	src = strings.TrimSpace(s[:i])
	tol, want, ok := strings.Cut(s[i+len(" within "):], " of ")
	if !ok || src == "" || strings.TrimSpace(tol) == "" || strings.TrimSpace(want) == "" {
		return "", "", "", false, errors.New("usage: check EXPRESSION within TOL of EXPECTED")
	}
	return src, strings.TrimSpace(tol), strings.TrimSpace(want), true, nil
}

// assert records one check of expr; on a failure the variables that the
// expressions explain read (the checked one, a tolerance, an expected value)
// are shown with their values.
func (c *call) assert(expr string, ok bool, got, want string, explain []string) error {
	in := c.in
	a := Assertion{File: c.file, Line: c.line, Expr: expr, Passed: ok}
	if ok {
		in.passed++
	} else {
		f := Failure{File: c.file, Line: c.line, Expr: expr, Got: got, Want: want, Values: in.explain(explain...)}
		a.Detail = f.String()
		in.failed++
		in.failures = append(in.failures, f)
		fmt.Fprintf(in.report, "FAIL %s\n", f)
	}
	if in.Observer != nil {
		in.Observer(a)
	}
	if !ok && in.FailFast {
		return ErrFailFast
	}
	return nil
}

func cmdExpectError(c *call) error {
	text, rest, err := quoted(c.rest)
	if err != nil || rest == "" {
		return usage(c, "expect-error")
	}
	in := c.in
	// Run the command with its output discarded; only its error matters.
	out := in.out
	in.out = io.Discard
	runErr := in.Exec(rest, c.file, c.line)
	in.out = out
	if errors.Is(runErr, ErrFailFast) {
		return runErr
	}
	got := "no error"
	if runErr != nil {
		var se *Error
		if errors.As(runErr, &se) {
			runErr = se.Err
		}
		got = fmt.Sprintf("error %q", runErr.Error())
	}
	return c.assert(rest, runErr != nil && strings.Contains(runErr.Error(), text), got, fmt.Sprintf("an error containing %q", text), nil)
}

// quoted reads a leading "…" or '…' string and returns it and the rest.
func quoted(s string) (string, string, error) {
	if s == "" || (s[0] != '"' && s[0] != '\'') {
		return "", "", errors.New("want a quoted text")
	}
	end := strings.IndexByte(s[1:], s[0])
	if end < 0 {
		return "", "", errors.New("unterminated quote")
	}
	return s[1 : end+1], strings.TrimSpace(s[end+2:]), nil
}

func cmdInclude(c *call) error {
	if c.rest == "" {
		return usage(c, "include")
	}
	in := c.in
	if in.depth >= 16 {
		return errors.New("include: nested more than 16 deep (does a script include itself?)")
	}
	path, err := c.filePath(c.rest)
	if err != nil {
		return err
	}
	if _, err := os.Stat(path); err != nil {
		return err
	}
	in.depth++
	defer func() { in.depth-- }()
	return in.RunFile(path)
}

func cmdPoint(c *call) error {
	f := c.fields()
	if len(f) != 3 {
		return usage(c, "point")
	}
	in := c.in
	if in.cal == nil {
		return errors.New("no calibration loaded (use calibration NAME|FILE)")
	}
	id, err1 := strconv.Atoi(f[0])
	raw, err2 := strconv.ParseFloat(f[1], 64)
	deg, err3 := strconv.ParseFloat(f[2], 64)
	if err1 != nil || err2 != nil || err3 != nil {
		return usage(c, "point")
	}
	l := in.cal.Lever(id)
	if l == nil {
		return fmt.Errorf("the calibration has no lever %d", id)
	}
	nl, err := l.WithPoint(raw, deg)
	if err != nil {
		return err
	}
	if err := in.setCalibration(in.cal.With(nl)); err != nil {
		return err
	}
	in.calEdited = true
	in.printf("lever %d: %d points (not saved yet)\n", id, len(nl.Spec().Points))
	return nil
}

func cmdSave(c *call) error {
	if c.rest == "" {
		return usage(c, "save")
	}
	in := c.in
	path, err := c.filePath(c.rest)
	if err != nil {
		return err
	}
	if in.cal == nil {
		return errors.New("no calibration to save")
	}
	if err := in.cal.WriteFile(path); err != nil {
		return err
	}
	in.calEdited = false
	in.printf("wrote %s\n", path)
	return nil
}

func cmdHelp(c *call) error {
	in := c.in
	if c.rest != "" {
		cmd := lookup(c.rest)
		if cmd == nil {
			return fmt.Errorf("help: unknown command %q", c.rest)
		}
		in.printf("%s\n  %s\n  Example:\n    %s\n", cmd.Usage, cmd.Help, strings.ReplaceAll(cmd.Example, "\n", "\n    "))
		return nil
	}
	for _, cmd := range commands {
		in.printf("  %-44s %s\n", cmd.Usage, firstSentence(cmd.Help))
	}
	in.printf("Expressions (expr-lang) see alt oat tat isa_dev mach on_ground assumed_set assumed_temp,\n" +
		"the last result value gate tla reverse, names from let, and rating() rating_at() target()\n" +
		"assumed() bleed() isa_temp() clamp() lerp(). Simulation only; not certified.\n")
	return nil
}

func firstSentence(s string) string {
	if i := strings.Index(s, ". "); i >= 0 {
		return s[:i+1]
	}
	return s
}

// cmdPoints checks a CSV of test points: each row is one assertion.
func cmdPoints(c *call) error {
	if c.rest == "" {
		return usage(c, "points")
	}
	path, err := c.filePath(c.rest)
	if err != nil {
		return err
	}
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	header, err := r.Read()
	if err != nil {
		return fmt.Errorf("%s: no header: %w", path, err)
	}
	col := map[string]int{}
	for i, h := range header {
		col[strings.TrimSpace(h)] = i
	}
	const columns = "rating,alt_ft,oat_c,mach,bleeds,assumed_c,expected,tol (mach, bleeds and assumed_c may be left out)"
	var missing []string
	for _, need := range []string{"rating", "alt_ft", "oat_c", "expected", "tol"} {
		if _, ok := col[need]; !ok {
			missing = append(missing, need)
		}
	}
	line, _ := r.FieldPos(0)
	switch {
	case len(missing) == 5:
		return fmt.Errorf("%s:%d: no header row: the first line must name the columns, %s; it reads %q", path, line, columns, strings.Join(header, ","))
	case len(missing) > 0:
		return fmt.Errorf("%s:%d: the header has no %s column (want %s)", path, line, strings.Join(missing, ", no "), columns)
	}
	in := c.in
	for {
		rec, err := r.Read()
		if err == io.EOF {
			return nil
		}
		line, _ := r.FieldPos(0)
		if err != nil {
			return &Error{File: path, Line: line, Err: err}
		}
		if err := in.point(path, line, rec, col); err != nil {
			return err
		}
	}
}

// point checks one test-point row.
func (in *Interpreter) point(path string, line int, rec []string, col map[string]int) error {
	get := func(k string) string {
		if i, ok := col[k]; ok && i < len(rec) {
			return strings.TrimSpace(rec[i])
		}
		return ""
	}
	bad := func(format string, args ...any) error {
		return &Error{File: path, Line: line, Err: fmt.Errorf(format, args...)}
	}
	num := func(k string) (float64, error) {
		v, err := strconv.ParseFloat(get(k), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, bad("%s %q is not a number", k, get(k))
		}
		return v, nil
	}
	c := in.cond
	var err error
	if c.AltitudeFt, err = num("alt_ft"); err != nil {
		return err
	}
	if c.OATC, err = num("oat_c"); err != nil {
		return err
	}
	c.Mach, c.AssumedSet, c.Bleeds = 0, false, 0
	if get("mach") != "" {
		if c.Mach, err = num("mach"); err != nil {
			return err
		}
	}
	if b := get("bleeds"); b != "" {
		if c.Bleeds, err = in.profile.BleedSet(strings.Split(b, "+")...); err != nil {
			return bad("%v", err)
		}
	}
	if get("assumed_c") != "" {
		if c.AssumedC, err = num("assumed_c"); err != nil {
			return err
		}
		c.AssumedSet = true
	}
	want, err := num("expected")
	if err != nil {
		return err
	}
	tol, err := num("tol")
	if err != nil {
		return err
	}
	res, err := in.profile.Target(get("rating"), c)
	if err != nil {
		return bad("%v", err)
	}
	call := &call{in: in, file: path, line: line}
	// The name carries every condition the row gives, so no two points
	// share a name.
	what := fmt.Sprintf("%s at %s ft, %s °C", get("rating"), get("alt_ft"), get("oat_c"))
	if m := get("mach"); m != "" {
		what += ", Mach " + m
	}
	if b := get("bleeds"); b != "" {
		what += ", bleeds " + b
	}
	if a := get("assumed_c"); a != "" {
		what += ", assumed " + a + " °C"
	}
	return call.assert(what, math.Abs(res.Value-want) <= tol, fmt.Sprintf("%.6g", res.Value), fmt.Sprintf("%.6g ± %g", want, tol), nil)
}

func axisOf(i int) grid.Axis { return grid.Axis(i) }
