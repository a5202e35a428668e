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
	"time"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
	"github.com/thrustmap/thrustmap/thrustmap/verify"
)

// demoCondition is one of the demo's contrasting conditions.
type demoCondition struct {
	Name string               `json:"name"`
	C    thrustmap.Conditions `json:"-"`
	Air  airDataJSON          `json:"air"`
}

// demoResults is what demo writes as results.json.
type demoResults struct {
	Directory  string                  `json:"directory"`
	Sweep      []sweepLeverJSON        `json:"sweep"`
	Conditions []demoCondition         `json:"conditions"`
	Gates      []demoGateRow           `json:"gates"`
	Reduced    []targetJSON            `json:"reduced_takeoff"`
	Verify     []verify.Report         `json:"verify"`
	Others     map[string][]targetJSON `json:"other_profiles"`
	Files      []string                `json:"files"`
	Safety     string                  `json:"safety"`
	ElapsedMs  int64                   `json:"elapsed_ms"`
}

// demoGateRow is one gate's command at each demo condition.
type demoGateRow struct {
	Gate   string      `json:"gate"`
	TLADeg float64     `json:"tla_deg"`
	Raw    float64     `json:"raw"`
	At     []leverJSON `json:"at"`
}

func newDemoCmd() *cobra.Command {
	var out string
	cmd := &cobra.Command{
		Use:   "demo [--out DIR]",
		Short: "Run the whole chain on the embedded demo",
		Long: `demo runs thrustmap end to end on its embedded, invented demo with nothing else
on disk: it generates a sweep recording of an invented two-lever quadrant,
calibrates the levers from it, shows each gate's command at three contrasting
conditions (sea level ISA, a hot and high field, cruise), a reduced takeoff with
the reasons for what was done, verifies the profile, and writes the
calibration, charts, report.txt and results.json to DIR (a fresh temporary
directory when not given), printing where.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			start := time.Now()
			dir := out
			if dir == "" {
				var err error
				if dir, err = os.MkdirTemp("", "thrustmap-demo-"); err != nil {
					return err
				}
			} else if err := os.MkdirAll(dir, 0o755); err != nil {
				return err
			}
			var report bytes.Buffer
			results, err := runDemo(&report, dir)
			if err != nil {
				return err
			}
			results.ElapsedMs = time.Since(start).Milliseconds()
			fmt.Fprintf(&report, "\nFiles in %s: %s\n", dir, strings.Join(results.Files, ", "))
			fmt.Fprintf(&report, "\n%s\n%s\n", strings.Repeat("=", 78), safetyNote)
			var js bytes.Buffer
			if err := writeJSON(&js, results); err != nil {
				return err
			}
			for name, data := range map[string][]byte{"report.txt": report.Bytes(), "results.json": js.Bytes()} {
				if err := atomicfile.WriteFile(filepath.Join(dir, name), data, 0o644, false); err != nil {
					return err
				}
			}
			if _, err := cmd.OutOrStdout().Write(report.Bytes()); err != nil {
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote report.txt and results.json to %s (%.1f s)\n", dir, time.Since(start).Seconds())
			return nil
		},
	}
	cmd.Flags().StringVar(&out, "out", "", "directory for the calibration, charts and report (default: a fresh temporary directory)")
	return cmd
}

// runDemo writes the demo report to w and its files to dir.
func runDemo(w io.Writer, dir string) (*demoResults, error) {
	res := &demoResults{Directory: dir, Safety: safetyNote, Others: map[string][]targetJSON{}}
	fmt.Fprintln(w, "thrustmap demo — an invented twin turbofan, quadrant and airfield; simulation only")
	fmt.Fprintln(w, strings.Repeat("=", 78))

	p, err := thrustmap.LoadProfile("demo")
	if err != nil {
		return nil, err
	}

	// 1. A sweep recording of an invented quadrant, and its calibration.
	fmt.Fprintf(w, "\n1. Calibrating the quadrant from a recorded sweep\n\n")
	truth, err := thrustmap.LoadCalibration("demo")
	if err != nil {
		return nil, err
	}
	cfg := sweep.SynthConfig{SampleHz: 200, DwellMs: 1500, CountsPerSec: 600, Passes: 2, Bits: 12, Seed: 7}
	for _, l := range truth.Levers() {
		var notches []float64
		for _, pt := range l.Spec().Points {
			notches = append(notches, pt[0])
		}
		cfg.Levers = append(cfg.Levers, sweep.SynthLever{ID: l.ID(), Notches: notches, NoiseSigma: 3, Backlash: 8, Taper: 0.15,
			DeadSpots: [][2]float64{{2000, 2040}}})
	}
	recording := sweep.Synthesize(cfg)
	if err := writeRecording(filepath.Join(dir, "sweep.csv"), recording); err != nil {
		return nil, err
	}
	res.Files = append(res.Files, "sweep.csv")
	an := sweep.NewAnalyzer(sweep.Options{})
	for _, s := range recording {
		an.Add(s)
	}
	cal, _ := thrustmap.NewCalibration()
	var sweepResults []sweep.Result
	for _, id := range an.Levers() {
		sc, _ := an.Scan(id)
		r, err := sweep.Calibrate(p, sc, sweep.CalOptions{RawMin: 0, RawMax: 4095, HasRange: true})
		if err != nil {
			return nil, err
		}
		l, err := thrustmap.NewLeverCalibration(r.Spec)
		if err != nil {
			return nil, err
		}
		cal = cal.With(l)
		sweepResults = append(sweepResults, r)
		res.Sweep = append(res.Sweep, newSweepLeverJSON(sc, r))
		fmt.Fprintf(w, "lever %d: %d samples (noise σ 3, backlash 8 and a dead spot at 2000–2040 counts put in);\n", id, sc.Samples)
		fmt.Fprintf(w, "  found noise σ %.2f counts, backlash %.1f counts, %d jump(s) at the dead spot, %s\n",
			sc.NoiseSigma, r.BacklashCounts, sc.JumpCount, map[bool]string{true: "wired inverted", false: "wired forward"}[r.Inverted])
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "  \tgate\tTLA°\tfound raw\tput at\t")
		truthPts := truth.Lever(id).Spec().Points
		for i, n := range r.Notches {
			fmt.Fprintf(tw, "  \t%s\t%.0f\t%.1f\t%.0f\t\n", n.Gate, n.TLADeg, n.Raw, truthPts[i][0])
		}
		tw.Flush()
	}
	if err := atomicfile.WriteFile(filepath.Join(dir, "calibration.toml"), cal.Encode(), 0o644, true); err != nil {
		return nil, err
	}
	res.Files = append(res.Files, "calibration.toml")
	m, err := thrustmap.NewModel(p, cal)
	if err != nil {
		return nil, err
	}

	// 2. Gates and targets at three contrasting conditions.
	res.Conditions, err = demoConditions()
	if err != nil {
		return nil, err
	}
	fmt.Fprintf(w, "\n2. Lever 1 rested at each gate: the command (%s) at three conditions\n\n", p.Parameter())
	for _, c := range res.Conditions {
		fmt.Fprintf(w, "  %-14s %s\n", c.Name+":", describeConditions(c))
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	header := "  \tgate\tTLA°\traw\t"
	for _, c := range res.Conditions {
		header += c.Name + "\t"
	}
	fmt.Fprintln(tw, header)
	l1 := cal.Lever(1)
	for _, g := range p.Gates() {
		raw, _ := l1.Raw(g.TLADeg)
		raw = math.Round(raw)
		row := demoGateRow{Gate: g.Name, TLADeg: g.TLADeg, Raw: raw}
		line := fmt.Sprintf("  \t%s\t%.0f\t%.0f\t", g.Name, g.TLADeg, raw)
		for _, c := range res.Conditions {
			var s thrustmap.LeverState
			cmd, err := m.Command(&s, 1, raw, c.C)
			if err != nil {
				return nil, err
			}
			row.At = append(row.At, newLeverJSON(m, cmd))
			cell := formatValue(cmd.Value, cmd.Unit())
			switch {
			case cmd.Flags&thrustmap.Interlock != 0:
				cell += " (interlock)"
			case cmd.Gate != -1 && m.GateName(cmd.Gate) != g.Name:
				cell += " (" + m.GateName(cmd.Gate) + ")"
			case cmd.Gate == -1:
				cell += " (gate off)"
			case cmd.Flags&thrustmap.Raised != 0:
				cell += " (raised)"
			}
			line += cell + "\t"
		}
		fmt.Fprintln(tw, line)
		res.Gates = append(res.Gates, row)
	}
	tw.Flush()
	fmt.Fprintln(w, "  (the reduced-takeoff gate is active on the ground with an assumed temperature set;\n   reverse in the air holds idle)")

	// 3. A reduced takeoff with its reasons, at the hot and high field.
	hot := res.Conditions[1].C
	fmt.Fprintf(w, "\n3. Reduced takeoff by the assumed-temperature method at the %s\n\n", res.Conditions[1].Name)
	a := p.AssumedTemperature()
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "  \tassumed\teffective\t%s\trated thrust\treasons\t\n", p.Parameter())
	for _, ta := range []float64{25, 45, 55, 65, 80} {
		c := hot
		c.AssumedSet, c.AssumedC = true, ta
		r, err := p.Target(a.Ratings[0], c)
		if err != nil {
			return nil, err
		}
		res.Reduced = append(res.Reduced, newTargetJSON(p, r, c))
		red := r.Reduction
		fmt.Fprintf(tw, "  \t%.0f °C\t%.1f °C\t%s\t%s\t%s\t\n", ta, red.EffectiveC, formatValue(r.Value, r.Unit()), formatReduction(red.ThrustReductionPct), listOr(red.ReasonNames(), "-"))
	}
	tw.Flush()
	fmt.Fprintf(w, "  (max assumed %.0f °C; rated thrust may fall at most %.0f %%, the limit of FAA AC 25-13)\n", a.MaxC, a.MaxReductionPct)

	// 4. Verify the profile and the new calibration.
	fmt.Fprintf(w, "\n4. Verifying the profile and the calibration\n\n")
	rep := verify.Report{Path: "demo"}
	verify.Profile(&rep, p, cal)
	rep.Notes = nil
	res.Verify = append(res.Verify, rep)
	fmt.Fprintf(w, "  demo: %d error(s), %d warning(s)\n", len(rep.Errors), len(rep.Warnings))
	for _, f := range rep.Errors {
		fmt.Fprintf(w, "  error   %s: %s: %s\n", f.Check, f.Where, f.Message)
	}
	for _, f := range rep.Warnings {
		fmt.Fprintf(w, "  warning %s: %s\n", f.Check, f.Where)
	}

	// 5. Charts.
	files, err := demoCharts(w, dir, p, m, recording, sweepResults)
	if err != nil {
		return nil, err
	}
	res.Files = append(res.Files, files...)

	// 6. The other embedded engines at the same conditions.
	fmt.Fprintf(w, "\n6. The other invented engines: takeoff at the three conditions\n\n")
	for _, name := range []string{"demo-epr", "demo-turboprop"} {
		q, err := thrustmap.LoadProfile(name)
		if err != nil {
			return nil, err
		}
		line := fmt.Sprintf("  %-15s %-6s", name, q.Parameter())
		for _, c := range res.Conditions {
			r, err := q.Target("takeoff", c.C)
			if err != nil {
				return nil, err
			}
			res.Others[name] = append(res.Others[name], newTargetJSON(q, r, c.C))
			line += fmt.Sprintf("  %s: %s", c.Name, formatValue(r.Value, r.Unit()))
			if r.Clamped != 0 {
				line += " (clamped)"
			}
		}
		fmt.Fprintln(w, line)
	}
	return res, nil
}

// demoConditions are sea level ISA on the ground, an invented hot and high
// field on the ground with an assumed temperature set, and cruise.
func demoConditions() ([]demoCondition, error) {
	field, err := atmos.PressureAltitudeFromQNH(5400, 1008)
	if err != nil {
		return nil, err
	}
	cruiseISA, err := atmos.ISATemperatureC(35000)
	if err != nil {
		return nil, err
	}
	out := []demoCondition{
		{Name: "sea level", C: thrustmap.Conditions{AltitudeFt: 0, OATC: 15, OnGround: true}},
		{Name: "hot high field", C: thrustmap.Conditions{AltitudeFt: field, OATC: 31, OnGround: true, AssumedSet: true, AssumedC: 45}},
		{Name: "cruise", C: thrustmap.Conditions{AltitudeFt: 35000, OATC: cruiseISA + 10, Mach: 0.78}},
	}
	for i := range out {
		c := out[i].C
		a := air{altFt: c.AltitudeFt, oatC: c.OATC, hasOAT: true, mach: c.Mach, hasMach: c.Mach > 0}
		if i == 1 {
			a.fromQNH, a.elevFt, a.qnhHPa = true, 5400, 1008
		}
		if out[i].Air, err = airData(a); err != nil {
			return nil, err
		}
	}
	return out, nil
}

func describeConditions(c demoCondition) string {
	s := fmt.Sprintf("%.0f ft pressure altitude, OAT %.1f °C (ISA%+.1f)", c.C.AltitudeFt, c.C.OATC, c.Air.ISADeviationC)
	if c.Air.FieldElevationFt != nil {
		s = fmt.Sprintf("field %.0f ft, QNH %.0f hPa → ", *c.Air.FieldElevationFt, *c.Air.QNHHPa) + s
	}
	if c.C.Mach > 0 {
		s += fmt.Sprintf(", Mach %.2f", c.C.Mach)
	}
	if c.C.OnGround {
		s += ", on the ground"
	}
	if c.C.AssumedSet {
		s += fmt.Sprintf(", assumed temperature %.0f °C", c.C.AssumedC)
	}
	return s
}

// writeRecording writes samples as a CSV recording.
func writeRecording(path string, samples []input.Sample) error {
	var b bytes.Buffer
	b.WriteString("# invented sweep recording written by thrustmap demo; simulation only\nt_ms,lever,raw\n")
	for _, s := range samples {
		fmt.Fprintf(&b, "%d,%d,%g\n", s.TMs, s.Lever, s.Raw)
	}
	return atomicfile.WriteFile(path, b.Bytes(), 0o644, false)
}
