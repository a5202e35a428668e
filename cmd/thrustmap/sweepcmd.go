package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
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

// open returns a reader of the recording at path and, for the joystick
// interface, a warning about its rescaled counts.
func (f *recordingFlags) open(path string) (input.Reader, func() ([]input.Skipped, int), string, io.Closer, error) {
	file, err := os.Open(path)
	if err != nil {
		return nil, nil, "", nil, err
	}
	format := f.format
	if format == "" {
		switch {
		case strings.HasSuffix(path, ".evdev"):
			format = "evdev"
		case strings.HasSuffix(path, ".js"):
			format = "js"
		default:
			format = "csv"
		}
	}
	none := func() ([]input.Skipped, int) { return nil, 0 }
	r := bufio.NewReaderSize(file, 1<<16)
	switch format {
	case "csv":
		cr := input.NewCSVReader(r, path)
		return cr, func() ([]input.Skipped, int) { return cr.Skipped(), cr.SkippedCount() }, "", file, nil
	case "evdev":
		axes := map[uint16]int{}
		for i := range 8 {
			axes[uint16(i)] = i + 1
		}
		if len(f.axes) > 0 {
			axes = map[uint16]int{}
			for _, a := range f.axes {
				code, lever, err := splitAxis(a)
				if err != nil {
					file.Close()
					return nil, nil, "", nil, err
				}
				c, err := input.ParseAbsCode(code)
				if err != nil {
					file.Close()
					return nil, nil, "", nil, fmt.Errorf("--axis %q: %w", a, err)
				}
				axes[c] = lever
			}
		}
		return input.NewEvdevReader(r, axes), none, "", file, nil
	case "js":
		axes := map[uint8]int{}
		for i := range 8 {
			axes[uint8(i)] = i + 1
		}
		if len(f.axes) > 0 {
			axes = map[uint8]int{}
			for _, a := range f.axes {
				code, lever, err := splitAxis(a)
				if err != nil {
					file.Close()
					return nil, nil, "", nil, err
				}
				n, err := strconv.ParseUint(code, 0, 8)
				if err != nil {
					file.Close()
					return nil, nil, "", nil, fmt.Errorf("--axis %q: joystick axes are numbers 0 to 255", a)
				}
				axes[uint8(n)] = lever
			}
		}
		jr := input.NewJoystickReader(r, axes)
		return jr, none, jr.Warning(), file, nil
	}
	file.Close()
	return nil, nil, "", nil, fmt.Errorf("--format %q: want csv, evdev or js", format)
}

// each reads the recording at path, calling fn with every sample in order;
// it returns the reader's skipped lines and, for the joystick interface, the
// warning about its rescaled counts.
func (f *recordingFlags) each(path string, fn func(input.Sample)) (skipped func() ([]input.Skipped, int), warning string, err error) {
	reader, skipped, warning, closer, err := f.open(path)
	if err != nil {
		return nil, "", err
	}
	defer closer.Close()
	for {
		s, err := reader.Next()
		if errors.Is(err, io.EOF) {
			return skipped, warning, nil
		}
		if err != nil {
			return nil, "", err
		}
		fn(s)
	}
}

func splitAxis(s string) (string, int, error) {
	code, lever, ok := strings.Cut(s, "=")
	n, err := strconv.Atoi(lever)
	if !ok || err != nil {
		return "", 0, fmt.Errorf("--axis %q: want CODE=LEVER, e.g. ABS_Z=2", s)
	}
	return code, n, nil
}

func newSweepCmd() *cobra.Command {
	var rf recordingFlags
	var profile, out, fit, orient string
	var lever int
	var rawMin, rawMax float64
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "sweep RECORDING -p PROFILE -o CAL [--lever N]",
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
(struct js_event records, .js; the driver rescales counts).

A sweep cannot see pot taper between notches: add points at known angles with
add-point.

` + safetyNote,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if profile == "" || out == "" {
				return fmt.Errorf("-p PROFILE and -o CAL are required")
			}
			p, err := thrustmap.LoadProfile(profile)
			if err != nil {
				return err
			}
			o := sweep.CalOptions{RawMin: rawMin, RawMax: rawMax, HasRange: cmd.Flags().Changed("raw-min") || cmd.Flags().Changed("raw-max")}
			if o.HasRange && !(cmd.Flags().Changed("raw-min") && cmd.Flags().Changed("raw-max")) {
				return fmt.Errorf("--raw-min and --raw-max go together")
			}
			if o.Fit, err = grid.ParseMethod(fit); err != nil {
				return fmt.Errorf("--fit: %w", err)
			}
			switch orient {
			case "auto":
			case "forward":
				o.Orientation = sweep.Forward
			case "inverted":
				o.Orientation = sweep.Inverted
			default:
				return fmt.Errorf("--orientation %q: want auto, forward or inverted", orient)
			}
			an := sweep.NewAnalyzer(sweep.Options{})
			skipped, warning, err := rf.each(args[0], func(s input.Sample) {
				if lever == 0 || s.Lever == lever {
					an.Add(s)
				}
			})
			if err != nil {
				return err
			}
			report := sweepJSON{}
			report.SkippedLines, report.SkippedCount = skipped()
			if report.SkippedLines == nil {
				report.SkippedLines = []input.Skipped{}
			}
			ids := an.Levers()
			if len(ids) == 0 {
				return fmt.Errorf("%s: no samples%s", args[0], map[bool]string{true: fmt.Sprintf(" of lever %d", lever), false: ""}[lever != 0])
			}
			cal, err := existingCalibration(out)
			if err != nil {
				return err
			}
			var failed []string
			for _, id := range ids {
				sc, _ := an.Scan(id)
				res, err := sweep.Calibrate(p, sc, o)
				lj := newSweepLeverJSON(sc, res)
				if warning != "" {
					lj.Warnings = append([]string{warning}, lj.Warnings...)
				}
				if err != nil {
					lj.Error = err.Error()
					failed = append(failed, err.Error())
				} else {
					l, err := thrustmap.NewLeverCalibration(res.Spec)
					if err != nil {
						return err
					}
					cal = cal.With(l)
				}
				report.Levers = append(report.Levers, lj)
			}
			if len(failed) < len(ids) {
				if err := atomicfile.WriteFile(out, cal.Encode(), 0o644, true); err != nil {
					return err
				}
				report.Calibration = out
			}
			if asJSON {
				if err := writeJSON(cmd.OutOrStdout(), report); err != nil {
					return err
				}
			} else {
				printSweep(cmd.OutOrStdout(), report)
			}
			if len(failed) > 0 {
				return errors.New(strings.Join(failed, "; "))
			}
			return nil
		},
	}
	rf.register(cmd)
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded profile name")
	cmd.Flags().StringVarP(&out, "out", "o", "", "calibration file to write (levers not in the recording are kept)")
	cmd.Flags().IntVar(&lever, "lever", 0, "calibrate only this lever id (default: every lever in the recording)")
	cmd.Flags().Float64Var(&rawMin, "raw-min", 0, "the device's lowest raw count (default: guessed from the readings)")
	cmd.Flags().Float64Var(&rawMax, "raw-max", 0, "the device's highest raw count")
	cmd.Flags().StringVar(&fit, "fit", "linear", "calibration fit: linear or monotone")
	cmd.Flags().StringVar(&orient, "orientation", "auto", "which way raw counts run: auto, forward or inverted")
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
