package main

import (
	"fmt"
	"io"
	"os"
	"runtime"
	"sync"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"github.com/thrustmap/thrustmap/thrustmap/verify"
)

func newVerifyCmd() *cobra.Command {
	var cal string
	var asJSON, notes bool
	cmd := &cobra.Command{
		Use:   "verify PROFILE... [-c CAL] [--json]",
		Short: "Find faults in rating data and gate layouts before anyone flies them",
		Long: `verify checks profiles (files or embedded names) for faults that would make a
simulated engine behave wrongly: files that will not load; ratings out of order
(takeoff ≥ go-around ≥ continuous ≥ climb ≥ cruise ≥ idle, reverse ≤ takeoff,
or the chains in [verify] order); flat-rating shape about the corner; cells out
of line with their neighbours (typos); a declared [envelope] not covered;
forward commands that fall as the lever moves up; gates the runtime must raise;
expression gates that fail or leave the physical range; assumed-temperature
limits against FAA AC 25-13; forward EPR below 1.0; and with -c a calibration
against the profile (notches, capture against the lever's noise, split between
levers). Every finding has a stable check code. Profiles are checked in
parallel. Exit status: 1 when any error is found, 0 otherwise (warnings only).

` + safetyNote,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			reports := make([]verify.Report, len(args))
			var bar *progressbar.ProgressBar
			if f, ok := cmd.ErrOrStderr().(*os.File); ok && term.IsTerminal(int(f.Fd())) && len(args) > 20 {
				bar = progressbar.NewOptions(len(args), progressbar.OptionSetWriter(f), progressbar.OptionSetDescription("profiles"), progressbar.OptionClearOnFinish())
			}
			jobs := make(chan int)
			var wg sync.WaitGroup
			var mu sync.Mutex
			for range runtime.GOMAXPROCS(0) {
				wg.Add(1)
				go func() {
					defer wg.Done()
					for i := range jobs {
						reports[i] = verify.File(args[i], cal)
						if bar != nil {
							mu.Lock()
							bar.Add(1)
							mu.Unlock()
						}
					}
				}()
			}
			for i := range args {
				jobs <- i
			}
			close(jobs)
			wg.Wait()
			if bar != nil {
				bar.Finish()
			}
			errs := 0
			for i := range reports {
				errs += len(reports[i].Errors)
				if !notes {
					reports[i].Notes = nil
				}
			}
			if asJSON {
				if err := writeJSON(cmd.OutOrStdout(), struct {
					Profiles []verify.Report `json:"profiles"`
				}{reports}); err != nil {
					return err
				}
			} else {
				printVerify(cmd.OutOrStdout(), reports)
			}
			if errs > 0 {
				return &checksFailed{msg: fmt.Sprintf("%d error(s) found", errs)}
			}
			return nil
		},
	}
	cmd.Flags().StringVarP(&cal, "cal", "c", "", "also check this calibration against each profile")
	cmd.Flags().BoolVar(&asJSON, "json", false, "print JSON")
	cmd.Flags().BoolVar(&notes, "notes", false, "also list notes (degrees per count at each gate)")
	return cmd
}

func printVerify(w io.Writer, reports []verify.Report) {
	for _, r := range reports {
		status := "ok"
		if !r.OK() {
			status = fmt.Sprintf("%d error(s)", len(r.Errors))
		}
		fmt.Fprintf(w, "%s: %s, %d warning(s)\n", r.Path, status, len(r.Warnings))
		for _, f := range r.Errors {
			fmt.Fprintf(w, "  error   %-24s %s: %s\n", f.Check, f.Where, f.Message)
		}
		for _, f := range r.Warnings {
			fmt.Fprintf(w, "  warning %-24s %s: %s\n", f.Check, f.Where, f.Message)
		}
		for _, f := range r.Notes {
			fmt.Fprintf(w, "  note    %-24s %s: %s\n", f.Check, f.Where, f.Message)
		}
	}
	fmt.Fprintln(w, safetyNote)
}
