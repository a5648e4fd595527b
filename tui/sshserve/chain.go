//go:build !wish

package sshserve

import (
	"net"
	"time"

	"github.com/charmbracelet/ssh"
	gossh "golang.org/x/crypto/ssh"
)

// sshSettings is what newSSHServer builds a server from.
type sshSettings struct {
	addr     string
	hostKey  gossh.Signer
	auth     ssh.PublicKeyHandler // nil: no client authentication (loopback --no-auth only)
	connIdle time.Duration
	failed   func(net.Conn, error)
	chain    []func(ssh.Handler) ssh.Handler // innermost first, as wish.WithMiddleware takes them
}

// newSSHServer builds the server the way wish.NewServer with
// wish.WithMiddleware does. The wish root package does not compile against
// this module's x/crypto (through keygen v0.4.2 and sshmarshal v0.1.0); with
// keygen v0.5.4 in go.mod, chain_wish.go (build tag wish) does the same
// through wish itself.
func newSSHServer(c sshSettings) (*ssh.Server, error) {
	h := func(ssh.Session) {}
	for _, m := range c.chain {
		h = m(h)
	}
	srv := &ssh.Server{
		Addr:                     c.addr,
		Version:                  "railyard",
		Handler:                  h,
		IdleTimeout:              c.connIdle,
		ConnectionFailedCallback: c.failed,
	}
	srv.AddHostKey(c.hostKey)
	if c.auth != nil {
		srv.PublicKeyHandler = c.auth
	}
	return srv, nil
}
