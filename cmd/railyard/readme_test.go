package main

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// The README's captures are checked here so that they cannot drift from
// what the program prints. A fenced block is checked when the line before
// its opening fence is one of:
//
//	<!-- readme-test: shell -->
//	    every line starting with "$ " is a command, run in order by bash in
//	    a scratch folder with this railyard first on PATH; the lines after
//	    it, up to the next command, are its output (stdout and stderr). A
//	    line "..." stands for any number of lines left out.
//	<!-- readme-test: same as PATH -->
//	    the block is the file PATH (relative to the repository), a golden
//	    file that another test keeps true (an explorer screen).
//
// `go test ./cmd/railyard -run TestREADME -update` rewrites the checked
// blocks from what the program prints, keeping each "..." where it was:
// a part after "..." is found again by its first line.

const readmeMarker = "<!-- readme-test: "

type readmeBlock struct {
	kind  string // "shell" or "same as PATH"
	start int    // index of the first line inside the fence
	end   int    // index of the closing fence
}

func readmeBlocks(lines []string) []readmeBlock {
	var out []readmeBlock
	for i := 0; i+1 < len(lines); i++ {
		l := strings.TrimSpace(lines[i])
		if !strings.HasPrefix(l, readmeMarker) || !strings.HasPrefix(lines[i+1], "```") {
			continue
		}
		kind := strings.TrimSuffix(strings.TrimPrefix(l, readmeMarker), "-->")
		b := readmeBlock{kind: strings.TrimSpace(kind), start: i + 2}
		for j := i + 2; j < len(lines); j++ {
			if strings.HasPrefix(lines[j], "```") {
				b.end = j
				break
			}
		}
		if b.end > 0 {
			out = append(out, b)
			i = b.end
		}
	}
	return out
}

// shellCommand is one "$ " line of a block and the output shown for it.
type shellCommand struct {
	cmd    string
	output []string
}

func splitCommands(body []string) []shellCommand {
	var cmds []shellCommand
	for _, l := range body {
		if c, ok := strings.CutPrefix(l, "$ "); ok {
			cmds = append(cmds, shellCommand{cmd: c})
			continue
		}
		if len(cmds) > 0 {
			cmds[len(cmds)-1].output = append(cmds[len(cmds)-1].output, l)
		}
	}
	return cmds
}

// matches reports whether got (every line printed) is shown by want, in
// which each "..." line stands for any run of lines.
func matches(want, got []string) bool {
	if len(want) == 0 {
		return len(got) == 0
	}
	if want[0] == "..." {
		for k := 0; k <= len(got); k++ {
			if matches(want[1:], got[k:]) {
				return true
			}
		}
		return false
	}
	return len(got) > 0 && got[0] == want[0] && matches(want[1:], got[1:])
}

// regenerate makes a new shown output from got, keeping the shape of want:
// each part between "..." lines is taken again from got, as many lines as
// it had, starting at the line that best matches its first line (the
// longest common prefix, after the previous part). With no "...", got.
func regenerate(want, got []string) []string {
	if !containsLine(want, "...") {
		return got
	}
	var parts [][]string
	cur := []string{}
	for _, l := range want {
		if l == "..." {
			parts = append(parts, cur)
			cur = []string{}
			continue
		}
		cur = append(cur, l)
	}
	parts = append(parts, cur)
	var out []string
	at := 0
	for i, p := range parts {
		if i > 0 {
			out = append(out, "...")
		}
		if len(p) == 0 {
			continue
		}
		from := at
		if i > 0 {
			best, bestLen := -1, -1
			for k := at; k < len(got); k++ {
				if n := commonPrefix(got[k], p[0]); n > bestLen {
					best, bestLen = k, n
				}
			}
			if best < 0 {
				continue
			}
			from = best
		}
		to := min(from+len(p), len(got))
		if i == len(parts)-1 && want[len(want)-1] != "..." {
			to = len(got) // a last part runs to the end of the output
		}
		out = append(out, got[from:to]...)
		at = to
	}
	return out
}

func commonPrefix(a, b string) int {
	n := 0
	for n < len(a) && n < len(b) && a[n] == b[n] {
		n++
	}
	return n
}

func containsLine(ls []string, x string) bool {
	for _, l := range ls {
		if l == x {
			return true
		}
	}
	return false
}

// buildRailyard builds this command into dir for the shell blocks.
func buildRailyard(t *testing.T, dir string) {
	t.Helper()
	out, err := exec.Command("go", "build", "-o", filepath.Join(dir, "railyard"), ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
}

// runShell runs the commands in order in one bash in dir, and returns each
// one's output lines.
func runShell(t *testing.T, dir, bin string, cmds []shellCommand) [][]string {
	t.Helper()
	const mark = "@@readme-test-command@@"
	var script strings.Builder
	// $? after each command is kept and given back before the next, so
	// that `echo $?` reads the command before it, not the mark.
	script.WriteString("exec 2>&1\nrc_=0\n")
	for _, c := range cmds {
		fmt.Fprintf(&script, "echo %s\n(exit $rc_)\n%s\nrc_=$?\n", mark, c.cmd)
	}
	sh := exec.Command("bash", "-c", script.String())
	sh.Dir = dir
	sh.Env = append(os.Environ(), "PATH="+bin+string(os.PathListSeparator)+os.Getenv("PATH"), "NO_COLOR=1", "TZ=UTC", "LC_ALL=C")
	out, _ := sh.Output()
	chunks := strings.Split(string(out), mark+"\n")
	if len(chunks) != len(cmds)+1 {
		t.Fatalf("the shell block printed %d command marks for %d commands:\n%s", len(chunks)-1, len(cmds), out)
	}
	res := make([][]string, len(cmds))
	for i, ch := range chunks[1:] {
		ch = strings.TrimSuffix(ch, "\n")
		if ch != "" {
			res[i] = strings.Split(ch, "\n")
		}
	}
	return res
}

func TestREADME(t *testing.T) {
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("no bash")
	}
	if runtime.GOOS == "windows" {
		t.Skip("the captures are of a POSIX shell")
	}
	root, err := filepath.Abs(filepath.Join("..", ".."))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(root, "README.md")
	src, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(src), "\n")
	blocks := readmeBlocks(lines)
	if len(blocks) == 0 {
		t.Fatal("the README has no checked captures")
	}
	bin := t.TempDir()
	buildRailyard(t, bin)
	changed := false
	// Replace from the end so that earlier indices stay valid.
	for bi := len(blocks) - 1; bi >= 0; bi-- {
		b := blocks[bi]
		body := lines[b.start:b.end]
		var fresh []string
		switch {
		case b.kind == "shell":
			// Each block runs in a scratch folder of its own that sees the
			// repository's files by their usual relative names.
			dir := t.TempDir()
			for _, top := range []string{"cmd", "designs", "switchsim"} {
				if err := os.Symlink(filepath.Join(root, top), filepath.Join(dir, top)); err != nil {
					t.Fatal(err)
				}
			}
			cmds := splitCommands(body)
			outs := runShell(t, dir, bin, cmds)
			for i, c := range cmds {
				fresh = append(fresh, "$ "+c.cmd)
				if matches(c.output, outs[i]) {
					fresh = append(fresh, c.output...)
					continue
				}
				if !*update {
					t.Errorf("README.md:%d: `%s` prints what the README does not show\n--- README\n%s\n--- printed\n%s",
						b.start+1, c.cmd, strings.Join(c.output, "\n"), strings.Join(outs[i], "\n"))
				}
				fresh = append(fresh, regenerate(c.output, outs[i])...)
			}
		case strings.HasPrefix(b.kind, "same as "):
			file := filepath.Join(root, filepath.FromSlash(strings.TrimPrefix(b.kind, "same as ")))
			g, err := os.ReadFile(file)
			if err != nil {
				t.Fatalf("README.md:%d: %v", b.start, err)
			}
			fresh = strings.Split(strings.TrimSuffix(string(g), "\n"), "\n")
			if !*update && strings.Join(fresh, "\n") != strings.Join(body, "\n") {
				t.Errorf("README.md:%d: the capture differs from %s (go test ./cmd/railyard -run TestREADME -update)", b.start+1, file)
			}
		default:
			t.Fatalf("README.md:%d: unknown capture kind %q", b.start, b.kind)
		}
		if strings.Join(fresh, "\n") != strings.Join(body, "\n") {
			changed = true
			lines = append(lines[:b.start], append(fresh, lines[b.end:]...)...)
		}
	}
	if *update && changed {
		if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func TestREADMEMatching(t *testing.T) {
	got := []string{"a", "b", "c", "d", "e"}
	for _, c := range []struct {
		want []string
		ok   bool
	}{
		{[]string{"a", "b", "c", "d", "e"}, true},
		{[]string{"a", "...", "e"}, true},
		{[]string{"a", "...", "c", "...", "e"}, true},
		{[]string{"...", "d", "e"}, true},
		{[]string{"a", "..."}, true},
		{[]string{"a", "c", "..."}, false},
		{[]string{"a", "...", "x"}, false},
		{[]string{"a", "b"}, false},
	} {
		if matches(c.want, got) != c.ok {
			t.Errorf("matches(%q) = %v, want %v", c.want, !c.ok, c.ok)
		}
	}
	// Regenerating keeps the shape: the part after "..." found again by its
	// first line, as many lines as it had; a last part runs to the end.
	re := regenerate([]string{"a", "...", "c old", "d old", "...", "e"}, got)
	if want := []string{"a", "...", "c", "d", "...", "e"}; strings.Join(re, "|") != strings.Join(want, "|") {
		t.Errorf("regenerate = %q, want %q", re, want)
	}
	if b := bytes.Count([]byte(strings.Join(regenerate([]string{"x", "y"}, got), "\n")), []byte("\n")); b != 4 {
		t.Errorf("regenerate without elision does not give the whole output")
	}
}
