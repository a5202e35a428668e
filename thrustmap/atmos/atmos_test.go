package atmos

import (
	"errors"
	"math"
	"testing"
)

// Exact unit definitions used to read published tables.
const (
	paPerPSI        = 4.4482216152605 / (0.0254 * 0.0254)                   // 1 lbf = 4.448 221 615 260 5 N, 1 in = 0.0254 m
	kgM3PerSlugFt3  = 4.4482216152605 / 0.3048 / (0.3048 * 0.3048 * 0.3048) // 1 slug = 1 lbf·s²/ft
	earthRadiusM    = 6356766.0                                             // r0 of U.S. Standard Atmosphere 1976 (also crnslab.org/util/atmo.php); H = r0·Z/(r0+Z)
	fahrenheitScale = 1.8                                                   // °F = °C·9/5 + 32
)

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

// geometricToGeopotentialFt converts a geometric altitude in feet to the
// geopotential altitude in feet by the U.S. Standard Atmosphere 1976 relation H = r0·Z/(r0+Z).
func geometricToGeopotentialFt(zFt float64) float64 {
	z := zFt * FeetToMeters
	return earthRadiusM * z / (earthRadiusM + z) / FeetToMeters
}

// TestStandardLayerBases compares the layer bases (the boundaries at 11 km and
// 20 km and the 32 km edge) with the U.S. Standard Atmosphere 1976 values.
func TestStandardLayerBases(t *testing.T) {
	// Source: J. S. Denker, "Altimetry", av8n.com, §1 table of the ISA layers
	// (U.S. Standard Atmosphere 1976 constants). Its six-digit pressures and
	// densities differ between reproductions in the sixth digit (a base pressure
	// carried forward rounded), so the tolerance is 5e-6 relative, finer than
	// the standard's own five printed digits.
	const rel = 5e-6
	tests := []struct {
		hM                  float64
		tempK, pressPa, rho float64
	}{
		{0, 288.15, 101325, 1.224999},      // av8n.com ISA table, sea level
		{11000, 216.65, 22632.1, 0.363918}, // av8n.com ISA table, tropopause (36 089 ft)
		{20000, 216.65, 5474.89, 0.088035}, // av8n.com ISA table, 20 km (65 617 ft)
		{32000, 228.65, 868.019, 0.013225}, // av8n.com ISA table, 32 km (104 987 ft), the model's upper edge
	}
	for _, tc := range tests {
		a, err := Standard(tc.hM / FeetToMeters)
		if err != nil {
			t.Fatalf("Standard(%v m): %v", tc.hM, err)
		}
		if !near(a.TemperatureK, tc.tempK, 1e-9) {
			t.Errorf("%v m: T = %.6f K, want %.2f K", tc.hM, a.TemperatureK, tc.tempK)
		}
		if !near(a.PressurePa, tc.pressPa, rel*tc.pressPa) {
			t.Errorf("%v m: p = %.4f Pa, want %v Pa", tc.hM, a.PressurePa, tc.pressPa)
		}
		// Densities are printed to 1e-6 kg/m³.
		if !near(a.DensityKgM3, tc.rho, math.Max(rel*tc.rho, 5e-7)) {
			t.Errorf("%v m: rho = %.7f, want %v", tc.hM, a.DensityKgM3, tc.rho)
		}
	}
}

// TestStandardGeometricTable compares with a U.S. Standard Atmosphere 1976 table
// in feet of geometric altitude, converted to geopotential altitude by the
// relation H = r0·Z/(r0+Z). The page labels the column geopotential, but every row
// matches the geometric reading to the printed digits and not the geopotential
// one (at 35 000 ft: −65.61 °F printed; geometric −65.61, geopotential −65.82).
func TestStandardGeometricTable(t *testing.T) {
	// Source: The Engineering ToolBox, "U.S. Standard Atmosphere vs. Altitude",
	// imperial table (engineeringtoolbox.com/standard-atmosphere-d_604.html):
	// temperature °F to 0.01, pressure psi to 0.001, density 1e-4 slug/ft³ to
	// 0.01. Tolerances are half the last printed digit plus a hair for the unit
	// conversion.
	tests := []struct {
		zFt             float64
		tempF, psi, rho float64 // rho in 1e-4 slug/ft³
	}{
		{-5000, 76.84, 17.554, 27.45}, // ET table; below sea level, under −2000 ft
		{0, 59, 14.696, 23.77},        // ET table
		{5000, 41.17, 12.228, 20.48},  // ET table
		{10000, 23.36, 10.108, 17.56}, // ET table
		{15000, 5.55, 8.297, 14.96},   // ET table
		{20000, -12.26, 6.759, 12.67}, // ET table
		{25000, -30.05, 5.461, 10.66}, // ET table
		{30000, -47.83, 4.373, 8.91},  // ET table
		{35000, -65.61, 3.468, 7.38},  // ET table
		{40000, -69.70, 2.730, 5.87},  // ET table; isothermal layer
		{45000, -69.70, 2.149, 4.62},  // ET table
		{50000, -69.70, 1.692, 3.64},  // ET table
		{60000, -69.70, 1.049, 2.26},  // ET table
		{70000, -67.42, 0.651, 1.39},  // ET table; third layer (+1 K/km)
	}
	for _, tc := range tests {
		h := geometricToGeopotentialFt(tc.zFt)
		a, err := Standard(h)
		if err != nil {
			t.Fatalf("Standard(%v): %v", h, err)
		}
		tempF := (a.TemperatureK-KelvinOffset)*fahrenheitScale + 32
		if !near(tempF, tc.tempF, 0.006) {
			t.Errorf("Z=%v ft: T = %.3f °F, want %v", tc.zFt, tempF, tc.tempF)
		}
		if psi := a.PressurePa / paPerPSI; !near(psi, tc.psi, 0.00051) {
			t.Errorf("Z=%v ft: p = %.4f psi, want %v", tc.zFt, psi, tc.psi)
		}
		if rho := a.DensityKgM3 / kgM3PerSlugFt3 * 1e4; !near(rho, tc.rho, 0.0051) {
			t.Errorf("Z=%v ft: rho = %.4f e-4 slug/ft³, want %v", tc.zFt, rho, tc.rho)
		}
	}
}

// TestStandardOtherPublished checks single values from other published sources.
func TestStandardOtherPublished(t *testing.T) {
	// MathWorks Aerospace Toolbox documentation, atmosisa example at 1000 m
	// geopotential: T = 281.6500 K, a = 336.4340 m/s, P = 8.9875e+04 Pa,
	// rho = 1.1116 kg/m³.
	a, err := Standard(1000 / FeetToMeters)
	if err != nil {
		t.Fatal(err)
	}
	if !near(a.TemperatureK, 281.65, 5e-5) || !near(a.SpeedOfSoundMS, 336.4340, 5e-5) ||
		!near(a.PressurePa, 89875, 5) || !near(a.DensityKgM3, 1.1116, 5e-5) {
		t.Errorf("1000 m: %+v", a)
	}

	// U.S. Standard Atmosphere 1976, Table I (geometric altitude), Z = 30 km:
	// T = 226.509 K, p = 1.1970e+03 Pa, rho = 1.8410e-02 kg/m³ — from memory.
	// Geopotential 29 859 m ≈ 97 963 ft, near the top of the range.
	a, err = Standard(geometricToGeopotentialFt(30000 / FeetToMeters))
	if err != nil {
		t.Fatal(err)
	}
	if !near(a.TemperatureK, 226.509, 5e-4) || !near(a.PressurePa, 1197.0, 0.05) ||
		!near(a.DensityKgM3, 1.8410e-2, 5e-7) {
		t.Errorf("Z=30 km: %+v", a)
	}

	// Sea-level speed of sound 340.29 m/s (ICAO standard atmosphere; U.S.
	// Standard Atmosphere 1976 prints 340.294 m/s).
	a, err = Standard(0)
	if err != nil {
		t.Fatal(err)
	}
	if !near(a.SpeedOfSoundMS, 340.29, 0.005) {
		t.Errorf("sea-level speed of sound = %.4f, want 340.29", a.SpeedOfSoundMS)
	}
	if got := SpeedOfSound(15); got != a.SpeedOfSoundMS {
		t.Errorf("SpeedOfSound(15) = %v, Standard(0) gives %v", got, a.SpeedOfSoundMS)
	}

	// Rho0 = P0/(R·T0) = 1.2250 kg/m³ to the standard's printed digits.
	if !near(Rho0, 1.2250, 5e-5) {
		t.Errorf("Rho0 = %v", Rho0)
	}
	if Sigma(a.DensityKgM3) != 1 || Delta(a.PressurePa) != 1 || Theta(15) != 1 {
		t.Errorf("sea-level ratios not 1: σ=%v δ=%v θ=%v", Sigma(a.DensityKgM3), Delta(a.PressurePa), Theta(15))
	}
}

// TestISATemperatureHandWorked checks T = 288.15 − 0.0065·h below 11 km and
// the constant temperatures above it, worked by hand.
func TestISATemperatureHandWorked(t *testing.T) {
	tests := []struct {
		altFt, wantC float64
	}{
		{-2000, 18.9624},  // 288.15 + 0.0065·609.6 = 292.1124 K = 18.9624 °C
		{0, 15},           // T0
		{10000, -4.812},   // 288.15 − 0.0065·3048 = 268.338 K = −4.812 °C
		{36089, -56.4995}, // 36 089 ft = 10 999.927 m; 288.15 − 0.0065·10 999.927 = 216.6505 K
		{40000, -56.5},    // isothermal 216.65 K
		{65616.8, -56.5},  // 19 999.97 m, just below 20 km: still 216.65 K
		{100000, -46.02},  // 30 480 m; 216.65 + 0.001·(30 480 − 20 000) = 227.13 K
	}
	for _, tc := range tests {
		got, err := ISATemperatureC(tc.altFt)
		if err != nil {
			t.Fatalf("ISATemperatureC(%v): %v", tc.altFt, err)
		}
		if !near(got, tc.wantC, 1e-4) {
			t.Errorf("ISATemperatureC(%v) = %.6f, want %v", tc.altFt, got, tc.wantC)
		}
	}
}

// TestPressureAltitudePublished compares the inverse with the ISA heights of
// the standard pressure levels.
func TestPressureAltitudePublished(t *testing.T) {
	// Source: wxonline.info "Standard Atmosphere", column "Pressure Altitude"
	// (feet). The feet appear converted from heights rounded to whole metres
	// (every row fits that), so the tolerance is 0.5 m + 0.5 ft ≈ 2.2 ft.
	tol := 0.5/FeetToMeters + 0.5
	tests := []struct {
		hPa, ft float64
	}{
		{850, 4780},  // wxonline.info
		{700, 9882},  // wxonline.info
		{500, 18287}, // wxonline.info
		{400, 23573}, // wxonline.info
		{300, 30066}, // wxonline.info
		{250, 33999}, // wxonline.info
		{200, 38661}, // wxonline.info; isothermal layer
		{150, 44646}, // wxonline.info
		{100, 53084}, // wxonline.info
		{50, 67507},  // wxonline.info; third layer
	}
	for _, tc := range tests {
		got, err := PressureAltitude(tc.hPa * 100)
		if err != nil {
			t.Fatalf("PressureAltitude(%v hPa): %v", tc.hPa, err)
		}
		if !near(got, tc.ft, tol) {
			t.Errorf("PressureAltitude(%v hPa) = %.2f ft, want %v ±%.1f", tc.hPa, got, tc.ft, tol)
		}
	}
}

// TestPressureAltitudeRoundTrip checks altitude → pressure → altitude over the
// whole range, including both boundaries and both edges.
func TestPressureAltitudeRoundTrip(t *testing.T) {
	alts := []float64{MinAltitudeFt, -2000, 0, 36089.2388, 11000 / FeetToMeters, 65616.7979, 20000 / FeetToMeters, 100000, MaxAltitudeFt}
	for h := MinAltitudeFt; h <= MaxAltitudeFt; h += 37.3 {
		alts = append(alts, h)
	}
	for _, h := range alts {
		a, err := Standard(h)
		if err != nil {
			t.Fatalf("Standard(%v): %v", h, err)
		}
		back, err := PressureAltitude(a.PressurePa)
		if err != nil {
			t.Fatalf("PressureAltitude(%v) for %v ft: %v", a.PressurePa, h, err)
		}
		if !near(back, h, 0.01) {
			t.Errorf("round trip %v ft -> %v Pa -> %v ft", h, a.PressurePa, back)
		}
	}
}

// TestPressureAltitudeFromQNH checks the altimeter-setting formula.
func TestPressureAltitudeFromQNH(t *testing.T) {
	// Standard setting: no shift.
	if got, err := PressureAltitudeFromQNH(1234, 1013.25); err != nil || got != 1234 {
		t.Errorf("QNH 1013.25: %v, %v; want 1234", got, err)
	}
	// Hand-worked: elevation 1000 ft, QNH 1023.25 hPa.
	// ratio = 1023.25/1013.25 = 1.0098692; ln = 0.0098208; ×0.190263 = 0.0018685;
	// e^0.0018685 = 1.0018703; 1 − 1.0018703 = −0.0018703;
	// ×145 442.16 = −272.02 ft; PA = 1000 − 272.02 = 727.98 ft.
	got, err := PressureAltitudeFromQNH(1000, 1023.25)
	if err != nil || !near(got, 727.98, 0.01) {
		t.Errorf("elev 1000 ft QNH 1023.25: %v, %v; want 727.98", got, err)
	}
	// Rule of thumb (common practice): 27 ft per hPa near sea level, within 10 %.
	lo, err1 := PressureAltitudeFromQNH(0, 1003.25)
	hi, err2 := PressureAltitudeFromQNH(0, 1023.25)
	if err1 != nil || err2 != nil {
		t.Fatal(err1, err2)
	}
	if perHPa := (lo - hi) / 20; math.Abs(perHPa-27)/27 > 0.10 {
		t.Errorf("%.2f ft/hPa, want 27 ±10%%", perHPa)
	}
	// The formula agrees with the model's own inverse to within a foot near sea
	// level: when QNH is the ISA pressure at −1500 ft, the sea-level field is
	// 1500 ft above the pressure datum, at pressure altitude −1500 ft.
	a, _ := Standard(-1500)
	pa, err := PressureAltitudeFromQNH(0, a.PressurePa/100)
	if err != nil || !near(pa, -1500, 1) {
		t.Errorf("sea-level field, QNH %.2f: %v, %v; want -1500", a.PressurePa/100, pa, err)
	}
}

// TestTATSAT checks the ram-rise formula and its inverse.
func TestTATSAT(t *testing.T) {
	// Hand-worked: SAT −56.5 °C = 216.65 K at M 0.8; 1 + 0.2·0.64 = 1.128;
	// 216.65·1.128 = 244.3812 K = −28.7688 °C.
	got, err := TAT(-56.5, 0.8)
	if err != nil || !near(got, -28.7688, 1e-9) {
		t.Errorf("TAT(-56.5, 0.8) = %v, %v; want -28.7688", got, err)
	}
	// M 0: TAT = SAT.
	if got, err := TAT(15, 0); err != nil || got != 15 {
		t.Errorf("TAT(15, 0) = %v, %v", got, err)
	}
	for sat := -80.0; sat <= 55; sat += 2.5 {
		for m := 0.0; m <= 3; m += 0.07 {
			tat, err := TAT(sat, m)
			if err != nil {
				t.Fatal(err)
			}
			back, err := SAT(tat, m)
			if err != nil {
				t.Fatal(err)
			}
			if !near(back, sat, 1e-9) {
				t.Errorf("SAT(TAT(%v, %v)) = %v", sat, m, back)
			}
		}
	}
}

// densityAltitudeBisect solves ISA density(h) = rho by bisection on Standard,
// an independent check of the closed form.
func densityAltitudeBisect(t *testing.T, rho float64) float64 {
	lo, hi := MinAltitudeFt, MaxAltitudeFt
	for hi-lo > 1e-7 {
		mid := (lo + hi) / 2
		a, err := Standard(mid)
		if err != nil {
			t.Fatal(err)
		}
		if a.DensityKgM3 > rho {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

func TestDensityAltitude(t *testing.T) {
	// Hand-worked, troposphere: PA 5000 ft (1524 m), OAT 30 °C.
	// T_isa = 288.15 − 0.0065·1524 = 278.244 K; p = 101325·(278.244/288.15)^5.25588 = 84 307.3 Pa;
	// ρ = 84 307.3/(287.05287·303.15) = 0.968825 kg/m³; σ = 0.790878;
	// T_da = 288.15·σ^(1/4.25588) = 272.6952 K; DA = (288.15 − 272.6952)/0.0065 m = 2377.66 m = 7800.7 ft.
	got, err := DensityAltitude(5000, 30)
	if err != nil || !near(got, 7800.7, 0.1) {
		t.Errorf("DensityAltitude(5000, 30) = %v, %v; want 7800.7", got, err)
	}
	// Rule of thumb (common practice): about 120 ft per °C of ISA deviation; ISA+24.9 → ≈7989 ft, within 5 %.
	if math.Abs(got-7989)/7989 > 0.05 {
		t.Errorf("DensityAltitude(5000, 30) = %v, far from the 120 ft/°C rule", got)
	}
	// Hand-worked, isothermal layer: PA 40 000 ft (12 192 m), OAT −46.5 °C (ISA+10).
	// p = 22 632.04·exp(−9.80665·1192/(287.05287·216.65)) = 18 753.90 Pa;
	// ρ = 18 753.90/(287.05287·226.65) = 0.288253; ρ11 = 0.363918;
	// DA = 11 000 − 6341.616·ln(0.288253/0.363918) m = 12 478.16 m = 40 938.8 ft.
	got, err = DensityAltitude(40000, -46.5)
	if err != nil || !near(got, 40938.8, 0.1) {
		t.Errorf("DensityAltitude(40000, -46.5) = %v, %v; want 40938.8", got, err)
	}

	// ISA OAT: density altitude equals pressure altitude, over the whole range.
	for h := MinAltitudeFt; h <= MaxAltitudeFt; h += 101.1 {
		isa, err := ISATemperatureC(h)
		if err != nil {
			t.Fatal(err)
		}
		da, err := DensityAltitude(h, isa)
		if err != nil {
			t.Fatalf("DensityAltitude(%v, %v): %v", h, isa, err)
		}
		if !near(da, h, 1e-6) {
			t.Errorf("ISA at %v ft: density altitude %v", h, da)
		}
	}
	// Against a bracketed solve, every layer, cold and hot.
	for _, h := range []float64{-10000, 0, 8000, 30000, 39000, 50000, 64000, 70000, 90000} {
		for _, dev := range []float64{-30, -10, 5, 20} {
			isa, _ := ISATemperatureC(h)
			oat := isa + dev
			da, err := DensityAltitude(h, oat)
			if err != nil {
				continue // off the top or bottom for the extreme cases
			}
			a, _ := Standard(h)
			want := densityAltitudeBisect(t, Density(a.PressurePa, oat))
			if !near(da, want, 1e-6) {
				t.Errorf("DensityAltitude(%v, %v) = %.7f, bisection %.7f", h, oat, da, want)
			}
		}
	}
}

func TestISADeviation(t *testing.T) {
	// ISA at 10 000 ft is −4.812 °C (hand-worked above); OAT 0 °C → ISA+4.812.
	got, err := ISADeviation(10000, 0)
	if err != nil || !near(got, 4.812, 1e-9) {
		t.Errorf("ISADeviation(10000, 0) = %v, %v", got, err)
	}
}

func TestRatios(t *testing.T) {
	// Hand-worked: θ(−56.5 °C) = 216.65/288.15 = 0.751865; δ(22 632 Pa) = 0.223360.
	if got := Theta(-56.5); !near(got, 0.751865, 5e-7) {
		t.Errorf("Theta(-56.5) = %v", got)
	}
	if got := Delta(22632); !near(got, 0.223360, 5e-7) {
		t.Errorf("Delta(22632) = %v", got)
	}
	if got := Sigma(0.6125); !near(got, 0.5, 1e-6) {
		t.Errorf("Sigma(0.6125) = %v", got)
	}
	// Outside the contract: 0, never NaN.
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1), -300} {
		if Theta(v) != 0 || SpeedOfSound(v) != 0 || Density(101325, v) != 0 {
			t.Errorf("temperature %v: Theta %v SpeedOfSound %v Density %v", v, Theta(v), SpeedOfSound(v), Density(101325, v))
		}
		if Delta(v) != 0 || Sigma(v) != 0 || Density(v, 15) != 0 {
			t.Errorf("pressure/density %v: Delta %v Sigma %v Density %v", v, Delta(v), Sigma(v), Density(v, 15))
		}
	}
}

func TestErrors(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name string
		err  error
		want error
	}{
		{"Standard below", standardErr(Standard(-16500)), ErrOutOfRange},
		{"Standard above", standardErr(Standard(105000)), ErrOutOfRange},
		{"Standard NaN", standardErr(Standard(nan)), ErrInvalid},
		{"Standard Inf", standardErr(Standard(-inf)), ErrInvalid},
		{"ISATemperatureC above", second(ISATemperatureC(1e6)), ErrOutOfRange},
		{"ISATemperatureC NaN", second(ISATemperatureC(nan)), ErrInvalid},
		{"PressureAltitude 0", second(PressureAltitude(0)), ErrInvalid},
		{"PressureAltitude negative", second(PressureAltitude(-1)), ErrInvalid},
		{"PressureAltitude NaN", second(PressureAltitude(nan)), ErrInvalid},
		{"PressureAltitude Inf", second(PressureAltitude(inf)), ErrInvalid},
		{"PressureAltitude too low", second(PressureAltitude(800)), ErrOutOfRange},
		{"PressureAltitude too high", second(PressureAltitude(200000)), ErrOutOfRange},
		{"ISADeviation NaN OAT", second(ISADeviation(0, nan)), ErrInvalid},
		{"ISADeviation absolute zero", second(ISADeviation(0, -273.15)), ErrInvalid},
		{"ISADeviation altitude", second(ISADeviation(2e5, 0)), ErrOutOfRange},
		{"DensityAltitude absolute zero", second(DensityAltitude(0, -273.15)), ErrInvalid},
		{"DensityAltitude NaN", second(DensityAltitude(nan, 15)), ErrInvalid},
		{"DensityAltitude altitude", second(DensityAltitude(-17000, 15)), ErrOutOfRange},
		{"DensityAltitude too thin", second(DensityAltitude(104000, 60)), ErrOutOfRange},
		{"DensityAltitude too dense", second(DensityAltitude(-16000, -80)), ErrOutOfRange},
		{"TAT negative Mach", second(TAT(15, -0.1)), ErrInvalid},
		{"TAT NaN Mach", second(TAT(15, nan)), ErrInvalid},
		{"TAT huge Mach", second(TAT(15, 1e200)), ErrInvalid},
		{"TAT below absolute zero", second(TAT(-300, 0.5)), ErrInvalid},
		{"TAT Inf SAT", second(TAT(inf, 0.5)), ErrInvalid},
		{"SAT negative Mach", second(SAT(15, -1)), ErrInvalid},
		{"SAT NaN", second(SAT(nan, 0.5)), ErrInvalid},
		{"QNH zero", second(PressureAltitudeFromQNH(0, 0)), ErrInvalid},
		{"QNH negative", second(PressureAltitudeFromQNH(0, -1013)), ErrInvalid},
		{"QNH NaN", second(PressureAltitudeFromQNH(0, nan)), ErrInvalid},
		{"QNH elevation Inf", second(PressureAltitudeFromQNH(inf, 1013)), ErrInvalid},
		{"QNH result out of range", second(PressureAltitudeFromQNH(104900, 900)), ErrOutOfRange},
	}
	for _, tc := range tests {
		if !errors.Is(tc.err, tc.want) {
			t.Errorf("%s: error %v, want %v", tc.name, tc.err, tc.want)
		}
	}
	// The range error names the value and the valid range in feet.
	_, err := Standard(200000)
	if want := "atmos: altitude 200000 ft not in -16404 to 104987 ft: out of range of the standard atmosphere"; err == nil || err.Error() != want {
		t.Errorf("error text %q, want %q", err, want)
	}
}

// second and standardErr keep only the error of a two-value call.
func second(_ float64, err error) error { return err }

func standardErr(_ Air, err error) error { return err }

func TestEdgesInclusive(t *testing.T) {
	for _, h := range []float64{MinAltitudeFt, MaxAltitudeFt} {
		a, err := Standard(h)
		if err != nil {
			t.Fatalf("Standard(%v): %v", h, err)
		}
		back, err := PressureAltitude(a.PressurePa)
		if err != nil || back != h && !near(back, h, 1e-6) {
			t.Errorf("edge %v: back %v, %v", h, back, err)
		}
	}
}

func TestISATemperatureCNoAlloc(t *testing.T) {
	var sink float64
	allocs := testing.AllocsPerRun(1000, func() {
		v, _ := ISATemperatureC(35000)
		sink += v
	})
	if allocs != 0 {
		t.Errorf("ISATemperatureC allocates %v times per call", allocs)
	}
	_ = sink
}

func BenchmarkISATemperatureC(b *testing.B) {
	b.ReportAllocs()
	var sink float64
	alt := 0.0
	for b.Loop() {
		v, err := ISATemperatureC(alt)
		if err != nil {
			b.Fatal(err)
		}
		sink += v
		alt += 1
		if alt > 100000 {
			alt = 0
		}
	}
	_ = sink
}

// TestNeverNaN feeds awkward values to every function: each either returns an
// error or a finite number.
func TestNeverNaN(t *testing.T) {
	vals := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, math.Copysign(0, -1),
		-1, 1, 1e-300, -1e-300, 1e300, -1e300, math.MaxFloat64, -math.MaxFloat64,
		-273.15, -273.1499999, 15, 0.8, 1013.25, 101325, MinAltitudeFt, MaxAltitudeFt,
		MinAltitudeFt - 1e-9, MaxAltitudeFt + 1e-9, 36089.24, 65616.8}
	check := func(name string, x, y, v float64, err error) {
		if err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
			t.Errorf("%s(%v, %v) = %v without an error", name, x, y, v)
		}
	}
	for _, x := range vals {
		a, err := Standard(x)
		for _, v := range []float64{a.AltitudeFt, a.TemperatureK, a.PressurePa, a.DensityKgM3, a.SpeedOfSoundMS} {
			check("Standard", x, 0, v, err)
		}
		v, err := ISATemperatureC(x)
		check("ISATemperatureC", x, 0, v, err)
		v, err = PressureAltitude(x)
		check("PressureAltitude", x, 0, v, err)
		for _, f := range []func(float64) float64{Theta, Delta, Sigma, SpeedOfSound} {
			check("ratio", x, 0, f(x), nil)
		}
		for _, y := range vals {
			check("Density", x, y, Density(x, y), nil)
			v, err = ISADeviation(x, y)
			check("ISADeviation", x, y, v, err)
			v, err = DensityAltitude(x, y)
			check("DensityAltitude", x, y, v, err)
			v, err = TAT(x, y)
			check("TAT", x, y, v, err)
			v, err = SAT(x, y)
			check("SAT", x, y, v, err)
			v, err = PressureAltitudeFromQNH(x, y)
			check("PressureAltitudeFromQNH", x, y, v, err)
		}
	}
}
