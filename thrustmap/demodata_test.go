package thrustmap

import (
	"fmt"
	"math"
	"testing"
)

// useEnvelope is where an embedded demo uses its ratings: on the ground at
// its fields, and in the air from the lowest field to its ceiling at the
// Mach numbers flown there.
type useEnvelope struct {
	fieldFt  [2]float64         // pressure altitudes of the fields (ground, takeoff, go-around)
	ceiling  float64            // highest cruise pressure altitude, ft
	mmo      float64            // highest Mach
	ground   []string           // ratings commanded on the ground: every gate's, through the lever
	lowAir   []string           // ratings commanded in the air near the fields (go-around)
	air      []string           // ratings commanded in the air at every altitude
	airFrom  map[string]float64 // per rating, the lowest Mach it is flown at (default: the band's)
	turboFan bool               // a jet's Mach schedule, else a turboprop's
}

// demoUse lists, per demo, which rating is used where. A rating named by a
// gate is used on the ground too: the lever between idle and that gate
// interpolates towards it.
var demoUse = map[string]useEnvelope{
	"demo": {
		fieldFt: [2]float64{-1000, 14000}, ceiling: 41000, mmo: 0.86, turboFan: true,
		ground: []string{"takeoff", "continuous", "climb", "idle", "reverse"},
		lowAir: []string{"takeoff", "go-around"},
		air:    []string{"continuous", "climb", "cruise", "idle"},
		// cruise is a cruise schedule: flown from 0.3 Mach up
		airFrom: map[string]float64{"cruise": 0.3},
	},
	"demo-epr": {
		fieldFt: [2]float64{-1000, 12000}, ceiling: 39000, mmo: 0.8, turboFan: true,
		ground: []string{"takeoff", "continuous", "climb", "idle", "reverse"},
		lowAir: []string{"go-around"},
		air:    []string{"continuous", "climb", "idle"},
	},
	"demo-turboprop": {
		fieldFt: [2]float64{0, 10000}, ceiling: 25000, mmo: 0.5,
		ground: []string{"takeoff", "continuous", "climb", "cruise", "idle", "reverse"},
		air:    []string{"takeoff", "continuous", "climb", "cruise", "idle"},
	},
}

// machBand is the Mach flown at a pressure altitude: a jet flies 0.2 to 0.5
// Mach below 10 000 ft (250 kt there is about 0.38 to 0.45), 0.3 to 0.75 up to
// 25 000 ft and 0.5 to its Mmo higher up; a turboprop flies 0.15 Mach up to its
// Mmo everywhere (common practice, from memory).
func (u useEnvelope) machBand(alt float64) [2]float64 {
	switch {
	case !u.turboFan:
		return [2]float64{0.15, u.mmo}
	case alt < 10000:
		return [2]float64{0.2, 0.5}
	case alt < 25000:
		return [2]float64{0.3, 0.75}
	}
	return [2]float64{0.5, u.mmo}
}

// temps are the OATs a rating meets at a pressure altitude: from ISA-30 or
// -40 °C, whichever is colder, to ISA+40 (common practice for the envelope of
// a transport aircraft, from memory).
func temps(alt float64) []float64 {
	isa := isaTemperature(alt)
	lo, hi := math.Min(-40, isa-30), isa+40
	var out []float64
	for t := lo; t < hi; t += 5 {
		out = append(out, t)
	}
	return append(out, hi)
}

// TestDemoRatingsCoverTheirUse: no embedded demo's rating, nor any of its
// bleed corrections, reports a clamped axis where the demo uses it (on the
// ground, in climb and in cruise), so a clamp report means the conditions
// really are outside the data. Anti-ice corrections are checked where anti-ice
// is used, at OAT (on the ground) or TAT (in the air) of 10 °C and below.
func TestDemoRatingsCoverTheirUse(t *testing.T) {
	for _, name := range EmbeddedProfiles() {
		u, ok := demoUse[name]
		if !ok {
			t.Fatalf("%s: no use envelope in demoUse", name)
		}
		p, err := LoadProfile(name)
		if err != nil {
			t.Fatal(err)
		}
		bad := map[string]int{}
		first := map[string]string{}
		check := func(rating string, c Conditions, phase string) {
			for b := -1; b < len(p.Bleeds()); b++ {
				cb := c
				if b >= 0 {
					cb.Bleeds = Bleeds(1) << b
					tat := (c.OATC+273.15)*(1+0.2*c.Mach*c.Mach) - 273.15
					if p.Bleeds()[b] != "packs-off" && (c.OnGround && c.OATC > 10 || !c.OnGround && tat > 10) {
						continue
					}
				}
				res, err := p.Target(rating, cb)
				if err != nil {
					t.Fatalf("%s %s: %v", name, rating, err)
				}
				if res.Clamped != 0 {
					key := fmt.Sprintf("%s %s (%v)", rating, phase, res.Clamped.Names())
					if bad[key] == 0 {
						first[key] = fmt.Sprintf("%.0f ft, OAT %.1f °C, Mach %.2f, bleeds %v", c.AltitudeFt, c.OATC, c.Mach, cb.Bleeds)
					}
					bad[key]++
				}
			}
		}
		for alt := u.fieldFt[0]; alt <= u.fieldFt[1]; alt += 500 {
			for _, oat := range temps(alt) {
				for _, m := range []float64{0, 0.15, 0.3} {
					c := Conditions{AltitudeFt: alt, OATC: oat, Mach: m, OnGround: true}
					for _, r := range u.ground {
						check(r, c, "on the ground")
					}
					band := u.machBand(alt)
					c.OnGround, c.Mach = false, math.Max(m, band[0])
					for _, r := range u.lowAir {
						check(r, c, "in the air near the field")
					}
				}
			}
		}
		for alt := u.fieldFt[0]; alt <= u.ceiling; alt += 1000 {
			band := u.machBand(alt)
			for _, oat := range temps(alt) {
				for k := range 5 {
					m := band[0] + (band[1]-band[0])*float64(k)/4
					c := Conditions{AltitudeFt: alt, OATC: oat, Mach: m}
					for _, r := range u.air {
						if m < u.airFrom[r] || r == "cruise" && alt < 0 {
							continue
						}
						check(r, c, "in the air")
					}
				}
			}
		}
		for key, n := range bad {
			t.Errorf("%s: %s clamped at %d conditions, first at %s", name, key, n, first[key])
		}
	}
}
