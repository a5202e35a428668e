package main

import (
	"fmt"
	"io"
	"path/filepath"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/chart"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// demoCharts writes the demo's three charts to dir — the takeoff rating,
// lever 1 at the hot and high field, and the sweep of lever 1 — and returns
// their file names.
func demoCharts(w io.Writer, dir string, p *thrustmap.Profile, m *thrustmap.Model, recording []input.Sample, sweeps []sweep.Result) ([]string, error) {
	fmt.Fprintf(w, "\n5. Charts\n\n")
	conds, err := demoConditions()
	if err != nil {
		return nil, err
	}
	var lever1 []input.Sample
	for _, s := range recording {
		if s.Lever == 1 {
			lever1 = append(lever1, s)
		}
	}
	charts := []struct {
		file, what string
		make       func() (*chart.Chart, error)
	}{
		{"rating-takeoff.svg", "takeoff N1 against OAT, one line per altitude, corners marked",
			func() (*chart.Chart, error) { return chart.Rating(p, "takeoff", thrustmap.Conditions{}) }},
		{"lever-1.svg", "lever 1: raw → TLA and TLA → N1 at the hot high field, gates shaded",
			func() (*chart.Chart, error) { return chart.Lever(m, 1, conds[1].C) }},
		{"sweep-1.svg", "the sweep of lever 1 with its rests, and the notches found",
			func() (*chart.Chart, error) { return chart.Sweep(lever1, sweeps[0].Scan, &sweeps[0]) }},
	}
	var files []string
	for _, c := range charts {
		ch, err := c.make()
		if err != nil {
			return nil, fmt.Errorf("%s: %w", c.file, err)
		}
		if err := ch.WriteFile(filepath.Join(dir, c.file)); err != nil {
			return nil, err
		}
		fmt.Fprintf(w, "  %-20s %s\n", c.file, c.what)
		files = append(files, c.file)
	}
	return files, nil
}
