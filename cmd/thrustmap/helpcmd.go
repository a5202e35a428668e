package main

import (
	"fmt"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"github.com/thrustmap/thrustmap/docs"
)

// helpTopicsText is the paragraph of the root command's help that points to
// the reference topics.
func helpTopicsText() string {
	return "Reference: thrustmap help TOPIC prints a page of the reference (the text of\n" +
		"docs/ in the repository), where TOPIC is one of:\n  " + strings.Join(docs.Topics(), ", ") + "."
}

// newHelpCmd is the help command: help on a command, as cobra gives it, or a
// page of the reference built into the program (package docs).
func newHelpCmd(root *cobra.Command) *cobra.Command {
	return &cobra.Command{
		Use:   "help [COMMAND... | TOPIC]",
		Short: "Help about any command, or a reference topic (" + strings.Join(docs.Topics(), ", ") + ")",
		Long: `help prints the help of a command (thrustmap help export grid), or a page of
thrustmap's reference: the same Markdown as docs/ in the repository.

` + helpTopicsText() + `

` + safetyNote,
		ValidArgsFunction: func(c *cobra.Command, args []string, toComplete string) ([]cobra.Completion, cobra.ShellCompDirective) {
			var out []cobra.Completion
			if len(args) == 0 {
				for _, t := range docs.Topics() {
					if strings.HasPrefix(t, toComplete) {
						out = append(out, cobra.CompletionWithDesc(t, docs.Title(t)))
					}
				}
			}
			cmd, _, err := root.Find(args)
			if err != nil {
				return out, cobra.ShellCompDirectiveNoFileComp
			}
			for _, sub := range cmd.Commands() {
				if sub.IsAvailableCommand() && strings.HasPrefix(sub.Name(), toComplete) {
					out = append(out, cobra.CompletionWithDesc(sub.Name(), sub.Short))
				}
			}
			return out, cobra.ShellCompDirectiveNoFileComp
		},
		RunE: func(c *cobra.Command, args []string) error {
			if len(args) == 0 {
				return root.Help()
			}
			if len(args) == 1 {
				if text, ok := docs.Topic(args[0]); ok {
					_, err := c.OutOrStdout().Write(text)
					return err
				}
			}
			cmd, rest, err := root.Find(args)
			if err != nil || cmd == nil || cmd == root || len(rest) > 0 {
				return fmt.Errorf("help: no command or topic %q\n  commands: %s\n  topics:   %s",
					strings.Join(args, " "), strings.Join(commandNames(root), ", "), strings.Join(docs.Topics(), ", "))
			}
			cmd.InitDefaultHelpFlag()
			return cmd.Help()
		},
	}
}

// commandNames lists root's available commands, sorted.
func commandNames(root *cobra.Command) []string {
	var names []string
	for _, c := range root.Commands() {
		if c.IsAvailableCommand() {
			names = append(names, c.Name())
		}
	}
	slices.Sort(names)
	return names
}
