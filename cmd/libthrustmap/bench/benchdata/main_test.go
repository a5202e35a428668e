package main

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// TestWrite: levers4.toml is the demo calibration twice over, and floor.txt
// holds every lever and exactly the demo's gates that are active in the air
// without an assumed temperature (bench.c checks the floor's numbers against
// the library when it runs).
func TestWrite(t *testing.T) {
	dir := t.TempDir()
	if err := write(dir); err != nil {
		t.Fatal(err)
	}
	m, err := thrustmap.LoadModel("demo", filepath.Join(dir, "levers4.toml"))
	if err != nil {
		t.Fatal(err)
	}
	demo, _ := thrustmap.LoadCalibration("demo")
	var ids []int
	for i, l := range m.Calibration().Levers() {
		ids = append(ids, l.ID())
		src := demo.Levers()[i%2].Spec()
		got := l.Spec()
		if !slices.Equal(got.Points, src.Points) || got.Deadband != src.Deadband || got.MinCaptureDeg != src.MinCaptureDeg {
			t.Errorf("lever %d is not a copy of demo lever %d", l.ID(), src.ID)
		}
	}
	if !slices.Equal(ids, []int{1, 2, 3, 4}) {
		t.Errorf("levers %v, want 1 to 4", ids)
	}
	b, err := os.ReadFile(filepath.Join(dir, "floor.txt"))
	if err != nil {
		t.Fatal(err)
	}
	var levers, gates []string
	for _, line := range strings.Split(string(b), "\n") {
		f := strings.Fields(line)
		switch {
		case len(f) > 1 && f[0] == "lever":
			levers = append(levers, f[1])
		case len(f) > 1 && f[0] == "gate":
			gates = append(gates, f[1])
		}
	}
	// The demo's gates but reduced-takeoff, which is active only on the
	// ground with an assumed temperature.
	if want := []string{"full-reverse", "idle", "climb", "continuous", "takeoff"}; !slices.Equal(gates, want) {
		t.Errorf("floor.txt gates %v, want %v", gates, want)
	}
	if !slices.Equal(levers, []string{"1", "2", "3", "4"}) {
		t.Errorf("floor.txt levers %v", levers)
	}
}
