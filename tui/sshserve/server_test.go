package sshserve

import (
	"crypto/sha256"
	"encoding/base64"
	"encoding/json"
	"log/slog"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	gossh "golang.org/x/crypto/ssh"
)

const opsel = "design opsel\ninput a b s\noutput y\n"

// fingerprint is OpenSSH's SHA256 form, computed here from its definition
// (base64 without padding of the SHA-256 of the key's wire form: common practice,
// as ssh-keygen -l prints it), not by the library the server uses.
func fingerprint(k gossh.PublicKey) string {
	sum := sha256.Sum256(k.Marshal())
	return "SHA256:" + base64.RawStdEncoding.EncodeToString(sum[:])
}

// logRecords parses the JSON log, one object a line.
func logRecords(t *testing.T, log string) []map[string]any {
	t.Helper()
	var out []map[string]any
	for _, line := range strings.Split(strings.TrimSpace(log), "\n") {
		if line == "" {
			continue
		}
		var m map[string]any
		if err := json.Unmarshal([]byte(line), &m); err != nil {
			t.Fatalf("log line is not JSON: %q", line)
		}
		out = append(out, m)
	}
	return out
}

// waitLog waits for a record with msg and the given fields.
func (ts *testServer) waitLog(t *testing.T, msg string, fields map[string]any) map[string]any {
	t.Helper()
	end := time.Now().Add(readDeadline)
	for time.Now().Before(end) {
	records:
		for _, r := range logRecords(t, ts.log.String()) {
			if r["msg"] != msg {
				continue
			}
			for k, v := range fields {
				if r[k] != v {
					continue records
				}
			}
			return r
		}
		time.Sleep(10 * time.Millisecond)
	}
	t.Fatalf("no log record %q with %v in:\n%s", msg, fields, ts.log.String())
	return nil
}

func TestAuthorisedKeySeesDesignAndIsLogged(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	tm.waitFor("fake explorer on opsel")
	tm.waitFor("size 80x24") // sized from the pty request
	tm.send("q")
	if st := tm.exit(); st != 0 {
		t.Fatalf("exit status %d after q, want 0", st)
	}
	r := ts.waitLog(t, "session end", map[string]any{"user": "alice", "design": "opsel"})
	if r["key"] != fingerprint(ts.keys[0].PublicKey()) {
		t.Errorf("logged key %v, want %s", r["key"], fingerprint(ts.keys[0].PublicKey()))
	}
	if d, ok := r["duration"].(string); !ok || d == "" {
		t.Errorf("session end has no duration: %v", r)
	} else if _, err := time.ParseDuration(d); err != nil {
		t.Errorf("duration %q does not parse: %v", d, err)
	}
	ts.waitLog(t, "session start", map[string]any{"user": "alice", "command": "opsel"})
}

func TestResizeFollowsTheClient(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	tm.waitFor("size 80x24")
	must(t, tm.sess.WindowChange(40, 120))
	tm.waitFor("size 120x40")
}

func TestRefusedWithoutAnAuthorisedKey(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	stranger := newSigner(t)
	cases := map[string][]gossh.AuthMethod{
		"unknown key": {gossh.PublicKeys(stranger)},
		"password":    {gossh.Password("secret")},
		"keyboard-interactive": {gossh.KeyboardInteractive(func(string, string, []string, []bool) ([]string, error) {
			return []string{"secret"}, nil
		})},
		"no key": nil,
	}
	for name, auth := range cases {
		c, err := ts.dial("alice", auth...)
		if err == nil {
			c.Close()
			t.Errorf("%s: connection accepted, want refused", name)
			continue
		}
		// x/crypto/ssh's wording for a failed authentication.
		if !strings.Contains(err.Error(), "unable to authenticate") {
			t.Errorf("%s: error %q, want an authentication failure", name, err)
		}
	}
	ts.waitLog(t, "auth refused", map[string]any{"key": fingerprint(stranger.PublicKey())})
}

func TestNoAuthOnlyOnLoopback(t *testing.T) {
	dir := t.TempDir()
	must(t, os.MkdirAll(filepath.Join(dir, "d"), 0o755))
	base := Config{NoAuth: true, HostKey: filepath.Join(dir, "hk"), Designs: filepath.Join(dir, "d"),
		Explorer: fakeExplorer, Demos: func() []string { return nil }}
	for _, addr := range []string{"0.0.0.0:2222", ":2222", "[::]:2222", "192.0.2.1:2222"} {
		cfg := base
		cfg.Listen = addr
		if _, err := New(cfg); err == nil || !strings.Contains(err.Error(), "loopback") {
			t.Errorf("--no-auth on %s: error %v, want a refusal naming loopback", addr, err)
		}
	}
	ts := startServer(t, 0, func(c *Config) { c.NoAuth, c.AuthorizedKeys = true, "" })
	ts.writeDesign(t, "opsel.sw", opsel)
	c, err := ts.dial("guest")
	if err != nil {
		t.Fatalf("--no-auth on loopback: %v", err)
	}
	tm, err := startTerm(t, c, "opsel", 80, 24, true)
	must(t, err)
	tm.waitFor("fake explorer on opsel")
}

func TestNamesStayInsideTheFolder(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	secret := filepath.Join(ts.dir, "secret.sw")
	must(t, os.WriteFile(secret, []byte("design topsecret\n"), 0o644))
	must(t, os.Symlink(secret, filepath.Join(ts.dir, "designs", "out.sw")))
	must(t, os.Symlink("../secret.sw", filepath.Join(ts.dir, "designs", "rel.sw")))
	// A design inside whose steps file points out is refused too.
	ts.writeDesign(t, "leaky.sw", opsel)
	must(t, os.Symlink(filepath.Join(ts.dir, "secret.sw"), filepath.Join(ts.dir, "designs", "leaky.steps")))
	must(t, os.Symlink("opsel.sw", filepath.Join(ts.dir, "designs", "alias.sw")))

	for _, name := range []string{"..", "../secret", "../secret.sw", secret, "/etc/passwd",
		filepath.Join(ts.dir, "designs", "opsel.sw"), "out", "rel.sw", "leaky", "sub/opsel", `..\secret`, ".hidden"} {
		tm := ts.open(t, ts.keys[0], "alice", shellQuote(name), 80, 24)
		if st := tm.exit(); st != 1 {
			t.Errorf("%q: exit status %d, want 1", name, st)
		}
		if out := tm.text(); strings.Contains(out, "fake explorer") || strings.Contains(out, "topsecret") {
			t.Errorf("%q was opened:\n%s", name, out)
		}
	}
	// A symlink that stays inside is fine.
	tm := ts.open(t, ts.keys[0], "alice", "alias", 80, 24)
	tm.waitFor("fake explorer on alias")
}

func shellQuote(s string) string { return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'" }

func TestDemoAndUnknownNames(t *testing.T) {
	ts := startServer(t, 1)
	tm := ts.open(t, ts.keys[0], "alice", "demo:shifter", 80, 24)
	tm.waitFor("fake explorer on demo:shifter")
	for _, name := range []string{"demo:nosuch", "nosuch", "join", "join nosuch", "a b"} {
		tm := ts.open(t, ts.keys[0], "alice", name, 80, 24)
		if st := tm.exit(); st != 1 {
			t.Errorf("%q: exit status %d, want 1", name, st)
		}
		if lines := strings.Count(strings.TrimSpace(tm.text()), "\n") + 1; lines != 1 {
			t.Errorf("%q: %d lines of error, want one:\n%s", name, lines, tm.text())
		}
	}
}

func TestNoPTYGetsOneLine(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	c, err := ts.dial("alice", gossh.PublicKeys(ts.keys[0]))
	must(t, err)
	tm, err := startTerm(t, c, "opsel", 0, 0, false)
	must(t, err)
	if st := tm.exit(); st != 1 {
		t.Fatalf("exit status %d, want 1", st)
	}
	out := strings.TrimSpace(tm.text())
	if strings.Contains(out, "\n") || !strings.Contains(out, "terminal") {
		t.Fatalf("want one line about the terminal, got %q", out)
	}
}

func TestMaxSessions(t *testing.T) {
	ts := startServer(t, 1, func(c *Config) { c.MaxSessions = 2 })
	ts.writeDesign(t, "opsel.sw", opsel)
	a := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	a.waitFor("fake explorer")
	b := ts.open(t, ts.keys[0], "bob", "opsel", 80, 24)
	b.waitFor("fake explorer")
	c := ts.open(t, ts.keys[0], "carol", "opsel", 80, 24)
	if st := c.exit(); st != 1 {
		t.Fatalf("third session: exit status %d, want 1", st)
	}
	if out := strings.TrimSpace(c.text()); !strings.Contains(out, "full") || strings.Contains(out, "\n") {
		t.Fatalf("third session: want one line saying the server is full, got %q", out)
	}
	a.send("q")
	a.exit()
	// The freed slot is taken again (the count drops once the handler returns).
	end := time.Now().Add(readDeadline)
	for ts.registry.Active() != 1 && time.Now().Before(end) {
		time.Sleep(5 * time.Millisecond)
	}
	d := ts.open(t, ts.keys[0], "dave", "opsel", 80, 24)
	d.waitFor("fake explorer")
}

func TestIdleTimeout(t *testing.T) {
	ts := startServer(t, 1, func(c *Config) { c.IdleTimeout = 400 * time.Millisecond })
	ts.writeDesign(t, "opsel.sw", opsel)
	busy := ts.open(t, ts.keys[0], "bob", "opsel", 80, 24)
	busy.waitFor("fake explorer")
	// The busy one types well within the timeout, from before the idle one
	// opens (opening takes a handshake, which on a loaded machine can take
	// longer than the timeout) to after it has been closed.
	stop := make(chan struct{})
	go func() {
		tick := time.NewTicker(40 * time.Millisecond)
		defer tick.Stop()
		for {
			select {
			case <-stop:
				return
			case <-tick.C:
				busy.in.Write([]byte("t"))
			}
		}
	}()
	defer close(stop)
	idle := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	idle.waitFor("fake explorer")
	if st := idle.exit(); st != 1 {
		t.Fatalf("idle session: exit status %d, want 1", st)
	}
	if !strings.Contains(idle.text(), "without input") {
		t.Fatalf("idle session: no message saying why:\n%s", idle.text())
	}
	select {
	case err := <-busy.done:
		t.Fatalf("the busy session was closed too: %v\n%s", err, busy.text())
	default:
	}
	ts.waitLog(t, "session end", map[string]any{"user": "alice", "reason": "idle"})
}

func TestSessionsDoNotShareState(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	a := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	b := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	a.waitFor("sel=0")
	b.waitFor("sel=0")
	a.send("t")
	a.waitFor("sel=1")
	b.send("t")
	b.waitFor("sel=1")
	b.send("t")
	b.waitCount("sel=0", 2) // b is back at 0 ...
	// ... and a's one toggle still stands: a drew 0 once (at start) and 1 once.
	b.send("q")
	b.exit()
	a.send("q")
	a.exit()
	if n := a.count("sel=0"); n != 1 {
		t.Errorf("a drew sel=0 %d times, want once (b's toggles reached a)", n)
	}
}

// idOf finds the session id in a banner.
var idPattern = regexp.MustCompile(`session ([a-z2-9]{6})`)

func (tm *term) sessionID() string {
	tm.t.Helper()
	tm.waitFor("others watch with")
	m := idPattern.FindStringSubmatch(tm.text())
	if m == nil {
		tm.t.Fatalf("no session id in:\n%s", tm.text())
	}
	return m[1]
}

func TestJoinedViewerSeesChangesAndChangesNothing(t *testing.T) {
	ts := startServer(t, 2)
	ts.writeDesign(t, "opsel.sw", opsel)
	h := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	id := h.sessionID()
	v := ts.open(t, ts.keys[1], "bob", "join "+id, 100, 30)
	v.waitFor("watching session " + id)
	v.waitFor("fake explorer on opsel")
	v.waitFor("sel=0")
	h.send("t")
	h.waitFor("sel=1")
	v.waitFor("sel=1") // the host's change reaches the viewer

	// Keys in the viewer: if any reached the host its toggle would flip.
	v.send("tttt\r p")
	time.Sleep(300 * time.Millisecond)
	h.send("t")
	h.waitCount("sel=0", 2)
	v.waitCount("sel=0", 2)
	if n := h.count("sel=1"); n != 1 {
		t.Errorf("host drew sel=1 %d times, want once: the viewer's keys reached it", n)
	}
	if strings.Contains(ts.log.String(), "panic") {
		t.Errorf("the viewer's p reached a model:\n%s", ts.log.String())
	}
	h.send("q")
	if st := h.exit(); st != 0 {
		t.Errorf("host exit status %d, want 0", st)
	}
	v.waitFor("has ended")
	if st := v.exit(); st != 0 {
		t.Errorf("viewer exit status %d, want 0", st)
	}
	if ts.registry.lookup(id) != nil {
		t.Errorf("session %s still joinable after its host left", id)
	}
}

func TestPanicEndsOnlyItsSession(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	a := ts.open(t, ts.keys[0], "alice", "opsel", 80, 24)
	b := ts.open(t, ts.keys[0], "bob", "opsel", 80, 24)
	a.waitFor("fake explorer")
	b.waitFor("fake explorer")
	a.send("p")
	if st := a.exit(); st != 1 {
		t.Fatalf("panicked session: exit status %d, want 1", st)
	}
	a.waitFor("internal error")
	b.send("t")
	b.waitFor("sel=1")
	r := ts.waitLog(t, "session panic", map[string]any{"user": "alice"})
	if !strings.Contains(r["panic"].(string), "told to panic") {
		t.Errorf("panic log: %v", r)
	}
	if !strings.Contains(r["stack"].(string), "fakeModel") {
		t.Errorf("panic log has no stack through the model: %v", r["stack"])
	}
}

func TestSavesGoUnderUserFolder(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 120, 24)
	id := tm.sessionID()
	tm.waitFor("s saves to alice/")
	// The names are DESIGN-YYYYMMDD-HHMMSS-ID.trace and .vcd (the project's
	// own scheme), the same stem for both.
	stem := `alice/opsel-\d{8}-\d{6}-` + id
	tm.send("t")
	tm.waitFor("sel=1")
	tm.send("s") // the save key reaches the explorer, which saves through the request's Save
	tm.waitFor("saved as alice/")
	m := regexp.MustCompile(`saved as (` + stem + `\.trace)`).FindStringSubmatch(tm.text())
	if m == nil {
		t.Fatalf("no trace name shown:\n%s", tm.text())
	}
	trace := m[1]
	p := filepath.Join(ts.dir, "traces", trace)
	if b, err := os.ReadFile(p); err != nil || string(b) != "fake trace, sel=true\n" {
		t.Fatalf("trace under traces/alice: %q, %v", b, err)
	}
	tm.send("v")
	tm.waitFor(".vcd")
	m = regexp.MustCompile(`saved as (` + stem + `\.vcd)`).FindStringSubmatch(tm.text())
	if m == nil {
		t.Fatalf("no VCD name shown:\n%s", tm.text())
	}
	vcd := m[1]
	if strings.TrimSuffix(vcd, ".vcd") != strings.TrimSuffix(trace, ".trace") {
		t.Errorf("the trace %s and the VCD %s of one session have different stems", trace, vcd)
	}
	tm.send("t")
	tm.waitCount("sel=0", 2)
	tm.send("v") // a second VCD replaces the first, and says so
	tm.waitFor("(replacing the one saved before)")
	if b, err := os.ReadFile(filepath.Join(ts.dir, "traces", vcd)); err != nil || string(b) != "fake vcd, sel=false\n" {
		t.Fatalf("VCD after the second save: %q, %v", b, err)
	}
	tm.send("q")
	if st := tm.exit(); st != 0 {
		t.Fatalf("exit status %d, want 0", st)
	}
	// Quitting keeps the whole session, as the local explorer does.
	if b, err := os.ReadFile(p); err != nil || string(b) != "fake trace, sel=false\n" {
		t.Fatalf("trace after quit: %q, %v", b, err)
	}
	if !strings.Contains(tm.text(), "railyard: trace saved as "+trace) {
		t.Errorf("the trace name is not shown on quit:\n%s", tm.text())
	}
	// A session puts two files on the disk, whatever the number of saves.
	if all, _ := filepath.Glob(filepath.Join(ts.dir, "traces", "*", "*")); len(all) != 2 {
		t.Errorf("files under traces: %v, want the trace and the VCD", all)
	}
	ts.waitLog(t, "session end", map[string]any{"user": "alice", "trace": trace, "vcd": vcd})
	ts.waitLog(t, "file saved", map[string]any{"user": "alice", "session": id, "kind": "VCD", "file": vcd})
}

func TestNoTracesFolderKeepsNoFiles(t *testing.T) {
	ts := startServer(t, 1, func(c *Config) { c.Traces = "" })
	ts.writeDesign(t, "opsel.sw", opsel)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 120, 24)
	tm.sessionID()
	if strings.Contains(tm.text(), "s saves") {
		t.Errorf("the notice offers saves on a server that keeps none:\n%s", tm.text())
	}
	tm.send("s")
	tm.waitFor("trace save failed: this server keeps no files")
	tm.send("v")
	tm.waitFor("VCD save failed: this server keeps no files")
	tm.send("q")
	if st := tm.exit(); st != 0 {
		t.Fatalf("exit status %d, want 0", st)
	}
	if strings.Contains(tm.text(), "trace saved") {
		t.Errorf("a trace was said to be saved:\n%s", tm.text())
	}
	if m, _ := filepath.Glob(filepath.Join(ts.dir, "traces", "*")); len(m) > 0 {
		t.Errorf("files written without a traces folder: %v", m)
	}
}

func TestSaveFailureIsShownAndLogged(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 120, 24)
	tm.sessionID()
	// The user's folder turns into a file: nothing can be written in it.
	dir := filepath.Join(ts.dir, "traces", "alice")
	must(t, os.Remove(dir))
	must(t, os.WriteFile(dir, []byte("in the way\n"), 0o644))
	tm.send("s")
	tm.waitFor("save failed: the server could not write it")
	if strings.Contains(tm.text(), ts.dir) {
		t.Errorf("the server's folder shows:\n%s", tm.text())
	}
	r := ts.waitLog(t, "save failed", map[string]any{"user": "alice", "kind": "trace"})
	if e, _ := r["error"].(string); e == "" {
		t.Errorf("the log does not say why: %v", r)
	}
	tm.send("q")
	if st := tm.exit(); st != 1 {
		t.Errorf("exit status %d, want 1 (the trace could not be kept)", st)
	}
	tm.waitFor("the trace could not be saved")
}

func TestPickerListsAndOpens(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	ts.writeDesign(t, "latch.sw", opsel)
	ts.writeDesign(t, "notes.txt", "not a design")
	tm := ts.open(t, ts.keys[0], "alice", "", 80, 24)
	tm.waitFor("choose a design")
	tm.waitFor("demo:shifter")
	out := tm.text()
	if !strings.Contains(out, "latch") || !strings.Contains(out, "opsel") || strings.Contains(out, "notes") {
		t.Fatalf("picker should list latch, opsel and the demo only:\n%s", out)
	}
	tm.send("j") // latch, opsel, demo:shifter: the second is opsel
	tm.send("\r")
	tm.waitFor("fake explorer on opsel")
	id := tm.sessionID()
	if ts.registry.lookup(id) == nil {
		t.Fatalf("session %s opened from the picker is not joinable", id)
	}
}

func TestHostKeyCreatedOnceAndReused(t *testing.T) {
	dir := t.TempDir()
	must(t, os.MkdirAll(filepath.Join(dir, "d"), 0o755))
	ak := filepath.Join(dir, "ak")
	must(t, os.WriteFile(ak, gossh.MarshalAuthorizedKey(newSigner(t).PublicKey()), 0o600))
	cfg := Config{AuthorizedKeys: ak, HostKey: filepath.Join(dir, "keys", "host"), Designs: filepath.Join(dir, "d"),
		Explorer: fakeExplorer, Demos: func() []string { return nil }, Logger: slog.New(slog.DiscardHandler)}
	a, err := New(cfg)
	must(t, err)
	fi, err := os.Stat(cfg.HostKey)
	must(t, err)
	if fi.Mode().Perm() != 0o600 {
		t.Errorf("host key mode %04o, want 0600 (common practice: sshd's own keys)", fi.Mode().Perm())
	}
	if a.HostKey().Type() != gossh.KeyAlgoED25519 {
		t.Errorf("host key type %s, want ed25519", a.HostKey().Type())
	}
	b, err := New(cfg)
	must(t, err)
	if fingerprint(a.HostKey()) != fingerprint(b.HostKey()) {
		t.Errorf("second start made a new host key")
	}
	must(t, os.Chmod(cfg.HostKey, 0o644))
	if _, err := New(cfg); err == nil || !strings.Contains(err.Error(), "chmod 600") {
		t.Errorf("a world-readable host key: error %v, want a refusal", err)
	}
}

func TestAuthorizedKeysFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "ak")
	good := string(gossh.MarshalAuthorizedKey(newSigner(t).PublicKey()))
	must(t, os.WriteFile(p, []byte("# team\n"+good+"ssh-ed25519 notbase64\n"+`from="10.0.0.1" `+good), 0o600))
	_, err := loadAuthorizedKeys(p)
	if err == nil {
		t.Fatal("bad lines accepted")
	}
	for _, want := range []string{p + ":3:", p + ":4:", "options"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q does not name %q", err, want)
		}
	}
	must(t, os.WriteFile(p, []byte("# nobody yet\n"), 0o600))
	if _, err := loadAuthorizedKeys(p); err == nil {
		t.Error("a file with no keys accepted")
	}
}

func TestAddedKeyNeedsNoRestart(t *testing.T) {
	ts := startServer(t, 1)
	ts.writeDesign(t, "opsel.sw", opsel)
	late := newSigner(t)
	if c, err := ts.dial("carol", gossh.PublicKeys(late)); err == nil {
		c.Close()
		t.Fatal("key accepted before it was added")
	}
	f, err := os.OpenFile(filepath.Join(ts.dir, "authorized_keys"), os.O_APPEND|os.O_WRONLY, 0)
	must(t, err)
	_, err = f.Write(gossh.MarshalAuthorizedKey(late.PublicKey()))
	must(t, err)
	must(t, f.Close())
	tm := ts.open(t, late, "carol", "opsel", 80, 24)
	tm.waitFor("fake explorer")
}

func TestBadUserNames(t *testing.T) {
	for _, u := range []string{"", "..", "../x", "a/b", ".hidden", "-x", strings.Repeat("a", 33), "a b"} {
		if validUser(u) == nil {
			t.Errorf("user %q accepted", u)
		}
	}
	for _, u := range []string{"alice", "a.b-c_d", "A1"} {
		if err := validUser(u); err != nil {
			t.Errorf("user %q refused: %v", u, err)
		}
	}
	ts := startServer(t, 1)
	if c, err := ts.dial("../../etc", gossh.PublicKeys(ts.keys[0])); err == nil {
		c.Close()
		t.Error("a user name with a path was let in")
	}
}

func TestOversizedDesignRefused(t *testing.T) {
	ts := startServer(t, 1, func(c *Config) { c.MaxDesignBytes = 64 })
	ts.writeDesign(t, "big.sw", opsel+strings.Repeat("# padding\n", 10))
	ts.writeDesign(t, "small.sw", opsel)
	tm := ts.open(t, ts.keys[0], "alice", "big", 80, 24)
	if st := tm.exit(); st != 1 {
		t.Fatalf("exit status %d, want 1", st)
	}
	if !strings.Contains(tm.text(), "over the served limit of 64") {
		t.Errorf("no size refusal in %q", tm.text())
	}
	ok := ts.open(t, ts.keys[0], "alice", "small", 80, 24)
	ok.waitFor("fake explorer on small")
}
