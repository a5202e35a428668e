package main

import (
	"errors"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"
	"gonum.org/v1/plot/vg"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/chart"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/quantity"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

func newPlotCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "plot (rating|lever|sweep) ... -o FILE.svg|FILE.png",
		Short: "Charts of a rating, a lever or a sweep recording, as SVG or PNG",
		Long: `plot draws a chart to an SVG or PNG file (chosen by the extension of -o),
written atomically:

  plot rating  a rating's target against OAT, one line per altitude, the
               corner marked, dashed where a table edge holds the value
  plot lever   a lever's calibration (raw counts to TLA) and its command
               against TLA at given conditions, with the gates' capture zones,
               hysteresis bands and the reverse range
  plot sweep   a sweep recording of one lever over time with the rests found,
               and a histogram of its raw counts with the notches matched to
               the profile's gates

Every chart carries the safety note in its footer.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return fmt.Errorf("plot needs a chart: rating, lever or sweep (see thrustmap plot --help)")
		},
	}
	cmd.AddCommand(newPlotRatingCmd(), newPlotLeverCmd(), newPlotSweepCmd())
	return cmd
}

// chartFlags are the output flags every chart takes.
type chartFlags struct {
	out, width, height string
	dpi                int
}

func (f *chartFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVarP(&f.out, "out", "o", "", "chart file to write: FILE.svg or FILE.png")
	cmd.Flags().StringVar(&f.width, "width", "", "chart width with a unit: in, cm, mm or pt (default: the chart's own)")
	cmd.Flags().StringVar(&f.height, "height", "", "chart height with a unit: in, cm, mm or pt (default: the chart's own)")
	cmd.Flags().IntVar(&f.dpi, "dpi", chart.DefaultDPI, "resolution of PNG output, dots per inch")
}

// check rejects a missing or unknown output file before any work is done.
func (f *chartFlags) check() error {
	if f.out == "" {
		return fmt.Errorf("-o FILE.svg|FILE.png is required")
	}
	if _, err := chart.FormatOf(f.out); err != nil {
		return fmt.Errorf("-o: %w", err)
	}
	return nil
}

// write sizes the chart as asked, writes it and says so.
func (f *chartFlags) write(w io.Writer, ch *chart.Chart, what string) error {
	for _, s := range []struct {
		flag, v string
		dst     *vg.Length
	}{{"--width", f.width, &ch.Width}, {"--height", f.height, &ch.Height}} {
		if s.v == "" {
			continue
		}
		l, err := vg.ParseLength(s.v)
		if err != nil || !finiteFloat(float64(l)) {
			return fmt.Errorf("%s %q: want a length with a unit, e.g. 8in, 20cm, 150mm or 576pt", s.flag, s.v)
		}
		*s.dst = l
	}
	ch.DPI = f.dpi
	if err := ch.WriteFile(f.out); err != nil {
		return err
	}
	fmt.Fprintf(w, "wrote %s: %s\n", f.out, what)
	return nil
}

// profileRequired is the error for a missing -p.
func profileRequired() error {
	return fmt.Errorf("-p PROFILE is required (a file or an embedded name: %s)", strings.Join(thrustmap.EmbeddedProfiles(), ", "))
}

func newPlotRatingCmd() *cobra.Command {
	var cf conditionFlags
	var out chartFlags
	var profile, rating, alts, oatMin, oatMax string
	cmd := &cobra.Command{
		Use:   "rating -p PROFILE --rating NAME [--alt ALT[,ALT...]] [--mach M] [--bleed NAME]... [--assumed T] -o FILE.svg|FILE.png",
		Short: "Chart a rating's target against OAT, one line per altitude",
		Long: `plot rating draws a rating's target (N1, EPR or torque) against OAT, one line
per pressure altitude: the table's altitude rows (nine at most, spread over its
range) or those given with --alt. Each point is the target the library computes
at that altitude and OAT, with the Mach, bleeds and assumed temperature given
(bleed corrections and the redline included). The corner (flat-rating kink) is
marked on each line when the rating declares one. The OAT axis spans the
table's temperature axis and a margin either side: where a look-up is held at a
table edge (clamped, never extrapolated) the line is dashed.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profile == "" {
				return profileRequired()
			}
			if rating == "" {
				return fmt.Errorf("--rating NAME is required")
			}
			if err := out.check(); err != nil {
				return err
			}
			p, err := thrustmap.LoadProfile(profile)
			if err != nil {
				return err
			}
			r, ok := p.Rating(rating)
			if !ok {
				return fmt.Errorf("--rating: %s has no rating %q (ratings: %s)", p.Source(), rating, ratingList(p))
			}
			// The chart sweeps altitude and OAT: parse the rest of the
			// conditions at a placeholder altitude.
			at := cf
			at.alt = "0"
			a, err := at.parse(false)
			if err != nil {
				return err
			}
			bleeds, err := p.BleedSet(cf.bleeds...)
			if err != nil {
				return fmt.Errorf("--bleed: %w", err)
			}
			if a.assumed && !r.Assumed() {
				return fmt.Errorf("--assumed: rating %q is not an assumed-temperature rating of %s (%s)", rating, p.Source(), assumedList(p))
			}
			c := thrustmap.Conditions{Mach: a.mach, Bleeds: bleeds, OnGround: cf.onGround, AssumedSet: a.assumed, AssumedC: a.assumedC}
			var opts []chart.RatingOption
			if alts != "" {
				var list []float64
				for _, s := range strings.Split(alts, ",") {
					ft, err := quantity.Altitude(strings.TrimSpace(s))
					if err != nil {
						return fmt.Errorf("--alt: %w", err)
					}
					list = append(list, ft)
				}
				opts = append(opts, chart.Altitudes(list...))
			}
			if oatMin != "" || oatMax != "" {
				if oatMin == "" || oatMax == "" {
					return errors.New("--oat-min and --oat-max go together")
				}
				lo, err := quantity.Temperature(oatMin)
				if err != nil {
					return fmt.Errorf("--oat-min: %w", err)
				}
				hi, err := quantity.Temperature(oatMax)
				if err != nil {
					return fmt.Errorf("--oat-max: %w", err)
				}
				opts = append(opts, chart.OATRange(lo, hi))
			}
			ch, err := chart.Rating(p, rating, c, opts...)
			if err != nil {
				return err
			}
			return out.write(cmd.OutOrStdout(), ch, fmt.Sprintf("rating %s of %s", rating, p.Source()))
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded profile name")
	cmd.Flags().StringVar(&rating, "rating", "", "rating name (see the profile)")
	cmd.Flags().StringVar(&alts, "alt", "", "pressure altitudes of the lines, comma-separated (default: the table's rows)")
	cmd.Flags().StringVar(&oatMin, "oat-min", "", "lowest OAT of the chart, with --oat-max (default: the table's axis and a margin)")
	cmd.Flags().StringVar(&oatMax, "oat-max", "", "highest OAT of the chart")
	// Mach, bleeds, assumed temperature and on-ground as in target; the
	// chart sweeps altitude and OAT itself.
	all := pflag.NewFlagSet("conditions", pflag.ContinueOnError)
	cf.register(all, true)
	for _, name := range []string{"mach", "bleed", "assumed", "on-ground"} {
		cmd.Flags().AddFlag(all.Lookup(name))
	}
	out.register(cmd)
	return cmd
}

func newPlotLeverCmd() *cobra.Command {
	var cf conditionFlags
	var out chartFlags
	var profile, cal string
	var lever int
	cmd := &cobra.Command{
		Use:   "lever -p PROFILE -c CAL --lever N --alt ALT --oat T [--mach M] [--bleed NAME]... [--assumed T] [--on-ground] -o FILE.svg|FILE.png",
		Short: "Chart a lever's calibration and its command against TLA",
		Long: `plot lever draws two panels for one lever. The top one is its calibration: raw
counts to TLA over the device's range, the calibration points marked, dashed
where the reading is held beyond the end points. The bottom one is the command
against TLA at the given conditions, with the lever's own gate zones (the
profile's capture and hysteresis raised to the calibration's floors): capture
zones and hysteresis bands shaded and named, gates whose condition is false at
these conditions shaded grey and marked "(off)", and the reverse range (aft of
the idle gate's zone) shaded and labelled. -c takes a calibration file or the
name of an embedded demo profile for its built-in calibration.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profile == "" || cal == "" {
				return fmt.Errorf("-p PROFILE and -c CAL are required")
			}
			if err := out.check(); err != nil {
				return err
			}
			m, err := thrustmap.LoadModel(profile, cal)
			if err != nil {
				return err
			}
			c, _, err := cf.conditions(m.Profile())
			if err != nil {
				return err
			}
			if _, err := calibratedLever(m.Calibration(), lever); err != nil {
				return err
			}
			ch, err := chart.Lever(m, lever, c)
			if err != nil {
				return err
			}
			return out.write(cmd.OutOrStdout(), ch, fmt.Sprintf("lever %d (calibration %s, profile %s)", lever, m.Calibration().Source(), m.Profile().Source()))
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded profile name")
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "calibration file (or an embedded profile's name)")
	cmd.Flags().IntVar(&lever, "lever", 1, "lever id in the calibration")
	cf.register(cmd.Flags(), true)
	out.register(cmd)
	return cmd
}

func newPlotSweepCmd() *cobra.Command {
	var rf recordingFlags
	var out chartFlags
	var profile string
	var lever int
	cmd := &cobra.Command{
		Use:   "sweep RECORDING [-p PROFILE] [--lever N] -o FILE.svg|FILE.png",
		Short: "Chart a sweep recording with the rests and notches found in it",
		Long: `plot sweep analyses one lever of a sweep recording as the sweep command does
and draws two panels: the raw counts over time with the rests found drawn as
thick segments at their mean reading and any jumps (dead or scratchy spots)
marked; and a histogram of the raw counts with the notches marked. With -p the
rests are matched to the profile's notch gates and end stops and the notches
are named by gate; when they do not match, the chart is still written, with the
rests unnamed, and the reason is printed. --lever picks the lever (default: the
first in the recording). Recordings are read as by sweep (--format, --axis).

` + safetyNote,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := out.check(); err != nil {
				return err
			}
			var p *thrustmap.Profile
			if profile != "" {
				var err error
				if p, err = thrustmap.LoadProfile(profile); err != nil {
					return err
				}
			}
			an := sweep.NewAnalyzer(sweep.Options{})
			var samples []input.Sample
			var seen []int
			skipped, warning, err := rf.each(args[0], func(s input.Sample) {
				if !slices.Contains(seen, s.Lever) {
					seen = append(seen, s.Lever)
				}
				if lever == 0 {
					lever = s.Lever
				}
				if s.Lever == lever {
					an.Add(s)
					samples = append(samples, s)
				}
			})
			if err != nil {
				return err
			}
			w := cmd.OutOrStdout()
			if warning != "" {
				fmt.Fprintf(w, "warning: %s\n", warning)
			}
			if _, n := skipped(); n > 0 {
				fmt.Fprintf(w, "skipped %d line(s) of the recording (see thrustmap sweep for where)\n", n)
			}
			if len(samples) == 0 {
				if len(seen) == 0 {
					return fmt.Errorf("%s: no samples", args[0])
				}
				return fmt.Errorf("%s: no samples of lever %d (levers in the recording: %s)", args[0], lever, joinInts(seen))
			}
			sc, _ := an.Scan(lever)
			var res *sweep.Result
			what := fmt.Sprintf("sweep of lever %d, %d samples, %d rests", lever, len(samples), len(sc.Dwells))
			if p != nil {
				r, err := sweep.Calibrate(p, sc, sweep.CalOptions{})
				if err != nil {
					fmt.Fprintf(w, "warning: the rests are not matched to the notches of %s, so the chart does not name them: %v\n", p.Source(), err)
				} else {
					res = &r
					what += fmt.Sprintf(", %d notches matched to %s", len(r.Notches), p.Source())
				}
			}
			ch, err := chart.Sweep(samples, sc, res)
			if err != nil {
				return err
			}
			if err := out.write(w, ch, what); err != nil {
				return err
			}
			if len(seen) > 1 && !cmd.Flags().Changed("lever") {
				fmt.Fprintf(w, "the recording holds levers %s; this chart is lever %d: choose with --lever\n", joinInts(seen), lever)
			}
			return nil
		},
	}
	rf.register(cmd)
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile whose notch gates to match the rests to (file or embedded name)")
	cmd.Flags().IntVar(&lever, "lever", 0, "lever id to chart (default: the first in the recording)")
	out.register(cmd)
	return cmd
}

func joinInts(xs []int) string {
	s := make([]string, len(xs))
	for i, x := range xs {
		s[i] = strconv.Itoa(x)
	}
	return strings.Join(s, ", ")
}
