package sshserve

import (
	"errors"
	"log/slog"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"syscall"
	"testing"

	gossh "golang.org/x/crypto/ssh"
)

// goodConfig is a Config New takes, in dir.
func goodConfig(t *testing.T, dir string) Config {
	t.Helper()
	must(t, os.MkdirAll(filepath.Join(dir, "d"), 0o755))
	ak := filepath.Join(dir, "ak")
	must(t, os.WriteFile(ak, gossh.MarshalAuthorizedKey(newSigner(t).PublicKey()), 0o600))
	return Config{Listen: "127.0.0.1:0", AuthorizedKeys: ak, HostKey: filepath.Join(dir, "hk"),
		Designs: filepath.Join(dir, "d"), Explorer: fakeExplorer, Demos: func() []string { return nil },
		Logger: slog.New(slog.DiscardHandler)}
}

func TestConfigErrorsNameTheField(t *testing.T) {
	dir := t.TempDir()
	base := goodConfig(t, dir)
	if _, err := New(base); err != nil {
		t.Fatalf("the good config: %v", err)
	}
	notDir := filepath.Join(dir, "file")
	must(t, os.WriteFile(notDir, []byte("x"), 0o644))
	openKey := filepath.Join(dir, "open_hk")
	must(t, os.WriteFile(openKey, []byte("x"), 0o644))
	cases := []struct {
		name, field, other string
		edit               func(*Config)
	}{
		{"sessions", "MaxSessions", "", func(c *Config) { c.MaxSessions = -1 }},
		{"pending", "MaxPending", "", func(c *Config) { c.MaxPending = -1 }},
		{"per addr", "MaxPendingPerAddr", "", func(c *Config) { c.MaxPendingPerAddr = -2 }},
		{"idle", "IdleTimeout", "", func(c *Config) { c.IdleTimeout = -1 }},
		{"handshake", "HandshakeTimeout", "", func(c *Config) { c.HandshakeTimeout = -1 }},
		{"design bytes", "MaxDesignBytes", "", func(c *Config) { c.MaxDesignBytes = -1 }},
		{"trace cap", "MaxTrace", "", func(c *Config) { c.MaxTrace = -1 }},
		{"tiny trace cap", "MaxTrace", "", func(c *Config) { c.MaxTrace = MinFileCap - 1 }},
		{"wave cap", "MaxWave", "", func(c *Config) { c.MaxWave = 100 }},
		{"both", "NoAuth", "AuthorizedKeys", func(c *Config) { c.NoAuth = true }},
		{"no keys", "AuthorizedKeys", "", func(c *Config) { c.AuthorizedKeys = "" }},
		{"missing keys", "AuthorizedKeys", "", func(c *Config) { c.AuthorizedKeys = filepath.Join(dir, "nokeys") }},
		{"no host key", "HostKey", "", func(c *Config) { c.HostKey = "" }},
		{"open host key", "HostKey", "", func(c *Config) { c.HostKey = openKey }},
		{"no designs", "Designs", "", func(c *Config) { c.Designs = "" }},
		{"missing designs", "Designs", "", func(c *Config) { c.Designs = filepath.Join(dir, "nodesigns") }},
		{"designs a file", "Designs", "", func(c *Config) { c.Designs = notDir }},
		{"traces a file", "Traces", "", func(c *Config) { c.Traces = filepath.Join(notDir, "t") }},
		{"not loopback", "NoAuth", "", func(c *Config) { c.NoAuth, c.AuthorizedKeys, c.Listen = true, "", "0.0.0.0:2222" }},
		{"bad address", "Listen", "", func(c *Config) { c.NoAuth, c.AuthorizedKeys, c.Listen = true, "", "nowhere" }},
	}
	cfgType := reflect.TypeOf(Config{})
	for _, c := range cases {
		cfg := base
		c.edit(&cfg)
		_, err := New(cfg)
		var ce *ConfigError
		if !errors.As(err, &ce) {
			t.Errorf("%s: error %v, want a ConfigError", c.name, err)
			continue
		}
		if ce.Field != c.field || ce.Other != c.other {
			t.Errorf("%s: error on %q and %q, want %q and %q (%v)", c.name, ce.Field, ce.Other, c.field, c.other, err)
		}
		for _, f := range []string{ce.Field, ce.Other} {
			if _, ok := cfgType.FieldByName(f); f != "" && !ok {
				t.Errorf("%s: %q is no Config field", c.name, f)
			}
		}
		// The library speaks of its own fields, not of a command's flags.
		if strings.Contains(err.Error(), "--") {
			t.Errorf("%s: %q names a flag", c.name, err)
		}
	}
}

func TestAuthorizedKeysFileIsBounded(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "ak")
	line := gossh.MarshalAuthorizedKey(newSigner(t).PublicKey())
	big := make([]byte, 0, MaxAuthorizedKeysBytes+len(line))
	for len(big) <= MaxAuthorizedKeysBytes {
		big = append(big, line...)
	}
	must(t, os.WriteFile(p, big, 0o600))
	_, err := loadAuthorizedKeys(p)
	if err == nil || !strings.Contains(err.Error(), "over the limit of 4 MiB") {
		t.Errorf("a %d-byte keys file: %v, want a refusal naming the 4 MiB limit", len(big), err)
	}
	// Just under the limit is fine.
	must(t, os.WriteFile(p, big[:len(big)-2*len(line)], 0o600))
	if _, err := loadAuthorizedKeys(p); err != nil {
		t.Errorf("a keys file under the limit: %v", err)
	}
	// A named pipe is refused at once, not waited on.
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	if _, err := loadAuthorizedKeys(fifo); err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Errorf("a named pipe: %v, want a refusal", err)
	}
}

func TestAuthorizedKeysGrownPastTheLimitLetsNobodyIn(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "ak")
	k := newSigner(t)
	line := gossh.MarshalAuthorizedKey(k.PublicKey())
	must(t, os.WriteFile(p, line, 0o600))
	a, err := loadAuthorizedKeys(p)
	must(t, err)
	if ok, _ := a.allowed(k.PublicKey()); !ok {
		t.Fatal("the listed key is refused")
	}
	big := make([]byte, 0, MaxAuthorizedKeysBytes+len(line))
	for len(big) <= MaxAuthorizedKeysBytes {
		big = append(big, line...)
	}
	must(t, os.WriteFile(p, big, 0o600))
	ok, err := a.allowed(k.PublicKey())
	if ok || err == nil || !strings.Contains(err.Error(), "over the limit") {
		t.Errorf("after the file grew past the limit: allowed %v, error %v; want refused and why", ok, err)
	}
}

func TestHostKeyFileIsBounded(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "hk")
	must(t, os.WriteFile(p, make([]byte, MaxHostKeyBytes+1), 0o600))
	_, _, err := loadOrCreateHostKey(p)
	if err == nil || !strings.Contains(err.Error(), "over the limit of 64 KiB") {
		t.Errorf("a %d-byte host key: %v, want a refusal naming the 64 KiB limit", MaxHostKeyBytes+1, err)
	}
	if _, _, err := loadOrCreateHostKey(os.DevNull); err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Errorf("%s as the host key: %v, want a refusal", os.DevNull, err)
	}
}

func TestFileCapsDefaults(t *testing.T) {
	dir := t.TempDir()
	cfg := goodConfig(t, dir)
	srv, err := New(cfg)
	must(t, err)
	if srv.cfg.MaxTrace != DefaultMaxTrace || srv.cfg.MaxWave != DefaultMaxWave {
		t.Errorf("caps %d, %d; want the defaults %d, %d", srv.cfg.MaxTrace, srv.cfg.MaxWave, DefaultMaxTrace, DefaultMaxWave)
	}
	cfg.MaxTrace, cfg.MaxWave = MinFileCap, MinFileCap
	srv, err = New(cfg)
	must(t, err)
	if srv.cfg.MaxTrace != MinFileCap || srv.cfg.MaxWave != MinFileCap {
		t.Errorf("caps %d, %d; want the smallest taken, %d", srv.cfg.MaxTrace, srv.cfg.MaxWave, MinFileCap)
	}
}
