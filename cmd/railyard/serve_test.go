package main

import (
	"strings"
	"testing"
)

func TestServeLimitFlags(t *testing.T) {
	code, out, _ := call("serve", "--help")
	if code != 0 {
		t.Fatalf("serve --help: exit %d", code)
	}
	// The documented defaults (README: serving over SSH).
	for _, want := range []string{"-max-pending N", "(default 64)", "-max-pending-per-addr N", "(default 16)",
		"-handshake-timeout D", "(default 30s)"} {
		if !strings.Contains(out, want) {
			t.Errorf("serve --help does not show %q", want)
		}
	}
	for _, bad := range [][]string{
		{"--max-pending", "0"}, {"--max-pending", "-3"},
		{"--max-pending-per-addr", "0"},
		{"--handshake-timeout", "0s"}, {"--handshake-timeout", "-1s"},
	} {
		args := append([]string{"serve", "--designs", t.TempDir(), "--no-auth", "--listen", "127.0.0.1:0"}, bad...)
		code, out, errOut := call(args...)
		if code != 2 || !strings.Contains(errOut, bad[0]) || out != "" {
			t.Errorf("serve %s %s: exit %d, stdout %q, stderr %q; want 2 and a message naming the flag",
				bad[0], bad[1], code, out, errOut)
		}
	}
}
