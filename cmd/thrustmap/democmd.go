package main

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// The demo scenario: a departure from an invented hot, high field, then
// cruise. All numbers are made up for the demonstration.
var demoScenario = struct {
	fieldName       string
	elevFt, qnhHPa  float64
	oatC            float64
	cruiseAltFt     float64
	cruiseISADev    float64
	cruiseMach      float64
	assumedSweep    []float64
	departureBleeds []string
	departureMach   float64
}{
	fieldName: "an invented hot and high field", elevFt: 5400, qnhHPa: 1008, oatC: 31,
	cruiseAltFt: 35000, cruiseISADev: 10, cruiseMach: 0.78,
	assumedSweep:    []float64{30, 40, 45, 50, 55, 60, 70},
	departureBleeds: []string{"engine-anti-ice"},
	departureMach:   0.3,
}

// demoResults is what demo --out writes as JSON.
type demoResults struct {
	Field    airDataJSON          `json:"field"`
	Profiles []demoProfileResults `json:"profiles"`
	Safety   string               `json:"safety"`
}

type demoProfileResults struct {
	Profile  string          `json:"profile"`
	Name     string          `json:"name"`
	Field    []targetJSON    `json:"field_targets"`
	Assumed  []targetJSON    `json:"assumed_temperature_sweep,omitempty"`
	Lever    []leverJSON     `json:"lever_samples"`
	SplitDeg float64         `json:"lever_split_deg"`
	Sweep    *sweepLeverJSON `json:"sweep,omitempty"`
	Cruise   []targetJSON    `json:"cruise_targets"`
}

func newDemoCmd() *cobra.Command {
	var out string
	cmd := &cobra.Command{
		Use:   "demo [--out DIR]",
		Short: "Run the whole chain on the embedded demo profiles",
		Long: `demo runs thrustmap on its embedded, invented demo profiles: air data at a
field from elevation and QNH, every rating's target at the field, reduced
takeoff thrust over a range of assumed temperatures, and targets in cruise.
With --out DIR it also writes report.txt and results.json there.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			var report bytes.Buffer
			results, err := runDemo(&report)
			if err != nil {
				return err
			}
			if _, err := cmd.OutOrStdout().Write(report.Bytes()); err != nil {
				return err
			}
			if out == "" {
				return nil
			}
			if err := os.MkdirAll(out, 0o755); err != nil {
				return err
			}
			var js bytes.Buffer
			if err := writeJSON(&js, results); err != nil {
				return err
			}
			for name, data := range map[string][]byte{"report.txt": report.Bytes(), "results.json": js.Bytes()} {
				if err := atomicfile.WriteFile(filepath.Join(out, name), data, 0o644, false); err != nil {
					return err
				}
			}
			fmt.Fprintf(cmd.OutOrStdout(), "\nwrote %s and %s\n", filepath.Join(out, "report.txt"), filepath.Join(out, "results.json"))
			return nil
		},
	}
	cmd.Flags().StringVar(&out, "out", "", "directory to write report.txt and results.json to")
	return cmd
}

// runDemo writes the demo report to w and returns its results.
func runDemo(w io.Writer) (demoResults, error) {
	s := demoScenario
	fmt.Fprintln(w, "thrustmap demo — invented aircraft, engines and field; simulation only")
	fmt.Fprintln(w, strings.Repeat("=", 72))

	fieldAlt, err := atmos.PressureAltitudeFromQNH(s.elevFt, s.qnhHPa)
	if err != nil {
		return demoResults{}, err
	}
	field, err := airData(air{altFt: fieldAlt, oatC: s.oatC, hasOAT: true, fromQNH: true, elevFt: s.elevFt, qnhHPa: s.qnhHPa})
	if err != nil {
		return demoResults{}, err
	}
	fmt.Fprintf(w, "\nDeparture from %s\n\n", s.fieldName)
	printAirData(w, field)

	cruiseISA, err := atmos.ISATemperatureC(s.cruiseAltFt)
	if err != nil {
		return demoResults{}, err
	}
	results := demoResults{Field: field, Safety: safetyNote}
	for _, name := range []string{"demo", "demo-epr", "demo-turboprop"} {
		p, err := thrustmap.LoadProfile(name)
		if err != nil {
			return results, err
		}
		pr := demoProfileResults{Profile: name, Name: p.Name()}
		fmt.Fprintf(w, "\n%s\n%s (-p %s), rated in %s\n", strings.Repeat("-", 72), p.Name(), name, p.Parameter())

		ground := thrustmap.Conditions{AltitudeFt: fieldAlt, OATC: s.oatC, OnGround: true}
		fmt.Fprintf(w, "\nAt the field: %.0f ft pressure altitude, OAT %.0f °C, on the ground\n\n", fieldAlt, s.oatC)
		pr.Field = demoTable(w, p, ground, s.departureBleeds, s.departureMach)

		if a := p.AssumedTemperature(); a != nil {
			fmt.Fprintf(w, "\nReduced takeoff by the assumed-temperature method (%s, max %.0f °C, limit %.0f %% thrust)\n\n",
				strings.Join(a.Ratings, ", "), a.MaxC, a.MaxReductionPct)
			pr.Assumed = demoAssumed(w, p, a.Ratings[0], ground, s.assumedSweep)
		}

		ground.AssumedSet, ground.AssumedC = p.AssumedTemperature() != nil, s.oatC+14
		lever, split, err := demoLever(w, name, ground)
		if err != nil {
			return results, err
		}
		pr.Lever, pr.SplitDeg = lever, split
		if name == "demo" {
			sw, err := demoSweep(w, p)
			if err != nil {
				return results, err
			}
			pr.Sweep = &sw
		}

		cruise := thrustmap.Conditions{AltitudeFt: s.cruiseAltFt, OATC: cruiseISA + s.cruiseISADev, Mach: s.cruiseMach}
		fmt.Fprintf(w, "\nIn cruise: FL%.0f, ISA%+.0f (OAT %.1f °C), Mach %.2f\n\n", s.cruiseAltFt/100, s.cruiseISADev, cruise.OATC, s.cruiseMach)
		pr.Cruise = demoTable(w, p, cruise, nil, s.cruiseMach)
		results.Profiles = append(results.Profiles, pr)
	}
	fmt.Fprintf(w, "\n%s\n%s\n", strings.Repeat("=", 72), safetyNote)
	return results, nil
}

// demoTable prints every rating of p at c, with and without the given
// bleeds; ratings with a Mach axis are taken at mach.
func demoTable(w io.Writer, p *thrustmap.Profile, c thrustmap.Conditions, bleeds []string, mach float64) []targetJSON {
	var out []targetJSON
	withBleeds, err := p.BleedSet(bleeds...)
	if err != nil {
		withBleeds = 0 // the demo's bleed names are not in this profile
		bleeds = nil
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	header := "rating\t" + p.Parameter().String() + "\t"
	if len(bleeds) > 0 {
		header += "with " + strings.Join(bleeds, ", ") + "\t"
	}
	fmt.Fprintln(tw, header+"clamped\tflags\t")
	for _, r := range p.Ratings() {
		rc := c
		if r.Table().Has(grid.Mach) {
			rc.Mach = mach
		}
		res, err := p.RatingTarget(r, rc)
		if err != nil {
			fmt.Fprintf(tw, "%s\terror: %v\t\n", r.Name(), err)
			continue
		}
		out = append(out, newTargetJSON(p, res, rc))
		line := fmt.Sprintf("%s\t%s\t", r.Name(), formatValue(res.Value, res.Unit()))
		if len(bleeds) > 0 {
			rc.Bleeds = withBleeds
			bres, _ := p.RatingTarget(r, rc)
			line += formatValue(bres.Value, bres.Unit()) + "\t"
		}
		fmt.Fprintf(tw, "%s%s\t%s\t\n", line, listOr(res.Clamped.Names(), "-"), listOr(res.Flags.Names(), "-"))
	}
	tw.Flush()
	return out
}

// demoLever runs raw counts of lever 1 of the profile's built-in
// calibration through the whole chain, resting at each gate and halfway
// between, and sets lever 2 by eye to the climb gate to show the split.
func demoLever(w io.Writer, name string, c thrustmap.Conditions) ([]leverJSON, float64, error) {
	m, err := thrustmap.LoadModel(name, name)
	if err != nil {
		return nil, 0, err
	}
	l := m.Calibration().Lever(1)
	what := "on the ground"
	if c.AssumedSet {
		what += fmt.Sprintf(", assumed temperature %.0f °C", c.AssumedC)
	}
	fmt.Fprintf(w, "\nThrust lever 1 (built-in calibration, %s): raw counts to %s\n\n", what, m.Profile().Parameter())
	var samples []float64
	gates := m.Profile().Gates()
	for i, g := range gates {
		raw, _ := l.Raw(g.TLADeg)
		samples = append(samples, raw)
		if i+1 < len(gates) {
			mid, _ := l.Raw((g.TLADeg + gates[i+1].TLADeg) / 2)
			samples = append(samples, mid)
		}
	}
	var state thrustmap.LeverState
	var out []leverJSON
	for _, raw := range samples {
		cmd, err := m.Command(&state, 1, math.Round(raw), c)
		if err != nil {
			return nil, 0, err
		}
		out = append(out, newLeverJSON(m, cmd))
	}
	printLever(w, out)
	// Lever 2 of the quadrant set to the climb gate by eye, 0.6° short.
	var s2 thrustmap.LeverState
	climb := gates[len(gates)/2].TLADeg
	for _, g := range gates {
		if g.Name == "climb" {
			climb = g.TLADeg
		}
	}
	raw2, _ := m.Calibration().Lever(2).Raw(climb - 0.6)
	raw1, _ := l.Raw(climb)
	a, _ := m.Command(&state, 1, math.Round(raw1), c)
	b, err := m.Command(&s2, 2, math.Round(raw2), c)
	if err != nil {
		return nil, 0, err
	}
	split := thrustmap.Split(a, b)
	fmt.Fprintf(w, "\nlevers 1 and 2 at %q: split %.1f° (%s vs %s)\n", m.GateName(a.Gate), split,
		formatValue(a.Value, a.Unit()), formatValue(b.Value, b.Unit()))
	return out, split, nil
}

// demoSweep calibrates lever 1 from an invented recording made from the
// built-in calibration (noise, backlash and a dead spot added) and compares
// the notches found with the points the recording was made from.
func demoSweep(w io.Writer, p *thrustmap.Profile) (sweepLeverJSON, error) {
	cal, err := thrustmap.LoadCalibration("demo")
	if err != nil {
		return sweepLeverJSON{}, err
	}
	var truth []float64
	for _, pt := range cal.Lever(1).Spec().Points {
		truth = append(truth, pt[0])
	}
	cfg := sweep.SynthConfig{SampleHz: 200, DwellMs: 1500, CountsPerSec: 600, Passes: 2, Bits: 12, Seed: 7,
		Levers: []sweep.SynthLever{{ID: 1, Notches: truth, NoiseSigma: 3, Backlash: 8, Taper: 0.15, DeadSpots: [][2]float64{{2000, 2040}}}}}
	an := sweep.NewAnalyzer(sweep.Options{})
	cfg.Visit(an.Add)
	sc, _ := an.Scan(1)
	res, err := sweep.Calibrate(p, sc, sweep.CalOptions{RawMin: 0, RawMax: 4095, HasRange: true})
	if err != nil {
		return sweepLeverJSON{}, err
	}
	fmt.Fprintf(w, "\nSweep calibration of lever 1 from an invented recording (%d samples: noise σ 3, backlash 8, a dead spot at 2000–2040)\n\n", sc.Samples)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "gate\tTLA°\tfound raw\ttrue raw\t")
	for i, n := range res.Notches {
		fmt.Fprintf(tw, "%s\t%.0f\t%.1f\t%.0f\t\n", n.Gate, n.TLADeg, n.Raw, truth[i])
	}
	tw.Flush()
	fmt.Fprintf(w, "noise σ %.2f counts, backlash %.1f counts, %d jump(s) at the dead spot; deadband %g counts, capture floor %.2f°\n",
		sc.NoiseSigma, res.BacklashCounts, sc.JumpCount, res.Spec.Deadband, res.Spec.MinCaptureDeg)
	return newSweepLeverJSON(sc, res), nil
}

// demoAssumed prints the reduced takeoff over a sweep of assumed temperatures.
func demoAssumed(w io.Writer, p *thrustmap.Profile, rating string, c thrustmap.Conditions, sweep []float64) []targetJSON {
	var out []targetJSON
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "assumed\teffective\t%s\tthrust\treasons\t\n", p.Parameter())
	for _, ta := range sweep {
		c.AssumedSet, c.AssumedC = true, ta
		res, err := p.Target(rating, c)
		if err != nil {
			fmt.Fprintf(tw, "%.0f °C\terror: %v\t\n", ta, err)
			continue
		}
		out = append(out, newTargetJSON(p, res, c))
		r := res.Reduction
		thrust := "not checked"
		if r.ThrustChecked {
			thrust = formatReduction(r.ThrustReductionPct)
		}
		fmt.Fprintf(tw, "%.0f °C\t%.1f °C\t%s\t%s\t%s\t\n", ta, r.EffectiveC, formatValue(res.Value, res.Unit()), thrust, listOr(r.Reasons.Names(), "-"))
	}
	tw.Flush()
	return out
}
