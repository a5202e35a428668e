package main

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

func newAddPointCmd() *cobra.Command {
	var cal, from string
	var lever int
	var raw, tla float64
	cmd := &cobra.Command{
		Use:   "add-point -c CAL [--from CAL] --lever N --raw R --tla DEG",
		Short: "Add a calibration point at a known lever angle (pot taper a sweep cannot see)",
		Long: `add-point adds the point (raw, TLA) to a lever's calibration, replacing a point
at the same angle, and writes the file atomically, keeping CAL.bak. Use it for
angles measured by hand between notches, where a sweep cannot see the taper of
the pot. The points must stay strictly monotone.

CAL is a calibration file that exists (sweep writes one). With --from, the
points start from another calibration — a file, or a built-in one such as
demo, which cannot be edited in place — and the result is written to CAL.

` + safetyNote,
		Example: `  thrustmap add-point -c my-quadrant.toml --lever 1 --raw 1900 --tla 13
  thrustmap add-point --from demo -c my-quadrant.toml --lever 1 --raw 1900 --tla 13`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if cal == "" || !cmd.Flags().Changed("raw") || !cmd.Flags().Changed("tla") {
				return fmt.Errorf("-c CAL, --raw and --tla are required")
			}
			c, err := calibrationToEdit(cal, from)
			if err != nil {
				return err
			}
			l, err := calibratedLever(c, lever)
			if err != nil {
				return err
			}
			nl, err := l.WithPoint(raw, tla)
			if err != nil {
				return fmt.Errorf("the point (%g, %g°) does not fit: %w", raw, tla, err)
			}
			_, statErr := os.Stat(cal)
			if err := atomicfile.WriteFile(cal, c.With(nl).Encode(), 0o644, true); err != nil {
				return err
			}
			kept := ""
			if statErr == nil {
				kept = fmt.Sprintf(" (previous file kept as %s%s)", cal, atomicfile.BackupSuffix)
			}
			fmt.Fprintf(cmd.OutOrStdout(), "lever %d: %d points; wrote %s%s\n", lever, len(nl.Spec().Points), cal, kept)
			return nil
		},
	}
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "calibration file to change (or to write, with --from)")
	cmd.Flags().StringVar(&from, "from", "", "start from this calibration (a file or a built-in name such as demo)")
	cmd.Flags().IntVar(&lever, "lever", 1, "lever id")
	cmd.Flags().Float64Var(&raw, "raw", 0, "raw count read at the angle")
	cmd.Flags().Float64Var(&tla, "tla", 0, "the lever angle, degrees")
	return cmd
}

// calibrationToEdit returns the calibration add-point changes: the file
// cal, which must exist, or the calibration from (a file or a built-in
// name), whose points are then written to cal.
func calibrationToEdit(cal, from string) (*thrustmap.Calibration, error) {
	if from != "" {
		return thrustmap.LoadCalibration(from)
	}
	if _, builtin := thrustmap.EmbeddedCalibrationText(cal); builtin && !strings.ContainsRune(cal, '/') && !strings.HasSuffix(cal, ".toml") {
		return nil, fmt.Errorf("-c %s: a built-in calibration cannot be edited; start a file from it: thrustmap add-point --from %s -c my-levers.toml ...", cal, cal)
	}
	b, err := os.ReadFile(cal)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("-c %s: no such file (add-point changes a calibration that exists: write one with sweep, or start from another with --from)", cal)
	}
	if err != nil {
		return nil, err
	}
	return thrustmap.ParseCalibration(cal, b)
}

func newSynthSweepCmd() *cobra.Command {
	var cal, out, deadSpots string
	var levers []int
	var noise, backlash, taper, hz, dwell, speed float64
	var passes, bits int
	var seed uint64
	cmd := &cobra.Command{
		Use:   "synth-sweep -c CAL -o RECORDING.csv [--lever N]... [--noise σ] [--backlash COUNTS] [--dead-spot FROM:TO]...",
		Short: "Write an invented sweep recording, to try sweep without hardware",
		Long: `synth-sweep writes a synthetic CSV recording (t_ms,lever,raw) of levers moved
end to end and rested at each point of a calibration, with Gaussian noise,
backlash, pot taper and dead spots as asked. The data are invented, seeded and
repeatable.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if cal == "" || out == "" {
				return fmt.Errorf("-c CAL and -o RECORDING are required")
			}
			c, err := thrustmap.LoadCalibration(cal)
			if err != nil {
				return err
			}
			var dead [][2]float64
			if deadSpots != "" {
				for _, d := range strings.Split(deadSpots, ",") {
					a, b, ok := strings.Cut(d, ":")
					lo, err1 := strconv.ParseFloat(a, 64)
					hi, err2 := strconv.ParseFloat(b, 64)
					if !ok || err1 != nil || err2 != nil || !(lo < hi) {
						return fmt.Errorf("--dead-spot %q: want FROM:TO raw counts, FROM below TO", d)
					}
					dead = append(dead, [2]float64{lo, hi})
				}
			}
			cfg := sweep.SynthConfig{SampleHz: hz, DwellMs: dwell, CountsPerSec: speed, Passes: passes, Bits: bits, Seed: seed}
			for _, l := range c.Levers() {
				if len(levers) > 0 && !slices.Contains(levers, l.ID()) {
					continue
				}
				var notches []float64
				for _, p := range l.Spec().Points {
					notches = append(notches, p[0])
				}
				if l.Inverted() != (notches[0] > notches[len(notches)-1]) {
					slices.Reverse(notches)
				}
				cfg.Levers = append(cfg.Levers, sweep.SynthLever{ID: l.ID(), Notches: notches, NoiseSigma: noise,
					Backlash: backlash, Taper: taper, DeadSpots: dead})
			}
			if len(cfg.Levers) == 0 {
				return fmt.Errorf("--lever: no such lever in %s (levers: %s)", cal, leverIDs(c))
			}
			if !(hz > 0 && dwell > 0 && speed > 0 && passes > 0 && bits >= 8 && bits <= 24 && noise >= 0 && backlash >= 0) || math.IsInf(hz, 0) {
				return fmt.Errorf("--hz, --dwell-ms, --speed and --passes must be positive, --bits 8 to 24, --noise and --backlash ≥ 0")
			}
			var b bytes.Buffer
			b.WriteString("# invented sweep recording written by thrustmap synth-sweep; simulation only\nt_ms,lever,raw\n")
			n := 0
			cfg.Visit(func(s input.Sample) {
				b.WriteString(strconv.FormatInt(s.TMs, 10))
				b.WriteByte(',')
				b.WriteString(strconv.Itoa(s.Lever))
				b.WriteByte(',')
				b.WriteString(strconv.FormatFloat(s.Raw, 'f', -1, 64))
				b.WriteByte('\n')
				n++
			})
			if err := atomicfile.WriteFile(out, b.Bytes(), 0o644, false); err != nil {
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: %d samples of %d lever(s)\n", out, n, len(cfg.Levers))
			return nil
		},
	}
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "calibration whose points are the true notches (file or embedded name)")
	cmd.Flags().StringVarP(&out, "out", "o", "", "recording to write (CSV)")
	cmd.Flags().IntSliceVar(&levers, "lever", nil, "levers to include (default: all)")
	cmd.Flags().Float64Var(&noise, "noise", 3, "noise σ, counts")
	cmd.Flags().Float64Var(&backlash, "backlash", 0, "backlash, counts")
	cmd.Flags().Float64Var(&taper, "taper", 0, "bend of the travel between notches")
	cmd.Flags().StringVar(&deadSpots, "dead-spot", "", "raw ranges the track skips, FROM:TO[,FROM:TO...]")
	cmd.Flags().Float64Var(&hz, "hz", 200, "samples per second per lever")
	cmd.Flags().Float64Var(&dwell, "dwell-ms", 1500, "rest in each notch, ms")
	cmd.Flags().Float64Var(&speed, "speed", 600, "travel speed, counts per second")
	cmd.Flags().IntVar(&passes, "passes", 2, "end-to-end passes")
	cmd.Flags().IntVar(&bits, "bits", 12, "device resolution, bits")
	cmd.Flags().Uint64Var(&seed, "seed", 1, "random seed")
	return cmd
}
