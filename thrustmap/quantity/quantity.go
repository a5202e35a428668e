// Package quantity parses the quantities a user types — altitude, temperature,
// QNH, Mach and speed — once, at the edge, so the rest of thrustmap works in
// feet, degrees Celsius, hectopascals and knots and never sees a unit string.
//
// A bare number means feet, °C or knots. Units are suffixes in any case, with or
// without a space before them: altitude `ft`, `m` or the prefix `FL` (`FL350` is
// 35 000 ft); temperature `C`, `F` or `K`; QNH `hPa` or `inHg`; speed `kt`; Mach
// takes an optional `M` prefix (`M0.78`). Numbers are decimal (`-2000`, `1.5e3`);
// NaN, infinities, hexadecimal and digit separators are refused. Every error is
// an *Error naming the kind of quantity, the input and the reason.
package quantity

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/thrustmap/thrustmap/thrustmap/atmos"
)

// Error reports input that could not be parsed as a quantity. It prints as
// `bad temperature "15X": unknown unit "X" (want C, F or K)`.
type Error struct {
	Kind   string // what was being parsed: "altitude", "temperature", "QNH", "Mach", "speed"
	Input  string // the input as given
	Reason string // what is wrong with it
}

// Error implements the error interface.
func (e *Error) Error() string {
	return fmt.Sprintf("bad %s %q: %s", e.Kind, e.Input, e.Reason)
}

// Plausible QNH limits after conversion, and the ranges that decide the unit of
// a bare QNH (docs/units.md).
const (
	minQNHHPa     = 800.0
	maxQNHHPa     = 1100.0
	bareHPaMin    = 850.0
	bareHPaMax    = 1100.0
	bareInHgMin   = 25.0
	bareInHgMax   = 35.0
	fahrenheitOff = 32.0
	absoluteZeroF = -459.67 // −273.15·9/5 + 32
)

// Altitude parses an altitude and returns it in feet: a bare number or `ft` is
// feet, `m` is metres (1 ft = 0.3048 m), `FL350` is flight level 350 =
// 35 000 ft. Flight levels must not be negative. Examples: "8000", "-2000ft",
// "8000 ft", "1500m", "FL350", "fl100".
func Altitude(s string) (ft float64, err error) {
	const kind = "altitude"
	t := strings.TrimSpace(s)
	if len(t) >= 2 && strings.EqualFold(t[:2], "FL") {
		n, unit, e := number(kind, s, strings.TrimLeft(t[2:], " \t"))
		if e != nil {
			return 0, e
		}
		if unit != "" {
			return 0, &Error{kind, s, fmt.Sprintf("unexpected %q after flight level (want FL followed by a number, e.g. FL350)", unit)}
		}
		if n < 0 {
			return 0, &Error{kind, s, "flight level must not be negative"}
		}
		return finite(kind, s, n*100)
	}
	n, unit, e := number(kind, s, t)
	if e != nil {
		return 0, e
	}
	switch {
	case unit == "" || strings.EqualFold(unit, "ft"):
		return finite(kind, s, n)
	case strings.EqualFold(unit, "m"):
		return finite(kind, s, n/atmos.FeetToMeters)
	case strings.EqualFold(unit, "FL"):
		return 0, &Error{kind, s, "FL goes before the number (e.g. FL350)"}
	}
	return 0, &Error{kind, s, fmt.Sprintf("unknown unit %q (want ft, m or FL)", unit)}
}

// Temperature parses a temperature and returns it in degrees Celsius: a bare
// number or `C` is °C, `F` is °F (°C = (°F − 32)·5/9), `K` is kelvin
// (°C = K − 273.15); a degree sign before C or F is allowed. Temperatures below
// absolute zero are errors. Examples: "15", "15C", "-40c", "59F", "288.15K".
func Temperature(s string) (celsius float64, err error) {
	const kind = "temperature"
	n, unit, e := number(kind, s, strings.TrimSpace(s))
	if e != nil {
		return 0, e
	}
	// Absolute zero is checked in the input's own unit, so that "-459.67F" and
	// "0K" are accepted despite rounding in the conversion.
	var c, zero float64
	switch u := strings.TrimPrefix(unit, "°"); {
	case unit == "" || strings.EqualFold(u, "C"):
		c, zero = n, -atmos.KelvinOffset
	case strings.EqualFold(u, "F"):
		c, zero = (n-fahrenheitOff)*5/9, absoluteZeroF
	case strings.EqualFold(unit, "K"):
		c, zero = n-atmos.KelvinOffset, 0
	default:
		return 0, &Error{kind, s, fmt.Sprintf("unknown unit %q (want C, F or K)", unit)}
	}
	if n < zero {
		return 0, &Error{kind, s, "below absolute zero (0 K, -273.15 °C, -459.67 °F)"}
	}
	c = math.Max(c, -atmos.KelvinOffset)
	return finite(kind, s, c)
}

// MaxISADeviationC is how far from the ISA temperature at its altitude an
// air temperature may be: further, it is far outside anything measured in
// the atmosphere (common practice: recorded extremes lie within about 60 °C
// of ISA), and almost surely a unit mixed up.
const MaxISADeviationC = 100.0

// AirTemperature parses an outside-air (or assumed) temperature as
// Temperature does, and refuses one more than MaxISADeviationC from the ISA
// temperature at pressure altitude altFt, naming the unit that was likely
// meant: "300" at sea level is 300 °C, and the error asks "did you mean
// 300 K?". An altitude outside the standard atmosphere is not checked here.
func AirTemperature(s string, altFt float64) (celsius float64, err error) {
	c, err := Temperature(s)
	if err != nil {
		return 0, err
	}
	isa, aerr := atmos.ISATemperatureC(altFt)
	if aerr != nil || math.Abs(c-isa) <= MaxISADeviationC {
		return c, nil
	}
	reason := fmt.Sprintf("%.6g °C is %+.0f °C from ISA (%.1f °C) at %.0f ft, beyond any air temperature", c, c-isa, isa, altFt)
	n, unit, _ := number("temperature", s, strings.TrimSpace(s))
	unit = strings.ToUpper(strings.TrimPrefix(unit, "°"))
	try := map[string][]string{"": {"K", "F"}, "C": {"K", "F"}, "F": {"C", "K"}, "K": {"C", "F"}}[unit]
	for _, u := range try {
		alt := map[string]float64{"C": n, "F": (n - fahrenheitOff) * 5 / 9, "K": n - atmos.KelvinOffset}[u]
		if math.Abs(alt-isa) <= MaxISADeviationC {
			name := map[string]string{"C": "°C", "F": "°F", "K": "K"}[u]
			reason += fmt.Sprintf(": did you mean %s %s?", strconv.FormatFloat(n, 'g', -1, 64), name)
			break
		}
	}
	return 0, &Error{"temperature", s, reason}
}

// QNH parses an altimeter setting and returns it in hectopascals. With a unit,
// `hPa` or `inHg` (1 inHg = 33.8638866667 hPa), any positive value is read; a
// bare number from 850 to 1100 is hPa and from 25 to 35 is inHg, any other bare
// number is an error. A setting outside 800–1100 hPa after conversion is
// implausible and an error too. Examples: "1013", "1013.25hPa", "29.92",
// "29.92 inHg".
func QNH(s string) (hPa float64, err error) {
	const kind = "QNH"
	n, unit, e := number(kind, s, strings.TrimSpace(s))
	if e != nil {
		return 0, e
	}
	switch {
	case unit == "":
		switch {
		case n >= bareHPaMin && n <= bareHPaMax:
			hPa = n
		case n >= bareInHgMin && n <= bareInHgMax:
			hPa = n * atmos.HPaPerInHg
		default:
			return 0, &Error{kind, s, fmt.Sprintf("a bare QNH from %g to %g is hPa and from %g to %g is inHg; add a unit (hPa or inHg)",
				bareHPaMin, bareHPaMax, bareInHgMin, bareInHgMax)}
		}
	case strings.EqualFold(unit, "hPa"):
		hPa = n
	case strings.EqualFold(unit, "inHg"):
		hPa = n * atmos.HPaPerInHg
	default:
		return 0, &Error{kind, s, fmt.Sprintf("unknown unit %q (want hPa or inHg)", unit)}
	}
	if n <= 0 {
		return 0, &Error{kind, s, "must be positive"}
	}
	if !(hPa >= minQNHHPa && hPa <= maxQNHHPa) {
		return 0, &Error{kind, s, fmt.Sprintf("%.2f hPa is not a plausible QNH (want %g to %g hPa)", hPa, minQNHHPa, maxQNHHPa)}
	}
	return finite(kind, s, hPa)
}

// Mach parses a Mach number: a number ≥ 0 with an optional leading `M` or `m`.
// Examples: "0.78", "M0.78", "m.5".
func Mach(s string) (float64, error) {
	const kind = "Mach"
	t := strings.TrimSpace(s)
	if len(t) > 0 && (t[0] == 'M' || t[0] == 'm') {
		t = strings.TrimLeft(t[1:], " \t")
	}
	n, unit, e := number(kind, s, t)
	if e != nil {
		return 0, e
	}
	if unit != "" {
		return 0, &Error{kind, s, fmt.Sprintf("unexpected %q (want a number, optionally after M, e.g. M0.78)", unit)}
	}
	if n < 0 {
		return 0, &Error{kind, s, "must not be negative"}
	}
	return finite(kind, s, n)
}

// Speed parses a speed and returns it in knots: a bare number or `kt` (also
// `kts`). Speeds must not be negative. Examples: "250", "250kt", "140 KT".
func Speed(s string) (knots float64, err error) {
	const kind = "speed"
	n, unit, e := number(kind, s, strings.TrimSpace(s))
	if e != nil {
		return 0, e
	}
	if unit != "" && !strings.EqualFold(unit, "kt") && !strings.EqualFold(unit, "kts") {
		return 0, &Error{kind, s, fmt.Sprintf("unknown unit %q (want kt)", unit)}
	}
	if n < 0 {
		return 0, &Error{kind, s, "must not be negative"}
	}
	return finite(kind, s, n)
}

// finite returns v, or an error when a conversion has overflowed.
func finite(kind, input string, v float64) (float64, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, &Error{kind, input, "number too large"}
	}
	return v, nil
}

// number reads a decimal number from the front of t (already trimmed) and
// returns it with the rest of t, spaces before the unit removed. input is the
// user's original text, for the error.
func number(kind, input, t string) (float64, string, *Error) {
	if t == "" {
		if strings.TrimSpace(input) == "" {
			return 0, "", &Error{kind, input, "empty"}
		}
		return 0, "", &Error{kind, input, "missing number"}
	}
	n := scanNumber(t)
	if n == 0 {
		word := strings.ToLower(strings.TrimLeft(t, "+-"))
		if strings.HasPrefix(word, "nan") || strings.HasPrefix(word, "inf") {
			return 0, "", &Error{kind, input, "not a finite number"}
		}
		return 0, "", &Error{kind, input, "missing number"}
	}
	v, err := strconv.ParseFloat(t[:n], 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, "", &Error{kind, input, "number too large"}
	}
	return v, strings.TrimLeft(t[n:], " \t"), nil
}

// scanNumber returns the length of the decimal number at the front of s —
// [+-] digits [. digits] [e [+-] digits], with at least one digit before the
// exponent — or 0 when s does not start with one.
func scanNumber(s string) int {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && isDigit(s[i]) {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && isDigit(s[i]) {
			i++
			digits++
		}
	}
	if digits == 0 {
		return 0
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && isDigit(s[k]) {
			k++
		}
		if k > j {
			i = k
		}
	}
	return i
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }
