package sshserve

import (
	"fmt"
	"runtime/debug"
	"strings"
	"sync"
	"time"

	"github.com/charmbracelet/ssh"
	gossh "golang.org/x/crypto/ssh"

	"railyard/switchsim/diag"
)

// visit is one SSH session as the middlewares see it: the logging middleware
// creates it and logs it at the end; the inner ones fill in what they learn.
type visit struct {
	mu      sync.Mutex
	user    string
	key     string // SHA256 fingerprint, or "none"
	remote  string
	command string
	started time.Time

	kind   string // explorer, picker, viewer
	design string
	id     string // the joinable session id (explorer) or the one joined (viewer)
	status int
	reason string // why the server ended it, if it did
	trace  string // the files it saved, as USER/NAME
	vcd    string
}

func (v *visit) set(f func(v *visit)) {
	v.mu.Lock()
	f(v)
	v.mu.Unlock()
}

type visitKey struct{}

func visitOf(s ssh.Session) *visit {
	if v, ok := s.Context().Value(visitKey{}).(*visit); ok {
		return v
	}
	return &visit{} // only when a middleware runs outside the chain (tests)
}

// fail ends the session with a message and exit status 1. The message may
// quote a design's errors, so each of its lines is made printable.
func fail(s ssh.Session, v *visit, reason, msg string) {
	v.set(func(v *visit) { v.status, v.reason = 1, reason })
	lines := strings.Split(msg, "\n")
	for i, l := range lines {
		lines[i] = diag.Printable(l)
	}
	fmt.Fprintf(s.Stderr(), "railyard: %s\n", strings.Join(lines, "\n"))
	_ = s.Exit(1)
}

// logSessions logs every session, with its user, key fingerprint, design and
// duration, once it starts and once it ends.
func (s *Server) logSessions(next ssh.Handler) ssh.Handler {
	return func(sess ssh.Session) {
		// The user name and the command are the client's: made printable,
		// so that a log read on a terminal cannot drive it.
		v := &visit{user: diag.Printable(sess.User()), key: "none", remote: sess.RemoteAddr().String(),
			command: diag.Printable(sess.RawCommand()), started: time.Now()}
		if k := sess.PublicKey(); k != nil {
			v.key = gossh.FingerprintSHA256(k)
		}
		sess.Context().SetValue(visitKey{}, v)
		pty, _, hasPTY := sess.Pty()
		s.log.Info("session start", "user", v.user, "key", v.key, "remote", v.remote,
			"command", v.command, "pty", hasPTY, "term", diag.Printable(pty.Term),
			"width", pty.Window.Width, "height", pty.Window.Height)
		next(sess)
		v.mu.Lock()
		defer v.mu.Unlock()
		attrs := []any{"user", v.user, "key", v.key, "remote", v.remote, "command", v.command,
			"kind", v.kind, "design", v.design, "session", v.id,
			"duration", time.Since(v.started).Round(time.Millisecond).String(), "status", v.status}
		if v.reason != "" {
			attrs = append(attrs, "reason", v.reason)
		}
		if v.trace != "" {
			attrs = append(attrs, "trace", v.trace)
		}
		if v.vcd != "" {
			attrs = append(attrs, "vcd", v.vcd)
		}
		s.log.Info("session end", attrs...)
	}
}

// recoverPanics keeps a panic in one session's handler from reaching the
// others: it is logged with its stack, and that session alone ends.
func (s *Server) recoverPanics(next ssh.Handler) ssh.Handler {
	return func(sess ssh.Session) {
		defer func() {
			if r := recover(); r != nil {
				v := visitOf(sess)
				s.logPanic(v, r, debug.Stack())
				fail(sess, v, "panic", "internal error; this session is closed (the others go on)")
			}
		}()
		next(sess)
	}
}

func (s *Server) logPanic(v *visit, r any, stack []byte) {
	v.mu.Lock()
	user, design, id := v.user, v.design, v.id
	v.mu.Unlock()
	s.log.Error("session panic", "user", user, "design", design, "session", id,
		"panic", diag.Printable(fmt.Sprint(r)), "stack", string(stack))
}

// checkAccess is the last word on who is in: the SSH layer already demanded a
// listed key; this refuses a session that somehow has none, and user names
// that cannot name a traces folder.
func (s *Server) checkAccess(next ssh.Handler) ssh.Handler {
	return func(sess ssh.Session) {
		v := visitOf(sess)
		if !s.cfg.NoAuth && sess.PublicKey() == nil {
			fail(sess, v, "no key", "public-key authentication is required")
			return
		}
		if err := validUser(sess.User()); err != nil {
			fail(sess, v, "bad user name", err.Error())
			return
		}
		next(sess)
	}
}

// limitSessions refuses a session beyond the limit, politely, in one line.
func (s *Server) limitSessions(next ssh.Handler) ssh.Handler {
	return func(sess ssh.Session) {
		v := visitOf(sess)
		if n, ok := s.registry.acquire(); !ok {
			fail(sess, v, "full", fmt.Sprintf("the server is full (%d of %d sessions open); please try again later", n, s.cfg.MaxSessions))
			return
		}
		defer s.registry.release()
		next(sess)
	}
}

// requirePTY refuses a session without a terminal at once, instead of
// starting a program that could never draw.
func (s *Server) requirePTY(next ssh.Handler) ssh.Handler {
	return func(sess ssh.Session) {
		if _, _, ok := sess.Pty(); !ok {
			fail(sess, visitOf(sess), "no pty", "this needs an interactive terminal; connect with ssh -t")
			return
		}
		next(sess)
	}
}

// words splits the SSH command into its words.
func words(sess ssh.Session) []string {
	var out []string
	for _, w := range sess.Command() {
		if w = strings.TrimSpace(w); w != "" {
			out = append(out, w)
		}
	}
	return out
}
