package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"sort"
	"strings"
	"syscall"

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
	// outDir says that --output names a result directory the run
	// replaces whole (stageDir): runCommand holds its lock (outlock.go)
	// for the whole run, so that a second run naming it is refused.
	outDir bool
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
	// pflag calls Usage only for -h and --help, which runCommand answers
	// on stdout (help asked for is output, so that "locate --help | less"
	// works); a usage error prints its message and a pointer to the help
	// on stderr.
	fs.Usage = func() {}
	return fs
}

// helpWidth is the width the flags' descriptions are wrapped to in the
// help (pflag's FlagUsagesWrapped): unwrapped, locate's ran to 500
// characters on one line (found in review).
const helpWidth = 100

func (c *command) printHelp(w io.Writer, fs *pflag.FlagSet) {
	fmt.Fprintf(w, "usage: %s\n\n%s\n", strings.TrimSpace("undercurrent "+c.name+" "+c.usage), c.summary)
	if c.long != "" {
		fmt.Fprintf(w, "\n%s\n", strings.TrimRight(c.long, "\n"))
	}
	if fs.HasFlags() {
		fmt.Fprintf(w, "\nFlags:\n%s", fs.FlagUsagesWrapped(helpWidth))
	}
	switch c.name {
	case "serve", "version":
	case "simulate":
		fmt.Fprintf(w, "\n%s\n", simulateInterruptHelp)
	case "replay":
		fmt.Fprintf(w, "\n%s\n", replayInterruptHelp)
	default:
		fmt.Fprintf(w, "\n%s\n", interruptHelp)
	}
	if c.name == "serve" || c.name == "replay" {
		fmt.Fprintf(w, "\n%s\n", brokerExitHelp)
	} else {
		fmt.Fprintf(w, "\n%s\n", exitHelp)
	}
}

// interruptHelp says what Ctrl-C does (serve documents its own draining).
const interruptHelp = `Ctrl-C (SIGINT) or SIGTERM stops the command at the next stage (between
batches while reading, or at once while a read waits on an idle input
pipe); it prints "interrupted", writes no output (files
and directories appear whole or not at all) and exits with status 130
(SIGINT) or 143 (SIGTERM).` + "\n" + tempHelp

// simulateInterruptHelp is interruptHelp for simulate, which reads no log.
const simulateInterruptHelp = `Ctrl-C (SIGINT) or SIGTERM stops the command before it writes anything; it
prints "interrupted", writes no output (each file appears whole or not at
all) and exits with status 130 (SIGINT) or 143 (SIGTERM).` + "\n" + tempHelp

// replayInterruptHelp is interruptHelp for replay, whose output is broker
// messages: those sent before the interrupt are not withdrawn.
const replayInterruptHelp = `Ctrl-C (SIGINT) or SIGTERM stops the replay between batches; it prints
"interrupted", how many batches were stored and up to which time, and
exits with status 130 (SIGINT) or 143 (SIGTERM). The batches sent before
the interrupt stay in the broker and are processed: run the same replay
again with --resume to send the rest (without it, the broker drops the
repeated batches only within two minutes; later the repeats are stored
again and the pipeline refuses them as late).`

// brokerExitHelp is exitHelp for serve and replay, which write no files.
const brokerExitHelp = `Exit status: 0 on success; 1 on failure (a site file or log that cannot be
read or used, a broker that cannot be reached or refuses); 2 on a usage
error: a bad flag, flag value or argument, found before any work is done.`

// tempHelp says what becomes of the temporary names outputs are written
// under when a run is killed outright (see removeStaleTemps).
const tempHelp = `A run killed outright (kill -9, a power cut) can leave a hidden
temporary file or directory (.NAME.tmp..., .NAME.old-...) beside an
output NAME; the next run writing NAME removes those untouched for an hour.
A result directory NAME missing beside a .NAME.old-... (a run killed while
replacing it, where the two are not swapped in one step) is put back from
it first, with a warning.`

// exitHelp lists the exit statuses.
const exitHelp = `Exit status: 0 on success; 1 on failure (input that cannot be read or
used, a write that fails); 2 on a usage error: a bad flag, flag value or
argument, including an output location that cannot be used (an output
file's directory that does not exist or cannot be written in, an output
name that is a symbolic link to nothing, -o DIR naming a file or a directory
holding files undercurrent did not write, an existing file that simulate or
convert would replace without --force), found before any work is done.`

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
	fmt.Fprintf(w, "Ctrl-C (SIGINT) or SIGTERM stops a command at the next stage and writes no output: exit status 130 (143 for SIGTERM).\n")
	fmt.Fprintf(w, "Exit status 1 is a failure, 2 a usage error (a bad flag, flag value, argument or output location).\n")
	fmt.Fprintf(w, "Start with \"undercurrent demo\" to run the whole job on a bundled example.\n")
}

// run parses args, runs the selected command and returns the exit status.
// A write to stdout that fails (a full disk under "> run.txt", /dev/full,
// a closed descriptor) makes a successful run exit with status 1 and say
// so: before, a command's text (inspect's report, locate's summary,
// calibrate's statistics, version) was lost with status 0.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	out := &latchWriter{w: stdout}
	code := runCommand(ctx, args, out, stderr)
	if out.err != nil && code == 0 {
		name := "undercurrent"
		if len(args) > 0 && commands[args[0]] != nil {
			name += " " + args[0]
		}
		fmt.Fprintf(stderr, "%s: writing the output: %v\n", name, out.err)
		return 1
	}
	return code
}

// latchWriter passes writes to w until one fails, then keeps that error
// and refuses every later write with it.
type latchWriter struct {
	w   io.Writer
	err error
}

func (l *latchWriter) Write(p []byte) (int, error) {
	if l.err != nil {
		return 0, l.err
	}
	n, err := l.w.Write(p)
	if err == nil && n < len(p) {
		err = io.ErrShortWrite
	}
	l.err = err
	return n, err
}

// runCommand is run without the check of the writes to stdout.
func runCommand(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		printCommands(stderr)
		return 2
	}
	name := args[0]
	if name == "--version" || name == "-version" {
		name = "version"
	}
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
	out := &countWriter{w: stdout}
	stdout = out
	if err := fs.Parse(args[1:]); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			c.printHelp(stdout, fs)
			return 0
		}
		fmt.Fprintf(stderr, "undercurrent %s: %v\n", name, err)
		fmt.Fprintf(stderr, "run \"undercurrent help %s\" for usage\n", name)
		if wantsJSON(fs, args[1:]) {
			writeJSONError(stdout, name, "usage", err.Error(), "", err)
		}
		return 2
	}
	asJSON := wantsJSON(fs, nil)
	// A second run writing the same result directory is refused before
	// it touches anything (outlock.go).
	if c.outDir {
		if f := fs.Lookup("output"); f != nil && f.Value.String() != "" {
			// An output location that cannot be used is a usage error,
			// said before the lock file is made beside it.
			if err := checkOutPlace(f.Value.String()); err != nil {
				fmt.Fprintf(stderr, "undercurrent %s: %v\n", name, err)
				fmt.Fprintf(stderr, "run \"undercurrent help %s\" for usage\n", name)
				if asJSON {
					writeJSONError(stdout, name, "usage", err.Error(), "", nil)
				}
				return 2
			}
			unlock, err := lockOutDir(f.Value.String())
			if err != nil {
				fmt.Fprintf(stderr, "undercurrent %s: %v\n", name, err)
				if asJSON {
					writeJSONError(stdout, name, "output", err.Error(), f.Value.String(), nil)
				}
				return 1
			}
			defer unlock()
		}
	}
	// Temporary files that a run killed outright (kill -9, a power cut)
	// left beside this run's outputs are removed once stale.
	// An earlier result directory that a run killed while replacing it
	// left hidden is put back first (restoreOldDirs).
	restoreOldDirs(outputPaths(name, fs, fs.Args()), stderr)
	removeStaleTemps(outputPaths(name, fs, fs.Args()))
	if err := checkPipes(name, logPaths(name, fs, fs.Args())); err != nil {
		fmt.Fprintf(stderr, "undercurrent %s: %v\n", name, err)
		if asJSON {
			writeJSONError(stdout, name, "input", err.Error(), "", err)
		}
		return 1
	}
	if err := c.run(ctx, fs, fs.Args(), stdout, stderr); err != nil {
		if ctx.Err() != nil && isInterrupt(err) {
			var ni *notedInterrupt
			msg := "interrupted"
			if errors.As(err, &ni) {
				msg += ": " + ni.note
			}
			fmt.Fprintf(stderr, "undercurrent %s: %s\n", name, msg)
			if asJSON && out.n == 0 {
				writeJSONError(stdout, name, "interrupted", msg, "", nil)
			}
			return interruptStatus(ctx)
		}
		msg := cleanMessage(name, fs.Args(), readErrorWording(err, inputPaths(name, fs, fs.Args())))
		fmt.Fprintf(stderr, "undercurrent %s: %s\n", name, msg)
		var we *warnedError
		if errors.As(err, &we) {
			// What was noticed before the failure, often its explanation,
			// after the error (whose line stays the first).
			for _, w := range we.warnings {
				fmt.Fprintf(stderr, "warning: %s\n", w)
			}
		}
		var ue *usageError
		isUsage := errors.As(err, &ue)
		if asJSON && out.n == 0 {
			// Nothing was printed on stdout: the failure is said there
			// as one JSON object (with something printed, another
			// object would only spoil it).
			kind, file := errorKind(err, isUsage, outputPaths(name, fs, fs.Args()))
			writeJSONError(stdout, name, kind, msg, file, err)
		}
		if isUsage {
			fmt.Fprintf(stderr, "run \"undercurrent help %s\" for usage\n", name)
			return 2
		}
		return 1
	}
	return 0
}

// readErrorWording returns err's message with an input file that cannot
// be opened or read worded one way, "FILE: cannot read: REASON", whether
// the failure was reported by ingest ("FILE: cannot open: REASON") or by
// the operating system ("open FILE: REASON", "read FILE: is a
// directory"). Only the files in inputs (the command's input paths) are
// reworded: an output that cannot be opened is a failed write, not a read.
func readErrorWording(err error, inputs map[string]bool) string {
	msg := err.Error()
	var pe *fs.PathError
	if errors.As(err, &pe) && (pe.Op == "open" || pe.Op == "read") && inputs[pe.Path] {
		if i := strings.Index(msg, pe.Error()); i >= 0 {
			msg = msg[:i] + pe.Path + ": cannot read: " + pe.Err.Error() + msg[i+len(pe.Error()):]
		}
	}
	return strings.Replace(msg, ": cannot open: ", ": cannot read: ", 1)
}

// outputFlags are the flags that name files or directories a command
// writes; every other flag's value and every argument but convert's OUT
// may name an input.
var outputFlags = map[string]bool{"output": true, "base-log": true, "truth": true, "data": true}

// inputPaths returns the values of the flags given and the arguments that
// can name a command's input files.
func inputPaths(name string, flags *pflag.FlagSet, args []string) map[string]bool {
	in := map[string]bool{}
	flags.Visit(func(f *pflag.Flag) {
		if outputFlags[f.Name] {
			return
		}
		sl, ok := f.Value.(pflag.SliceValue)
		if !ok {
			in[f.Value.String()] = true
			return
		}
		// Each value of a flag given again (--base, --calibration), and
		// the file of a LOG=FILE (--calibration, perlog.go).
		for _, v := range sl.GetSlice() {
			in[v] = true
			if _, file, ok := strings.Cut(v, "="); ok && f.Name == "calibration" {
				in[file] = true
			}
		}
	})
	for i, a := range args {
		if name == "convert" && i == 1 {
			continue
		}
		in[a] = true
	}
	return in
}

// outputPaths returns the files and directories a command was asked to
// write.
func outputPaths(name string, flags *pflag.FlagSet, args []string) []string {
	var out []string
	for _, n := range []string{"output", "base-log", "truth"} {
		// The flag itself, not one whose name n is normalised to
		// (locate's --base-log is its input --base).
		if f := flags.Lookup(n); f != nil && f.Name == n && f.Value.String() != "" {
			out = append(out, f.Value.String())
		}
	}
	if name == "convert" && len(args) == 2 {
		out = append(out, args[1])
	}
	return out
}

// warnedError is an error that follows warnings gathered before it (a
// time column read as seconds that looked like milliseconds, then "above
// the Nyquist frequency"): the command prints them after the error.
type warnedError struct {
	err      error
	warnings []string
}

func (e *warnedError) Error() string { return e.err.Error() }
func (e *warnedError) Unwrap() error { return e.err }

// withWarnings returns err carrying warnings (err itself when there are
// none or err is nil).
func withWarnings(err error, warnings ...[]string) error {
	var all []string
	for _, w := range warnings {
		all = append(all, w...)
	}
	if err == nil || len(all) == 0 {
		return err
	}
	return &warnedError{err: err, warnings: all}
}

// notedInterrupt is an interruption with a note of what was done before
// it (replay: the batches stored), printed after "interrupted".
type notedInterrupt struct {
	err  error
	note string
}

func (e *notedInterrupt) Error() string { return e.err.Error() + ": " + e.note }
func (e *notedInterrupt) Unwrap() error { return e.err }

// signalCause is why the context ended when a signal arrived (see main).
type signalCause struct{ sig os.Signal }

func (s *signalCause) Error() string { return "interrupted by " + s.sig.String() }

// isInterrupt reports whether err is the end of the command's context.
func isInterrupt(err error) bool { return errors.Is(err, context.Canceled) }

// interruptStatus is the exit status of an interrupted command: 128 plus
// the signal's number (130 for SIGINT, 143 for SIGTERM), 130 when the
// context was cancelled otherwise.
func interruptStatus(ctx context.Context) int {
	var sc *signalCause
	if errors.As(context.Cause(ctx), &sc) {
		if n, ok := sc.sig.(syscall.Signal); ok {
			return 128 + int(n)
		}
	}
	return 130
}

// internalWords are the names of the library packages, which start their
// error messages ("ingest: ", "calibrate: "); the command's own prefix
// says as much, so they are dropped from what is printed.
var internalWords = map[string]bool{
	"ingest": true, "calibrate": true, "simulate": true, "live": true,
	"inverse": true, "report": true, "route": true,
}

// stageWords name internal steps in library messages; they are printed
// as the stage's name.
var stageWords = map[string]string{
	"demodulate": "AC demodulation",
	"tilt":       "tilt correction",
	"ellipsoid":  "ellipsoid fit",
}

// cleanMessage prepares an error message for printing after
// "undercurrent CMD: ": the library packages' prefixes and the command's
// own name are dropped, as are words repeated by wrapping, but never a
// part that is one of the command's arguments (a file named "report"), so
// file, line and column stay. The wording of ingest's refusal of missing
// values is fitted to the command.
func cleanMessage(cmd string, args []string, msg string) string {
	isArg := map[string]bool{}
	for _, a := range args {
		isArg[a] = true
	}
	parts := strings.Split(msg, ": ")
	var out []string
	for i, p := range parts {
		if i < len(parts)-1 && !isArg[p] {
			if internalWords[p] || p == cmd {
				continue
			}
			if w, ok := stageWords[p]; ok {
				p = w
			}
		}
		if len(out) > 0 && out[len(out)-1] == p {
			continue
		}
		out = append(out, p)
	}
	s := cliWording(strings.Join(out, ": "))
	const missing = "; missing values are not allowed by default"
	if strings.HasSuffix(s, missing) {
		s = strings.TrimSuffix(s, missing) + missingAdvice(cmd)
	}
	return s
}

// missingAdvice says how a command can take a log with missing values.
func missingAdvice(cmd string) string {
	switch cmd {
	case "convert":
		return "; --strict refuses missing values (without it they are carried over)"
	case "locate", "calibrate", "replay":
		return "; missing values are refused unless --drop-missing drops their rows"
	}
	return ""
}
