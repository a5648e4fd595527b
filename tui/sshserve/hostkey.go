package sshserve

import (
	"crypto/ed25519"
	"crypto/rand"
	"encoding/pem"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"

	gossh "golang.org/x/crypto/ssh"
)

// loadOrCreateHostKey reads the host key at path, or creates an ed25519 key
// there (mode 600, with PATH.pub beside it) when there is none, so clients see
// the same host key across restarts.
func loadOrCreateHostKey(path string) (gossh.Signer, bool, error) {
	pemBytes, fi, err := readBounded(path, MaxHostKeyBytes)
	if errors.Is(err, fs.ErrNotExist) {
		signer, err := createHostKey(path)
		return signer, err == nil, err
	}
	if err != nil {
		return nil, false, err
	}
	// As sshd does: a private key others can read is not a secret.
	if runtime.GOOS != "windows" && fi.Mode().Perm()&0o077 != 0 {
		return nil, false, fmt.Errorf("%s: mode %04o lets others read it; run chmod 600 %s",
			path, fi.Mode().Perm(), path)
	}
	signer, err := gossh.ParsePrivateKey(pemBytes)
	if err != nil {
		return nil, false, fmt.Errorf("%s: %v", path, err)
	}
	return signer, false, nil
}

func createHostKey(path string) (gossh.Signer, error) {
	_, priv, err := ed25519.GenerateKey(rand.Reader)
	if err != nil {
		return nil, err
	}
	block, err := gossh.MarshalPrivateKey(priv, "railyard host key")
	if err != nil {
		return nil, err
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o700); err != nil {
		return nil, err
	}
	// O_EXCL: two servers starting at once never overwrite each other's key.
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		return nil, err
	}
	if _, err := f.Write(pem.EncodeToMemory(block)); err != nil {
		f.Close()
		os.Remove(path)
		return nil, err
	}
	if err := f.Close(); err != nil {
		os.Remove(path)
		return nil, err
	}
	signer, err := gossh.NewSignerFromKey(priv)
	if err != nil {
		return nil, err
	}
	pub := gossh.MarshalAuthorizedKey(signer.PublicKey())
	// The public half is only a convenience for known_hosts; failing to write it is not fatal.
	_ = os.WriteFile(path+".pub", pub, 0o644)
	return signer, nil
}
