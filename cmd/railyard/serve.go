package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net"
	"os"
	"os/signal"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"

	gossh "golang.org/x/crypto/ssh"

	"railyard/tui/sshserve"
)

const serveUsage = `
usage: railyard serve --authorized-keys FILE --designs DIR [--listen ADDR]
       [--host-key FILE] [--traces DIR] [--max-sessions N] [--idle-timeout D]
       [--max-pending N] [--max-pending-per-addr N] [--handshake-timeout D]
       [--max-trace SIZE] [--max-wave SIZE]

Serve the explorer over SSH. Designers connect with a plain SSH client and
a key listed in --authorized-keys (public keys only: no passwords). The SSH
command chooses the design: NAME for DIR/NAME.sw, or a file name of DIR
with its extension (opsel_latch.sp, imm_select.v), each with its .steps
beside it; demo:NAME for an embedded demo; nothing for a picker; and
'join SESSION-ID' to watch someone's session read-only. The netlist flags
apply to every netlist served; a netlist's includes never leave DIR. The
save key writes the trace or a VCD under --traces/USER/ with a name the
server chooses; each session's trace is kept there too. Connections are
logged to stderr as JSON lines.

Each session's trace is capped at --max-trace: past it later actions are
not recorded and the explorer says so; what was recorded is still saved
and replays. A VCD a user saves is capped at --max-wave: past it the save
is refused. A SIZE is bytes, or a number with K, M or G (1024-based:
64M is 64 MiB).

A connection has --handshake-timeout to authenticate. Connections not yet
authenticated are capped per remote address (an IPv6 one by its /64) and in
all: over its address's cap a new connection is refused; over the cap in
all the oldest pending handshake of the address holding the most is dropped
to let the new one in, so a flood from one address cannot keep others out.

examples:
  railyard serve --authorized-keys team_keys --designs cells --traces traces
  railyard serve --authorized-keys team_keys --designs lib --power vpwr --ground vgnd
  ssh -t -p 2222 alice@127.0.0.1 opsel
  ssh -t -p 2222 alice@127.0.0.1 opsel_latch.sp
  ssh -t -p 2222 bob@127.0.0.1 join k3m9qa
`

// serveFlags is the flag that sets each sshserve.Config field, so that the
// server's errors, which name its fields, read in the user's terms.
var serveFlags = map[string]string{
	"Listen":            "--listen",
	"AuthorizedKeys":    "--authorized-keys",
	"HostKey":           "--host-key",
	"Designs":           "--designs",
	"Traces":            "--traces",
	"MaxSessions":       "--max-sessions",
	"IdleTimeout":       "--idle-timeout",
	"MaxPending":        "--max-pending",
	"MaxPendingPerAddr": "--max-pending-per-addr",
	"HandshakeTimeout":  "--handshake-timeout",
	"NoAuth":            "--no-auth",
	"MaxTrace":          "--max-trace",
	"MaxWave":           "--max-wave",
	// the netlist flags, fields of Config.Read
	"Read.Top":        "--top",
	"Read.Power":      "--power",
	"Read.Ground":     "--ground",
	"Read.Inputs":     "--inputs",
	"Read.NMOSModels": "--nmos-models",
	"Read.PMOSModels": "--pmos-models",
}

// serveError says err in flags: a ConfigError's fields become the flags
// that set them (a field no flag sets keeps its name).
func serveError(err error) string {
	var ce *sshserve.ConfigError
	if !errors.As(err, &ce) {
		return err.Error()
	}
	flag := func(field string) string {
		if f, ok := serveFlags[field]; ok {
			return f
		}
		return field
	}
	what := flag(ce.Field)
	if ce.Other != "" {
		what += " and " + flag(ce.Other)
	}
	return what + ": " + ce.Err.Error()
}

// defaultHostKey is where the host key lives unless --host-key says.
func defaultHostKey() string {
	dir, err := os.UserConfigDir()
	if err != nil {
		return "railyard_host_ed25519"
	}
	return filepath.Join(dir, "railyard", "ssh_host_ed25519")
}

func cmdServe(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("serve", serveUsage)
	var cfg sshserve.Config
	fs.StringVar(&cfg.Listen, "listen", sshserve.DefaultListen, "the `ADDR`ess to listen on (loopback unless you mean otherwise)")
	fs.StringVar(&cfg.AuthorizedKeys, "authorized-keys", "", "the public keys let in, one a line (`FILE`, as ssh-keygen writes them)")
	fs.StringVar(&cfg.HostKey, "host-key", defaultHostKey(), "the server's private key `FILE`; an ed25519 key is made there (mode 600) if missing")
	fs.StringVar(&cfg.Designs, "designs", "", "the `DIR` of designs served: .sw, netlists (.sp .cir .cdl ...) and IEEE 1364 modules (.v)")
	fs.StringVar(&cfg.Traces, "traces", "", "keep each session's trace and what users save (trace, VCD) under `DIR`/USER/ (nothing kept without it)")
	fs.IntVar(&cfg.MaxSessions, "max-sessions", sshserve.DefaultMaxSessions, "sessions open at once (`N`); more are refused")
	fs.DurationVar(&cfg.IdleTimeout, "idle-timeout", sshserve.DefaultIdleTimeout, "close a session after this long (`D`) without input; 0 never")
	fs.IntVar(&cfg.MaxPending, "max-pending", sshserve.DefaultMaxPending, "connections not yet authenticated at once (`N`), from all addresses")
	fs.IntVar(&cfg.MaxPendingPerAddr, "max-pending-per-addr", sshserve.DefaultMaxPendingPerAddr, "connections not yet authenticated at once (`N`) from one remote address")
	fs.DurationVar(&cfg.HandshakeTimeout, "handshake-timeout", sshserve.DefaultHandshakeTimeout, "time (`D`) from connecting to being authenticated")
	sizes := []struct {
		flag string
		v    *int64
		text string
	}{
		{"max-trace", &cfg.MaxTrace, byteSize(sshserve.DefaultMaxTrace)},
		{"max-wave", &cfg.MaxWave, byteSize(sshserve.DefaultMaxWave)},
	}
	fs.StringVar(&sizes[0].text, sizes[0].flag, sizes[0].text, "cap each session's trace at `SIZE` (bytes, or with K, M, G); later actions are not recorded")
	fs.StringVar(&sizes[1].text, sizes[1].flag, sizes[1].text, "refuse to save a VCD larger than `SIZE` (bytes, or with K, M, G)")
	fs.BoolVar(&cfg.NoAuth, "no-auth", false, "let anyone in: only on a loopback address, for trying it out")
	rf := addReaderFlags(fs)
	pos, code := parseArgs(fs, args, stdout, stderr)
	if code >= 0 {
		return code
	}
	if len(pos) > 0 {
		return usageError(stderr, "serve", "unexpected argument %q (the design is chosen by the SSH command)", pos[0])
	}
	if cfg.MaxSessions <= 0 {
		return usageError(stderr, "serve", "--max-sessions must be at least 1")
	}
	if cfg.IdleTimeout < 0 {
		return usageError(stderr, "serve", "--idle-timeout must not be negative")
	}
	if cfg.MaxPending <= 0 {
		return usageError(stderr, "serve", "--max-pending must be at least 1")
	}
	if cfg.MaxPendingPerAddr <= 0 {
		return usageError(stderr, "serve", "--max-pending-per-addr must be at least 1")
	}
	if cfg.HandshakeTimeout <= 0 {
		return usageError(stderr, "serve", "--handshake-timeout must be more than 0")
	}
	for _, sz := range sizes {
		n, err := parseByteSize(sz.text)
		if err != nil {
			return usageError(stderr, "serve", "--%s: %v", sz.flag, err)
		}
		*sz.v = n
	}
	cfg.Read = rf.readOptions()
	cfg.Logger = slog.New(slog.NewJSONHandler(stderr, nil))
	srv, err := sshserve.New(cfg)
	if err != nil {
		fmt.Fprintf(stderr, "railyard serve: %s\n", serveError(err))
		return exitUsage
	}
	ln, err := net.Listen("tcp", cfg.Listen)
	if err != nil {
		fmt.Fprintf(stderr, "railyard serve: %v\n", err)
		return exitFail
	}
	host, port, _ := net.SplitHostPort(ln.Addr().String())
	fmt.Fprintf(stdout, "railyard serve: listening on %s, host key %s\n", ln.Addr(), gossh.FingerprintSHA256(srv.HostKey()))
	fmt.Fprintf(stdout, "connect with: ssh -t -p %s %s [DESIGN | demo:NAME | join SESSION-ID]\n", port, host)

	stop := make(chan os.Signal, 1)
	signal.Notify(stop, os.Interrupt, syscall.SIGTERM)
	defer signal.Stop(stop)
	done := make(chan error, 1)
	go func() { done <- srv.Serve(ln) }()
	select {
	case err := <-done:
		if err != nil {
			fmt.Fprintf(stderr, "railyard serve: %s\n", serveError(err))
			return exitFail
		}
		return exitOK
	case <-stop:
	}
	// Let open sessions end for a moment, then close what is left.
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	if err := srv.Shutdown(ctx); err != nil {
		srv.Close()
	}
	<-done
	return exitOK
}

// byteSize words n as --max-trace and --max-wave take it: 64M, 512K, or
// bytes.
func byteSize(n int64) string {
	for _, u := range []struct {
		shift  uint
		suffix string
	}{{30, "G"}, {20, "M"}, {10, "K"}} {
		if n >= 1<<u.shift && n%(1<<u.shift) == 0 {
			return strconv.FormatInt(n>>u.shift, 10) + u.suffix
		}
	}
	return strconv.FormatInt(n, 10)
}

// parseByteSize reads a size such as 65536, 512K, 64M, 64MiB or 1G.
func parseByteSize(s string) (int64, error) {
	bad := fmt.Errorf("want a size such as 64M, 512K or 1048576 (bytes), got %q", s)
	t := strings.TrimSpace(s)
	digits := strings.TrimRight(t, "KMGiBkmgb ")
	unit := strings.ToUpper(strings.TrimSpace(t[len(digits):]))
	shift := 0
	switch unit {
	case "":
	case "K", "KIB":
		shift = 10
	case "M", "MIB":
		shift = 20
	case "G", "GIB":
		shift = 30
	default:
		return 0, bad
	}
	n, err := strconv.ParseInt(digits, 10, 64)
	if err != nil || n <= 0 {
		return 0, bad
	}
	if n > math.MaxInt64>>shift {
		return 0, fmt.Errorf("%q is too large", s)
	}
	return n << shift, nil
}
