package sshserve

import (
	"strings"
	"testing"

	gossh "golang.org/x/crypto/ssh"
)

// titleSeq sets a terminal's window title (an OSC 0 sequence, ECMA-48 and
// common practice for xterm-like terminals): the kind of string a client or
// a file could use to drive the screen of whoever reads it.
const titleSeq = "\x1b]0;x\x07"

// rawControl reports whether s holds a control byte other than newline,
// carriage return or tab.
func rawControl(s string) bool {
	for _, r := range s {
		if (r < 0x20 && r != '\n' && r != '\r' && r != '\t') || r == 0x7f || (r >= 0x80 && r < 0xa0) {
			return true
		}
	}
	return false
}

// logIsPrintableJSON checks that every log line is a JSON object (logRecords
// fails on any that is not) whose strings hold no raw control codes.
func (ts *testServer) logIsPrintableJSON(t *testing.T) {
	t.Helper()
	for _, rec := range logRecords(t, ts.log.String()) {
		for k, v := range rec {
			if s, ok := v.(string); ok && rawControl(s) {
				t.Errorf("log field %s holds raw control codes: %q", k, s)
			}
		}
	}
}

func TestUserNameWithControlCodesIsLoggedPrintable(t *testing.T) {
	ts := startServer(t, 1)
	// With a listed key: refused for the name, and logged.
	if c, err := ts.dial(titleSeq, gossh.PublicKeys(ts.keys[0])); err == nil {
		c.Close()
		t.Fatal("a user name with control codes was let in")
	}
	r := ts.waitLog(t, "auth refused", map[string]any{"user": `\x1b]0;x\x07`})
	if !strings.Contains(r["reason"].(string), "user name") {
		t.Errorf("the refusal does not say it is the name: %v", r)
	}
	ts.logIsPrintableJSON(t)
}

func TestUserNameWithControlCodesWithoutAuth(t *testing.T) {
	// Without authentication the name reaches the session log and the
	// refusal the client reads.
	ts := startServer(t, 0, func(c *Config) { c.NoAuth, c.AuthorizedKeys = true, "" })
	ts.writeDesign(t, "opsel.sw", opsel)
	c, err := ts.dial(titleSeq)
	must(t, err)
	tm, err := startTerm(t, c, "opsel", 80, 24, true)
	must(t, err)
	if st := tm.exit(); st != 1 {
		t.Fatalf("exit status %d, want 1", st)
	}
	if out := tm.out.String(); strings.Contains(out, "\x1b]0;") || strings.Contains(out, "\x07") {
		t.Errorf("the refusal sent the control codes back: %q", out)
	}
	ts.waitLog(t, "session start", map[string]any{"user": `\x1b]0;x\x07`})
	ts.waitLog(t, "session end", map[string]any{"user": `\x1b]0;x\x07`, "reason": "bad user name"})
	ts.logIsPrintableJSON(t)
}

func TestPickerShowsFileNamesPrintable(t *testing.T) {
	// U+202E reverses the text after it on a terminal that honours it; it
	// is not a control character to the name check, but it must not be
	// shown raw.
	ts := startServer(t, 1)
	ts.writeDesign(t, "cell\u202egol.sw", opsel)
	tm := ts.open(t, ts.keys[0], "alice", "", 80, 24)
	tm.waitFor(`cell\u202egol`)
	if strings.Contains(tm.out.String(), "\u202e") {
		t.Errorf("the picker drew U+202E raw")
	}
	tm.send("\r") // the name chosen is the file's own
	tm.waitFor("fake explorer on cell\u202egol")
	id := tm.sessionID()
	v := ts.open(t, ts.keys[0], "bob", "join "+id, 100, 30)
	v.waitFor(`alice · cell\u202egol · read-only`)
	// The host's own frame is the fake explorer's, which draws the name raw;
	// the viewer's status line is the server's own and must not.
	if status := strings.SplitN(v.out.String(), "watching session", 2); len(status) == 2 &&
		strings.Contains(strings.SplitN(status[1], "\n", 2)[0], "\u202e") {
		t.Errorf("the viewer's status line drew U+202E raw")
	}
	r := ts.waitLog(t, "design opened", map[string]any{"user": "alice"})
	if r["design"] != `cell\u202egol` {
		t.Errorf("design logged as %q, want it printable", r["design"])
	}
}
