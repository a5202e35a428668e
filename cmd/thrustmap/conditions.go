package main

import (
	"errors"
	"fmt"

	"github.com/spf13/pflag"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atmos"
	"github.com/thrustmap/thrustmap/thrustmap/quantity"
)

// conditionFlags are the flags that set the air data and configuration of a
// computation, parsed once here into the units the library works in.
type conditionFlags struct {
	alt, oat, mach, elev, qnh, assumed string
	bleeds                             []string
	onGround                           bool
}

// register adds the condition flags to fs; full adds the bleed, assumed
// temperature and on-ground flags of target and lever.
func (f *conditionFlags) register(fs *pflag.FlagSet, full bool) {
	fs.StringVar(&f.alt, "alt", "", "pressure altitude (ft, m or FL: 8000, 2400m, FL350)")
	fs.StringVar(&f.oat, "oat", "", "outside air temperature (C, F or K: 15, 59F)")
	fs.StringVar(&f.mach, "mach", "", "Mach number (0.78 or M0.78)")
	fs.StringVar(&f.elev, "elev", "", "field elevation, with --qnh instead of --alt")
	fs.StringVar(&f.qnh, "qnh", "", "QNH (hPa or inHg: 1013, 29.92inHg), with --elev instead of --alt")
	if full {
		fs.StringArrayVar(&f.bleeds, "bleed", nil, "bleed flag that is on (repeatable; names from the profile)")
		fs.StringVar(&f.assumed, "assumed", "", "assumed temperature for reduced takeoff thrust (C, F or K)")
		fs.BoolVar(&f.onGround, "on-ground", false, "the aircraft is on the ground")
	}
}

// air holds the parsed air data.
type air struct {
	altFt    float64
	oatC     float64
	hasOAT   bool
	mach     float64
	hasMach  bool
	fromQNH  bool // altFt came from --elev and --qnh
	elevFt   float64
	qnhHPa   float64
	assumedC float64
	assumed  bool
}

// parse reads the flags into air data. needOAT makes --oat required.
func (f *conditionFlags) parse(needOAT bool) (air, error) {
	var a air
	var err error
	switch {
	case f.elev != "" || f.qnh != "":
		if f.elev == "" || f.qnh == "" {
			return a, errors.New("--elev and --qnh go together")
		}
		if f.alt != "" {
			return a, errors.New("give --alt or --elev with --qnh, not both (with --elev and --qnh the pressure altitude is computed)")
		}
		if a.elevFt, err = quantity.Altitude(f.elev); err != nil {
			return a, fmt.Errorf("--elev: %w", err)
		}
		if a.qnhHPa, err = quantity.QNH(f.qnh); err != nil {
			return a, fmt.Errorf("--qnh: %w", err)
		}
		if a.altFt, err = atmos.PressureAltitudeFromQNH(a.elevFt, a.qnhHPa); err != nil {
			return a, fmt.Errorf("--elev/--qnh: %w", err)
		}
		a.fromQNH = true
	case f.alt == "":
		return a, errors.New("--alt is required (or --elev with --qnh)")
	default:
		if a.altFt, err = quantity.Altitude(f.alt); err != nil {
			return a, fmt.Errorf("--alt: %w", err)
		}
	}
	if f.oat != "" {
		if a.oatC, err = quantity.AirTemperature(f.oat, a.altFt); err != nil {
			return a, fmt.Errorf("--oat: %w", err)
		}
		a.hasOAT = true
	} else if needOAT {
		return a, errors.New("--oat is required")
	}
	if f.mach != "" {
		if a.mach, err = quantity.Mach(f.mach); err != nil {
			return a, fmt.Errorf("--mach: %w", err)
		}
		a.hasMach = true
	}
	if f.assumed != "" {
		if a.assumedC, err = quantity.AirTemperature(f.assumed, a.altFt); err != nil {
			return a, fmt.Errorf("--assumed: %w", err)
		}
		a.assumed = true
	}
	return a, nil
}

// conditions reads the flags into library conditions for profile p.
func (f *conditionFlags) conditions(p *thrustmap.Profile) (thrustmap.Conditions, air, error) {
	a, err := f.parse(true)
	if err != nil {
		return thrustmap.Conditions{}, a, err
	}
	bleeds, err := p.BleedSet(f.bleeds...)
	if err != nil {
		return thrustmap.Conditions{}, a, fmt.Errorf("--bleed: %w", err)
	}
	return thrustmap.Conditions{
		AltitudeFt: a.altFt, OATC: a.oatC, Mach: a.mach, Bleeds: bleeds,
		OnGround: f.onGround, AssumedSet: a.assumed, AssumedC: a.assumedC,
	}, a, nil
}
