package atmos_test

import (
	"fmt"

	"github.com/thrustmap/thrustmap/thrustmap/atmos"
)

func ExampleStandard() {
	air, err := atmos.Standard(35000) // FL350
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("temperature %.2f °C\n", air.TemperatureK-atmos.KelvinOffset)
	fmt.Printf("pressure    %.2f hPa (%.2f inHg)\n", air.PressurePa/100, air.PressurePa/100/atmos.HPaPerInHg)
	fmt.Printf("density     %.4f kg/m³ (σ %.4f)\n", air.DensityKgM3, atmos.Sigma(air.DensityKgM3))
	fmt.Printf("sound       %.1f kt\n", air.SpeedOfSoundMS*atmos.MetersPerSecondToKnots)

	_, err = atmos.Standard(120000)
	fmt.Println(err)
	// Output:
	// temperature -54.34 °C
	// pressure    238.42 hPa (7.04 inHg)
	// density     0.3796 kg/m³ (σ 0.3099)
	// sound       576.4 kt
	// atmos: altitude 120000 ft not in -16404 to 104987 ft: out of range of the standard atmosphere
}

func ExamplePressureAltitudeFromQNH() {
	pa, err := atmos.PressureAltitudeFromQNH(2000, 1000)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("pressure altitude %.0f ft\n", pa)
	// Output:
	// pressure altitude 2364 ft
}
