package thrustmap_test

import (
	"fmt"
	"log"

	"github.com/thrustmap/thrustmap/thrustmap"
)

// A rated takeoff N1 from the embedded demo profile, then the same takeoff
// reduced by the assumed-temperature method.
func ExampleProfile_Target() {
	p, err := thrustmap.LoadProfile("demo")
	if err != nil {
		log.Fatal(err)
	}
	c := thrustmap.Conditions{AltitudeFt: 2000, OATC: 20}
	full, err := p.Target("takeoff", c)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("takeoff %s %.1f %s\n", full.Parameter, full.Value, full.Unit())

	c.AssumedSet, c.AssumedC = true, 50
	reduced, err := p.Target("takeoff", c)
	if err != nil {
		log.Fatal(err)
	}
	r := reduced.Reduction
	fmt.Printf("assumed %.0f °C: %.1f %s (thrust −%.1f %%)\n", r.EffectiveC, reduced.Value, reduced.Unit(), r.ThrustReductionPct)
	// Output:
	// takeoff N1 96.9 percent
	// assumed 50 °C: 90.5 percent (thrust −24.0 %)
}

// Bleed flags are named in the profile and passed as a set.
func ExampleProfile_BleedSet() {
	p, err := thrustmap.LoadProfile("demo")
	if err != nil {
		log.Fatal(err)
	}
	bleeds, err := p.BleedSet("engine-anti-ice")
	if err != nil {
		log.Fatal(err)
	}
	off, _ := p.Target("climb", thrustmap.Conditions{AltitudeFt: 20000, OATC: -25, Mach: 0.6})
	on, _ := p.Target("climb", thrustmap.Conditions{AltitudeFt: 20000, OATC: -25, Mach: 0.6, Bleeds: bleeds})
	fmt.Printf("anti-ice changes climb N1 by %+.1f %s\n", on.Value-off.Value, on.Unit())
	_, err = p.BleedSet("wing-heat")
	fmt.Println(err)
	// Output:
	// anti-ice changes climb N1 by -0.8 percent
	// unknown bleed "wing-heat" (the profile has engine-anti-ice, wing-anti-ice, packs-off)
}

// Raw counts of a two-lever quadrant to engine commands, every frame: one
// caller-owned state per lever, and one Frame so the levers share the gate
// targets worked out at the frame's conditions.
func ExampleModel_CommandFrame() {
	m, err := thrustmap.LoadModel("demo-epr", "demo-epr") // profile and its built-in calibration
	if err != nil {
		log.Fatal(err)
	}
	var states [2]thrustmap.LeverState
	var frame thrustmap.Frame
	c := thrustmap.Conditions{AltitudeFt: 0, OATC: 15, OnGround: true}
	for i, raw := range []float64{2705, 1590} { // levers 1 and 2 (wired inverted), both in the climb gate
		cmd, err := m.CommandFrame(&frame, &states[i], i+1, raw, c)
		if err != nil {
			log.Fatal(err)
		}
		fmt.Printf("lever %d: TLA %.1f°, gate %s, %s %.3f\n", i+1, cmd.TLADeg, m.GateName(cmd.Gate), cmd.Parameter, cmd.Value)
	}
	// Output:
	// lever 1: TLA 32.0°, gate climb, EPR 1.380
	// lever 2: TLA 31.9°, gate climb, EPR 1.380
}
