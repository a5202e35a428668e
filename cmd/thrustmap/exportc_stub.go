package main

import "github.com/spf13/cobra"

// newExportCCmd is wired when the C generator lands.
func newExportCCmd() *cobra.Command { return nil }
