package main

import (
	"fmt"
	"io"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/input"
	"github.com/thrustmap/thrustmap/thrustmap/sweep"
)

// demoCharts writes the demo's charts to dir and returns their file names.
func demoCharts(w io.Writer, dir string, p *thrustmap.Profile, m *thrustmap.Model, recording []input.Sample, sweeps []sweep.Result) ([]string, error) {
	fmt.Fprintf(w, "\n5. Charts\n\n  (charts are not built into this version)\n")
	return nil, nil
}
