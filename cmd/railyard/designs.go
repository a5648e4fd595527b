package main

import (
	"fmt"
	"io"

	"railyard/designs"
)

const designsUsage = `
usage: railyard designs

List the designs embedded in railyard, one a line: the name to give as
demo:NAME, and its one-line description.

examples:
  railyard designs
  railyard run demo:` + designs.Default + `
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
	list := designs.List()
	width := 0
	for _, e := range list {
		width = max(width, len(e.Name))
	}
	for _, e := range list {
		fmt.Fprintf(stdout, "%-*s  %s\n", width, e.Name, e.Desc)
	}
	return exitOK
}
