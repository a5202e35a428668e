package main

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
	"io/fs"
	"text/template"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/thrustmap"
	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
)

//go:embed initprofile.toml.tmpl
var initTemplateText string

var initTemplate = template.Must(template.New("init").Parse(initTemplateText))

// initData are the placeholder numbers of a starting profile in one
// parameter: invented, of a realistic shape (flat rated to ISA+15, then
// falling), and marked as placeholders in the file.
type initData struct {
	File, Parameter               string
	Takeoff, Climb                []string // rows of values, altitude 0, 5000, 10000 ft
	Idle, Reverse, Delta, Redline string
}

// initParameters holds the starting numbers of each parameter (invented).
var initParameters = map[string]initData{
	"N1": {
		// Physical N1 rises about as √θ up to the corner, then falls.
		Takeoff: []string{"87.7, 92.6, 95.0, 94.2, 93.3, 92.4", "88.6, 93.5, 96.0, 95.2, 94.3, 93.4", "89.5, 94.4, 97.0, 96.2, 95.3, 94.4"},
		Climb:   []string{"83.5, 88.2, 90.5, 89.8, 89.0, 88.2", "84.5, 89.2, 91.5, 90.8, 90.0, 89.2", "85.5, 90.2, 92.5, 91.8, 91.0, 90.2"},
		Idle:    "22.0", Reverse: "70.0", Delta: "-0.8", Redline: "104.0",
	},
	"EPR": {
		// EPR is flat up to the corner, then falls.
		Takeoff: []string{"1.52, 1.52, 1.52, 1.47, 1.42, 1.37", "1.55, 1.55, 1.55, 1.50, 1.45, 1.40", "1.58, 1.58, 1.58, 1.53, 1.48, 1.43"},
		Climb:   []string{"1.45, 1.45, 1.45, 1.41, 1.37, 1.33", "1.48, 1.48, 1.48, 1.44, 1.40, 1.36", "1.51, 1.51, 1.51, 1.47, 1.43, 1.39"},
		Idle:    "1.01", Reverse: "1.25", Delta: "-0.02", Redline: "1.70",
	},
	"TORQUE": {
		// Torque is flat at its limit up to the corner, then falls.
		Takeoff: []string{"100, 100, 100, 92, 84, 76", "100, 100, 100, 90, 81, 72", "98, 98, 98, 88, 79, 70"},
		Climb:   []string{"90, 90, 90, 84, 78, 72", "89, 89, 89, 82, 75, 68", "87, 87, 87, 80, 73, 66"},
		Idle:    "5.0", Reverse: "40.0", Delta: "-3.0", Redline: "110.0",
	},
}

// initProfile returns the text of a starting profile in parameter, to be
// written to file (named in its comments).
func initProfile(file, parameter string) ([]byte, error) {
	d, ok := initParameters[parameter]
	if !ok {
		return nil, fmt.Errorf("--parameter %s: want N1, EPR or TORQUE", parameter)
	}
	d.File, d.Parameter = file, parameter
	var b bytes.Buffer
	if err := initTemplate.Execute(&b, d); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

func newInitCmd() *cobra.Command {
	var out, parameter string
	cmd := &cobra.Command{
		Use:   "init -o FILE [--parameter N1|EPR|TORQUE]",
		Short: "Write a starting profile: every section, commented, with placeholder numbers",
		Long: `init writes a profile to start from: every section and key present with a
one-line comment, a small working set of ratings (takeoff, climb, idle,
reverse), a bleed correction, reduced takeoff by the assumed-temperature
method, a redline, the envelope verify checks, and four gates. Every number is
an invented placeholder, marked so in the file: replace them with your
engine's data, then run thrustmap verify FILE. thrustmap help profile explains
every key.

It never replaces an existing file.

` + safetyNote,
		Example: `  thrustmap init -o my-engine.toml
  thrustmap init -o my-turboprop.toml --parameter TORQUE
  thrustmap verify my-engine.toml`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if out == "" {
				return errors.New("-o FILE is required")
			}
			text, err := initProfile(out, parameter)
			if err != nil {
				return err
			}
			// What init writes must load: a broken template is a bug.
			if _, err := thrustmap.ParseProfile(out, text); err != nil {
				return fmt.Errorf("internal error: the starting profile does not load: %w", err)
			}
			if err := atomicfile.CreateFile(out, text, 0o644); err != nil {
				if errors.Is(err, fs.ErrExist) {
					return fmt.Errorf("%s exists; init never replaces a file (choose another name or remove it)", out)
				}
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: a starting %s profile; every number in it is a placeholder to replace.\nNext: edit it (thrustmap help profile), then thrustmap verify %s\n", out, parameter, out)
			return nil
		},
	}
	cmd.Flags().StringVarP(&out, "out", "o", "", "profile file to write (must not exist)")
	cmd.Flags().StringVar(&parameter, "parameter", "N1", "what the targets are in: N1, EPR or TORQUE")
	return cmd
}
