package main

import (
	"fmt"
	"strings"
	"testing"
)

// railyard run on the static latch's hold race (testdata/static_latch_race.steps:
// clk and d lowered together from clk=1 d=1): a race on the storage node s,
// decided in at most 2 x nodes + 4 rounds (8 nodes: 20), and no oscillation,
// in both modes (the done-when; Eichelberger 1965 for what a race is).
func TestRunStaticLatchHoldRace(t *testing.T) {
	for _, extra := range [][]string{nil, {"--ideal"}} {
		args := append([]string{"run", "demo:static_latch", "--steps", "testdata/static_latch_race.steps"}, extra...)
		code, out, errs := call(args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s%s", args, code, out, errs)
		}
		if !strings.Contains(out, "warn   race: s is X: clk and d changed together and the result depends on their order") {
			t.Errorf("%v: no race on s:\n%s", args, out)
		}
		if strings.Contains(out, "oscillation") {
			t.Errorf("%v: an oscillation reported:\n%s", args, out)
		}
		var rounds int
		for _, line := range strings.Split(out, "\n") {
			if strings.HasPrefix(line, "step 2") {
				if _, err := fmt.Sscanf(line[strings.LastIndex(line, ":")+1:], " %d rounds", &rounds); err != nil {
					t.Fatalf("step 2 line %q: %v", line, err)
				}
			}
		}
		if rounds == 0 || rounds > 2*8+4 {
			t.Errorf("%v: step 2 took %d rounds, want 1 to 20", args, rounds)
		}
	}
}
