package main

import (
	"encoding/json"
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap/atmos"
)

// airDataJSON is the atmos command's JSON object (docs/units.md, JSON keys).
type airDataJSON struct {
	PressureAltitudeFt float64  `json:"pressure_altitude_ft"`
	FieldElevationFt   *float64 `json:"field_elevation_ft,omitempty"`
	QNHHPa             *float64 `json:"qnh_hpa,omitempty"`
	TemperatureC       float64  `json:"temperature_c"`
	ISATemperatureC    float64  `json:"isa_temperature_c"`
	TemperatureK       float64  `json:"temperature_k"`
	ISADeviationC      float64  `json:"isa_deviation_c"`
	PressureHPa        float64  `json:"pressure_hpa"`
	PressureInHg       float64  `json:"pressure_inhg"`
	DensityKgM3        float64  `json:"density_kg_m3"`
	SpeedOfSoundKt     float64  `json:"speed_of_sound_kt"`
	Theta              float64  `json:"theta"`
	Delta              float64  `json:"delta"`
	Sigma              float64  `json:"sigma"`
	// DensityAltitudeFt is present with --oat: a *float64, nil (JSON null)
	// when the density altitude lies outside the standard atmosphere.
	DensityAltitudeFt any      `json:"density_altitude_ft,omitempty"`
	Mach              *float64 `json:"mach,omitempty"`
	TATC              *float64 `json:"tat_c,omitempty"`
	Notes             []string `json:"notes,omitempty"` // what could not be computed, and why
}

// airData computes the air data at a: the standard atmosphere at the
// pressure altitude, with the OAT when given in place of the ISA temperature.
func airData(a air) (airDataJSON, error) {
	std, err := atmos.Standard(a.altFt)
	if err != nil {
		return airDataJSON{}, fmt.Errorf("--alt: %w", err)
	}
	isaC := std.TemperatureK - atmos.KelvinOffset
	t := isaC
	if a.hasOAT {
		t = a.oatC
	}
	rho := atmos.Density(std.PressurePa, t)
	d := airDataJSON{
		PressureAltitudeFt: a.altFt,
		TemperatureC:       t,
		ISATemperatureC:    isaC,
		TemperatureK:       t + atmos.KelvinOffset,
		ISADeviationC:      t - isaC,
		PressureHPa:        std.PressurePa / 100,
		PressureInHg:       std.PressurePa / 100 / atmos.HPaPerInHg,
		DensityKgM3:        rho,
		SpeedOfSoundKt:     atmos.SpeedOfSound(t) * atmos.MetersPerSecondToKnots,
		Theta:              atmos.Theta(t),
		Delta:              atmos.Delta(std.PressurePa),
		Sigma:              atmos.Sigma(rho),
	}
	if a.fromQNH {
		d.FieldElevationFt, d.QNHHPa = &a.elevFt, &a.qnhHPa
	}
	if a.hasOAT {
		// The air's density may match no altitude of the standard atmosphere
		// (very hot or cold air near its ends): everything else still holds.
		if da, err := atmos.DensityAltitude(a.altFt, a.oatC); err != nil {
			d.DensityAltitudeFt = (*float64)(nil)
			d.Notes = append(d.Notes, fmt.Sprintf("density altitude not computed: the air's density, %.5g kg/m³, is that of no altitude of the standard atmosphere (%.0f to %.0f ft)",
				rho, atmos.MinAltitudeFt, atmos.MaxAltitudeFt))
		} else {
			d.DensityAltitudeFt = &da
		}
	}
	if a.hasMach {
		tat, err := atmos.TAT(t, a.mach)
		if err != nil {
			return d, fmt.Errorf("--mach: %w", err)
		}
		d.Mach, d.TATC = &a.mach, &tat
	}
	return d, nil
}

func newAtmosCmd() *cobra.Command {
	var cf conditionFlags
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "atmos --alt ALT [--oat T] [--mach M] [--elev E --qnh Q]",
		Short: "Standard-atmosphere air data at a pressure altitude",
		Long: `atmos prints the International Standard Atmosphere (ICAO Doc 7488/3, valid from
-5 km to 32 km) at a pressure altitude: temperature, pressure, density, speed of
sound, θ, δ, σ; with --oat the ISA deviation and density altitude, with --mach
the total air temperature. With --elev and --qnh the pressure altitude is
computed from the field elevation by the altimeter's scale shift.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			a, err := cf.parse(false)
			if err != nil {
				return err
			}
			d, err := airData(a)
			if err != nil {
				return err
			}
			if asJSON {
				return writeJSON(cmd.OutOrStdout(), d)
			}
			printAirData(cmd.OutOrStdout(), d)
			return nil
		},
	}
	cf.register(cmd.Flags(), false)
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	return cmd
}

func printAirData(w io.Writer, d airDataJSON) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	if d.FieldElevationFt != nil {
		fmt.Fprintf(tw, "field elevation\t%.0f ft\tQNH %.1f hPa (%.2f inHg)\n", *d.FieldElevationFt, *d.QNHHPa, *d.QNHHPa/atmos.HPaPerInHg)
	}
	fmt.Fprintf(tw, "pressure altitude\t%.0f ft\n", d.PressureAltitudeFt)
	fmt.Fprintf(tw, "temperature\t%.2f °C\t%.2f K, ISA %.2f °C, ISA%+.2f\n", d.TemperatureC, d.TemperatureK, d.ISATemperatureC, d.ISADeviationC)
	fmt.Fprintf(tw, "pressure\t%.2f hPa\t%.3f inHg\n", d.PressureHPa, d.PressureInHg)
	fmt.Fprintf(tw, "density\t%.5f kg/m³\n", d.DensityKgM3)
	fmt.Fprintf(tw, "speed of sound\t%.1f kt\n", d.SpeedOfSoundKt)
	fmt.Fprintf(tw, "θ δ σ\t%.5f %.5f %.5f\n", d.Theta, d.Delta, d.Sigma)
	if da, ok := d.DensityAltitudeFt.(*float64); ok && da != nil {
		fmt.Fprintf(tw, "density altitude\t%.0f ft\n", *da)
	}
	if d.TATC != nil {
		fmt.Fprintf(tw, "total air temperature\t%.2f °C\tat Mach %.3f\n", *d.TATC, *d.Mach)
	}
	for _, n := range d.Notes {
		fmt.Fprintf(tw, "note\t%s\n", n)
	}
	tw.Flush()
}

// writeJSON prints v as indented JSON.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
