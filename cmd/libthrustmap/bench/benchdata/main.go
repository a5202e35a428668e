// Benchdata writes the inputs of the C benchmark of libthrustmap
// (cmd/libthrustmap/bench/bench.c; run.sh beside it runs both):
//
//	go run ./cmd/libthrustmap/bench/benchdata -o DIR
//
// DIR/levers4.toml is the demo calibration with four levers (1 and 2 as in
// the demo, 3 and 4 copies of them), for a frame that commands four levers.
// DIR/floor.txt is what the benchmark's hand-written C floor needs to compute
// the same commands as the library on the demo with those levers: each
// lever's calibration points and deadband, and each gate's TLA, capture
// zones and rating table. Only the gates that command a rating with no
// `when` expression are written: in the air, where the benchmark runs, the
// demo's other gate (reduced takeoff, on the ground only) is not active.
//
// Simulation only: not certified, never for setting thrust on a real
// aircraft.
package main

import (
	"bytes"
	"cmp"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
	"github.com/thrustmap/thrustmap/thrustmap/grid"
)

func main() {
	out := flag.String("o", "", "directory to write levers4.toml and floor.txt to")
	flag.Parse()
	if *out == "" || flag.NArg() != 0 {
		fmt.Fprintln(os.Stderr, "usage: go run ./cmd/libthrustmap/bench/benchdata -o DIR")
		os.Exit(2)
	}
	if err := write(*out); err != nil {
		fmt.Fprintln(os.Stderr, "benchdata:", err)
		os.Exit(1)
	}
}

// write writes levers4.toml and floor.txt into dir.
func write(dir string) error {
	demo, err := thrustmap.LoadCalibration("demo")
	if err != nil {
		return err
	}
	var levers []*thrustmap.LeverCalibration
	for copyN := range 2 {
		for _, l := range demo.Levers() {
			spec := l.Spec()
			spec.ID += copyN * len(demo.Levers())
			lc, err := thrustmap.NewLeverCalibration(spec)
			if err != nil {
				return err
			}
			levers = append(levers, lc)
		}
	}
	cal, err := thrustmap.NewCalibration(levers...)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	calPath := filepath.Join(dir, "levers4.toml")
	if err := atomicfile.WriteFile(calPath, cal.Encode(), 0o644, false); err != nil {
		return err
	}
	m, err := thrustmap.LoadModel("demo", calPath)
	if err != nil {
		return err
	}
	floor, err := floorData(m)
	if err != nil {
		return err
	}
	return atomicfile.WriteFile(filepath.Join(dir, "floor.txt"), floor, 0o644, false)
}

// floorData writes the floor's inputs, one record a line (bench.c reads
// them):
//
//	stops TLA_MIN TLA_MAX
//	redline VALUE                          (inf when none)
//	lever ID DEADBAND N RAW TLA ...        (N points, raw increasing)
//	gate NAME TLA CAPTURE... BASIS NAXES (AXIS N X...)... NVALUES V...
//
// CAPTURE is the gate's effective capture half-width for each lever, in
// lever order; BASIS 0 OAT, 1 TAT, 2 ISA deviation; AXIS 0 altitude, 1
// temperature, 2 Mach, outermost first; the values flattened with the
// outermost axis slowest.
func floorData(m *thrustmap.Model) ([]byte, error) {
	p := m.Profile()
	var b bytes.Buffer
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	b.WriteString("# the C floor's data: the demo profile with levers4.toml (go run ./cmd/libthrustmap/bench/benchdata)\n")
	fmt.Fprintf(&b, "stops %s %s\n", num(p.Lever().TLAMinDeg), num(p.Lever().TLAMaxDeg))
	red, ok := p.Redline()
	if !ok {
		b.WriteString("redline inf\n")
	} else {
		fmt.Fprintf(&b, "redline %s\n", num(red))
	}
	levers := m.Calibration().Levers()
	for _, l := range levers {
		s := l.Spec()
		if s.Fit != grid.Linear {
			return nil, fmt.Errorf("lever %d: the floor maps raw to TLA linearly; this calibration is %v", s.ID, s.Fit)
		}
		pts := slices.Clone(s.Points)
		slices.SortFunc(pts, func(x, y [2]float64) int { return cmp.Compare(x[0], y[0]) })
		fmt.Fprintf(&b, "lever %d %s %d", s.ID, num(s.Deadband), len(pts))
		for _, pt := range pts {
			fmt.Fprintf(&b, " %s %s", num(pt[0]), num(pt[1]))
		}
		b.WriteString("\n")
	}
	for i, g := range p.Gates() {
		if g.Rating == "" || g.When != "" || g.Target != "" {
			continue
		}
		r, _ := p.Rating(g.Rating)
		t := r.Table()
		if t.Method() != grid.Linear {
			return nil, fmt.Errorf("rating %s: the floor interpolates linearly; this table is %v", r.Name(), t.Method())
		}
		// Bleed corrections apply only with bleeds on; the benchmark runs
		// with none, so the floor has none to add, as the library has none.
		fmt.Fprintf(&b, "gate %s %s", g.Name, num(g.TLADeg))
		for _, l := range levers {
			capture, _, err := m.EffectiveZone(l.ID(), i)
			if err != nil {
				return nil, err
			}
			fmt.Fprintf(&b, " %s", num(capture))
		}
		var axes []grid.Axis
		for _, a := range []grid.Axis{grid.Altitude, grid.Temperature, grid.Mach} {
			if t.Has(a) {
				axes = append(axes, a)
			}
		}
		fmt.Fprintf(&b, " %d %d", int(r.Basis()), len(axes))
		for _, a := range axes {
			xs := t.Axis(a)
			fmt.Fprintf(&b, " %d %d", int(a), len(xs))
			for _, x := range xs {
				fmt.Fprintf(&b, " %s", num(x))
			}
		}
		vs := t.Values()
		fmt.Fprintf(&b, " %d", len(vs))
		for _, v := range vs {
			fmt.Fprintf(&b, " %s", num(v))
		}
		b.WriteString("\n")
	}
	return b.Bytes(), nil
}
