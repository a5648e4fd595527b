// Command railyard simulates pass-transistor and transmission-gate cells at
// switch level: batch runs with checks, static and exhaustive checks, trace
// replay, waveform export, and the interactive explorer.
//
// Each subcommand is one entry of the commands table: a name, a one-line
// summary and a function run(args, stdout, stderr) returning the exit code
// (0 success, 1 a check failed or a replay differed, 2 bad input).
package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/mattn/go-isatty"
)

// command is one subcommand.
type command struct {
	name    string
	summary string
	run     func(args []string, stdout, stderr io.Writer) int
}

// commands are listed by `railyard --help` in this order. Another file adds
// a command by defining its function and naming it here.
var commands = []command{
	{"run", "settle each step of a design and report its checks", cmdRun},
	{"check", "static checks, and every reachable state with --exhaustive; many designs at once", cmdCheck},
	{"replay", "re-run a saved trace and compare every result", cmdReplay},
	{"convert", "write a netlist (or any design) as a flat .sw design", cmdConvert},
	{"export", "write a testbench deck for a circuit simulator from a design and its steps", cmdExport},
	{"designs", "list the embedded demo designs", cmdDesigns},
	{"explore", "the interactive explorer", cmdExplore},
	{"serve", "serve the explorer over SSH", cmdServe},
}

// Exit codes (switchsim/FORMATS.md).
const (
	exitOK    = 0
	exitFail  = 1
	exitUsage = 2
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// run is the whole program with its streams given, so tests call it directly.
func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		if isTerminal(stdout) {
			return cmdExplore(nil, stdout, stderr)
		}
		return batchDefault(stdout, stderr)
	}
	name := args[0]
	switch name {
	case "-h", "-help", "--help", "help":
		if len(args) > 1 && name == "help" {
			if c := lookup(args[1]); c != nil {
				return c.run([]string{"--help"}, stdout, stderr)
			}
		}
		topUsage(stdout)
		return exitOK
	}
	if c := lookup(name); c != nil {
		return c.run(args[1:], stdout, stderr)
	}
	if strings.HasPrefix(name, "-") {
		fmt.Fprintf(stderr, "railyard: flag %s needs a command first\n", name)
	} else {
		fmt.Fprintf(stderr, "railyard: unknown command %q\n", name)
	}
	fmt.Fprintf(stderr, "run 'railyard --help' for the commands\n")
	return exitUsage
}

func lookup(name string) *command {
	for i := range commands {
		if commands[i].name == name {
			return &commands[i]
		}
	}
	return nil
}

func topUsage(w io.Writer) {
	fmt.Fprintf(w, `railyard: switch-level simulation of pass-transistor and transmission-gate cells

usage: railyard [COMMAND [ARGS]]

With no command, railyard opens the explorer on the demo design when its
output is a terminal, and prints the demo's batch report otherwise.

commands:
`)
	for _, c := range commands {
		fmt.Fprintf(w, "  %-8s %s\n", c.name, c.summary)
	}
	fmt.Fprintf(w, `
DESIGN is a design file (.sw), a transistor netlist (.sp .spice .cir .cdl
.net .ckt), an IEEE 1364 switch-level module (.v .vg), or demo:NAME for an
embedded design; --format sw|netlist|verilog overrides the extension.
Exit codes: 0 success, 1 a check failed (or a replay differed), 2 bad input.

Run 'railyard COMMAND --help' for a command's flags and examples.
`)
}

// isTerminal reports whether w is a terminal.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	return isatty.IsTerminal(f.Fd()) || isatty.IsCygwinTerminal(f.Fd())
}

// flags is a command's flag set with its usage text (with examples).
type flags struct {
	*flag.FlagSet
	usage string
}

// newFlags makes a command's flag set. The flag package prints nothing
// itself: parseArgs prints --help to stdout and errors to stderr.
func newFlags(name, usage string) *flags {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	fs.Usage = func() {}
	return &flags{fs, usage}
}

// printUsage writes a command's usage text and its flags.
func (fs *flags) printUsage(w io.Writer) {
	fmt.Fprint(w, strings.TrimLeft(fs.usage, "\n"))
	n := 0
	fs.VisitAll(func(*flag.Flag) { n++ })
	if n > 0 {
		fmt.Fprintln(w, "\nflags:")
		fs.SetOutput(w)
		fs.PrintDefaults()
		fs.SetOutput(io.Discard)
	}
}

// parseArgs parses flags wherever they stand among the arguments (so that
// `run demo:x --json` works) and returns the positional arguments. Every
// argument after "--" is positional. code is -1 to go on, or the exit code
// to return: 0 after --help, 2 after a usage error.
func parseArgs(fs *flags, args []string, stdout, stderr io.Writer) (pos []string, code int) {
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				fs.printUsage(stdout)
				return nil, exitOK
			}
			return nil, usageError(stderr, fs.Name(), "%v", err)
		}
		rest := fs.Args()
		if len(rest) == 0 {
			return pos, -1
		}
		if used := len(args) - len(rest); used > 0 && args[used-1] == "--" {
			return append(pos, rest...), -1
		}
		pos = append(pos, rest[0])
		args = rest[1:]
	}
}

// usageError reports a wrong use of a command.
func usageError(stderr io.Writer, name, format string, a ...any) int {
	fmt.Fprintf(stderr, "railyard %s: %s\n", name, fmt.Sprintf(format, a...))
	fmt.Fprintf(stderr, "run 'railyard %s --help' for usage\n", name)
	return exitUsage
}

// loadError prints an error from reading a design, steps or trace file. The
// readers' errors are already FILE:LINE:COL: message lines, printed as they
// are so that tools can jump to them.
func loadError(stderr io.Writer, err error) int {
	fmt.Fprintln(stderr, strings.TrimRight(err.Error(), "\n"))
	return exitUsage
}
