package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// sweepJSON is the sweep command's JSON (docs/units.md, JSON keys).
type sweepJSON struct {
	Levers       []sweepLeverJSON `json:"levers"`
	SkippedLines []input.Skipped  `json:"skipped_lines"`
	SkippedCount int              `json:"skipped_count"`
	Calibration  string           `json:"calibration,omitempty"`
}

type sweepLeverJSON struct {
	Lever          int         `json:"lever"`
	Samples        int64       `json:"samples"`
	RawMinSeen     float64     `json:"raw_min_seen"`
	RawMaxSeen     float64     `json:"raw_max_seen"`
	Inverted       bool        `json:"inverted"`
	NoiseSigma     float64     `json:"noise_sigma"`
	BacklashCounts float64     `json:"backlash_counts"`
	Notches        []notchJSON `json:"notches"`
	Jumps          []jumpJSON  `json:"jumps"`
	Warnings       []string    `json:"warnings"`
	Error          string      `json:"error,omitempty"`
}

type notchJSON struct {
	Gate    string  `json:"gate"`
	TLADeg  float64 `json:"tla_deg"`
	Raw     float64 `json:"raw"`
	Sigma   float64 `json:"sigma"`
	DwellMs int64   `json:"dwell_ms"`
}

type jumpJSON struct {
	RawFrom float64 `json:"raw_from"`
	RawTo   float64 `json:"raw_to"`
	TMs     int64   `json:"t_ms"`
}

// recordingFlags choose how a recording is read.
type recordingFlags struct {
	format string
	axes   []string
}

func (f *recordingFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&f.format, "format", "", "recording format: csv, evdev or js (default: by extension, .csv otherwise)")
	cmd.Flags().StringArrayVar(&f.axes, "axis", nil, "device axis to lever id, CODE=LEVER (evdev: ABS_X=1 or 0=1; js: axis number 0=1); default: axes 0, 1, 2… are levers 1, 2, 3…")
}

// leverSource is what a source of readings knows besides its samples: a
// warning about its counts, the lines it skipped, and each lever's device
// range and axis where the source tells them.
type leverSource struct {
	warning      string
	skipped      []input.Skipped
	skippedCount int
	ranges       map[int][2]float64 // lever → the device's range
	axes         map[int]string     // lever → the device axis, as the calibration's axis key
}

// newLeverSource gathers what a device tells of its levers.
func newLeverSource(d *input.Device) leverSource {
	src := leverSource{warning: d.Warning, ranges: map[int][2]float64{}, axes: map[int]string{}}
	src.skipped, src.skippedCount = d.Skipped()
	for _, a := range d.Axes {
		src.axes[a.Lever] = a.Name
		if a.HasRange {
			src.ranges[a.Lever] = [2]float64{a.Min, a.Max}
		}
	}
	return src
}

// read reads the recording at path, calling fn with every sample in order.
func (f *recordingFlags) read(path string, fn func(input.Sample)) (leverSource, error) {
	format := f.format
	if format == "" {
		format = input.FileFormat(path)
	}
	axes, err := parseAxisArgs(format, f.axes)
	if err != nil {
		return leverSource{}, err
	}
	d, err := devSystem.Open(path, input.OpenOptions{Format: format, Axes: axes})
	if err != nil {
		return leverSource{}, err
	}
	defer d.Close()
	for {
		s, err := d.Next()
		if errors.Is(err, io.EOF) {
			return newLeverSource(d), nil
		}
		if err != nil {
			return leverSource{}, err
		}
		fn(s)
	}
}

// each reads the recording at path, calling fn with every sample in order;
// it returns the reader's skipped lines and, for the joystick interface, the
// warning about its rescaled counts.
func (f *recordingFlags) each(path string, fn func(input.Sample)) (skipped func() ([]input.Skipped, int), warning string, err error) {
	src, err := f.read(path, fn)
	if err != nil {
		return nil, "", err
	}
	return func() ([]input.Skipped, int) { return src.skipped, src.skippedCount }, src.warning, nil
}

// calFlags choose how a sweep becomes a calibration.
type calFlags struct {
	rawMin, rawMax float64
	fit, orient    string
}

func (f *calFlags) register(cmd *cobra.Command) {
	cmd.Flags().Float64Var(&f.rawMin, "raw-min", 0, "the device's lowest raw count (default: as the device reports it, or guessed from the readings)")
	cmd.Flags().Float64Var(&f.rawMax, "raw-max", 0, "the device's highest raw count")
	cmd.Flags().StringVar(&f.fit, "fit", "linear", "calibration fit: linear or monotone")
	cmd.Flags().StringVar(&f.orient, "orientation", "auto", "which way raw counts run: auto, forward or inverted")
}

// options checks the flags and returns the calibration options.
func (f *calFlags) options(cmd *cobra.Command) (sweep.CalOptions, error) {
	o := sweep.CalOptions{RawMin: f.rawMin, RawMax: f.rawMax, HasRange: cmd.Flags().Changed("raw-min") || cmd.Flags().Changed("raw-max")}
	if o.HasRange && !(cmd.Flags().Changed("raw-min") && cmd.Flags().Changed("raw-max")) {
		return o, fmt.Errorf("--raw-min and --raw-max go together")
	}
	var err error
	if o.Fit, err = grid.ParseMethod(f.fit); err != nil {
		return o, fmt.Errorf("--fit: %w", err)
	}
	switch f.orient {
	case "auto":
	case "forward":
		o.Orientation = sweep.Forward
	case "inverted":
		o.Orientation = sweep.Inverted
	default:
		return o, fmt.Errorf("--orientation %q: want auto, forward or inverted", f.orient)
	}
	return o, nil
}

// calibrateSweep matches every lever the analyzer has seen to profile p's
// notches (sweep.Calibrate), writes the calibration to out atomically
// (keeping out.bak and the levers already in out that were not seen) and
// returns the sweep report. A lever's device range is the one given in o,
// else the one the source reports, else guessed from the readings; its axis
// key is the source's axis. The error lists the levers that could not be
// calibrated; when none could, nothing is written.
func calibrateSweep(p *thrustmap.Profile, an *sweep.Analyzer, out string, o sweep.CalOptions, src leverSource) (sweepJSON, error) {
	report := sweepJSON{SkippedLines: src.skipped, SkippedCount: src.skippedCount}
	if report.SkippedLines == nil {
		report.SkippedLines = []input.Skipped{}
	}
	cal, err := existingCalibration(out)
	if err != nil {
		return report, err
	}
	ids := an.Levers()
	var failed []string
	for _, id := range ids {
		sc, _ := an.Scan(id)
		lo := o
		if r, ok := src.ranges[id]; ok && !o.HasRange {
			lo.RawMin, lo.RawMax, lo.HasRange = r[0], r[1], true
		}
		res, err := sweep.Calibrate(p, sc, lo)
		lj := newSweepLeverJSON(sc, res)
		if src.warning != "" {
			lj.Warnings = append([]string{src.warning}, lj.Warnings...)
		}
		if err != nil {
			lj.Error = err.Error()
			failed = append(failed, err.Error())
		} else {
			res.Spec.Axis = src.axes[id]
			l, err := thrustmap.NewLeverCalibration(res.Spec)
			if err != nil {
				return report, err
			}
			cal = cal.With(l)
		}
		report.Levers = append(report.Levers, lj)
	}
	if len(failed) < len(ids) {
		if err := atomicfile.WriteFile(out, cal.Encode(), 0o644, true); err != nil {
			return report, err
		}
		report.Calibration = out
	}
	if len(failed) > 0 {
		return report, errors.New(strings.Join(failed, "; "))
	}
	return report, nil
}

func newSweepCmd() *cobra.Command {
	var rf recordingFlags
	var cf calFlags
	var live liveFlags
	var profile, out string
	var lever int
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "sweep RECORDING -p PROFILE -o CAL [--lever N] (or --device PATH|joy:N for RECORDING)",
		Short: "Calibrate levers from a recording of them moved end to end and rested in each notch",
		Long: `sweep analyses a recording of each lever moved from one end stop to the other
and rested (a second or so) at each end and in each notch. It finds the rests,
estimates the noise, the backlash (a notch reads differently from either side;
the notch is the midpoint), dead or scratchy spots on the track (jumps), and
matches the rests in order to the profile's gates with notch = true and the two
end stops. It writes a calibration (atomically, keeping CAL.bak) whose deadband
and capture and hysteresis floors follow from the measured noise. Levers
already in CAL and not in the recording are kept.

Recordings: CSV with a header t_ms,lever,raw (other columns ignored; bad lines
are skipped and reported with their line numbers), Linux evdev captures
(struct input_event records, .evdev) or joystick-interface captures
(struct js_event records, .js; the driver rescales counts). For a capture the
device axis of each lever is written as its axis key, for watch.

With --device instead of a recording, sweep reads the levers live (a device,
joy:N, a serial port or a FIFO, as record does, with the same live view)
until Enter, Ctrl-C or --seconds, then calibrates; the readings are not kept:
thrustmap record -o REC.csv --calibrate CAL keeps them. The device's own range
(evdev, game controllers) is the calibration's device range unless --raw-min
and --raw-max are given.

A sweep cannot see pot taper between notches: add points at known angles with
add-point.

` + safetyNote,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if profile == "" || out == "" {
				return fmt.Errorf("-p PROFILE and -o CAL are required")
			}
			if (len(args) == 1) == (live.device != "") {
				return fmt.Errorf("give a RECORDING or --device PATH|joy:N, not both and not neither")
			}
			p, err := thrustmap.LoadProfile(profile)
			if err != nil {
				return err
			}
			o, err := cf.options(cmd)
			if err != nil {
				return err
			}
			an := sweep.NewAnalyzer(sweep.Options{})
			var src leverSource
			name := live.device
			if live.device != "" {
				live.format, live.axisArgs = rf.format, rf.axes
				rec, d, err := live.record(cmd, p, func(s input.Sample) {
					if lever == 0 || s.Lever == lever {
						an.Add(s)
					}
				})
				if err != nil {
					return err
				}
				rec.describeStop(cmd.ErrOrStderr(), "")
				src = newLeverSource(d)
			} else {
				name = args[0]
				if src, err = rf.read(args[0], func(s input.Sample) {
					if lever == 0 || s.Lever == lever {
						an.Add(s)
					}
				}); err != nil {
					return err
				}
			}
			if len(an.Levers()) == 0 {
				return fmt.Errorf("%s: no samples%s", name, map[bool]string{true: fmt.Sprintf(" of lever %d", lever), false: ""}[lever != 0])
			}
			report, calErr := calibrateSweep(p, an, out, o, src)
			if asJSON {
				if err := writeJSON(cmd.OutOrStdout(), report); err != nil {
					return err
				}
			} else {
				printSweep(cmd.OutOrStdout(), report)
			}
			return calErr
		},
	}
	rf.register(cmd)
	cf.register(cmd)
	live.register(cmd)
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded profile name")
	cmd.Flags().StringVarP(&out, "out", "o", "", "calibration file to write (levers not in the recording are kept)")
	cmd.Flags().IntVar(&lever, "lever", 0, "calibrate only this lever id (default: every lever in the recording)")
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	return cmd
}

// existingCalibration reads the calibration at path, or returns an empty one
// when there is no file yet.
func existingCalibration(path string) (*thrustmap.Calibration, error) {
	b, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return thrustmap.NewCalibration()
	}
	if err != nil {
		return nil, err
	}
	return thrustmap.ParseCalibration(path, b)
}

func newSweepLeverJSON(sc sweep.Scan, res sweep.Result) sweepLeverJSON {
	lj := sweepLeverJSON{Lever: sc.Lever, Samples: sc.Samples, RawMinSeen: sc.RawMinSeen, RawMaxSeen: sc.RawMaxSeen,
		Inverted: res.Inverted, NoiseSigma: round(sc.NoiseSigma, 3), BacklashCounts: round(res.BacklashCounts, 2),
		Notches: []notchJSON{}, Jumps: []jumpJSON{}, Warnings: append([]string{}, res.Warnings...)}
	for _, n := range res.Notches {
		lj.Notches = append(lj.Notches, notchJSON{Gate: n.Gate, TLADeg: n.TLADeg, Raw: round(n.Raw, 2), Sigma: round(n.Sigma, 3), DwellMs: n.DwellMs})
	}
	for _, j := range sc.Jumps {
		lj.Jumps = append(lj.Jumps, jumpJSON{RawFrom: j.From, RawTo: j.To, TMs: j.TMs})
	}
	return lj
}

func round(v float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(v*p) / p
}

func printSweep(w io.Writer, r sweepJSON) {
	for _, l := range r.Levers {
		dir := "forward"
		if l.Inverted {
			dir = "inverted"
		}
		fmt.Fprintf(w, "lever %d: %d samples, raw %g to %g seen, %s, noise σ %.2f counts, backlash %.1f counts\n",
			l.Lever, l.Samples, l.RawMinSeen, l.RawMaxSeen, dir, l.NoiseSigma, l.BacklashCounts)
		if len(l.Notches) > 0 {
			tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
			fmt.Fprintln(tw, "  \tgate\tTLA°\traw\tσ\tdwell\t")
			for _, n := range l.Notches {
				fmt.Fprintf(tw, "  \t%s\t%.1f\t%.1f\t%.2f\t%.1f s\t\n", n.Gate, n.TLADeg, n.Raw, n.Sigma, float64(n.DwellMs)/1000)
			}
			tw.Flush()
		}
		for i, j := range l.Jumps {
			if i == 10 {
				fmt.Fprintf(w, "  … %d more jumps\n", len(l.Jumps)-10)
				break
			}
			fmt.Fprintf(w, "  jump: raw %g → %g at %.3f s\n", j.RawFrom, j.RawTo, float64(j.TMs)/1000)
		}
		for _, m := range l.Warnings {
			fmt.Fprintf(w, "  warning: %s\n", m)
		}
		if l.Error != "" {
			fmt.Fprintf(w, "  not calibrated: %s\n", l.Error)
		}
	}
	if r.SkippedCount > 0 {
		fmt.Fprintf(w, "skipped %d line(s) of the recording:\n", r.SkippedCount)
		for _, s := range r.SkippedLines {
			fmt.Fprintf(w, "  %s\n", s)
		}
		if r.SkippedCount > len(r.SkippedLines) {
			fmt.Fprintf(w, "  … and %d more\n", r.SkippedCount-len(r.SkippedLines))
		}
	}
	if r.Calibration != "" {
		fmt.Fprintf(w, "wrote %s (the previous file, if any, is %s.bak)\n", r.Calibration, r.Calibration)
	}
	fmt.Fprintln(w, safetyNote)
}
