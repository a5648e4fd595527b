package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime/debug"
	"sort"
	"strings"
	"sync"
	"time"

	"railyard/switchsim/diag"
	"railyard/switchsim/outfile"
	"railyard/switchsim/reach"
	"railyard/switchsim/session"
)

// checkOutputPaths refuses, before anything is checked, to write a report
// over one of the designs read or over anything that is not a regular file.
func checkOutputPaths(o checkOptions, paths []string) error {
	inputs := map[string]bool{}
	for _, p := range paths {
		if abs, err := filepath.Abs(p); err == nil {
			inputs[abs] = true
		}
	}
	if o.junit != "" {
		abs, err := filepath.Abs(o.junit)
		switch {
		case err != nil:
			return fmt.Errorf("--junit %s: %v", diag.Printable(o.junit), err)
		case inputs[abs]:
			return fmt.Errorf("--junit %s is one of the designs being checked", diag.Printable(o.junit))
		case notRegular(o.junit):
			return fmt.Errorf("--junit %s exists and is not a regular file", diag.Printable(o.junit))
		}
		if st, err := os.Stat(filepath.Dir(o.junit)); err != nil || !st.IsDir() {
			return fmt.Errorf("--junit %s: no folder %s to write it in", diag.Printable(o.junit), diag.Printable(filepath.Dir(o.junit)))
		}
	}
	for _, d := range []struct{ flag, dir string }{{"--save-steps", o.saveSteps}, {"--cache", o.cache}} {
		if d.dir == "" {
			continue
		}
		if st, err := os.Stat(d.dir); err == nil && !st.IsDir() {
			return fmt.Errorf("%s %s exists and is not a folder", d.flag, diag.Printable(d.dir))
		}
	}
	return nil
}

// saveFindingSteps writes each search finding's sequence as a steps file:
// DIR/<kind>-<node>.steps for one design, DIR/<design>/<kind>-<node>.steps
// for several (the design's path with / as __, its extension dropped).
func saveFindingSteps(dir string, r *designResult, several bool) error {
	if !r.Exhaustive || len(r.Findings) == 0 {
		return nil
	}
	if several {
		dir = filepath.Join(dir, safeName(strings.TrimSuffix(strings.ReplaceAll(r.Path, "/", "__"), filepath.Ext(r.Path))))
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	used := map[string]bool{}
	for i := range r.Findings {
		f := &r.Findings[i]
		what := f.Node
		if what == "" {
			what = f.Device
		}
		base := safeName(f.Kind + "-" + what)
		name := base
		for k := 2; used[name]; k++ {
			name = fmt.Sprintf("%s-%d", base, k)
		}
		used[name] = true
		path := filepath.Join(dir, name+".steps")
		if notRegular(path) {
			return fmt.Errorf("%s exists and is not a regular file", diag.Printable(path))
		}
		if err := outfile.Write(path, nil, func(w io.Writer) error { return writeFindingSteps(w, r, *f) }); err != nil {
			return err
		}
		f.StepsFile = path
	}
	return nil
}

// safeName keeps letters, digits and . _ - [ ] of a name (the characters of
// .sw names) and bounds its length.
func safeName(s string) string {
	var b strings.Builder
	for _, c := range s {
		switch {
		case c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c >= '0' && c <= '9', strings.ContainsRune("._-[]", c):
			b.WriteRune(c)
		default:
			b.WriteByte('_')
		}
	}
	out := strings.TrimLeft(b.String(), ".")
	if len(out) > 120 {
		out = out[:120]
	}
	if out == "" {
		out = "_"
	}
	return out
}

// writeFindingSteps writes a finding's sequence as a steps file: every input
// in every row, and a check column for the node holding, on the last row,
// the state the search saw there.
func writeFindingSteps(w io.Writer, r *designResult, f findingResult) error {
	var b strings.Builder
	fmt.Fprintf(&b, "# railyard check --exhaustive: %s on %s of %s\n", f.Kind, printableOr(f.Node, f.Device), diag.Printable(r.Path))
	fmt.Fprintf(&b, "# %s\n", diag.Printable(f.Message))
	fmt.Fprintf(&b, "# In %d of %d states. The shortest sequence: every input 0", f.States, r.States)
	if r.Reset > 0 {
		fmt.Fprintf(&b, ", the first %s of %s", diag.Count(r.Reset, "row"), diag.Printable(r.StepsPath))
	}
	fmt.Fprintf(&b, ", then %s.\n", diag.Count(f.Moves, "move"))
	fmt.Fprintf(&b, "# railyard run %s --steps THIS-FILE shows it at the last step", diag.Printable(r.Path))
	var with []string
	if r.Mode == "ideal" {
		with = append(with, "--ideal")
	}
	if f.Kind == string(reach.Glitch) || f.Kind == string(reach.Hazard) {
		with = append(with, "--glitches") // the search looks for pulses; run does when asked
	}
	if len(with) > 0 {
		b.WriteString(" (with " + strings.Join(with, " ") + ")")
	}
	b.WriteString(".\n")
	if f.Want != "" {
		b.WriteString("# The check column holds the state the search saw there.\n")
	}
	b.WriteString("apply " + strings.Join(r.InputNames, " ") + "\n")
	if f.Want != "" {
		b.WriteString("check " + f.Node + "\n")
	}
	drive := map[string]string{}
	for _, n := range r.InputNames {
		drive[n] = "x" // what a fresh session starts with; the first row sets every input
	}
	for i, row := range f.Sequence {
		var label []string
		for _, s := range row {
			drive[s.Input] = s.Drive
			label = append(label, s.Input+"="+s.Drive)
		}
		vals := make([]string, len(r.InputNames))
		for k, n := range r.InputNames {
			vals[k] = drive[n]
		}
		b.WriteString(strings.Join(vals, " "))
		if f.Want != "" {
			want := "-"
			if i == len(f.Sequence)-1 {
				want = f.Want
			}
			b.WriteString(" | " + want)
		}
		switch {
		case i == 0:
			b.WriteString("  # every input 0")
		case i <= r.Reset:
			fmt.Fprintf(&b, "  # reset row %d", i)
		default:
			b.WriteString("  # " + strings.Join(label, " "))
		}
		if i == len(f.Sequence)-1 {
			fmt.Fprintf(&b, ": %s on %s", f.Kind, printableOr(f.Node, f.Device))
		}
		b.WriteByte('\n')
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func printableOr(a, b string) string {
	if a == "" {
		a = b
	}
	return diag.Printable(a)
}

// The JUnit XML report. Its shape is the common one that CI systems read
// (the Jenkins/Ant-style junit-10.xsd): testsuites > testsuite > testcase,
// a testcase holding failure elements (message, type, text) and system-out.
type junitSuites struct {
	XMLName  xml.Name     `xml:"testsuites"`
	Name     string       `xml:"name,attr"`
	Tests    int          `xml:"tests,attr"`
	Failures int          `xml:"failures,attr"`
	Errors   int          `xml:"errors,attr"`
	Time     string       `xml:"time,attr"`
	Suites   []junitSuite `xml:"testsuite"`
}

type junitSuite struct {
	Name      string      `xml:"name,attr"`
	Tests     int         `xml:"tests,attr"`
	Failures  int         `xml:"failures,attr"`
	Errors    int         `xml:"errors,attr"`
	Skipped   int         `xml:"skipped,attr"`
	Time      string      `xml:"time,attr"`
	Timestamp string      `xml:"timestamp,attr"`
	Hostname  string      `xml:"hostname,attr"`
	Cases     []junitCase `xml:"testcase"`
}

type junitCase struct {
	Name      string         `xml:"name,attr"`
	Classname string         `xml:"classname,attr"`
	Time      string         `xml:"time,attr"`
	Failures  []junitFailure `xml:"failure"`
	SystemOut string         `xml:"system-out,omitempty"`
}

type junitFailure struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr"`
	Text    string `xml:",chardata"`
}

// junitCaseOf is a design's testcase: classname its folder with dots (as CI
// systems group by package), name its file (or demo name).
func junitCaseOf(r *designResult) junitCase {
	class, name := "railyard", r.Path
	if d, ok := strings.CutPrefix(r.Path, "demo:"); ok {
		class, name = "demo", d
	} else if i := strings.LastIndexByte(r.Path, '/'); i >= 0 {
		class, name = strings.ReplaceAll(strings.Trim(r.Path[:i], "./"), "/", "."), r.Path[i+1:]
		if class == "" {
			class = "railyard"
		}
	}
	if r.Corner != "" && r.Corner != session.Nominal {
		name += "@" + r.Corner // one testcase per design and corner; the design's own keeps its plain name
	}
	c := junitCase{Name: xmlText(diag.Printable(name)), Classname: xmlText(class), Time: fmt.Sprintf("%.3f", r.Seconds)}
	var out strings.Builder
	if r.Corner != "" {
		out.WriteString("technology: " + diag.Printable(session.CornerLabel(r.Corner)) + "\n")
	}
	if r.Margin != nil {
		fmt.Fprintf(&out, "worst margin: %.3f V on %s; shortest input sequence: %s\n", *r.Margin, diag.Printable(r.MarginNode),
			sequenceText(findingResult{Sequence: r.MarginSequence}, r.Reset))
	}
	for _, f := range append(append([]findingResult(nil), r.Static...), r.Findings...) {
		where := printableOr(f.Node, f.Device)
		text := fmt.Sprintf("%s (%s check): %s", f.Kind, f.Check, diag.Printable(f.Message))
		if f.Check == "exhaustive" {
			text += fmt.Sprintf("\nin %d of %d states, %s\nshortest input sequence: %s", f.States, r.States,
				diag.Count(f.Transitions, "transition"), sequenceText(f, r.Reset))
			if f.StepsFile != "" {
				text += "\nsaved as " + diag.Printable(f.StepsFile)
			}
		}
		if !f.Failing {
			out.WriteString(text + "\n")
			continue
		}
		msg := f.Kind
		if where != "" {
			msg += " on " + where
		}
		c.Failures = append(c.Failures, junitFailure{Message: xmlText(msg), Type: f.Kind, Text: xmlText(text)})
	}
	if r.Stopped != "" {
		c.Failures = append(c.Failures, junitFailure{Message: "search stopped at the " + r.Stopped, Type: "stopped",
			Text: fmt.Sprintf("explored %d states, stopped (%s) before every reachable state was checked", r.States, r.Stopped)})
	}
	c.SystemOut = xmlText(out.String())
	return c
}

// xmlText drops the characters XML 1.0 cannot hold (control characters but
// tab, newline and carriage return), which Printable has already escaped
// in anything taken from a file.
func xmlText(s string) string {
	return strings.Map(func(r rune) rune {
		if r < 0x20 && r != '\t' && r != '\n' && r != '\r' || r == 0xfffe || r == 0xffff {
			return -1
		}
		return r
	}, s)
}

// writeJUnit writes the report atomically: one testsuite, one testcase per
// design and corner.
func writeJUnit(path string, results []*designResult, o checkOptions, took time.Duration) error {
	name := "railyard check"
	if o.shard.n > 1 {
		name += " (shard " + o.shard.String() + ")"
	}
	host, err := os.Hostname()
	if err != nil || host == "" {
		host = "localhost"
	}
	suite := junitSuite{Name: name, Time: fmt.Sprintf("%.3f", took.Seconds()),
		Timestamp: time.Now().UTC().Format("2006-01-02T15:04:05"), Hostname: xmlText(host)}
	for _, r := range results {
		if r == nil || r.err != nil {
			continue
		}
		c := junitCaseOf(r)
		suite.Tests++
		if len(c.Failures) > 0 {
			suite.Failures++
		}
		suite.Cases = append(suite.Cases, c)
	}
	doc := junitSuites{Name: name, Tests: suite.Tests, Failures: suite.Failures, Time: suite.Time, Suites: []junitSuite{suite}}
	return outfile.Write(path, nil, func(w io.Writer) error {
		if _, err := io.WriteString(w, xml.Header); err != nil {
			return err
		}
		enc := xml.NewEncoder(w)
		enc.Indent("", "  ")
		if err := enc.Encode(doc); err != nil {
			return err
		}
		_, err := io.WriteString(w, "\n")
		return err
	})
}

// resultCache keeps design results in a folder, one JSON file a key.
type resultCache struct {
	dir string
}

// Cache bounds: an entry over maxCacheEntry is not kept, and after a run
// the oldest entries go until the folder is under maxCacheBytes.
const (
	maxCacheEntry = 1 << 20
	maxCacheBytes = 64 << 20
)

type cacheEntry struct {
	Key    string        `json:"key"`
	Result *designResult `json:"result"`
}

func openCache(dir string) (*resultCache, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("--cache %s: %v", diag.Printable(dir), err)
	}
	return &resultCache{dir: dir}, nil
}

func (c *resultCache) file(key string) string { return filepath.Join(c.dir, key+".json") }

// get returns the result stored under key, or nil: a missing, oversized,
// unreadable or corrupt entry is a miss.
func (c *resultCache) get(key string) *designResult {
	f, err := os.Open(c.file(key))
	if err != nil {
		return nil
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, maxCacheEntry+1))
	if err != nil || len(b) > maxCacheEntry {
		return nil
	}
	var e cacheEntry
	if json.Unmarshal(b, &e) != nil || e.Key != key || e.Result == nil || e.Result.Name == "" {
		return nil
	}
	now := time.Now()
	os.Chtimes(c.file(key), now, now) // recently used: kept longest by trim
	return e.Result
}

// put stores a result atomically; an entry too large is not kept.
func (c *resultCache) put(key string, r *designResult) {
	b, err := json.Marshal(cacheEntry{key, r})
	if err != nil || len(b) > maxCacheEntry {
		return
	}
	outfile.Write(c.file(key), nil, func(w io.Writer) error { _, err := w.Write(b); return err })
}

// trim removes the least recently used entries while the folder holds more
// than limit bytes of them.
func (c *resultCache) trim(limit int64) {
	ents, err := os.ReadDir(c.dir)
	if err != nil {
		return
	}
	type entry struct {
		path string
		size int64
		when time.Time
	}
	var list []entry
	var total int64
	for _, e := range ents {
		if !strings.HasSuffix(e.Name(), ".json") || !e.Type().IsRegular() {
			continue
		}
		info, err := e.Info()
		if err != nil {
			continue
		}
		list = append(list, entry{filepath.Join(c.dir, e.Name()), info.Size(), info.ModTime()})
		total += info.Size()
	}
	sort.Slice(list, func(i, j int) bool { return list[i].when.Before(list[j].when) })
	for _, e := range list {
		if total <= limit {
			break
		}
		if os.Remove(e.path) == nil {
			total -= e.size
		}
	}
}

var buildID = sync.OnceValue(func() string {
	// The executable's own bytes: any change to railyard, its cell library or
	// its presets changes them. The build's recorded version is added for
	// when the executable cannot be read.
	id := "unknown build"
	if bi, ok := debug.ReadBuildInfo(); ok {
		id = bi.Main.Path + " " + bi.Main.Version
		for _, s := range bi.Settings {
			if s.Key == "vcs.revision" || s.Key == "vcs.modified" {
				id += " " + s.Key + "=" + s.Value
			}
		}
	}
	exe, err := os.Executable()
	if err != nil {
		return id
	}
	f, err := os.Open(exe)
	if err != nil {
		return id
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, io.LimitReader(f, 1<<30)); err != nil {
		return id
	}
	return id + " sha256=" + hex.EncodeToString(h.Sum(nil))
})

// buildIdentity names this build of railyard for the cache key.
func buildIdentity() string { return buildID() }
