// Package atmos computes the International Standard Atmosphere (ICAO Doc 7488/3,
// ISO 2533:1975; identical to the U.S. Standard Atmosphere 1976 below 32 km) and
// the air data derived from it: temperature, pressure, density and speed of sound at
// a pressure altitude, the inverse (pressure altitude from static pressure), ISA
// deviation, the ratios θ, δ and σ, density altitude, total and static air
// temperature, and pressure altitude from field elevation and QNH.
//
// Altitudes are pressure (geopotential) altitudes in feet; temperatures are in
// degrees Celsius unless a name says kelvin; pressures are in pascals. The model
// covers three geopotential layers, valid from −5 km to 32 km inclusive
// (MinAltitudeFt to MaxAltitudeFt):
//
//	 0–11 km   lapse −6.5 K/km from 288.15 K
//	11–20 km   isothermal 216.65 K
//	20–32 km   lapse +1.0 K/km from 216.65 K
//
// The troposphere's lapse rate is continued below sea level down to −5 km.
//
// Functions that can fail return an error instead of a NaN: non-finite input wraps
// ErrInvalid, an altitude (or a pressure or density that maps to one) outside the
// model wraps ErrOutOfRange. The few functions without an error return take only
// valid finite input by contract, documented on each; none of them panics or
// returns NaN.
package atmos

import (
	"errors"
	"fmt"
	"math"
)

// Physical constants of the standard (ICAO Doc 7488/3; U.S. Standard Atmosphere
// 1976) and exact unit definitions.
const (
	// T0 is the sea-level standard temperature, 288.15 K.
	T0 = 288.15
	// P0 is the sea-level standard pressure, 101 325 Pa.
	P0 = 101325.0
	// G0 is the standard acceleration of gravity, 9.806 65 m/s².
	G0 = 9.80665
	// R is the specific gas constant of dry air used by the standard,
	// 287.052 87 J/(kg·K).
	R = 287.05287
	// Gamma is the ratio of specific heats of air, 1.4.
	Gamma = 1.4
	// Rho0 is the sea-level standard density, derived as P0/(R·T0) =
	// 1.2250 kg/m³ (1.224 999 2 to eight digits). Sigma divides by this
	// computed value, so σ is exactly 1 at sea level in this model.
	Rho0 = P0 / (R * T0)
	// FeetToMeters converts feet to metres: 1 ft = 0.3048 m exactly.
	FeetToMeters = 0.3048
	// KelvinOffset converts degrees Celsius to kelvin: T[K] = t[°C] + 273.15.
	KelvinOffset = 273.15
	// HPaPerInHg converts inches of mercury to hectopascals:
	// 1 inHg = 3386.388 666 67 Pa = 33.863 886 666 7 hPa (the conventional
	// inch of mercury, 3386.389 Pa to seven digits).
	HPaPerInHg = 33.8638866667
	// MetersPerSecondToKnots converts m/s to knots: 1 kt = 1852/3600 m/s
	// exactly, so 1 m/s = 3600/1852 kt ≈ 1.943 844 kt.
	MetersPerSecondToKnots = 3600.0 / 1852.0
)

// Limits of the model, in feet of geopotential (pressure) altitude.
const (
	// MinAltitudeFt is the lowest valid altitude, −5 km (≈ −16 404 ft).
	MinAltitudeFt = -5000.0 / FeetToMeters
	// MaxAltitudeFt is the highest valid altitude, 32 km (≈ 104 987 ft).
	MaxAltitudeFt = 32000.0 / FeetToMeters
)

// ErrOutOfRange is wrapped by every error about a value outside the model:
// an altitude outside MinAltitudeFt..MaxAltitudeFt, or a pressure, density or
// QNH whose altitude would be. Test with errors.Is.
var ErrOutOfRange = errors.New("out of range of the standard atmosphere")

// ErrInvalid is wrapped by every error about an argument that is not a usable
// number: NaN or ±Inf, a non-positive pressure, a temperature at or below
// absolute zero, a negative Mach number. Test with errors.Is.
var ErrInvalid = errors.New("invalid argument")

// Air is the state of the standard atmosphere at one pressure altitude.
type Air struct {
	AltitudeFt     float64 // pressure (geopotential) altitude, ft
	TemperatureK   float64 // static air temperature, K
	PressurePa     float64 // static pressure, Pa
	DensityKgM3    float64 // density, kg/m³
	SpeedOfSoundMS float64 // speed of sound, m/s
}

// layer is one geopotential layer of the model: its base altitude (m), base
// temperature (K), lapse rate (K/m), base pressure (Pa) and base density (kg/m³).
type layer struct {
	baseM, baseK, lapse, basePa, baseRho float64
}

// layers holds the three layers, base pressures and densities integrated once
// from P0 so that pressure is continuous across each boundary.
var layers = buildLayers()

// Pressure and density at the edges of the model, for range checks on the
// inverse functions.
var (
	maxPressurePa = pressureAtM(MinAltitudeFt * FeetToMeters)
	minPressurePa = pressureAtM(MaxAltitudeFt * FeetToMeters)
	maxDensity    = maxPressurePa / (R * temperatureAtM(MinAltitudeFt*FeetToMeters))
	minDensity    = minPressurePa / (R * temperatureAtM(MaxAltitudeFt*FeetToMeters))
)

func buildLayers() [3]layer {
	l := [3]layer{
		{baseM: 0, baseK: T0, lapse: -0.0065, basePa: P0},
		{baseM: 11000, baseK: 216.65, lapse: 0},
		{baseM: 20000, baseK: 216.65, lapse: 0.001},
	}
	for i := 1; i < len(l); i++ {
		l[i].basePa = layerPressure(&l[i-1], l[i].baseM)
	}
	for i := range l {
		l[i].baseRho = l[i].basePa / (R * l[i].baseK)
	}
	return l
}

// layerFor returns the layer that holds geopotential altitude hM (metres); the
// lowest layer extends below sea level.
func layerFor(hM float64) *layer {
	switch {
	case hM >= layers[2].baseM:
		return &layers[2]
	case hM >= layers[1].baseM:
		return &layers[1]
	default:
		return &layers[0]
	}
}

// layerPressure is the hydrostatic pressure at hM in layer l.
func layerPressure(l *layer, hM float64) float64 {
	if l.lapse == 0 {
		return l.basePa * math.Exp(-G0*(hM-l.baseM)/(R*l.baseK))
	}
	t := l.baseK + l.lapse*(hM-l.baseM)
	return l.basePa * math.Pow(t/l.baseK, -G0/(l.lapse*R))
}

func temperatureAtM(hM float64) float64 {
	l := layerFor(hM)
	return l.baseK + l.lapse*(hM-l.baseM)
}

func pressureAtM(hM float64) float64 {
	return layerPressure(layerFor(hM), hM)
}

// checkAltitude returns nil for a finite altitude inside the model.
func checkAltitude(altFt float64) error {
	if math.IsNaN(altFt) || math.IsInf(altFt, 0) {
		return fmt.Errorf("atmos: altitude %v ft: %w", altFt, ErrInvalid)
	}
	if altFt < MinAltitudeFt || altFt > MaxAltitudeFt {
		return fmt.Errorf("atmos: altitude %g ft not in %.0f to %.0f ft: %w",
			altFt, MinAltitudeFt, MaxAltitudeFt, ErrOutOfRange)
	}
	return nil
}

// checkTemperature returns nil for a finite Celsius temperature above absolute
// zero; what names the quantity in the message.
func checkTemperature(what string, tempC float64) error {
	if math.IsNaN(tempC) || math.IsInf(tempC, 0) {
		return fmt.Errorf("atmos: %s %v °C: %w", what, tempC, ErrInvalid)
	}
	if tempC <= -KelvinOffset {
		return fmt.Errorf("atmos: %s %g °C is not above absolute zero (-273.15 °C): %w",
			what, tempC, ErrInvalid)
	}
	return nil
}

// clampAltitude keeps a computed altitude inside the model when rounding has
// carried it a hair past an edge whose input was checked to be inside.
func clampAltitude(ft float64) float64 {
	return math.Max(MinAltitudeFt, math.Min(MaxAltitudeFt, ft))
}

// Standard returns the standard atmosphere at pressure altitude altFt (feet).
// The error wraps ErrInvalid for a non-finite altitude and ErrOutOfRange
// outside MinAltitudeFt..MaxAltitudeFt.
func Standard(altFt float64) (Air, error) {
	if err := checkAltitude(altFt); err != nil {
		return Air{}, err
	}
	hM := altFt * FeetToMeters
	l := layerFor(hM)
	t := l.baseK + l.lapse*(hM-l.baseM)
	p := layerPressure(l, hM)
	return Air{
		AltitudeFt:     altFt,
		TemperatureK:   t,
		PressurePa:     p,
		DensityKgM3:    p / (R * t),
		SpeedOfSoundMS: speedOfSoundK(t),
	}, nil
}

// ISATemperatureC returns the standard temperature (°C) at pressure altitude
// altFt (feet). It does not allocate unless it returns an error; errors are as
// for Standard.
func ISATemperatureC(altFt float64) (float64, error) {
	if err := checkAltitude(altFt); err != nil {
		return 0, err
	}
	return temperatureAtM(altFt*FeetToMeters) - KelvinOffset, nil
}

// PressureAltitude returns the pressure altitude (feet) at which the standard
// atmosphere has static pressure pressurePa. The error wraps ErrInvalid for a
// NaN, infinite or non-positive pressure and ErrOutOfRange for a pressure whose
// altitude lies outside the model.
func PressureAltitude(pressurePa float64) (float64, error) {
	if math.IsNaN(pressurePa) || math.IsInf(pressurePa, 0) || pressurePa <= 0 {
		return 0, fmt.Errorf("atmos: pressure %v Pa: %w", pressurePa, ErrInvalid)
	}
	if pressurePa < minPressurePa || pressurePa > maxPressurePa {
		return 0, fmt.Errorf("atmos: pressure %g Pa (valid %.1f to %.1f Pa) is at an altitude not in %.0f to %.0f ft: %w",
			pressurePa, minPressurePa, maxPressurePa, MinAltitudeFt, MaxAltitudeFt, ErrOutOfRange)
	}
	l := &layers[0]
	switch {
	case pressurePa <= layers[2].basePa:
		l = &layers[2]
	case pressurePa <= layers[1].basePa:
		l = &layers[1]
	}
	var hM float64
	if l.lapse == 0 {
		hM = l.baseM - R*l.baseK/G0*math.Log(pressurePa/l.basePa)
	} else {
		t := l.baseK * math.Pow(pressurePa/l.basePa, -l.lapse*R/G0)
		hM = l.baseM + (t-l.baseK)/l.lapse
	}
	return clampAltitude(hM / FeetToMeters), nil
}

// ISADeviation returns how far the outside air temperature oatC (°C) is above
// the standard temperature at pressure altitude altFt (feet), in °C (K). The
// error wraps ErrInvalid for non-finite input or an OAT at or below absolute
// zero, and ErrOutOfRange for an altitude outside the model.
func ISADeviation(altFt, oatC float64) (float64, error) {
	if err := checkTemperature("OAT", oatC); err != nil {
		return 0, err
	}
	isa, err := ISATemperatureC(altFt)
	if err != nil {
		return 0, err
	}
	return oatC - isa, nil
}

// Theta returns the temperature ratio θ = (tempC + 273.15)/288.15.
// By contract tempC is finite and above absolute zero (check it with
// ISADeviation, TAT or the quantity parser first); for any other input the
// result is 0, never NaN.
func Theta(tempC float64) float64 {
	k := tempC + KelvinOffset
	if !(k > 0) || math.IsInf(k, 0) {
		return 0
	}
	return k / T0 // finite: k ≤ MaxFloat64 and T0 > 1
}

// Delta returns the pressure ratio δ = pressurePa/101 325.
// By contract pressurePa is finite and positive; for any other input the
// result is 0, never NaN.
func Delta(pressurePa float64) float64 {
	if !(pressurePa > 0) || math.IsInf(pressurePa, 0) {
		return 0
	}
	return pressurePa / P0
}

// Sigma returns the density ratio σ = densityKgM3/Rho0 (Rho0 = P0/(R·T0) =
// 1.2250 kg/m³). By contract densityKgM3 is finite and positive; for any other
// input the result is 0, never NaN.
func Sigma(densityKgM3 float64) float64 {
	if !(densityKgM3 > 0) || math.IsInf(densityKgM3, 0) {
		return 0
	}
	return densityKgM3 / Rho0
}

// Density returns the density (kg/m³) of dry air at static pressure pressurePa
// and temperature tempC (°C) by the ideal-gas law ρ = p/(R·T).
// By contract pressurePa is finite and positive and tempC is finite and above
// absolute zero; for any other input, or a result too large for a float64,
// the result is 0, never NaN or Inf.
func Density(pressurePa, tempC float64) float64 {
	k := tempC + KelvinOffset
	if !(pressurePa > 0) || math.IsInf(pressurePa, 0) || !(k > 0) || math.IsInf(k, 0) {
		return 0
	}
	return finiteOrZero(pressurePa / (R * k))
}

// SpeedOfSound returns the speed of sound (m/s) in dry air at temperature tempC
// (°C): a = √(γ·R·T). By contract tempC is finite and above absolute zero; for
// any other input the result is 0, never NaN.
func SpeedOfSound(tempC float64) float64 {
	k := tempC + KelvinOffset
	if !(k > 0) || math.IsInf(k, 0) {
		return 0
	}
	return speedOfSoundK(k)
}

// speedOfSoundK is √(γ·R·T) for T in kelvin, written so that no finite T
// overflows.
func speedOfSoundK(k float64) float64 {
	return math.Sqrt(Gamma*R) * math.Sqrt(k)
}

// finiteOrZero returns v, or 0 when v has overflowed to an infinity.
func finiteOrZero(v float64) float64 {
	if math.IsInf(v, 0) {
		return 0
	}
	return v
}

// DensityAltitude returns the altitude (feet) at which the standard atmosphere
// has the density of air at pressure altitude altFt (feet) and outside air
// temperature oatC (°C), ρ = p(altFt)/(R·T_oat). The ISA density is inverted in
// closed form within its layer. The error wraps ErrInvalid for non-finite
// input or an OAT at or below absolute zero, and ErrOutOfRange when altFt or the
// density altitude lies outside the model.
func DensityAltitude(altFt, oatC float64) (float64, error) {
	if err := checkTemperature("OAT", oatC); err != nil {
		return 0, err
	}
	if err := checkAltitude(altFt); err != nil {
		return 0, err
	}
	rho := pressureAtM(altFt*FeetToMeters) / (R * (oatC + KelvinOffset))
	if rho < minDensity || rho > maxDensity {
		return 0, fmt.Errorf("atmos: density altitude for %g ft at %g °C (density %.6g kg/m³) is not in %.0f to %.0f ft: %w",
			altFt, oatC, rho, MinAltitudeFt, MaxAltitudeFt, ErrOutOfRange)
	}
	l := &layers[0]
	switch {
	case rho <= layers[2].baseRho:
		l = &layers[2]
	case rho <= layers[1].baseRho:
		l = &layers[1]
	}
	var hM float64
	if l.lapse == 0 {
		// ρ/ρb = exp(−g0·(h−hb)/(R·Tb))
		hM = l.baseM - R*l.baseK/G0*math.Log(rho/l.baseRho)
	} else {
		// ρ/ρb = (T/Tb)^(−g0/(L·R) − 1)
		t := l.baseK * math.Pow(rho/l.baseRho, 1/(-G0/(l.lapse*R)-1))
		hM = l.baseM + (t-l.baseK)/l.lapse
	}
	return clampAltitude(hM / FeetToMeters), nil
}

// TAT returns the total air temperature (°C) for static air temperature satC
// (°C) at Mach number mach, TAT = SAT·(1 + 0.2·M²) in kelvin (recovery factor
// 1, γ = 1.4). The error wraps ErrInvalid for non-finite input, a negative Mach
// number, a SAT at or below absolute zero, or a result too large to represent.
func TAT(satC, mach float64) (float64, error) {
	if err := checkTemperature("SAT", satC); err != nil {
		return 0, err
	}
	factor, err := ramFactor(mach)
	if err != nil {
		return 0, err
	}
	t := (satC+KelvinOffset)*factor - KelvinOffset
	if math.IsInf(t, 0) {
		return 0, fmt.Errorf("atmos: TAT for SAT %g °C at Mach %g overflows: %w", satC, mach, ErrInvalid)
	}
	return t, nil
}

// SAT returns the static air temperature (°C) for total air temperature tatC
// (°C) at Mach number mach, the inverse of TAT. The error wraps ErrInvalid for
// non-finite input, a negative Mach number or a TAT at or below absolute zero.
func SAT(tatC, mach float64) (float64, error) {
	if err := checkTemperature("TAT", tatC); err != nil {
		return 0, err
	}
	factor, err := ramFactor(mach)
	if err != nil {
		return 0, err
	}
	return (tatC+KelvinOffset)/factor - KelvinOffset, nil
}

// ramFactor returns 1 + (γ−1)/2·M² for a valid Mach number.
func ramFactor(mach float64) (float64, error) {
	if math.IsNaN(mach) || math.IsInf(mach, 0) || mach < 0 {
		return 0, fmt.Errorf("atmos: Mach %v must be a finite number >= 0: %w", mach, ErrInvalid)
	}
	f := 1 + 0.5*(Gamma-1)*mach*mach
	if math.IsInf(f, 0) {
		return 0, fmt.Errorf("atmos: Mach %g is too large: %w", mach, ErrInvalid)
	}
	return f, nil
}

// Constants of the altimeter-setting formula (the U.S. National Weather
// Service's station-pressure definition; docs/methods.md, Pressure altitude from QNH).
const (
	qnhScaleFt    = 145442.16
	qnhExponent   = 0.190263
	qnhStandardHP = 1013.25
)

// PressureAltitudeFromQNH returns the pressure altitude (feet) of a field at
// elevation elevationFt (feet) whose altimeter setting is qnhHPa (hPa):
// PA = elevation + 145 442.16 ft · (1 − (QNH/1013.25)^0.190263), the altimeter
// scale shift. The error wraps ErrInvalid for non-finite input or a
// non-positive QNH, and ErrOutOfRange when the result lies outside the model.
func PressureAltitudeFromQNH(elevationFt, qnhHPa float64) (float64, error) {
	if math.IsNaN(elevationFt) || math.IsInf(elevationFt, 0) {
		return 0, fmt.Errorf("atmos: elevation %v ft: %w", elevationFt, ErrInvalid)
	}
	if math.IsNaN(qnhHPa) || math.IsInf(qnhHPa, 0) || qnhHPa <= 0 {
		return 0, fmt.Errorf("atmos: QNH %v hPa must be a finite number > 0: %w", qnhHPa, ErrInvalid)
	}
	pa := elevationFt + qnhScaleFt*(1-math.Pow(qnhHPa/qnhStandardHP, qnhExponent))
	if !(pa >= MinAltitudeFt && pa <= MaxAltitudeFt) {
		return 0, fmt.Errorf("atmos: pressure altitude %g ft for elevation %g ft and QNH %g hPa not in %.0f to %.0f ft: %w",
			pa, elevationFt, qnhHPa, MinAltitudeFt, MaxAltitudeFt, ErrOutOfRange)
	}
	return pa, nil
}
