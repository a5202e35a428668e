package main

import (
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// targetJSON is the target command's JSON object (docs/units.md, JSON keys).
type targetJSON struct {
	Rating     string         `json:"rating"`
	Parameter  string         `json:"parameter"`
	Unit       string         `json:"unit"`
	Value      float64        `json:"value"`
	Clamped    []string       `json:"clamped"`
	Flags      []string       `json:"flags"`
	Reduction  *reductionJSON `json:"reduction,omitempty"`
	Conditions conditionsJSON `json:"conditions"`
}

type reductionJSON struct {
	AssumedTempC       float64  `json:"assumed_temp_c"`
	EffectiveTempC     float64  `json:"effective_temp_c"`
	Applied            bool     `json:"applied"`
	ValueFull          float64  `json:"value_full"`
	Reasons            []string `json:"reasons"`
	ThrustReductionPct *float64 `json:"thrust_reduction_pct"`
}

type conditionsJSON struct {
	PressureAltitudeFt float64  `json:"pressure_altitude_ft"`
	OATC               float64  `json:"oat_c"`
	Mach               float64  `json:"mach"`
	Bleeds             []string `json:"bleeds"`
	OnGround           bool     `json:"on_ground"`
}

func newTargetJSON(p *thrustmap.Profile, res thrustmap.Result, c thrustmap.Conditions) targetJSON {
	out := targetJSON{
		Rating: res.Rating, Parameter: res.Parameter.String(), Unit: res.Unit(), Value: res.Value,
		Clamped: res.Clamped.Names(), Flags: res.Flags.Names(),
		Conditions: conditionsJSON{PressureAltitudeFt: c.AltitudeFt, OATC: c.OATC, Mach: c.Mach,
			Bleeds: p.BleedNames(c.Bleeds), OnGround: c.OnGround},
	}
	if r := res.Reduction; r.Evaluated {
		out.Reduction = &reductionJSON{AssumedTempC: r.AssumedC, EffectiveTempC: r.EffectiveC, Applied: r.Applied,
			ValueFull: r.ValueFull, Reasons: r.ReasonNames()}
		if r.ThrustChecked {
			pct := r.ThrustReductionPct
			out.Reduction.ThrustReductionPct = &pct
		}
	}
	return out
}

func newTargetCmd() *cobra.Command {
	var cf conditionFlags
	var profile, rating string
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "target -p PROFILE --rating NAME --alt ALT --oat T [--mach M] [--bleed NAME]... [--assumed T] [--on-ground]",
		Short: "A rating's engine target at given conditions",
		Long: `target interpolates a rating table at the given conditions, adds the bleed
corrections of the flags that are on and cuts the result to the profile's
redline. With --assumed, a rating listed in the profile's [assumed_temperature]
is reduced by the assumed-temperature method (FAA AC 25-13), and the reasons
for what was done are reported. Axes on which the conditions fell outside the
table are reported as clamped: the table is never extrapolated.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profile == "" {
				return fmt.Errorf("-p PROFILE is required (a file or an embedded name: %s)", strings.Join(thrustmap.EmbeddedProfiles(), ", "))
			}
			if rating == "" {
				return fmt.Errorf("--rating NAME is required")
			}
			p, err := thrustmap.LoadProfile(profile)
			if err != nil {
				return err
			}
			c, _, err := cf.conditions(p)
			if err != nil {
				return err
			}
			r, ok := p.Rating(rating)
			if !ok {
				return fmt.Errorf("--rating: %s has no rating %q (ratings: %s)", p.Source(), rating, ratingList(p))
			}
			if c.AssumedSet && !r.Assumed() {
				return fmt.Errorf("--assumed: rating %q is not an assumed-temperature rating of %s (%s)", rating, p.Source(), assumedList(p))
			}
			res, err := p.RatingTarget(r, c)
			if err != nil {
				return err
			}
			out := newTargetJSON(p, res, c)
			if asJSON {
				return writeJSON(cmd.OutOrStdout(), out)
			}
			printTarget(cmd.OutOrStdout(), out)
			return nil
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded profile name")
	cmd.Flags().StringVar(&rating, "rating", "", "rating name (see the profile)")
	cf.register(cmd.Flags(), true)
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	return cmd
}

func ratingList(p *thrustmap.Profile) string {
	var names []string
	for _, r := range p.Ratings() {
		names = append(names, r.Name())
	}
	return strings.Join(names, ", ")
}

func assumedList(p *thrustmap.Profile) string {
	a := p.AssumedTemperature()
	if a == nil {
		return "the profile has no [assumed_temperature]"
	}
	return "assumed-temperature ratings: " + strings.Join(a.Ratings, ", ")
}

// printTarget writes one target as readable text.
func printTarget(w io.Writer, t targetJSON) {
	c := t.Conditions
	fmt.Fprintf(w, "%s: %s %s\n", t.Rating, t.Parameter, formatValue(t.Value, t.Unit))
	fmt.Fprintf(w, "  at %.0f ft, OAT %.1f °C, Mach %.3f, bleeds %s\n", c.PressureAltitudeFt, c.OATC, c.Mach, listOr(c.Bleeds, "none"))
	if r := t.Reduction; r != nil {
		state := "not applied"
		if r.Applied {
			state = "applied"
		}
		fmt.Fprintf(w, "  assumed temperature %.1f °C: effective %.1f °C, %s; full rating %s", r.AssumedTempC, r.EffectiveTempC, state, formatValue(r.ValueFull, t.Unit))
		if r.ThrustReductionPct != nil {
			fmt.Fprintf(w, "; rated thrust %s", formatReduction(*r.ThrustReductionPct))
		}
		fmt.Fprintln(w)
		if len(r.Reasons) > 0 {
			fmt.Fprintf(w, "  reasons: %s\n", strings.Join(r.Reasons, ", "))
		}
	}
	if len(t.Clamped) > 0 {
		fmt.Fprintf(w, "  clamped to the table edge on: %s\n", strings.Join(t.Clamped, ", "))
	}
	if len(t.Flags) > 0 {
		fmt.Fprintf(w, "  flags: %s\n", strings.Join(t.Flags, ", "))
	}
}

// formatValue prints a value in its unit: "96.9 %" or "1.421".
func formatValue(v float64, unit string) string {
	if unit == "ratio" {
		return fmt.Sprintf("%.3f", v)
	}
	return fmt.Sprintf("%.1f %%", v)
}

// formatReduction prints a thrust reduction as a signed change: "−12.5 %".
func formatReduction(pct float64) string {
	if pct < 0.05 {
		return "0.0 %"
	}
	return fmt.Sprintf("−%.1f %%", pct)
}

func listOr(items []string, none string) string {
	if len(items) == 0 {
		return none
	}
	return strings.Join(items, ", ")
}
