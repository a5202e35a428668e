// Command thrustmap calibrates simulated thrust levers and computes rated
// engine targets (N1, EPR or torque) from rating tables.
//
// Simulation only: not certified, never for real aircraft.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/spf13/cobra"
)

// safetyNote is printed in --help, in reports and in chart footers.
const safetyNote = "Simulation and training-device development only. Not certified; never use it " +
	"to set thrust on a real aircraft. Real thrust settings come from the approved flight " +
	"manual, the engine control and licensed practice."

// Exit codes of the command-line contract.
const (
	exitOK     = 0
	exitChecks = 1 // checks failed
	exitUsage  = 2 // bad input or usage
)

// checksFailed is returned by commands whose checks did not pass: exit 1.
type checksFailed struct{ msg string }

func (e *checksFailed) Error() string { return e.msg }

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// run executes the command line args and returns the exit code. Errors are
// printed to stderr as one "thrustmap: ..." message, never a stack trace.
func run(args []string, stdout, stderr io.Writer) int {
	return runWithInput(args, os.Stdin, stdout, stderr)
}

// runWithInput is run reading standard input from stdin.
func runWithInput(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	root := newRootCmd(stdout, stderr)
	root.SetIn(stdin)
	root.SetArgs(args)
	err := root.Execute()
	if err == nil {
		return exitOK
	}
	fmt.Fprintf(stderr, "thrustmap: %v\n", err)
	var failed *checksFailed
	if errors.As(err, &failed) {
		return exitChecks
	}
	return exitUsage
}

func newRootCmd(stdout, stderr io.Writer) *cobra.Command {
	root := &cobra.Command{
		Use:   "thrustmap",
		Short: "Thrust-lever calibration and rated engine targets for simulated turbine aircraft",
		Long: `thrustmap turns raw thrust-lever counts into calibrated lever angles, detent
gates and rated engine targets (N1, EPR or torque) interpolated from rating
tables against pressure altitude, temperature, Mach and bleed state, including
reduced takeoff thrust by the assumed-temperature method.

Quantities take unit suffixes: altitude ft, m or FL (FL350), temperature C, F
or K, QNH hPa or inHg (a bare QNH from 850 to 1100 is hPa, from 25 to 35 inHg).
Bare numbers are feet, °C and knots. -p takes a profile file or an embedded
profile name (demo, demo-epr, demo-turboprop).

Exit status: 0 ok, 1 checks failed, 2 bad input or usage.

` + helpTopicsText() + `

` + safetyNote,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetOut(stdout)
	root.SetErr(stderr)
	root.SetHelpCommand(newHelpCmd(root))
	root.AddCommand(newReferenceCmd())
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return fmt.Errorf("%s: %w (see %s --help)", c.CommandPath(), err, c.CommandPath())
	})
	root.AddCommand(newAtmosCmd(), newTargetCmd(), newLeverCmd(), newLeverRawCmd(), newSweepCmd(), newAddPointCmd(), newSynthSweepCmd(), newWatchCmd(), newDevicesCmd(), newRecordCmd(), newShellCmd(), newRunCmd(), newVerifyCmd(), newPlotCmd(), newExportCmd(), newDemoCmd(), newInitCmd())
	return root
}
