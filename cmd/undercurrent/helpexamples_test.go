package main

import (
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// The examples in every command's help run as written from the repository
// root once the README's commands have run: each file an example reads is
// in the repository, or is written by a README command, by a command the
// help text quotes, or by an earlier example (commands in alphabetical
// order, examples in order); names beginning "your-" stand for the user's
// own files, and the help says so.

// helpWords splits a command line as a POSIX shell would for the simple
// lines of the help texts: words, double-quoted words, and "> FILE".
func helpWords(line string) (words []string, redirect string) {
	var cur strings.Builder
	in, quoted := false, false
	flush := func() {
		if in {
			words = append(words, cur.String())
		}
		cur.Reset()
		in = false
	}
	for _, r := range line {
		switch {
		case r == '"':
			quoted = !quoted
			in = true
		case (r == ' ' || r == '\t') && !quoted:
			flush()
		default:
			cur.WriteRune(r)
			in = true
		}
	}
	flush()
	for i, w := range words {
		if w == ">" && i+1 < len(words) {
			return words[:i], words[i+1]
		}
	}
	return words, ""
}

// fileLike matches a word that names a file by its extension.
var fileLike = regexp.MustCompile(`^[^=,:\[\]]+\.(csv|txt|json|toml|arrow|arrows|feather|ipc|parquet|pq|min|sec|html|geojson)$`)

// exampleLines returns the lines of the help text's Examples section.
func exampleLines(help string) []string {
	var out []string
	in := false
	for _, l := range strings.Split(help, "\n") {
		switch {
		case strings.HasPrefix(l, "Examples"):
			in = true
		case strings.HasPrefix(l, "Flags:"):
			in = false
		case in && strings.HasPrefix(strings.TrimSpace(l), "undercurrent "):
			out = append(out, strings.TrimSpace(l))
		}
	}
	return out
}

// quotedCommands returns the commands a help text quotes in its prose
// ("undercurrent simulate ... -o two.csv").
func quotedCommands(help string) []string {
	flat := strings.Join(strings.Fields(help), " ")
	var out []string
	for _, m := range regexp.MustCompile(`"(undercurrent [a-z]+ [^"]+)"`).FindAllStringSubmatch(flat, -1) {
		out = append(out, m[1])
	}
	return out
}

// readmeCommands returns the undercurrent command lines of README.md's
// shell blocks.
func readmeCommands(t *testing.T, readme string) []string {
	t.Helper()
	var out []string
	in := false
	for _, l := range strings.Split(readme, "\n") {
		switch {
		case strings.HasPrefix(l, "```sh"):
			in = true
		case strings.HasPrefix(l, "```"):
			in = false
		case in:
			if w := strings.Fields(l); len(w) > 1 && w[0] == "undercurrent" {
				out = append(out, strings.TrimSuffix(strings.TrimSpace(l), " &"))
			}
		}
	}
	if len(out) < 3 {
		t.Fatalf("README.md: found %d undercurrent commands in its shell blocks", len(out))
	}
	return out
}

// parsedExample is a command line parsed with its command's own flags.
type parsedExample struct {
	cmd             *command
	args            []string // after the command's name
	inputs, outputs []string
}

// parseExample parses an example with the command's flag set: an unknown
// flag or a bad value fails as it would on the command line.
func parseExample(t *testing.T, line string) *parsedExample {
	t.Helper()
	words, redirect := helpWords(line)
	if len(words) < 2 || words[0] != "undercurrent" {
		t.Fatalf("%q: not an undercurrent command", line)
	}
	name := words[1]
	if name == "--version" {
		name = "version"
	}
	c, ok := commands[name]
	if !ok {
		t.Fatalf("%q: unknown command %q", line, name)
	}
	fs := c.flagSet(io.Discard)
	if err := fs.Parse(words[2:]); err != nil {
		t.Fatalf("%q: %v", line, err)
	}
	p := &parsedExample{cmd: c, args: words[2:]}
	for in := range inputPaths(name, fs, fs.Args()) {
		if fileLike.MatchString(in) {
			p.inputs = append(p.inputs, in)
		}
	}
	p.outputs = outputPaths(name, fs, fs.Args())
	if name == "demo" {
		dir := fs.Lookup("output").Value.String()
		p.outputs = append(p.outputs, filepath.Join(dir, demoLog))
	}
	if redirect != "" {
		p.outputs = append(p.outputs, redirect)
	}
	return p
}

// knownMissing are files that examples outside this check's reach still
// name (none now: serve's examples name the bundled site file).
var knownMissing = map[string]string{}

func TestHelpExamplesNameFilesThatExist(t *testing.T) {
	root, err := filepath.Abs(filepath.Join("..", ".."))
	if err != nil {
		t.Fatal(err)
	}
	readme, err := os.ReadFile(filepath.Join(root, "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	written := map[string]bool{}
	for _, l := range readmeCommands(t, string(readme)) {
		for _, o := range parseExample(t, l).outputs {
			written[filepath.Clean(o)] = true
		}
	}
	helps := map[string]string{}
	for _, c := range sortedCommands() {
		var b strings.Builder
		c.printHelp(&b, c.flagSet(io.Discard))
		helps[c.name] = b.String()
		for _, q := range quotedCommands(b.String()) {
			for _, o := range parseExample(t, q).outputs {
				written[filepath.Clean(o)] = true
			}
		}
	}
	for _, c := range sortedCommands() {
		lines := exampleLines(helps[c.name])
		if len(lines) == 0 {
			t.Errorf("%s: no examples in its help", c.name)
		}
		for _, l := range lines {
			p := parseExample(t, l)
			for _, in := range p.inputs {
				in = filepath.Clean(in)
				if written[in] || strings.HasPrefix(filepath.Base(in), "your-") || knownMissing[in] == c.name {
					continue
				}
				// A file beside the repository is absent from a fresh
				// clone (convert and inspect named ../shared/data/iaga2002,
				// found in review).
				if in == ".." || strings.HasPrefix(in, "../") || filepath.IsAbs(in) {
					t.Errorf("%s example %q: %s lies outside the repository", c.name, l, in)
					continue
				}
				if _, err := os.Stat(filepath.Join(root, in)); err != nil {
					t.Errorf("%s example %q: %s is neither in the repository nor written by a README command or an earlier example", c.name, l, in)
				}
			}
			for _, o := range p.outputs {
				written[filepath.Clean(o)] = true
			}
		}
	}
}

// TestHelpExamplesRun runs the README walk-through's first commands and
// then every example of the commands that work on files alone and are
// quick (calibrate, convert, inspect, simulate), as written, in a copy of
// the repository root's layout (testdata alone, nothing beside it, as in
// a fresh clone).
func TestHelpExamplesRun(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the examples")
	}
	root, err := filepath.Abs(filepath.Join("..", ".."))
	if err != nil {
		t.Fatal(err)
	}
	readme, err := os.ReadFile(filepath.Join(root, "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	base := t.TempDir()
	work := filepath.Join(base, "repo")
	if err := os.Mkdir(work, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(root, "testdata"), filepath.Join(work, "testdata")); err != nil {
		t.Fatal(err)
	}
	t.Chdir(work)
	runLine := func(what, l string) string {
		t.Helper()
		p := parseExample(t, l)
		args := append([]string{p.cmd.name}, p.args...)
		code, _, errOut := cli(t, args...)
		if code != 0 {
			t.Errorf("%s %q: exit %d\n%s", what, l, code, errOut)
		}
		return errOut
	}
	// The walk-through's logs and calibration: its first three lines, the
	// first README commands that name no file of the user's own ("Your
	// own log" comes before the walk-through).
	var walk []string
	for _, l := range readmeCommands(t, string(readme)) {
		if !strings.Contains(l, " your-") {
			walk = append(walk, l)
		}
	}
	if len(walk) < 3 || !strings.HasPrefix(walk[0], "undercurrent simulate ") {
		t.Fatalf("README: the walk-through's commands %q do not start with its simulate lines", walk)
	}
	for _, l := range walk[:3] {
		runLine("README", l)
	}
	for _, name := range []string{"calibrate", "convert", "inspect", "simulate"} {
		var b strings.Builder
		c := commands[name]
		c.printHelp(&b, c.flagSet(io.Discard))
		for _, l := range exampleLines(b.String()) {
			errOut := runLine(name+" example", l)
			// A calibration example shows good practice, so it draws no
			// warning of its own: a flip about an axis along the field,
			// say, would teach what the warning advises against.
			if name == "calibrate" && strings.Contains(errOut, "warning:") {
				t.Errorf("calibrate example %q warns:\n%s", l, errOut)
			}
		}
	}
}
