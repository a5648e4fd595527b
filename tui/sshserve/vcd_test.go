package sshserve

import (
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// vcdVar is one $var of a VCD header.
type vcdVar struct {
	kind, id, ref, scope string
	size                 int
}

// vcdFile is what the minimal reader below takes from a four-state VCD.
type vcdFile struct {
	timescale string
	vars      []vcdVar
	times     []uint64
	// values[id][i] is the value of the variable with code id after the
	// time times[i] (carried over from earlier times when it did not change).
	values map[string][]string
}

// vcdVarKinds are the var_type keywords of a $var (IEEE 1364-2005 §18.2.3,
// $var; from memory).
var vcdVarKinds = map[string]bool{"event": true, "integer": true, "parameter": true, "real": true,
	"realtime": true, "reg": true, "supply0": true, "supply1": true, "time": true, "tri": true,
	"triand": true, "trior": true, "trireg": true, "tri0": true, "tri1": true, "wand": true,
	"wire": true, "wor": true}

// vcdTimescale is the $timescale's form: 1, 10 or 100 and a unit (IEEE
// 1364-2005 §18.2.3, $timescale; from memory).
var vcdTimescale = regexp.MustCompile(`^(1|10|100)(s|ms|us|ns|ps|fs)$`)

// readVCD is a reader of the four-state VCD format written from its
// definition in IEEE 1364-2005 §18.2 (from memory), independent of the
// project's writer: the file is whitespace-separated tokens; the header is
// keyword commands each closed by $end ($date, $version, $comment,
// $timescale, $scope TYPE NAME, $var TYPE SIZE CODE REFERENCE [SELECT],
// $upscope, then $enddefinitions); the body is #TIME, the $dump markers,
// and value changes: a scalar one of 0 1 x z directly followed by its
// identifier code, a vector bDIGITS or rNUMBER, a space, and its code.
func readVCD(src string) (*vcdFile, error) {
	toks := strings.Fields(src)
	f := &vcdFile{values: map[string][]string{}}
	i := 0
	next := func() (string, error) {
		if i >= len(toks) {
			return "", fmt.Errorf("the file ends inside a command")
		}
		i++
		return toks[i-1], nil
	}
	upToEnd := func() ([]string, error) {
		var out []string
		for {
			t, err := next()
			if err != nil {
				return nil, err
			}
			if t == "$end" {
				return out, nil
			}
			out = append(out, t)
		}
	}
	var scopes []string
	ids := map[string]bool{}
header:
	for {
		t, err := next()
		if err != nil {
			return nil, fmt.Errorf("no $enddefinitions")
		}
		switch t {
		case "$date", "$version", "$comment":
			if _, err := upToEnd(); err != nil {
				return nil, fmt.Errorf("%s: %v", t, err)
			}
		case "$timescale":
			ts, err := upToEnd()
			if err != nil {
				return nil, fmt.Errorf("$timescale: %v", err)
			}
			f.timescale = strings.Join(ts, "")
			if !vcdTimescale.MatchString(f.timescale) {
				return nil, fmt.Errorf("$timescale %q is not 1, 10 or 100 and a unit", f.timescale)
			}
		case "$scope":
			args, err := upToEnd()
			if err != nil || len(args) != 2 {
				return nil, fmt.Errorf("$scope %v: want TYPE NAME $end", args)
			}
			scopes = append(scopes, args[1])
		case "$upscope":
			if args, err := upToEnd(); err != nil || len(args) != 0 || len(scopes) == 0 {
				return nil, fmt.Errorf("$upscope %v outside a scope", args)
			}
			scopes = scopes[:len(scopes)-1]
		case "$var":
			args, err := upToEnd()
			if err != nil || len(args) < 4 || len(args) > 5 {
				return nil, fmt.Errorf("$var %v: want TYPE SIZE CODE REFERENCE [SELECT] $end", args)
			}
			size, err := strconv.Atoi(args[1])
			if err != nil || size < 1 {
				return nil, fmt.Errorf("$var %v: size %q", args, args[1])
			}
			if !vcdVarKinds[args[0]] {
				return nil, fmt.Errorf("$var %v: no var_type %q", args, args[0])
			}
			for _, c := range args[2] {
				if c < 33 || c > 126 { // printable ASCII, space excluded
					return nil, fmt.Errorf("$var %v: identifier code %q", args, args[2])
				}
			}
			if ids[args[2]] {
				return nil, fmt.Errorf("$var %v: identifier code %q used twice", args, args[2])
			}
			if len(scopes) == 0 {
				return nil, fmt.Errorf("$var %v outside every scope", args)
			}
			ids[args[2]] = true
			f.vars = append(f.vars, vcdVar{kind: args[0], size: size, id: args[2], ref: args[3], scope: strings.Join(scopes, ".")})
		case "$enddefinitions":
			if args, err := upToEnd(); err != nil || len(args) != 0 {
				return nil, fmt.Errorf("$enddefinitions %v", args)
			}
			break header
		default:
			return nil, fmt.Errorf("%q in the header", t)
		}
	}
	if len(scopes) != 0 {
		return nil, fmt.Errorf("scopes %v left open", scopes)
	}
	cur := map[string]string{}
	set := func(id, v string) error {
		if !ids[id] {
			return fmt.Errorf("a change of %q, which no $var declares", id)
		}
		if len(f.times) == 0 {
			return fmt.Errorf("a change before the first #time")
		}
		cur[id] = v
		return nil
	}
	flush := func() {
		for id := range ids {
			f.values[id] = append(f.values[id], cur[id])
		}
	}
	for i < len(toks) {
		t, _ := next()
		switch {
		case t[0] == '#':
			n, err := strconv.ParseUint(t[1:], 10, 64)
			if err != nil {
				return nil, fmt.Errorf("time %q", t)
			}
			if len(f.times) > 0 {
				if n <= f.times[len(f.times)-1] {
					return nil, fmt.Errorf("time %d after %d: times must increase", n, f.times[len(f.times)-1])
				}
				flush()
			}
			f.times = append(f.times, n)
		case t == "$dumpvars" || t == "$dumpall" || t == "$dumpon" || t == "$dumpoff" || t == "$end":
		case t == "$comment":
			if _, err := upToEnd(); err != nil {
				return nil, err
			}
		case strings.ContainsRune("01xXzZ", rune(t[0])):
			if err := set(t[1:], strings.ToLower(t[:1])); err != nil {
				return nil, err
			}
		case strings.ContainsRune("bBrR", rune(t[0])):
			id, err := next()
			if err != nil {
				return nil, err
			}
			if err := set(id, strings.ToLower(t[1:])); err != nil {
				return nil, err
			}
		default:
			return nil, fmt.Errorf("%q in the value changes", t)
		}
	}
	if len(f.times) > 0 {
		flush()
	}
	return f, nil
}

// series is the values of the variable ref at every time.
func (f *vcdFile) series(ref string) ([]string, error) {
	for _, v := range f.vars {
		if v.ref == ref {
			return f.values[v.id], nil
		}
	}
	return nil, fmt.Errorf("no $var %s", ref)
}

func TestExplorerVCDIsSavedOverSSH(t *testing.T) {
	ts := startServer(t, 1, realExplorer)
	ts.writeDesign(t, "opsel.sw", opselDesign)
	tm := ts.open(t, ts.keys[0], "alice", "opsel", 120, 30)
	tm.waitFor(pickX)
	tm.send(" ") // pick driven 0
	tm.waitFor(pick0)
	tm.send("1") // pick driven 1
	tm.waitFor(pick1)
	shown := tm.saveOver(true)
	if !namePattern.MatchString(shown) || !strings.HasSuffix(shown, ".vcd") {
		t.Fatalf("VCD shown as %q, want alice/opsel-DATE-TIME-ID.vcd", shown)
	}
	src, err := os.ReadFile(filepath.Join(ts.dir, "traces", filepath.FromSlash(shown)))
	must(t, err)
	f, err := readVCD(string(src))
	if err != nil {
		t.Fatalf("the VCD does not read as IEEE 1364-2005 §18.2 four-state VCD: %v\n%s", err, src)
	}
	// Every node of the design is a one-bit variable in the design's scope.
	refs := map[string]vcdVar{}
	for _, v := range f.vars {
		refs[v.ref] = v
	}
	for _, n := range []string{"pick", "reg", "imm", "opa", "pick_b"} {
		v, ok := refs[n]
		if !ok {
			t.Errorf("no $var for node %s; vars %+v", n, f.vars)
			continue
		}
		if v.size != 1 || v.scope != "opsel" {
			t.Errorf("$var %s: size %d in scope %q, want 1 in opsel", n, v.size, v.scope)
		}
	}
	// Three states, the first settle and one per action, and possibly a
	// last time with no change that gives the last state a width (the
	// project's choice, so that a viewer draws the last state).
	if n := len(f.times); n != 3 && n != 4 {
		t.Fatalf("times %v, want the start, two actions and at most one more", f.times)
	}
	pick, err := f.series("pick")
	must(t, err)
	if strings.Join(pick[:3], "") != "x01" {
		t.Errorf("pick over time %v, want x 0 1 (as driven)", pick)
	}
	// pick_b is an inverter's output: 1 for a 0 in, 0 for a 1 (common practice).
	pickB, err := f.series("pick_b")
	must(t, err)
	if strings.Join(pickB[:3], "") != "x10" {
		t.Errorf("pick_b over time %v, want x 1 0 (the inverse of pick)", pickB)
	}
	if len(f.times) == 4 && (pick[3] != pick[2] || pickB[3] != pickB[2]) {
		t.Errorf("the last time changes values: pick %v, pick_b %v", pick, pickB)
	}
	for _, prompt := range []string{"save trace as", "export VCD as"} {
		if strings.Contains(tm.text(), prompt) {
			t.Errorf("the explorer's path prompt opened (%q)", prompt)
		}
	}
}

func TestReadVCDRefusesWhatTheFormatDoesNotAllow(t *testing.T) {
	// The reader above is the oracle of the VCD test: show it catches what
	// it must (each file breaks one rule of IEEE 1364-2005 §18.2).
	good := "$timescale 1 ns $end\n$scope module m $end\n$var wire 1 ! a $end\n$upscope $end\n$enddefinitions $end\n#0\n$dumpvars\nx!\n$end\n#1\n1!\n"
	f, err := readVCD(good)
	if err != nil {
		t.Fatalf("a good file: %v", err)
	}
	if a, _ := f.series("a"); strings.Join(a, "") != "x1" {
		t.Errorf("a good file: a = %v, want x 1", a)
	}
	for name, bad := range map[string]string{
		"timescale 3 ns":    strings.Replace(good, "1 ns", "3 ns", 1),
		"no enddefinitions": strings.Replace(good, "$enddefinitions $end", "", 1),
		"undeclared code":   strings.Replace(good, "1!", "1?", 1),
		"time going back":   strings.Replace(good, "#1", "#0", 1),
		"unknown var type":  strings.Replace(good, "wire", "net", 1),
		"scope left open":   strings.Replace(good, "$upscope $end", "", 1),
		"space in the code": strings.Replace(good, "$var wire 1 ! a $end", "$var wire 1 ! a b c $end", 1),
	} {
		if _, err := readVCD(bad); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}
