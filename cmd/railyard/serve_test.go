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
		"-handshake-timeout D", "(default 30s)", "-max-trace SIZE", "-max-wave SIZE", `(default "64M")`} {
		if !strings.Contains(out, want) {
			t.Errorf("serve --help does not show %q", want)
		}
	}
	for _, bad := range [][]string{
		{"--max-pending", "0"}, {"--max-pending", "-3"},
		{"--max-pending-per-addr", "0"},
		{"--handshake-timeout", "0s"}, {"--handshake-timeout", "-1s"},
		{"--max-trace", "0"}, {"--max-trace", "-64M"}, {"--max-trace", "64MB"}, {"--max-trace", "lots"},
		{"--max-trace", "1.5M"}, {"--max-trace", "99999999999G"},
		{"--max-trace", "1K"}, // under the smallest cap taken (the server's own check)
		{"--max-wave", "0"}, {"--max-wave", "12x"}, {"--max-wave", "100"},
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
		typ, ok := cfg, true
		for _, part := range strings.Split(field, ".") { // Read.Top: a field of a field
			var f reflect.StructField
			if f, ok = typ.FieldByName(part); !ok {
				break
			}
			typ = f.Type
		}
		if !ok {
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

func TestParseByteSize(t *testing.T) {
	for _, c := range []struct {
		in   string
		want int64
	}{
		{"65536", 65536}, {"512K", 512 << 10}, {"512k", 512 << 10}, {"64M", 64 << 20}, {"64MiB", 64 << 20},
		{"64 MiB", 64 << 20}, {"1G", 1 << 30}, {"2gib", 2 << 30},
	} {
		if got, err := parseByteSize(c.in); err != nil || got != c.want {
			t.Errorf("parseByteSize(%q) = %d, %v; want %d", c.in, got, err, c.want)
		}
	}
	// MB is refused rather than guessed (1000- or 1024-based).
	for _, bad := range []string{"", "M", "0", "-1", "64MB", "64 B", "1.5M", "0x10", "8E", "99999999999G"} {
		if got, err := parseByteSize(bad); err == nil {
			t.Errorf("parseByteSize(%q) = %d, want an error", bad, got)
		}
	}
	// What --help shows as the default reads back as the same size.
	for _, n := range []int64{sshserve.DefaultMaxTrace, sshserve.DefaultMaxWave, 3 << 30, 16 << 10, 100000} {
		if got, err := parseByteSize(byteSize(n)); err != nil || got != n {
			t.Errorf("%d shown as %q reads back as %d, %v", n, byteSize(n), got, err)
		}
	}
}
