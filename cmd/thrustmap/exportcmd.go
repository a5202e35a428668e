package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/export"
)

func newExportCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "export grid|table|lever|c ...",
		Short: "Write a rating as a dense grid or as its own table, a calibration as a lookup table, or a profile as C source",
		Long: `export writes thrustmap's data for other programs. Each export states its grid;
grid and lever also state the interpolation error they measured against the
source, and table writes a rating's own grid as a profile's table_file reads it.

` + safetyNote,
	}
	cmd.AddCommand(newExportGridCmd(), newExportTableCmd(), newExportLeverCmd())
	if c := newExportCCmd(); c != nil {
		cmd.AddCommand(c)
	}
	return cmd
}

// writeExport writes data atomically to out, which must end in one of exts.
func writeExport(out string, data []byte) error {
	return atomicfile.WriteFile(out, data, 0o644, false)
}

func newExportGridCmd() *cobra.Command {
	var profile, rating, out string
	var bleeds []string
	var steps export.Steps
	cmd := &cobra.Command{
		Use:   "grid -p PROFILE --rating NAME [--alt-step FT] [--temp-step C] [--mach-step M] [--bleed NAME]... -o FILE.csv|FILE.json",
		Short: "A rating sampled on a dense grid (CSV or JSON)",
		Long: `export grid samples a rating over its own axes (altitude, the temperature of its
basis — OAT, TAT or ISA deviation — and Mach) at the given steps (0 keeps the
table's own points), with the corrections of the bleeds given and the redline,
and measures the largest difference of linear interpolation in the export from
the source at the centre of every cell.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profile == "" || rating == "" || out == "" {
				return fmt.Errorf("-p PROFILE, --rating NAME and -o FILE are required")
			}
			p, err := thrustmap.LoadProfile(profile)
			if err != nil {
				return err
			}
			set, err := p.BleedSet(bleeds...)
			if err != nil {
				return fmt.Errorf("--bleed: %w", err)
			}
			d, err := export.DenseRating(p, rating, steps, set)
			if err != nil {
				return err
			}
			var data []byte
			switch {
			case strings.HasSuffix(out, ".csv"):
				data = d.CSV()
			case strings.HasSuffix(out, ".json"):
				if data, err = d.JSON(); err != nil {
					return err
				}
			default:
				return fmt.Errorf("-o %s: want a .csv or .json file", out)
			}
			if err := writeExport(out, data); err != nil {
				return err
			}
			n := 1
			for _, a := range d.Axes {
				n *= len(a.Points)
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: %s on %d points; linear interpolation in it differs from the source by at most %.4g\n", out, rating, n, d.MaxError)
			return nil
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded name")
	cmd.Flags().StringVar(&rating, "rating", "", "rating to export")
	cmd.Flags().Float64Var(&steps.AltitudeFt, "alt-step", 0, "altitude step, ft (0: the table's points)")
	cmd.Flags().Float64Var(&steps.Temperature, "temp-step", 0, "temperature step, °C (0: the table's points)")
	cmd.Flags().Float64Var(&steps.Mach, "mach-step", 0, "Mach step (0: the table's points)")
	cmd.Flags().StringArrayVar(&bleeds, "bleed", nil, "include this bleed's correction (repeatable)")
	cmd.Flags().StringVarP(&out, "out", "o", "", "file to write: .csv or .json")
	return cmd
}

func newExportTableCmd() *cobra.Command {
	var profile, rating, out, which string
	cmd := &cobra.Command{
		Use:   "table -p PROFILE --rating NAME [--grid values|thrust] -o FILE.csv",
		Short: "A rating's own table as CSV, for a spreadsheet or a profile's table_file",
		Long: `export table writes one grid of a rating as it is in the profile: its values
(--grid values, the default) or its rated-thrust grid (--grid thrust), on the
rating's own axis points — not resampled, without bleed corrections or the
redline. A table of altitude × temperature is written wide (altitude_ft down
the first column, temperature_c along the first row); any other, one row per
grid point (the axis columns, then value). Lines starting with # say what the
file holds. A profile reads the file back as it is with table_file (or
thrust_file) in its [[rating]].

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profile == "" || rating == "" || out == "" {
				return fmt.Errorf("-p PROFILE, --rating NAME and -o FILE.csv are required")
			}
			if !strings.HasSuffix(out, ".csv") {
				return fmt.Errorf("-o %s: want a .csv file", out)
			}
			if which != export.GridValues && which != export.GridThrust {
				return fmt.Errorf("--grid %s: want %s or %s", which, export.GridValues, export.GridThrust)
			}
			p, err := thrustmap.LoadProfile(profile)
			if err != nil {
				return err
			}
			t, err := export.RatingTable(p, rating, which)
			if err != nil {
				return err
			}
			if err := writeExport(out, t.CSV()); err != nil {
				return err
			}
			var sizes []string
			for _, a := range t.Axes() {
				sizes = append(sizes, fmt.Sprintf("%d %s", len(a.Points), a.Name))
			}
			shape := strings.Join(sizes, " × ")
			if shape == "" {
				shape = "a single value"
			}
			what := t.Parameter + ", " + t.Unit
			if which == export.GridThrust {
				what = t.Unit
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: %s %s (%s), %s, %s layout\n", out, rating, which, what, shape, t.Layout)
			return nil
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded name")
	cmd.Flags().StringVar(&rating, "rating", "", "rating to export")
	cmd.Flags().StringVar(&which, "grid", export.GridValues, "which grid: values or thrust")
	cmd.Flags().StringVarP(&out, "out", "o", "", "file to write (.csv)")
	return cmd
}

func newExportLeverCmd() *cobra.Command {
	var cal, out string
	var lever int
	var step float64
	cmd := &cobra.Command{
		Use:   "lever -c CAL --lever N [--step COUNTS] -o FILE.csv|FILE.json",
		Short: "A lever calibration as a raw → TLA lookup table",
		Long: `export lever samples a lever's calibration from the device's raw_min to raw_max
at the given step and measures the largest difference of linear interpolation in
the table from the calibration.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if cal == "" || out == "" {
				return fmt.Errorf("-c CAL and -o FILE are required")
			}
			c, err := thrustmap.LoadCalibration(cal)
			if err != nil {
				return err
			}
			l, err := calibratedLever(c, lever)
			if err != nil {
				return err
			}
			t, err := export.LeverLookup(l, step)
			if err != nil {
				return err
			}
			var data []byte
			switch {
			case strings.HasSuffix(out, ".csv"):
				data = t.CSV()
			case strings.HasSuffix(out, ".json"):
				var b strings.Builder
				if err := writeJSON(&b, t); err != nil {
					return err
				}
				data = []byte(b.String())
			default:
				return fmt.Errorf("-o %s: want a .csv or .json file", out)
			}
			if err := writeExport(out, data); err != nil {
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: lever %d, %d points; linear interpolation in it differs from the calibration by at most %.4g°\n", out, lever, len(t.Raw), t.MaxErrorDeg)
			return nil
		},
	}
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "calibration file (or an embedded profile's name)")
	cmd.Flags().IntVar(&lever, "lever", 1, "lever id")
	cmd.Flags().Float64Var(&step, "step", 1, "raw step, counts")
	cmd.Flags().StringVarP(&out, "out", "o", "", "file to write: .csv or .json")
	return cmd
}
