package quantity

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
)

// Exact definitions the expected values are derived from.
const (
	ftPerM      = 1 / 0.3048      // 1 ft = 0.3048 m exactly
	hPaPerInHg  = 33.8638866667   // 1 inHg = 3386.38866667 Pa: the conventional inch of mercury, 3386.389 Pa to seven digits (NIST SP 811, 2008, Appendix B; from memory)
	kelvinAt0C  = 273.15          // 0 °C = 273.15 K exactly
	fahrenheit0 = 32.0            // °F = °C·9/5 + 32
	tol         = 1e-9            // parsing is exact up to one rounding of the conversion
	tolInHg     = 29.92 * 0.00005 // half the last digit of 33.8639, times 29.92 inHg
)

type parseCase struct {
	in   string
	want float64
}

func runCases(t *testing.T, name string, parse func(string) (float64, error), cases []parseCase) {
	t.Helper()
	for _, tc := range cases {
		got, err := parse(tc.in)
		if err != nil {
			t.Errorf("%s(%q): %v", name, tc.in, err)
			continue
		}
		if math.Abs(got-tc.want) > tol*math.Max(1, math.Abs(tc.want)) {
			t.Errorf("%s(%q) = %v, want %v", name, tc.in, got, tc.want)
		}
	}
}

type errCase struct {
	in     string
	reason string // a substring of the reason
}

func runErrors(t *testing.T, name, kind string, parse func(string) (float64, error), cases []errCase) {
	t.Helper()
	for _, tc := range cases {
		got, err := parse(tc.in)
		if err == nil {
			t.Errorf("%s(%q) = %v, want an error", name, tc.in, got)
			continue
		}
		var qe *Error
		if !errors.As(err, &qe) {
			t.Errorf("%s(%q): error %T is not *Error", name, tc.in, err)
			continue
		}
		if qe.Kind != kind || qe.Input != tc.in || !strings.Contains(qe.Reason, tc.reason) {
			t.Errorf("%s(%q): %+v, want kind %q and reason containing %q", name, tc.in, qe, kind, tc.reason)
		}
		if got != 0 {
			t.Errorf("%s(%q) returned %v with its error, want 0", name, tc.in, got)
		}
	}
}

func TestAltitude(t *testing.T) {
	runCases(t, "Altitude", Altitude, []parseCase{
		{"8000", 8000},            // bare number: feet (docs/units.md, Bare numbers)
		{"-2000ft", -2000},        // ft suffix
		{"8000 ft", 8000},         // space before the unit
		{"  8000FT ", 8000},       // any case, surrounding space
		{"1500m", 1500 * ftPerM},  // 1 ft = 0.3048 m: 1500 m = 4921.26 ft
		{"-100 M", -100 * ftPerM}, // any case
		{"FL350", 35000},          // flight level: hundreds of feet
		{"fl100", 10000},          // any case
		{"FL 050", 5000},          // space after FL, leading zero
		{"Fl0", 0},                // FL0
		{"0", 0},                  // zero
		{"+250.5", 250.5},         // explicit sign, decimals
		{"1.5e3ft", 1500},         // exponent
		{".5m", 0.5 * ftPerM},     // leading decimal point
		{"36089.24", 36089.24},    // tropopause
		{"3.048m", 10},            // 3.048 m = 10 ft exactly by definition
		{"-16404.2ft", -16404.2},  // parsing does not check the atmosphere's range
		{"120000", 120000},        // (that is atmos's job)
	})
	runErrors(t, "Altitude", "altitude", Altitude, []errCase{
		{"", "empty"},
		{"   ", "empty"},
		{"ft", "missing number"},
		{"FL", "missing number"},
		{"FL-10", "negative"},
		{"FL350ft", "after flight level"},
		{"350FL", "FL goes before the number"},
		{"8000 feet", `unknown unit "feet" (want ft, m or FL)`},
		{"8000km", `unknown unit "km"`},
		{"NaN", "not a finite number"},
		{"nan", "not a finite number"},
		{"inf", "not a finite number"},
		{"-Inf", "not a finite number"},
		{"infinity ft", "not a finite number"},
		{"1e999", "too large"},
		{"1e308m", "too large"}, // finite in metres, overflows in feet
		{"0x10", `unknown unit "x10"`},
		{"1_000", `unknown unit "_000"`},
		{"1,000", `unknown unit ",000"`},
		{"--5", "missing number"},
		{".", "missing number"},
	})
}

func TestTemperature(t *testing.T) {
	runCases(t, "Temperature", Temperature, []parseCase{
		{"15", 15},                        // bare number: °C (docs/units.md, Bare numbers)
		{"15C", 15},                       // C suffix
		{"-40c", -40},                     // any case
		{"15 °C", 15},                     // degree sign and space
		{"59F", 15},                       // °F = °C·9/5 + 32: (59 − 32)·5/9 = 15
		{"-40f", -40},                     // −40 °F = −40 °C
		{"212°F", 100},                    // (212 − 32)·5/9 = 100
		{"0F", (0 - fahrenheit0) * 5 / 9}, // −17.78 °C
		{"288.15K", 15},                   // K − 273.15
		{"0K", -kelvinAt0C},               // absolute zero itself is accepted
		{"273.15 k", 0},                   // any case
		{"-273.15", -273.15},              // absolute zero in °C
		{"-459.67F", -273.15},             // absolute zero in °F: (−459.67 − 32)·5/9
	})
	runErrors(t, "Temperature", "temperature", Temperature, []errCase{
		{"15X", `unknown unit "X" (want C, F or K)`},
		{"", "empty"},
		{"C", "missing number"},
		{"-1K", "below absolute zero"},
		{"-0.001k", "below absolute zero"},
		{"-459.68F", "below absolute zero"},
		{"-274", "below absolute zero"},
		{"-500F", "below absolute zero"},
		{"°K", "missing number"},
		{"15°K", `unknown unit "°K"`},
		{"NaN", "not a finite number"},
		{"+inf C", "not a finite number"},
		{"1e400", "too large"},
		{"15 deg", `unknown unit "deg"`},
	})
	// The message format of the package documentation.
	_, err := Temperature("15X")
	if want := `bad temperature "15X": unknown unit "X" (want C, F or K)`; err == nil || err.Error() != want {
		t.Errorf("error %q, want %q", err, want)
	}
}

// TestAirTemperature: an air temperature more than 100 °C from ISA at its
// altitude is refused, naming the unit likely meant. ISA temperatures from
// ICAO Doc 7488/3: 15 °C at sea level, −56.5 °C from 36 089 ft (11 km).
func TestAirTemperature(t *testing.T) {
	at := func(alt float64) func(string) (float64, error) {
		return func(s string) (float64, error) { return AirTemperature(s, alt) }
	}
	runCases(t, "AirTemperature", at(0), []parseCase{
		{"15", 15},
		{"115", 115},     // 100 °C above ISA: the edge is accepted
		{"-85", -85},     // 100 °C below ISA
		{"300K", 26.85},  // 300 − 273.15
		{"104F", 40},     // (104 − 32)·5/9 = 40
		{"-40F", -40},    // cold, but an air temperature
		{"273.15K", 0},   // 0 °C
		{"140 F", 60},    // an assumed temperature in °F: (140 − 32)·5/9 = 60
		{"-56.5", -56.5}, // the tropopause's ISA, at sea level: plausible
	})
	runErrors(t, "AirTemperature", "temperature", at(0), []errCase{
		{"300", "300 °C is +285 °C from ISA (15.0 °C) at 0 ft, beyond any air temperature: did you mean 300 K?"},
		{"0K", "-273.15 °C is -288 °C from ISA (15.0 °C) at 0 ft, beyond any air temperature: did you mean 0 °C?"},
		{"116", "is +101 °C from ISA"},
		{"500F", "from ISA"}, // 260 °C; no other unit makes 500 an air temperature either
		{"15X", `unknown unit "X"`},
	})
	runErrors(t, "AirTemperature", "temperature", at(40000), []errCase{
		{"250", "from ISA (-56.5 °C) at 40000 ft, beyond any air temperature: did you mean 250 K?"}, // 250 K = −23.15 °C
	})
	// Beyond the standard atmosphere the altitude is someone else's error.
	if c, err := AirTemperature("300", 200000); err != nil || c != 300 {
		t.Errorf("altitude outside the atmosphere: %g, %v", c, err)
	}
}

func TestQNH(t *testing.T) {
	runCases(t, "QNH", QNH, []parseCase{
		{"1013", 1013},                     // bare 850–1100: hPa (docs/units.md, Bare numbers)
		{"1013.25", 1013.25},               // standard setting
		{"850", 850},                       // lower end of the bare hPa range
		{"1100", 1100},                     // upper end
		{"1013.25hPa", 1013.25},            // hPa suffix
		{"990 HPA", 990},                   // any case, space
		{"800hPa", 800},                    // with a unit, down to the plausible limit
		{"29.92", 29.92 * hPaPerInHg},      // bare 25–35: inHg, 1013.21 hPa
		{"25", 25 * hPaPerInHg},            // lower end of the bare inHg range, 846.6 hPa
		{"29.92inHg", 29.92 * hPaPerInHg},  // inHg suffix
		{"30.12 INHG", 30.12 * hPaPerInHg}, // any case
		{"32.48", 32.48 * hPaPerInHg},      // 1099.9 hPa: still plausible
	})
	// Against the rounded definition 1 inHg = 33.8639 hPa, to its six digits.
	if got, err := QNH("29.92"); err != nil || math.Abs(got-29.92*33.8639) > tolInHg {
		t.Errorf("QNH(29.92) = %v, %v; want 29.92·33.8639 = %v", got, err, 29.92*33.8639)
	}
	runErrors(t, "QNH", "QNH", QNH, []errCase{
		{"500", "a bare QNH from 850 to 1100 is hPa and from 25 to 35 is inHg; add a unit (hPa or inHg)"},
		{"849.9", "add a unit"},
		{"1100.1", "add a unit"},
		{"24.9", "add a unit"},
		{"35.1", "add a unit"},
		{"0", "add a unit"},
		{"-1013", "add a unit"},
		{"33", "not a plausible QNH"}, // 33 inHg = 1117.5 hPa
		{"35", "not a plausible QNH"}, // 35 inHg = 1185.2 hPa
		{"500hPa", "not a plausible QNH"},
		{"1200 hPa", "not a plausible QNH"},
		{"20inHg", "not a plausible QNH"},
		{"0hPa", "must be positive"},
		{"-29.92inHg", "must be positive"},
		{"1013mb", `unknown unit "mb" (want hPa or inHg)`},
		{"", "empty"},
		{"hPa", "missing number"},
		{"nan hPa", "not a finite number"},
		{"Inf", "not a finite number"},
		{"1e999hPa", "too large"},
	})
}

func TestMach(t *testing.T) {
	runCases(t, "Mach", Mach, []parseCase{
		{"0.78", 0.78}, // bare number
		{"M0.78", 0.78},
		{"m.5", 0.5},
		{"M 0.82", 0.82},
		{"0", 0},
		{"2.2", 2.2},
	})
	runErrors(t, "Mach", "Mach", Mach, []errCase{
		{"", "empty"},
		{"M", "missing number"},
		{"-0.1", "must not be negative"},
		{"M-0.5", "must not be negative"},
		{"0.78M", `unexpected "M"`},
		{"MM0.5", "missing number"},
		{"Mnan", "not a finite number"},
		{"1e500", "too large"},
	})
}

func TestSpeed(t *testing.T) {
	runCases(t, "Speed", Speed, []parseCase{
		{"250", 250}, // bare number: knots (docs/units.md, Bare numbers)
		{"250kt", 250},
		{"140 KT", 140},
		{"160kts", 160},
		{"0", 0},
	})
	runErrors(t, "Speed", "speed", Speed, []errCase{
		{"", "empty"},
		{"250 km/h", `unknown unit "km/h" (want kt)`},
		{"-5kt", "must not be negative"},
		{"kt", "missing number"},
		{"inf kt", "not a finite number"},
	})
}

// checkParse is the property every fuzz target checks: no panic (the fuzzer
// catches those), a finite value on success, an *Error of the right kind with
// the input and a zero value on failure, and a successful value that reparses
// to itself when printed with the canonical unit.
func checkParse(t *testing.T, kind, unit string, parse func(string) (float64, error), s string) {
	v, err := parse(s)
	if err != nil {
		var qe *Error
		if !errors.As(err, &qe) || qe.Kind != kind || qe.Input != s || qe.Reason == "" {
			t.Fatalf("%q: error %#v", s, err)
		}
		if v != 0 {
			t.Fatalf("%q: value %v with error", s, v)
		}
		return
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		t.Fatalf("%q: non-finite result %v", s, v)
	}
	again, err := parse(strconv.FormatFloat(v, 'g', -1, 64) + unit)
	if err != nil || again != v {
		t.Fatalf("%q = %v does not reparse with %q: %v, %v", s, v, unit, again, err)
	}
}

func FuzzAltitude(f *testing.F) {
	for _, s := range []string{"FL350", "fl100", "1500m", "-2000ft", "8000 ft", "8000", "nan", "1e308m"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) { checkParse(t, "altitude", "ft", Altitude, s) })
}

func FuzzTemperature(f *testing.F) {
	for _, s := range []string{"15", "15C", "59F", "288.15K", "-40c", "-1K", "15X", "Inf"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		checkParse(t, "temperature", "C", Temperature, s)
		// As an air temperature at 5000 ft (ISA 5.1 °C): the same value or an
		// error, and never one more than 100 °C from ISA.
		air := func(s string) (float64, error) { return AirTemperature(s, 5000) }
		checkParse(t, "temperature", "C", air, s)
		if c, err := air(s); err == nil && math.Abs(c-5.094) > MaxISADeviationC+0.01 {
			t.Fatalf("%q: %g °C accepted at 5000 ft", s, c)
		}
	})
}

func FuzzQNH(f *testing.F) {
	for _, s := range []string{"1013", "29.92", "1013.25hPa", "29.92 inHg", "500", "35", "0hPa", "nan"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) { checkParse(t, "QNH", "hPa", QNH, s) })
}
