package outfile

import (
	"bufio"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"
)

func write(t *testing.T, p, s string) {
	t.Helper()
	if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
}

func TestCheckRefuses(t *testing.T) {
	dir := t.TempDir()
	design := filepath.Join(dir, "cell.sw")
	write(t, design, "design cell\n")
	other := filepath.Join(dir, "other.sw")
	write(t, other, "design other\n")
	link := filepath.Join(dir, "link.trace")
	if err := os.Symlink(other, link); err != nil {
		t.Skip("no symbolic links here:", err)
	}
	hard := filepath.Join(dir, "hard.trace")
	if err := os.Link(design, hard); err != nil {
		t.Skip("no hard links here:", err)
	}
	sub := filepath.Join(dir, "sub")
	os.Mkdir(sub, 0o755)
	keep := []Keep{{design, "the design"}}
	cwd, _ := os.Getwd()
	rel, _ := filepath.Rel(cwd, design)
	for _, c := range []struct {
		path, want string
	}{
		{design, "is the design"},
		{filepath.Join(dir, ".", "cell.sw"), "is the design"}, // another spelling
		{rel, "is the design"},                                // relative to here
		{hard, "is the design"},                               // the same file by identity
		{link, "is a symbolic link, not a regular file"},      // rename would replace the link
		{sub, "is a folder, not a regular file"},              //
		{filepath.Join(dir, "nofolder", "x.trace"), "does not exist"},
		{"", "no file named"},
		{"demo:flipflop", "embedded design"},
	} {
		err := Check(c.path, keep...)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("Check(%q) = %v, want %q", c.path, err, c.want)
			continue
		}
		// The error names the user's path.
		if c.path != "" && !strings.HasPrefix(err.Error(), c.path+": ") {
			t.Errorf("Check(%q) = %q does not start with the path", c.path, err)
		}
	}
	if _, err := os.Stat("/dev/null"); err == nil {
		if err := Check("/dev/null"); err == nil || !strings.Contains(err.Error(), "is a character device") {
			t.Errorf("Check(/dev/null) = %v, want a character device refused", err)
		}
	}
	// What may be written: a new file beside the design, and over an old
	// output (a regular file that is no input).
	for _, p := range []string{filepath.Join(dir, "new.trace"), other} {
		if err := Check(p, keep...); err != nil {
			t.Errorf("Check(%q) = %v, want nil", p, err)
		}
	}
}

func entries(t *testing.T, dir string) []string {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	return names
}

func TestCommitAbortWrite(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.trace")
	write(t, p, "old\n")
	f, err := Create(p)
	if err != nil {
		t.Fatal(err)
	}
	io.WriteString(f, "new\n")
	if b, _ := os.ReadFile(p); string(b) != "old\n" {
		t.Fatalf("the path changed before Commit: %q", b)
	}
	if err := f.Commit(); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "new\n" {
		t.Errorf("after Commit %q, want new", b)
	}
	if fi, _ := os.Stat(p); fi.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", fi.Mode().Perm())
	}
	if names := entries(t, dir); len(names) != 1 {
		t.Errorf("files %v, want only out.trace (no temporary left)", names)
	}

	f, _ = Create(p)
	io.WriteString(f, "half")
	f.Abort()
	if b, _ := os.ReadFile(p); string(b) != "new\n" || len(entries(t, dir)) != 1 {
		t.Errorf("Abort left %q and %v", b, entries(t, dir))
	}

	err = Write(p, nil, func(w io.Writer) error {
		io.WriteString(w, "broken")
		return errors.New("disk on fire")
	})
	if err == nil || !strings.HasPrefix(err.Error(), p+": ") || strings.Contains(err.Error(), ".tmp") {
		t.Errorf("a failed Write says %v; want the path and no temporary name", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "new\n" || len(entries(t, dir)) != 1 {
		t.Errorf("a failed Write left %q and %v", b, entries(t, dir))
	}
	if pendingFiles() != 0 {
		t.Errorf("%d temporary files still registered", pendingFiles())
	}
}

// The path is checked again at Commit: if it became a link meanwhile, the
// link is not replaced.
func TestCommitChecksAgain(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.vcd")
	f, err := Create(p)
	if err != nil {
		t.Fatal(err)
	}
	target := filepath.Join(dir, "precious")
	write(t, target, "keep me\n")
	if err := os.Symlink(target, p); err != nil {
		t.Skip(err)
	}
	if err := f.Commit(); err == nil || !strings.Contains(err.Error(), "symbolic link") {
		t.Errorf("Commit over a new link: %v", err)
	}
	if fi, _ := os.Lstat(p); fi.Mode()&os.ModeSymlink == 0 {
		t.Error("the link was replaced")
	}
	if len(entries(t, dir)) != 2 {
		t.Errorf("files %v, want the link and its target only", entries(t, dir))
	}
}

func TestUnwritableFolder(t *testing.T) {
	if runtime.GOOS == "windows" || os.Geteuid() == 0 {
		t.Skip("folder permissions do not bind here")
	}
	dir := filepath.Join(t.TempDir(), "ro")
	os.Mkdir(dir, 0o555)
	p := filepath.Join(dir, "x.vcd")
	_, err := Create(p)
	if err == nil || !strings.HasPrefix(err.Error(), p+": cannot write in its folder") {
		t.Errorf("Create in a read-only folder: %v", err)
	}
}

// TestSignalRemovesTemporary runs a helper process that starts an output
// and waits; SIGINT and SIGTERM must remove its temporary file and exit
// with 130 and 143.
func TestSignalRemovesTemporary(t *testing.T) {
	if runtime.GOOS == "windows" {
		t.Skip("no SIGINT to send")
	}
	for _, c := range []struct {
		sig  syscall.Signal
		code int
	}{{syscall.SIGINT, 130}, {syscall.SIGTERM, 143}} {
		dir := t.TempDir()
		cmd := exec.Command(os.Args[0], "-test.run=TestSignalHelper")
		cmd.Env = append(os.Environ(), "OUTFILE_HELPER_DIR="+dir)
		out, _ := cmd.StdoutPipe()
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		line, _ := bufio.NewReader(out).ReadString('\n')
		if !strings.HasPrefix(line, "ready") {
			t.Fatalf("helper said %q", line)
		}
		if n := len(entries(t, dir)); n != 1 {
			t.Fatalf("%d files while writing, want the temporary one", n)
		}
		cmd.Process.Signal(c.sig)
		done := make(chan error, 1)
		go func() { done <- cmd.Wait() }()
		select {
		case <-done:
		case <-time.After(10 * time.Second):
			cmd.Process.Kill()
			t.Fatal("the helper did not exit on the signal")
		}
		if got := cmd.ProcessState.ExitCode(); got != c.code {
			t.Errorf("%v: exit %d, want %d", c.sig, got, c.code)
		}
		if names := entries(t, dir); len(names) != 0 {
			t.Errorf("%v: files left behind: %v", c.sig, names)
		}
	}
}

func TestSignalHelper(t *testing.T) {
	dir := os.Getenv("OUTFILE_HELPER_DIR")
	if dir == "" {
		t.Skip("only run by TestSignalRemovesTemporary")
	}
	HandleSignals()
	f, err := Create(filepath.Join(dir, "run.trace"))
	if err != nil {
		os.Exit(3)
	}
	io.WriteString(f, "half a trace\n")
	os.Stdout.WriteString("ready\n")
	time.Sleep(time.Minute)
	os.Exit(4)
}
