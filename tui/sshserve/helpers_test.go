package sshserve

import (
	"bytes"
	"crypto/ed25519"
	"crypto/rand"
	"fmt"
	"io"
	"log/slog"
	"net"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/x/ansi"
	gossh "golang.org/x/crypto/ssh"

	"railyard/tui"
)

// readDeadline bounds every wait for output in these tests.
const readDeadline = 10 * time.Second

// syncBuffer is a bytes.Buffer safe for the server's log and a test to share.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

func newSigner(t testing.TB) gossh.Signer {
	t.Helper()
	_, priv, err := ed25519.GenerateKey(rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	s, err := gossh.NewSignerFromKey(priv)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// testServer is a running server on a random loopback port.
type testServer struct {
	*Server
	addr string
	dir  string // the test's folder: designs/, traces/, keys
	log  *syncBuffer
	keys []gossh.Signer // keys[0..n) are authorised
}

type serverOpt func(*Config)

// startServer serves dir/designs with nKeys authorised client keys.
func startServer(t testing.TB, nKeys int, opts ...serverOpt) *testServer {
	t.Helper()
	dir := t.TempDir()
	ts := &testServer{dir: dir, log: &syncBuffer{}}
	var ak bytes.Buffer
	for i := 0; i < nKeys; i++ {
		k := newSigner(t)
		ts.keys = append(ts.keys, k)
		ak.Write(gossh.MarshalAuthorizedKey(k.PublicKey()))
	}
	must(t, os.WriteFile(filepath.Join(dir, "authorized_keys"), ak.Bytes(), 0o600))
	must(t, os.MkdirAll(filepath.Join(dir, "designs"), 0o755))
	cfg := Config{
		Listen:         "127.0.0.1:0",
		AuthorizedKeys: filepath.Join(dir, "authorized_keys"),
		HostKey:        filepath.Join(dir, "host_ed25519"),
		Designs:        filepath.Join(dir, "designs"),
		Traces:         filepath.Join(dir, "traces"),
		MaxSessions:    8,
		IdleTimeout:    time.Minute,
		Logger:         slog.New(slog.NewJSONHandler(ts.log, nil)),
		Explorer:       fakeExplorer,
		Demos:          func() []string { return []string{"shifter"} },
	}
	for _, o := range opts {
		o(&cfg)
	}
	srv, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	ts.Server = srv
	ln, err := net.Listen("tcp", cfg.Listen)
	if err != nil {
		t.Fatal(err)
	}
	ts.addr = ln.Addr().String()
	done := make(chan error, 1)
	go func() { done <- srv.Serve(ln) }()
	t.Cleanup(func() {
		srv.Close()
		select {
		case <-done:
		case <-time.After(5 * time.Second):
			t.Error("server did not stop")
		}
		// Sessions end after the server stops, each keeping its trace:
		// wait for them, so that no file is written while the test's
		// folder is removed.
		end := time.Now().Add(5 * time.Second)
		for srv.registry.Active() != 0 && time.Now().Before(end) {
			time.Sleep(5 * time.Millisecond)
		}
	})
	return ts
}

// Active is the number of open sessions (the tests' view of the count).
func (r *registry) Active() int {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.active
}

func must(t testing.TB, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// writeDesign puts a design file into the served folder.
func (ts *testServer) writeDesign(t testing.TB, name, src string) string {
	t.Helper()
	p := filepath.Join(ts.dir, "designs", name)
	must(t, os.WriteFile(p, []byte(src), 0o644))
	return p
}

// dial connects as user with the given auth methods.
func (ts *testServer) dial(user string, auth ...gossh.AuthMethod) (*gossh.Client, error) {
	return ts.dialFrom("", user, auth...)
}

// dialFrom connects from the local address ip (any when empty). Loopback on
// Linux accepts the whole of 127.0.0.0/8, so tests can come from 127.0.0.2.
func (ts *testServer) dialFrom(ip, user string, auth ...gossh.AuthMethod) (*gossh.Client, error) {
	d := net.Dialer{Timeout: readDeadline}
	if ip != "" {
		d.LocalAddr = &net.TCPAddr{IP: net.ParseIP(ip)}
	}
	conn, err := d.Dial("tcp", ts.addr)
	if err != nil {
		return nil, err
	}
	// The handshake has the same bound a dial by address would give it.
	conn.SetDeadline(time.Now().Add(readDeadline))
	cc, chans, reqs, err := gossh.NewClientConn(conn, ts.addr, &gossh.ClientConfig{
		User:            user,
		Auth:            auth,
		HostKeyCallback: gossh.FixedHostKey(ts.HostKey()),
	})
	if err != nil {
		conn.Close()
		return nil, err
	}
	conn.SetDeadline(time.Time{})
	return gossh.NewClient(cc, chans, reqs), nil
}

// term is one client session with a pty, its output collected.
type term struct {
	t      testing.TB
	client *gossh.Client
	sess   *gossh.Session
	in     io.WriteCloser
	out    *syncBuffer
	done   chan error // the session's exit
}

// open starts a session running command ("" for a shell) with a pty of w x h.
func (ts *testServer) open(t testing.TB, key gossh.Signer, user, command string, w, h int) *term {
	t.Helper()
	c, err := ts.dial(user, gossh.PublicKeys(key))
	if err != nil {
		t.Fatalf("dial: %v", err)
	}
	tm, err := startTerm(t, c, command, w, h, true)
	if err != nil {
		c.Close()
		t.Fatal(err)
	}
	return tm
}

func startTerm(t testing.TB, c *gossh.Client, command string, w, h int, pty bool) (*term, error) {
	sess, err := c.NewSession()
	if err != nil {
		return nil, err
	}
	if pty {
		if err := sess.RequestPty("xterm-256color", h, w, gossh.TerminalModes{gossh.ECHO: 0}); err != nil {
			return nil, err
		}
	}
	in, err := sess.StdinPipe()
	if err != nil {
		return nil, err
	}
	tm := &term{t: t, client: c, sess: sess, in: in, out: &syncBuffer{}, done: make(chan error, 1)}
	sess.Stdout = tm.out
	sess.Stderr = tm.out
	if command == "" {
		err = sess.Shell()
	} else {
		err = sess.Start(command)
	}
	if err != nil {
		return nil, err
	}
	go func() { tm.done <- sess.Wait() }()
	t.Cleanup(func() { sess.Close(); c.Close() })
	return tm, nil
}

// text is everything the session printed so far, without escape sequences.
func (tm *term) text() string { return ansi.Strip(tm.out.String()) }

// waitFor reads until the output (escapes removed) holds want, or fails at the deadline.
func (tm *term) waitFor(want string) {
	tm.t.Helper()
	if !tm.await(want, readDeadline) {
		tm.t.Fatalf("no %q within %s; output:\n%s", want, readDeadline, tail(tm.text(), 2000))
	}
}

func (tm *term) await(want string, d time.Duration) bool {
	end := time.Now().Add(d)
	for time.Now().Before(end) {
		if strings.Contains(tm.text(), want) {
			return true
		}
		time.Sleep(5 * time.Millisecond)
	}
	return false
}

// waitCount waits until s has appeared n times.
func (tm *term) waitCount(s string, n int) {
	tm.t.Helper()
	end := time.Now().Add(readDeadline)
	for tm.count(s) < n {
		if time.Now().After(end) {
			tm.t.Fatalf("%q appeared %d times within %s, want %d:\n%s", s, tm.count(s), readDeadline, n, tail(tm.text(), 2000))
		}
		time.Sleep(5 * time.Millisecond)
	}
}

// count is the number of times s appears in the output so far.
func (tm *term) count(s string) int { return strings.Count(tm.text(), s) }

func (tm *term) send(s string) {
	tm.t.Helper()
	if _, err := io.WriteString(tm.in, s); err != nil {
		tm.t.Fatalf("send %q: %v", s, err)
	}
}

// exit waits for the session to end and returns its exit status.
func (tm *term) exit() int {
	tm.t.Helper()
	select {
	case err := <-tm.done:
		if err == nil {
			return 0
		}
		if e, ok := err.(*gossh.ExitError); ok {
			return e.ExitStatus()
		}
		tm.t.Fatalf("session ended without a status: %v", err)
	case <-time.After(readDeadline):
		tm.t.Fatalf("session did not end within %s; output:\n%s", readDeadline, tail(tm.text(), 2000))
	}
	return -1
}

func tail(s string, n int) string {
	if len(s) > n {
		return "..." + s[len(s)-n:]
	}
	return s
}

// fakeModel is a stand-in explorer for the server's plumbing: it shows the
// request, a toggle that t flips, and the size; s saves a stand-in trace and
// v a stand-in VCD through the request's Save (as the explorer's save key
// does), p panics, q quits.
type fakeModel struct {
	req  ExplorerRequest
	on   bool
	w, h int
	said string // what the last save said
}

func fakeExplorer(r ExplorerRequest) (tea.Model, error) {
	if _, err := readFakeDesign(r); err != nil {
		return nil, err
	}
	if r.Save == nil {
		return nil, fmt.Errorf("no Save in the request")
	}
	return &fakeModel{req: r, w: r.Width, h: r.Height}, nil
}

// readFakeDesign reads a design the way an explorer would (through the
// request's loader), so that a refused name could only be caught by the
// server's resolution or the loader's root.
func readFakeDesign(r ExplorerRequest) ([]byte, error) {
	if strings.HasPrefix(r.Design, "demo:") {
		return []byte("demo"), nil
	}
	return r.Files.ReadFile(r.Design)
}

func (m *fakeModel) Init() tea.Cmd { return nil }

// WriteTrace writes the toggle, as a stand-in for a trace.
func (m *fakeModel) WriteTrace(w io.Writer) error {
	_, err := fmt.Fprintf(w, "fake trace, sel=%v\n", m.on)
	return err
}

func (m *fakeModel) save(kind tui.SaveKind, write func(io.Writer) error) {
	shown, err := m.req.Save(kind, write)
	if err != nil {
		m.said = kind.String() + " save failed: " + err.Error()
		return
	}
	m.said = kind.String() + " saved as " + shown
}

func (m *fakeModel) Update(msg tea.Msg) (tea.Model, tea.Cmd) {
	switch msg := msg.(type) {
	case tea.WindowSizeMsg:
		m.w, m.h = msg.Width, msg.Height
	case tea.KeyMsg:
		switch msg.String() {
		case "t":
			m.on = !m.on
		case "p":
			panic("fake explorer told to panic")
		case "q":
			return m, tea.Quit
		case "s":
			m.save(tui.SaveTrace, m.WriteTrace)
		case "v":
			on := m.on
			m.save(tui.SaveVCD, func(w io.Writer) error {
				_, err := fmt.Fprintf(w, "fake vcd, sel=%v\n", on)
				return err
			})
		}
	}
	return m, nil
}

func (m *fakeModel) View() string {
	v := 0
	if m.on {
		v = 1
	}
	return fmt.Sprintf("fake explorer on %s\nsel=%d\nsize %dx%d\n%s\n%s", m.req.Name, v, m.w, m.h, m.req.Banner, m.said)
}
