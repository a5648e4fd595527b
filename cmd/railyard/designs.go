package main

import (
	"fmt"
	"io"
	"path"

	"railyard/designs"
	"railyard/switchsim/load"
)

const designsUsage = `
usage: railyard designs

List the designs embedded in railyard, one a line: the name to give as
demo:NAME, and its one-line description; a demo that is a netlist says
its form (netlist cards, .sp; an IEEE 1364 module, .v).

examples:
  railyard designs
  railyard run demo:` + designs.Default + `
  railyard run demo:opsel_latch
  railyard convert demo:opsel_latch -o opsel_latch.sw
`

func cmdDesigns(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("designs", designsUsage)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) != 0 {
		return usageError(stderr, "designs", "takes no arguments, got %d", len(pos))
	}
	list := designs.All()
	width := 0
	for _, e := range list {
		width = max(width, len(e.Name))
	}
	for _, e := range list {
		desc := e.Desc
		if f, ok := load.FormatOf(e.File); ok && f.Name != "sw" {
			desc += " (" + f.Desc + ", " + path.Ext(e.File) + ")"
		}
		fmt.Fprintf(stdout, "%-*s  %s\n", width, e.Name, desc)
	}
	return exitOK
}
