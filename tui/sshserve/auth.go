package sshserve

import (
	"bytes"
	"fmt"
	"os"
	"strings"
	"sync"
	"time"

	"github.com/charmbracelet/ssh"
	gossh "golang.org/x/crypto/ssh"

	"railyard/switchsim/diag"
)

// authorizedKeys is the set of keys let in, read from an authorized_keys
// file. The file is read again when it changes, so adding or removing a key
// needs no restart.
type authorizedKeys struct {
	path string

	mu      sync.Mutex
	modTime time.Time
	size    int64
	keys    [][]byte // each key's wire form
}

// loadAuthorizedKeys reads the file strictly: any line that does not parse,
// or carries options the server cannot honour, is an error.
func loadAuthorizedKeys(path string) (*authorizedKeys, error) {
	a := &authorizedKeys{path: path}
	src, fi, err := readBounded(path, MaxAuthorizedKeysBytes)
	if err != nil {
		return nil, &ConfigError{Field: "AuthorizedKeys", Err: err}
	}
	keys, errs := parseAuthorizedKeys(path, src)
	if len(errs) > 0 {
		// Each line's error has its FILE:LINE position, which says enough.
		return nil, joinLines(errs)
	}
	if len(keys) == 0 {
		return nil, &ConfigError{Field: "AuthorizedKeys",
			Err: fmt.Errorf("%s: no keys (add one public key a line, as ssh-keygen writes them)", path)}
	}
	a.keys, a.modTime, a.size = keys, fi.ModTime(), fi.Size()
	return a, nil
}

// parseAuthorizedKeys returns the keys of an authorized_keys file and an
// error "FILE:LINE: message" for every line it cannot take.
func parseAuthorizedKeys(path string, src []byte) ([][]byte, []error) {
	var keys [][]byte
	var errs []error
	for i, line := range strings.Split(string(src), "\n") {
		line = strings.TrimSpace(line)
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		key, _, options, rest, err := gossh.ParseAuthorizedKey([]byte(line))
		switch {
		case err != nil:
			errs = append(errs, fmt.Errorf("%s:%d: not a public key: expected TYPE BASE64 [COMMENT]", path, i+1))
		case len(options) > 0:
			// from=, command=, restrict and the like would silently not
			// apply here; refusing the line keeps access no wider than meant.
			errs = append(errs, fmt.Errorf("%s:%d: key options (%s) are not supported; list the bare key", path, i+1, strings.Join(options, ",")))
		case len(bytes.TrimSpace(rest)) > 0:
			errs = append(errs, fmt.Errorf("%s:%d: one key a line expected", path, i+1))
		default:
			keys = append(keys, key.Marshal())
		}
	}
	return keys, errs
}

// allowed reports whether key is listed, reading the file again if it
// changed. A file that has become unreadable lets nobody in; lines that no
// longer parse are skipped (their keys are not let in).
func (a *authorizedKeys) allowed(key ssh.PublicKey) (bool, error) {
	a.mu.Lock()
	defer a.mu.Unlock()
	var reloadErr error
	fi, err := os.Stat(a.path)
	if err != nil {
		a.keys, a.modTime, a.size = nil, time.Time{}, 0
		return false, fmt.Errorf("authorized keys: %w", err)
	}
	if !fi.ModTime().Equal(a.modTime) || fi.Size() != a.size {
		src, fi, err := readBounded(a.path, MaxAuthorizedKeysBytes)
		if err != nil {
			a.keys, a.modTime, a.size = nil, time.Time{}, 0
			return false, fmt.Errorf("authorized keys: %w", err)
		}
		keys, errs := parseAuthorizedKeys(a.path, src)
		a.keys, a.modTime, a.size = keys, fi.ModTime(), fi.Size()
		if len(errs) > 0 {
			reloadErr = joinLines(errs)
		}
	}
	want := key.Marshal()
	for _, k := range a.keys {
		if bytes.Equal(k, want) {
			return true, reloadErr
		}
	}
	return false, reloadErr
}

// publicKeyAllowed is the server's only authentication method. It is also
// asked about keys the client only offers without proving it holds them, so
// accepting one here is not yet authentication: ssh.Session.PublicKey reports
// the key whose signature the SSH layer verified (the SSH fork takes it from
// the permissions of the attempt that succeeded, not from the last key this
// was asked about).
func (s *Server) publicKeyAllowed(ctx ssh.Context, key ssh.PublicKey) bool {
	fp := gossh.FingerprintSHA256(key)
	remote := ""
	if ctx.RemoteAddr() != nil {
		remote = ctx.RemoteAddr().String()
	}
	user := diag.Printable(ctx.User()) // the client's choice, not yet checked
	if err := validUser(ctx.User()); err != nil {
		s.log.Warn("auth refused", "user", user, "key", fp, "remote", remote, "reason", err.Error())
		return false
	}
	ok, err := s.keys.allowed(key)
	if err != nil {
		s.log.Error("authorized keys", "error", diag.Printable(err.Error())) // may quote the file's key options
	}
	if !ok {
		s.log.Warn("auth refused", "user", user, "key", fp, "remote", remote, "reason", "key not authorised")
	}
	return ok
}

// validUser checks the SSH user name, which names the traces folder: it is
// chosen by the client, so it must be a plain file name.
func validUser(u string) error {
	if u == "" || len(u) > 32 {
		return fmt.Errorf("user name must be 1 to 32 characters")
	}
	for i, r := range u {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '_':
		case (r == '.' || r == '-') && i > 0:
		default:
			return fmt.Errorf("user name %q: only letters, digits, _ and (not first) . -", u)
		}
	}
	return nil
}

func joinLines(errs []error) error {
	msgs := make([]string, len(errs))
	for i, e := range errs {
		msgs[i] = e.Error()
	}
	return fmt.Errorf("%s", strings.Join(msgs, "\n"))
}
