package thrustmap

import "fmt"

// Parameter is the engine quantity a profile's ratings are expressed in.
type Parameter int

// The rating parameters.
const (
	N1     Parameter = iota // fan speed, percent
	EPR                     // engine pressure ratio, a ratio
	Torque                  // shaft torque, percent
)

var parameterNames = [...]string{N1: "N1", EPR: "EPR", Torque: "TORQUE"}

// String returns the parameter's file and JSON spelling: N1, EPR or TORQUE.
func (p Parameter) String() string {
	if p < 0 || int(p) >= len(parameterNames) {
		return fmt.Sprintf("Parameter(%d)", int(p))
	}
	return parameterNames[p]
}

// ParseParameter reads a parameter name as spelled in a profile.
func ParseParameter(s string) (Parameter, error) {
	for p, name := range parameterNames {
		if s == name {
			return Parameter(p), nil
		}
	}
	return 0, fmt.Errorf("unknown parameter %q (want N1, EPR or TORQUE)", s)
}

// Unit returns "percent" for N1 and TORQUE, "ratio" for EPR.
func (p Parameter) Unit() string {
	if p == EPR {
		return "ratio"
	}
	return "percent"
}

// Bounds returns the physically plausible range of a rating value: N1 0–130 %,
// EPR 0.5–3.0, torque 0–200 %. Values outside are load errors (common
// practice: wide enough for any turbine engine, narrow enough to catch a unit
// mix-up or a typo).
func (p Parameter) Bounds() (lo, hi float64) {
	switch p {
	case EPR:
		return 0.5, 3.0
	case Torque:
		return 0, 200
	}
	return 0, 130
}

// TemperatureBasis says what a rating's temperature axis means.
type TemperatureBasis int

// The temperature bases.
const (
	OAT    TemperatureBasis = iota // outside (static) air temperature, °C
	TAT                            // total air temperature, °C
	ISADev                         // deviation from the ISA temperature, °C
)

var basisNames = [...]string{OAT: "OAT", TAT: "TAT", ISADev: "ISA_DEV"}

// String returns the basis's file spelling: OAT, TAT or ISA_DEV.
func (b TemperatureBasis) String() string {
	if b < 0 || int(b) >= len(basisNames) {
		return fmt.Sprintf("TemperatureBasis(%d)", int(b))
	}
	return basisNames[b]
}

// ParseTemperatureBasis reads a basis name; the empty string means OAT.
func ParseTemperatureBasis(s string) (TemperatureBasis, error) {
	if s == "" {
		return OAT, nil
	}
	for b, name := range basisNames {
		if s == name {
			return TemperatureBasis(b), nil
		}
	}
	return 0, fmt.Errorf("unknown temperature basis %q (want OAT, TAT or ISA_DEV)", s)
}
