package main

import (
	"fmt"
	"io"
)

const serveUsage = `
usage: railyard serve [...]

Serve the explorer over SSH. Not built yet.
`

// cmdServe is a placeholder: the SSH server is its own piece of work and
// replaces this file.
func cmdServe(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("serve", serveUsage)
	if _, code := parseArgs(fs, args, stdout, stderr); code >= 0 {
		return code
	}
	fmt.Fprintln(stderr, "railyard serve: not built yet")
	return exitUsage
}
