package main

// Every demo states its exhaustive verdict in a header comment line,
// "exhaustive: RESULT" (and "exhaustive --pairs: RESULT" where it says what
// pairs add); this test runs `check demo:NAME --exhaustive` (with --pairs
// for the second) and compares the result line with it, so that the header
// and the verdict cannot drift apart. Exit status 1 goes with FAIL, 0 with
// PASS (switchsim/FORMATS.md's check contract).

import (
	"regexp"
	"strings"
	"testing"

	"railyard/designs"
)

var verdictLine = regexp.MustCompile(`(?m)^(?:#|//|\*) exhaustive( --pairs)?: (.+)$`)

func TestDemoHeadersStateTheExhaustiveVerdict(t *testing.T) {
	for _, e := range designs.All() {
		src, err := designs.FS.ReadFile(e.File)
		if err != nil {
			t.Fatal(err)
		}
		heads := verdictLine.FindAllStringSubmatch(string(src), -1)
		if len(heads) == 0 {
			t.Errorf("%s: no header line \"exhaustive: RESULT\"", e.File)
			continue
		}
		for _, h := range heads {
			args := []string{"check", "demo:" + e.Name, "--exhaustive"}
			if h[1] != "" {
				args = append(args, "--pairs")
			}
			code, out, errs := call(args...)
			want := strings.TrimSpace(h[2])
			got := ""
			for _, l := range strings.Split(out, "\n") {
				if r, ok := strings.CutPrefix(l, "result: "); ok {
					got = r
				}
			}
			wantCode := 0
			if strings.HasPrefix(want, "FAIL") {
				wantCode = 1
			}
			if got != want || code != wantCode {
				t.Errorf("%s %v: result %q exit %d, the header says %q (exit %d)%s", e.File, args[2:], got, code, want, wantCode, errs)
			}
		}
	}
}
