package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"

	"github.com/spf13/pflag"
)

// A command is one subcommand of undercurrent. Each lives in its own file and
// registers itself from an init function with register.
type command struct {
	// name is the word that selects the command ("locate").
	name string
	// usage is the argument synopsis after the name ("[flags] LOG...").
	usage string
	// summary is a one-line description for the command list.
	summary string
	// long is the help text shown by "undercurrent help NAME", after the
	// usage line and before the flags; it should end with examples.
	long string
	// setFlags declares the command's flags on fs.
	setFlags func(fs *pflag.FlagSet)
	// run does the work. args are the positional arguments left after
	// flag parsing. An error wrapped by usageErrorf exits with status 2,
	// any other error with status 1.
	run func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error
}

var commands = map[string]*command{}

// register adds c to the command list; it panics on a duplicate name, which
// is a programming mistake.
func register(c *command) {
	if _, dup := commands[c.name]; dup {
		panic("undercurrent: command registered twice: " + c.name)
	}
	commands[c.name] = c
}

// usageError marks an error in how the command was called (exit status 2).
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usageErrorf(format string, a ...any) error {
	return &usageError{msg: fmt.Sprintf(format, a...)}
}

func (c *command) flagSet(stderr io.Writer) *pflag.FlagSet {
	fs := pflag.NewFlagSet(c.name, pflag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.SortFlags = false
	if c.setFlags != nil {
		c.setFlags(fs)
	}
	fs.Usage = func() { c.printHelp(stderr, fs) }
	return fs
}

func (c *command) printHelp(w io.Writer, fs *pflag.FlagSet) {
	fmt.Fprintf(w, "usage: undercurrent %s %s\n\n%s\n", c.name, c.usage, c.summary)
	if c.long != "" {
		fmt.Fprintf(w, "\n%s\n", strings.TrimRight(c.long, "\n"))
	}
	if fs.HasFlags() {
		fmt.Fprintf(w, "\nFlags:\n%s", fs.FlagUsages())
	}
}

func sortedCommands() []*command {
	list := make([]*command, 0, len(commands))
	for _, c := range commands {
		list = append(list, c)
	}
	sort.Slice(list, func(i, j int) bool { return list[i].name < list[j].name })
	return list
}

func printCommands(w io.Writer) {
	fmt.Fprintf(w, "undercurrent estimates hidden electric currents from magnetometer logs.\n\n")
	fmt.Fprintf(w, "usage: undercurrent COMMAND [flags] [arguments]\n\nCommands:\n")
	for _, c := range sortedCommands() {
		fmt.Fprintf(w, "  %-10s %s\n", c.name, c.summary)
	}
	fmt.Fprintf(w, "\nRun \"undercurrent help COMMAND\" or \"undercurrent COMMAND --help\" for details.\n")
	fmt.Fprintf(w, "Start with \"undercurrent demo\" to run the whole job on a bundled example.\n")
}

// run parses args, runs the selected command and returns the exit status.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		printCommands(stderr)
		return 2
	}
	name := args[0]
	switch name {
	case "help", "-h", "--help":
		if len(args) > 1 {
			c, ok := commands[args[1]]
			if !ok {
				fmt.Fprintf(stderr, "undercurrent help: unknown command %q\n", args[1])
				return 2
			}
			c.printHelp(stdout, c.flagSet(stderr))
			return 0
		}
		printCommands(stdout)
		return 0
	}
	c, ok := commands[name]
	if !ok {
		fmt.Fprintf(stderr, "undercurrent: unknown command %q\n", name)
		printCommands(stderr)
		return 2
	}
	fs := c.flagSet(stderr)
	if err := fs.Parse(args[1:]); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			return 0
		}
		fmt.Fprintf(stderr, "undercurrent %s: %v\n", name, err)
		fmt.Fprintf(stderr, "run \"undercurrent help %s\" for usage\n", name)
		return 2
	}
	if err := c.run(ctx, fs, fs.Args(), stdout, stderr); err != nil {
		fmt.Fprintf(stderr, "undercurrent %s: %v\n", name, err)
		var ue *usageError
		if errors.As(err, &ue) {
			fmt.Fprintf(stderr, "run \"undercurrent help %s\" for usage\n", name)
			return 2
		}
		return 1
	}
	return 0
}
