package sshserve

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"os"
	"sync"
	"time"

	tea "github.com/charmbracelet/bubbletea"
	"github.com/charmbracelet/lipgloss"
	"github.com/charmbracelet/ssh"
	gossh "golang.org/x/crypto/ssh"

	"railyard/switchsim/diag"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
	"railyard/tui"
)

// Defaults for the options a Config leaves zero.
const (
	DefaultListen      = "127.0.0.1:2222"
	DefaultMaxSessions = 16
	DefaultIdleTimeout = 15 * time.Minute
	// DefaultMaxTrace caps each served session's trace, DefaultMaxWave a
	// VCD a served user saves. A toggle of a six-device operand selector
	// writes some 75 bytes of trace, so 64 MiB is some 900,000 of them; a
	// toggle that changes every node of a 38,000-device design writes
	// some 0.9 MB, so 64 MiB is some 70 (README, "Limits").
	DefaultMaxTrace = 64 << 20
	DefaultMaxWave  = 64 << 20
	// MinFileCap is the smallest MaxTrace or MaxWave taken: room for a
	// trace's header and a small cell's first actions.
	MinFileCap = 16 << 10
)

// The limits before authentication (MaxPending, MaxPendingPerAddr,
// HandshakeTimeout) have their defaults in pending.go.

// Config is what a server is built from.
type Config struct {
	// Listen is the TCP address the listener given to Serve is for (with
	// NoAuth it must be loopback); DefaultListen when empty.
	Listen         string
	AuthorizedKeys string // authorized_keys file; required unless NoAuth
	HostKey        string // private host key; generated (ed25519, mode 600) when missing
	Designs        string // the folder of .sw designs served
	// Traces is where files are kept: what users save, and each session's
	// whole trace, go under Traces/USER/; nothing is kept when empty.
	Traces string
	// MaxTrace caps each session's trace (trace.Options.MaxBytes): once
	// the next action would pass it, later actions are not recorded, the
	// explorer says so and the log has a "trace full" line; what was
	// recorded is still saved and replays. DefaultMaxTrace when 0, at least
	// MinFileCap.
	MaxTrace int64
	// MaxWave caps a VCD a user saves (it is written from the session's
	// whole history, so it grows with the session): a save that would pass
	// it is refused and nothing is written. DefaultMaxWave when 0, at least
	// MinFileCap.
	MaxWave     int64
	MaxSessions int // open sessions (explorers, viewers, pickers) at once; DefaultMaxSessions when 0
	// IdleTimeout closes a session after this long without input (a viewer:
	// without input from it or its host); 0 never does.
	IdleTimeout time.Duration
	// NoAuth accepts any client; it is refused unless the address is loopback.
	NoAuth bool
	// Read are the reader options of the netlists served (rails, model
	// names, ...: the command line's netlist flags), the same for every
	// one; a .sw design takes none. Their includes never leave Designs.
	Read netfile.ReadOptions
	// MaxDesignBytes bounds a served design or steps file; the design
	// reader's own file limit when 0. With the reader's device limit it
	// bounds what one session loads.
	MaxDesignBytes int64
	// Limits before authentication, each its default when 0: connections
	// accepted but not yet authenticated, in all and from one remote
	// address, and the time a connection has to authenticate. See
	// pendingGate for what happens when a cap is hit.
	MaxPending        int
	MaxPendingPerAddr int
	HandshakeTimeout  time.Duration
	Logger            *slog.Logger // connection log; JSON to stderr when nil

	// Explorer builds the model for a chosen design; nil uses the railyard
	// explorer (tests give their own). A model that is a Saver has its
	// whole trace kept under Traces when the session ends.
	Explorer func(ExplorerRequest) (tea.Model, error)
	// Demos lists the embedded demo names; nil uses the designs package.
	Demos func() []string
}

// ExplorerRequest is what the Explorer hook gets to build one connection's model.
type ExplorerRequest struct {
	Name   string // as the user chose it: a file name under Designs or demo:NAME
	Design string // what to open through Files: a file name inside Designs, or demo:NAME
	Steps  string // the design's default steps, inside Designs; empty for none
	// Files opens Design and Steps: a loader over the served folder that no
	// name or symbolic link can leave (nil: the command line's files).
	Files         *load.Loader
	Width, Height int    // the client's terminal
	Banner        string // the session id, for the header
	// Save keeps what the user saves (the explorer's tui.Options.Save):
	// under Traces/USER/ with a name the server chooses, or, when the
	// server keeps no files, an error saying so. Never nil: a served
	// explorer must not fall back to asking for a path.
	Save tui.SaveFunc
	// MaxTrace is the session's trace cap (Config.MaxTrace), TraceDir the
	// folder its spool lives in while the session runs: Traces/USER, the
	// disk its saves go to, or "" (the system's temporary folder) when the
	// server keeps no files.
	MaxTrace int64
	TraceDir string
	NoColor  bool // the client asked for NO_COLOR
	ASCII    bool // the client's terminal is not UTF-8 capable
	// Renderer renders styles for this client's terminal.
	Renderer *lipgloss.Renderer
}

// ConfigError is a Config the server cannot take: the field at fault (as
// named in Config), the field it clashes with when there is one, and what
// is wrong. A command maps the field names to its own flags.
type ConfigError struct {
	Field string
	Other string
	Err   error
}

func (e *ConfigError) Error() string {
	f := e.Field
	if e.Other != "" {
		f += " and " + e.Other
	}
	return f + ": " + e.Err.Error()
}

func (e *ConfigError) Unwrap() error { return e.Err }

// configError is a ConfigError on one field.
func configError(field, format string, args ...any) error {
	return &ConfigError{Field: field, Err: fmt.Errorf(format, args...)}
}

// Server is a configured railyard SSH server.
type Server struct {
	cfg      Config
	log      *slog.Logger
	srv      *ssh.Server
	keys     *authorizedKeys // nil with NoAuth
	hostKey  gossh.Signer
	catalog  *catalog
	registry *registry
	gate     *pendingGate

	// The host sessions running, so that Close and Shutdown can wait for
	// their last saves (a session keeps its trace as it ends): hosts is
	// added to under mu only while the server is not closing.
	mu      sync.Mutex
	closing bool
	hosts   sync.WaitGroup
}

// closeWait bounds how long Close waits for the sessions' last saves.
const closeWait = 10 * time.Second

// New checks a Config, loads or creates the host key, reads the authorised
// keys and builds the server. Nothing listens until Serve.
func New(cfg Config) (*Server, error) {
	if cfg.Listen == "" {
		cfg.Listen = DefaultListen
	}
	for _, c := range []struct {
		v     *int
		def   int
		field string
	}{
		{&cfg.MaxSessions, DefaultMaxSessions, "MaxSessions"},
		{&cfg.MaxPending, DefaultMaxPending, "MaxPending"},
		{&cfg.MaxPendingPerAddr, DefaultMaxPendingPerAddr, "MaxPendingPerAddr"},
	} {
		if *c.v == 0 {
			*c.v = c.def
		}
		if *c.v < 0 {
			return nil, configError(c.field, "must be positive, got %d", *c.v)
		}
	}
	if cfg.IdleTimeout < 0 {
		return nil, configError("IdleTimeout", "must not be negative, got %s", cfg.IdleTimeout)
	}
	if cfg.HandshakeTimeout == 0 {
		cfg.HandshakeTimeout = DefaultHandshakeTimeout
	}
	if cfg.HandshakeTimeout < 0 {
		return nil, configError("HandshakeTimeout", "must be positive, got %s", cfg.HandshakeTimeout)
	}
	for _, c := range []struct {
		v     *int64
		def   int64
		field string
	}{
		{&cfg.MaxTrace, DefaultMaxTrace, "MaxTrace"},
		{&cfg.MaxWave, DefaultMaxWave, "MaxWave"},
	} {
		if *c.v == 0 {
			*c.v = c.def
		}
		if *c.v < MinFileCap {
			return nil, configError(c.field, "must be at least %s, got %d bytes", diag.SizeString(MinFileCap), *c.v)
		}
	}
	if cfg.MaxDesignBytes == 0 {
		cfg.MaxDesignBytes = int64(netfile.DefaultLimits().FileSize)
	}
	if cfg.MaxDesignBytes < 0 {
		return nil, configError("MaxDesignBytes", "must be positive, got %d", cfg.MaxDesignBytes)
	}
	if cfg.Logger == nil {
		cfg.Logger = slog.New(slog.NewJSONHandler(os.Stderr, nil))
	}
	if cfg.Explorer == nil {
		cfg.Explorer = openExplorer
	}
	if cfg.Demos == nil {
		cfg.Demos = demoNames
	}
	s := &Server{cfg: cfg, log: cfg.Logger, registry: newRegistry(cfg.MaxSessions),
		gate: newPendingGate(cfg.MaxPending, cfg.MaxPendingPerAddr, cfg.HandshakeTimeout, realClock{}, cfg.Logger)}

	if cfg.NoAuth {
		if cfg.AuthorizedKeys != "" {
			return nil, &ConfigError{Field: "NoAuth", Other: "AuthorizedKeys", Err: errors.New("they exclude each other")}
		}
		if err := checkLoopback(cfg.Listen); err != nil {
			return nil, err
		}
	} else {
		if cfg.AuthorizedKeys == "" {
			return nil, configError("AuthorizedKeys", "a file is required (public keys are the only way in)")
		}
		keys, err := loadAuthorizedKeys(cfg.AuthorizedKeys)
		if err != nil {
			return nil, err
		}
		s.keys = keys
	}
	if cfg.HostKey == "" {
		return nil, configError("HostKey", "a file is required")
	}
	hk, created, err := loadOrCreateHostKey(cfg.HostKey)
	if err != nil {
		return nil, &ConfigError{Field: "HostKey", Err: err}
	}
	s.hostKey = hk
	if created {
		s.log.Info("host key created", "path", cfg.HostKey, "fingerprint", gossh.FingerprintSHA256(hk.PublicKey()))
	}
	if cfg.Designs == "" {
		return nil, configError("Designs", "a folder is required")
	}
	if s.catalog, err = newCatalog(cfg.Designs, cfg.Demos, cfg.MaxDesignBytes, cfg.Read); err != nil {
		return nil, &ConfigError{Field: "Designs", Err: err}
	}
	if cfg.Traces != "" {
		if err := os.MkdirAll(cfg.Traces, 0o750); err != nil {
			return nil, &ConfigError{Field: "Traces", Err: err}
		}
	}

	connIdle := time.Duration(0)
	if cfg.IdleTimeout > 0 {
		// The session watchdog closes idle sessions with a message; this
		// connection deadline is the backstop for authenticated connections
		// that never open a session (the gate bounds the handshake).
		connIdle = cfg.IdleTimeout + 30*time.Second
	}
	var auth ssh.PublicKeyHandler
	if !cfg.NoAuth {
		// Only a public-key handler is set, so the server offers no
		// passwords, no keyboard-interactive and no "none" method.
		auth = s.publicKeyAllowed
	}
	srv, err := newSSHServer(sshSettings{
		addr:      cfg.Listen,
		hostKey:   hk,
		auth:      auth,
		connIdle:  connIdle,
		failed:    s.connectionFailed,
		accept:    s.admit,
		handshake: s.handshakeConfig,
		// Listed innermost first: a session runs logging, recovery, access,
		// the limit, the terminal check, then the handler.
		chain: []func(ssh.Handler) ssh.Handler{
			s.handle,
			s.requirePTY,
			s.limitSessions,
			s.checkAccess,
			s.recoverPanics,
			s.logSessions,
		},
	})
	if err != nil {
		return nil, err
	}
	if !cfg.NoAuth && (srv.PublicKeyHandler == nil || srv.PasswordHandler != nil || srv.KeyboardInteractiveHandler != nil) {
		return nil, errors.New("internal error: public keys must be the only way in")
	}
	s.srv = srv
	return s, nil
}

// Serve accepts connections on ln until Close.
func (s *Server) Serve(ln net.Listener) error {
	if s.cfg.NoAuth {
		if err := checkLoopback(ln.Addr().String()); err != nil {
			ln.Close()
			return err
		}
	}
	s.log.Info("serving", "addr", ln.Addr().String(), "designs", s.catalog.root,
		"host_key", gossh.FingerprintSHA256(s.hostKey.PublicKey()), "auth", s.authName(),
		"max_sessions", s.cfg.MaxSessions, "idle_timeout", s.cfg.IdleTimeout.String(),
		"max_pending", s.cfg.MaxPending, "max_pending_per_addr", s.cfg.MaxPendingPerAddr,
		"handshake_timeout", s.cfg.HandshakeTimeout.String(),
		"max_trace", s.cfg.MaxTrace, "max_wave", s.cfg.MaxWave)
	err := s.srv.Serve(ln)
	if errors.Is(err, ssh.ErrServerClosed) {
		return nil
	}
	return err
}

// Close stops listening, closes every connection and waits (closeWait at
// most) for the sessions to keep their traces and release their spools, so
// that a server stopped leaves no file half written.
func (s *Server) Close() error {
	err := s.srv.Close()
	ctx, cancel := context.WithTimeout(context.Background(), closeWait)
	defer cancel()
	s.waitHosts(ctx)
	return err
}

// Shutdown stops listening and waits for the open sessions to end and keep
// their traces.
func (s *Server) Shutdown(ctx context.Context) error {
	if err := s.srv.Shutdown(ctx); err != nil {
		return err
	}
	return s.waitHosts(ctx)
}

// hostStarted counts a host session in, unless the server is closing.
func (s *Server) hostStarted() bool {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.closing {
		return false
	}
	s.hosts.Add(1)
	return true
}

// waitHosts refuses new host sessions and waits for the running ones to end.
func (s *Server) waitHosts(ctx context.Context) error {
	s.mu.Lock()
	s.closing = true
	s.mu.Unlock()
	done := make(chan struct{})
	go func() {
		s.hosts.Wait()
		close(done)
	}()
	select {
	case <-done:
		return nil
	case <-ctx.Done():
		return ctx.Err()
	}
}

// HostKey is the server's public host key (for known_hosts).
func (s *Server) HostKey() gossh.PublicKey { return s.hostKey.PublicKey() }

func (s *Server) authName() string {
	if s.cfg.NoAuth {
		return "none (loopback only)"
	}
	return "publickey"
}

func (s *Server) connectionFailed(c net.Conn, err error) {
	if errors.Is(err, io.EOF) {
		return // a client that gave up or only probed
	}
	if errors.Is(err, errDropped) {
		return // the gate dropped it and logged why
	}
	// The reason can quote what the client sent (its algorithm names).
	s.log.Warn("handshake failed", "event", "failed", "remote", c.RemoteAddr().String(), "reason", diag.Printable(err.Error()))
}

// pendingKey holds a connection's pendingConn in its SSH context, from
// accept to the handshake's settings.
type pendingKey struct{}

// admit is the first thing a new connection meets: the gate takes it or
// refuses it (nil closes it).
func (s *Server) admit(ctx ssh.Context, c net.Conn) net.Conn {
	pc, ok := s.gate.admit(c)
	if !ok {
		return nil
	}
	ctx.SetValue(pendingKey{}, pc)
	return pc
}

// handshakeConfig gives the connection's handshake settings: the SSH layer
// reports every authentication attempt to it, and the first one that succeeds
// ends the connection's time in the gate.
func (s *Server) handshakeConfig(ctx ssh.Context) *gossh.ServerConfig {
	cfg := &gossh.ServerConfig{}
	if pc, ok := ctx.Value(pendingKey{}).(*pendingConn); ok {
		cfg.AuthLogCallback = func(_ gossh.ConnMetadata, _ string, err error) {
			if err == nil {
				pc.authenticated()
			}
		}
	}
	return cfg
}

// checkLoopback refuses any address that is not bound to loopback only.
func checkLoopback(addr string) error {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return configError("Listen", "%q: %v", addr, err)
	}
	if host == "localhost" {
		return nil // Serve checks the address actually bound
	}
	ip := net.ParseIP(host)
	if ip == nil || !ip.IsLoopback() {
		return configError("NoAuth", "only allowed on a loopback address (such as 127.0.0.1), not %q", addr)
	}
	return nil
}
