package session

import (
	"fmt"
	"strconv"
	"strings"
)

// ActionString words an action the way traces and reports write it:
// "set a=1", `step 2 "label" a=1 b=0 | y=1`, "start", "back".
func (s *Session) ActionString(a Action) string {
	nl := s.Netlist()
	switch a.Kind {
	case Set:
		return fmt.Sprintf("set %s=%s", nl.DisplayName(a.Node), a.Drive)
	case Step:
		var b strings.Builder
		fmt.Fprintf(&b, "step %d %s", a.Step+1, strconv.Quote(a.Label))
		for _, in := range a.Drives {
			fmt.Fprintf(&b, " %s=%s", nl.DisplayName(in.Node), in.Drive)
		}
		b.WriteString(" |")
		for c, n := range a.Nodes {
			if c < len(a.Checks) {
				fmt.Fprintf(&b, " %s=%s", nl.DisplayName(n), a.Checks[c])
			}
		}
		return b.String()
	}
	return a.Kind.String()
}

func passFail(b bool) string {
	if b {
		return "pass"
	}
	return "FAIL"
}
