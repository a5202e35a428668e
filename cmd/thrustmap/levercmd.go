package main

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// leverJSON is one lever sample in the lever command's JSON (docs/units.md, JSON keys).
type leverJSON struct {
	Lever     int       `json:"lever"`
	Raw       float64   `json:"raw"`
	TLADeg    float64   `json:"tla_deg"`
	Gate      *string   `json:"gate"`
	Between   *[]string `json:"between"`
	Fraction  *float64  `json:"fraction"`
	Value     float64   `json:"value"`
	Parameter string    `json:"parameter"`
	Unit      string    `json:"unit"`
	Reverse   bool      `json:"reverse"`
	Clamped   []string  `json:"clamped"`
	Flags     []string  `json:"flags"`
	// SplitDeg is the spread of TLA across the levers at this sample index,
	// present when several levers are given.
	SplitDeg *float64 `json:"split_deg,omitempty"`
}

func newLeverJSON(m *thrustmap.Model, cmd thrustmap.LeverCommand) leverJSON {
	out := leverJSON{Lever: cmd.Lever, Raw: cmd.Raw, TLADeg: cmd.TLADeg, Value: cmd.Value,
		Parameter: cmd.Parameter.String(), Unit: cmd.Unit(), Reverse: cmd.Reverse,
		Clamped: cmd.Clamped.Names(), Flags: cmd.Flags.Names()}
	if cmd.Gate >= 0 {
		name := m.GateName(cmd.Gate)
		out.Gate = &name
	}
	if cmd.Between() {
		pair := []string{m.GateName(cmd.Lower), m.GateName(cmd.Upper)}
		f := cmd.Fraction
		out.Between, out.Fraction = &pair, &f
	}
	return out
}

// parseList reads a comma-separated list of numbers.
func parseList(flag, s string) ([]float64, error) {
	var out []float64
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		v, err := strconv.ParseFloat(f, 64)
		if err != nil || !finiteFloat(v) {
			return nil, fmt.Errorf("%s: %q is not a number", flag, f)
		}
		out = append(out, v)
	}
	return out, nil
}

func finiteFloat(v float64) bool { return v-v == 0 }

func newLeverCmd() *cobra.Command {
	var cf conditionFlags
	var profile, cal string
	var raws []string
	var levers []int
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "lever -p PROFILE -c CAL --lever N --raw R[,R,...] --alt ALT --oat T [--mach M] [--bleed NAME]... [--assumed T] [--on-ground]",
		Short: "Engine commands from raw lever counts",
		Long: `lever maps raw lever counts through the lever's calibration to the thrust-lever
angle, the detent gate and the engine command at the given conditions. The
samples are processed in order through one lever state, so the deadband and the
gate hysteresis act as they would on a live lever. -c takes a calibration file
or the name of an embedded demo profile for its built-in calibration.

For each sample: the TLA, the reported gate (held through its hysteresis band),
the two gates interpolated between and the fraction, the command, whether the
lever is in reverse, what was clamped (table axes; raw beyond the calibrated
points; device beyond the device range) and flags (raised, limited, interlock,
fallback).

Several levers: repeat --lever and --raw in pairs (--lever 1 --raw ... --lever 2
--raw ...); samples at the same index are taken together and the split, the
spread of their lever angles, is reported.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profile == "" || cal == "" {
				return fmt.Errorf("-p PROFILE and -c CAL are required")
			}
			if len(raws) == 0 {
				return fmt.Errorf("--raw R[,R,...] is required")
			}
			if len(levers) == 0 {
				levers = []int{1}
			}
			if len(levers) != len(raws) {
				return fmt.Errorf("give one --raw list per --lever (%d levers, %d raw lists)", len(levers), len(raws))
			}
			samples := make([][]float64, len(raws))
			for i, r := range raws {
				var err error
				if samples[i], err = parseList("--raw", r); err != nil {
					return err
				}
				if len(samples[i]) != len(samples[0]) {
					return fmt.Errorf("--raw: lever %d has %d samples, lever %d has %d: several levers need as many each", levers[i], len(samples[i]), levers[0], len(samples[0]))
				}
			}
			m, err := thrustmap.LoadModel(profile, cal)
			if err != nil {
				return err
			}
			c, _, err := cf.conditions(m.Profile())
			if err != nil {
				return err
			}
			for _, id := range levers {
				if _, err := calibratedLever(m.Calibration(), id); err != nil {
					return err
				}
			}
			states := make([]thrustmap.LeverState, len(levers))
			var out []leverJSON
			for k := range samples[0] {
				var at []thrustmap.LeverCommand
				for i, id := range levers {
					res, err := m.Command(&states[i], id, samples[i][k], c)
					if err != nil {
						return err
					}
					at = append(at, res)
				}
				for _, res := range at {
					row := newLeverJSON(m, res)
					if len(levers) > 1 {
						split := thrustmap.Split(at...)
						row.SplitDeg = &split
					}
					out = append(out, row)
				}
			}
			if asJSON {
				return writeJSON(cmd.OutOrStdout(), out)
			}
			printLever(cmd.OutOrStdout(), out)
			return nil
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded profile name")
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "calibration file (or an embedded profile's name)")
	cmd.Flags().IntSliceVar(&levers, "lever", nil, "lever id in the calibration (default 1; repeat for several levers)")
	cmd.Flags().StringArrayVar(&raws, "raw", nil, "raw counts, comma-separated, processed in order (one list per --lever)")
	cf.register(cmd.Flags(), true)
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	return cmd
}

// calibratedLever returns lever id of cal, or an error for --lever naming
// the levers it has.
func calibratedLever(cal *thrustmap.Calibration, id int) (*thrustmap.LeverCalibration, error) {
	if l := cal.Lever(id); l != nil {
		return l, nil
	}
	return nil, fmt.Errorf("--lever: %s has no lever %d (levers: %s)", cal.Source(), id, leverIDs(cal))
}

func leverIDs(cal *thrustmap.Calibration) string {
	var ids []string
	for _, l := range cal.Levers() {
		ids = append(ids, strconv.Itoa(l.ID()))
	}
	return strings.Join(ids, ", ")
}

// leverCells are the gate, the interpolation pair and the notes (reverse,
// flags, clamps) of a lever sample as the text views show them.
func leverCells(r leverJSON) (gate, between string, notes []string) {
	gate, between = "-", "-"
	if r.Gate != nil {
		gate = *r.Gate
	}
	if r.Between != nil {
		between = fmt.Sprintf("%s–%s %.2f", (*r.Between)[0], (*r.Between)[1], *r.Fraction)
	}
	if r.Reverse {
		notes = append(notes, "reverse")
	}
	notes = append(notes, r.Flags...)
	for _, c := range r.Clamped {
		notes = append(notes, "clamped:"+c)
	}
	return gate, between, notes
}

func printLever(w io.Writer, rows []leverJSON) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	if len(rows) > 0 {
		fmt.Fprintf(tw, "lever\traw\tTLA°\tgate\tbetween\t%s\tnotes\n", rows[0].Parameter)
	}
	for _, r := range rows {
		gate, between, notes := leverCells(r)
		if r.SplitDeg != nil {
			notes = append(notes, fmt.Sprintf("split %.2f°", *r.SplitDeg))
		}
		fmt.Fprintf(tw, "%d\t%g\t%.2f\t%s\t%s\t%s\t%s\n", r.Lever, r.Raw, r.TLADeg, gate, between, formatValue(r.Value, r.Unit), strings.Join(notes, " "))
	}
	tw.Flush()
}

func newLeverRawCmd() *cobra.Command {
	var profile, cal, tlas string
	var lever int
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "lever-raw -c CAL --lever N (--tla DEG[,DEG,...] | -p PROFILE)",
		Short: "Raw counts for lever angles: where to mark notches or drive a motorised lever",
		Long: `lever-raw inverts a lever's calibration: the raw count at each given lever angle,
or with -p at each gate of the profile.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if cal == "" {
				return fmt.Errorf("-c CAL is required")
			}
			c, err := thrustmap.LoadCalibration(cal)
			if err != nil {
				return err
			}
			l, err := calibratedLever(c, lever)
			if err != nil {
				return err
			}
			type row struct {
				Gate    string  `json:"gate,omitempty"`
				TLADeg  float64 `json:"tla_deg"`
				Raw     float64 `json:"raw"`
				Clamped bool    `json:"clamped"`
			}
			var rows []row
			switch {
			case tlas != "" && profile != "":
				return fmt.Errorf("give --tla or -p, not both")
			case tlas != "":
				angles, err := parseList("--tla", tlas)
				if err != nil {
					return err
				}
				for _, a := range angles {
					raw, clamped := l.Raw(a)
					rows = append(rows, row{TLADeg: a, Raw: raw, Clamped: clamped})
				}
			case profile != "":
				p, err := thrustmap.LoadProfile(profile)
				if err != nil {
					return err
				}
				for _, g := range p.Gates() {
					raw, clamped := l.Raw(g.TLADeg)
					rows = append(rows, row{Gate: g.Name, TLADeg: g.TLADeg, Raw: raw, Clamped: clamped})
				}
			default:
				return fmt.Errorf("give --tla DEG[,DEG,...] or -p PROFILE")
			}
			if asJSON {
				return writeJSON(cmd.OutOrStdout(), rows)
			}
			tw := tabwriter.NewWriter(cmd.OutOrStdout(), 0, 0, 2, ' ', 0)
			fmt.Fprintln(tw, "gate\tTLA°\traw\t")
			for _, r := range rows {
				note := ""
				if r.Clamped {
					note = "beyond the calibrated range: held at the end point"
				}
				gate := r.Gate
				if gate == "" {
					gate = "-"
				}
				fmt.Fprintf(tw, "%s\t%.2f\t%.1f\t%s\n", gate, r.TLADeg, r.Raw, note)
			}
			return tw.Flush()
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile whose gates to locate")
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "calibration file (or an embedded profile's name)")
	cmd.Flags().IntVar(&lever, "lever", 1, "lever id in the calibration")
	cmd.Flags().StringVar(&tlas, "tla", "", "lever angles in degrees, comma-separated")
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	return cmd
}
