package main

import (
	"bytes"
	"fmt"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/export"
)

func newExportCCmd() *cobra.Command {
	var profile, cal, out, prefix string
	cmd := &cobra.Command{
		Use:   "c -p PROFILE [-c CAL] [--prefix NAME_] -o FILE.c",
		Short: "A profile (and calibration) as one self-contained C99 source file",
		Long: `export c writes one C99 source file — no Go runtime, no allocation, only
<math.h>, <stdint.h> and <string.h> — that implements the profile's ratings,
corrections, redline, reduced takeoff by the assumed-temperature method, gates
(with their expressions) and, with -c, the lever calibrations: the same
answers as the Go library, for simulator plugins that cannot load a Go
library (a process holds only one Go runtime). Its interface (version 2)
has the C library's types and flag bits where the two overlap: 64-bit
bleeds, <prefix>bleed_bit to find a bleed by name, <prefix>target_detail.
Define <PREFIX>HEADER_ONLY before including it to get the declarations
alone. Expressions outside the subset the library evaluates natively are
refused, naming the gate.

` + safetyNote,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if profile == "" || out == "" {
				return fmt.Errorf("-p PROFILE and -o FILE.c are required")
			}
			m, err := thrustmap.LoadModel(profile, cal)
			if err != nil {
				return err
			}
			var b bytes.Buffer
			if err := export.WriteC(&b, m, export.COptions{Prefix: prefix}); err != nil {
				return err
			}
			if err := writeExport(out, b.Bytes()); err != nil {
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %s (%d bytes of C99 for %s)\n", out, b.Len(), m.Profile().Source())
			return nil
		},
	}
	cmd.Flags().StringVarP(&profile, "profile", "p", "", "profile file or embedded name")
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "calibration file or embedded name (without it, no lever functions)")
	cmd.Flags().StringVar(&prefix, "prefix", export.DefaultCPrefix, "prefix of every C name")
	cmd.Flags().StringVarP(&out, "out", "o", "", "C source file to write")
	return cmd
}
