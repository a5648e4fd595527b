package sshserve

import (
	"net"
	"time"

	"github.com/charmbracelet/ssh"
	"github.com/charmbracelet/wish"
	gossh "golang.org/x/crypto/ssh"
)

// sshSettings is what newSSHServer builds a server from.
type sshSettings struct {
	addr     string
	hostKey  gossh.Signer
	auth     ssh.PublicKeyHandler // nil: no client authentication (loopback --no-auth only)
	connIdle time.Duration
	failed   func(net.Conn, error)
	// accept sees every connection first, before the handshake; nil
	// closes it. handshake gives the settings of its handshake.
	accept    ssh.ConnCallback
	handshake ssh.ServerConfigCallback
	chain     []func(ssh.Handler) ssh.Handler // innermost first
}

// newSSHServer builds the server with wish. The host key is always given, so
// wish never makes one of its own (it would write id_ed25519 in the working
// folder).
func newSSHServer(c sshSettings) (*ssh.Server, error) {
	mw := make([]wish.Middleware, len(c.chain))
	for i, m := range c.chain {
		mw[i] = m
	}
	opts := []ssh.Option{
		wish.WithAddress(c.addr),
		wish.WithVersion("railyard"),
		func(s *ssh.Server) error { s.AddHostKey(c.hostKey); return nil },
		wish.WithMiddleware(mw...),
		func(s *ssh.Server) error { s.ConnectionFailedCallback = c.failed; return nil },
		ssh.WrapConn(c.accept),
		func(s *ssh.Server) error { s.ServerConfigCallback = c.handshake; return nil },
	}
	if c.connIdle > 0 {
		opts = append(opts, wish.WithIdleTimeout(c.connIdle))
	}
	if c.auth != nil {
		opts = append(opts, wish.WithPublicKeyAuth(c.auth))
	}
	return wish.NewServer(opts...)
}
