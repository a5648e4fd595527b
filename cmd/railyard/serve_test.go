package main

import (
	"crypto/ed25519"
	"crypto/rand"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"

	gossh "golang.org/x/crypto/ssh"

	"railyard/tui/sshserve"
)

func TestServeLimitFlags(t *testing.T) {
	code, out, _ := call("serve", "--help")
	if code != 0 {
		t.Fatalf("serve --help: exit %d", code)
	}
	// The documented defaults (README: serving over SSH).
	for _, want := range []string{"-max-pending N", "(default 64)", "-max-pending-per-addr N", "(default 16)",
		"-handshake-timeout D", "(default 30s)"} {
		if !strings.Contains(out, want) {
			t.Errorf("serve --help does not show %q", want)
		}
	}
	for _, bad := range [][]string{
		{"--max-pending", "0"}, {"--max-pending", "-3"},
		{"--max-pending-per-addr", "0"},
		{"--handshake-timeout", "0s"}, {"--handshake-timeout", "-1s"},
	} {
		args := append([]string{"serve", "--designs", t.TempDir(), "--no-auth", "--listen", "127.0.0.1:0"}, bad...)
		code, out, errOut := call(args...)
		if code != 2 || !strings.Contains(errOut, bad[0]) || out != "" {
			t.Errorf("serve %s %s: exit %d, stdout %q, stderr %q; want 2 and a message naming the flag",
				bad[0], bad[1], code, out, errOut)
		}
	}
}

func TestServeErrorsNameFlags(t *testing.T) {
	dir := t.TempDir()
	designs := filepath.Join(dir, "designs")
	check(t, os.MkdirAll(designs, 0o755))
	keys := filepath.Join(dir, "keys")
	pub, _, err := ed25519.GenerateKey(rand.Reader)
	check(t, err)
	sshPub, err := gossh.NewPublicKey(pub)
	check(t, err)
	check(t, os.WriteFile(keys, gossh.MarshalAuthorizedKey(sshPub), 0o600))
	openKey := filepath.Join(dir, "open_host_key")
	check(t, os.WriteFile(openKey, []byte("not a key\n"), 0o644))
	file := filepath.Join(dir, "file")
	check(t, os.WriteFile(file, []byte("x"), 0o644))
	hostKey := filepath.Join(dir, "host_key")
	for _, c := range []struct {
		want string
		args []string
	}{
		{"--designs: ", []string{"--no-auth", "--designs", filepath.Join(dir, "none")}},
		{"--designs: ", []string{"--no-auth", "--designs", file}},
		{"--authorized-keys: ", []string{"--authorized-keys", filepath.Join(dir, "nokeys"), "--designs", designs}},
		{"--authorized-keys: a file is required", []string{"--designs", designs}},
		{"--no-auth and --authorized-keys: they exclude each other", []string{"--no-auth", "--authorized-keys", keys, "--designs", designs}},
		{"--no-auth: only allowed on a loopback address", []string{"--no-auth", "--listen", "0.0.0.0:0", "--designs", designs}},
		{"--listen: ", []string{"--no-auth", "--listen", "nowhere", "--designs", designs}},
		{"--host-key: ", []string{"--no-auth", "--host-key", openKey, "--designs", designs}},
		{"--traces: ", []string{"--no-auth", "--traces", filepath.Join(file, "t"), "--designs", designs}},
	} {
		args := []string{"serve", "--listen", "127.0.0.1:0", "--host-key", hostKey}
		code, out, errOut := call(append(args, c.args...)...)
		// The message is a line of its own (the log's JSON lines may come first).
		if code != 2 || out != "" || !strings.Contains("\n"+errOut, "\nrailyard serve: "+c.want) {
			t.Errorf("serve %v: exit %d, stdout %q, stderr %q; want 2 and %q", c.args, code, out, errOut, "railyard serve: "+c.want)
		}
		for _, field := range []string{"Designs", "AuthorizedKeys", "NoAuth", "Listen", "HostKey", "Traces"} {
			if strings.Contains(errOut, field+":") || strings.Contains(errOut, field+" and") {
				t.Errorf("serve %v: %q names the Config field %s, not its flag", c.args, errOut, field)
			}
		}
	}
}

func check(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

func TestServeFlagsAreConfigFields(t *testing.T) {
	cfg := reflect.TypeOf(sshserve.Config{})
	flags := map[string]bool{}
	for field, flag := range serveFlags {
		if _, ok := cfg.FieldByName(field); !ok {
			t.Errorf("serveFlags maps %s, which is no sshserve.Config field", field)
		}
		flags[flag] = true
	}
	// Every flag serve takes sets a Config field, so each must be mapped.
	_, help, _ := call("serve", "--help")
	for _, m := range regexp.MustCompile(`(?m)^  -([a-z-]+)`).FindAllStringSubmatch(help, -1) {
		if !flags["--"+m[1]] {
			t.Errorf("serve flag --%s is not in serveFlags", m[1])
		}
	}
	if len(flags) < 11 {
		t.Errorf("only %d flags mapped", len(flags))
	}
}
