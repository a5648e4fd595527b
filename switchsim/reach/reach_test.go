package reach

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"

	"railyard/switchsim"
	"railyard/switchsim/load"
	"railyard/switchsim/netfile"
)

// Designs built for the tests, each with its reason in the comment.
const (
	// Two strong writers on one bus (bus.sw of the session tests): with en=1
	// and a != b they fight (IEEE 1364-2005 §7: equal strengths, different
	// values give X); with en=0 the bus floats.
	busSrc = `design bus
input en a b
output bus
nmos wa en a bus
nmos wb en b bus
`
	// The textbook 2:1 transmission-gate selector: one leg always drives the
	// output strongly, both levels pass in full (common practice).
	opselSrc = `design opsel
input sel a b
output y
use inv isel sel seln
tgate ta seln sel a y
tgate tb sel seln b y
`
	// A pull-up against a pull-down on y: an equal-strength fight in ideal
	// mode and a divider at vdd/2 in physical mode, from the first settle
	// on, whatever the input does (z is a ratioed inverter beside it).
	pullsSrc = `design pulls
input a
output y z
pullup u y
pulldown d y
nmos n a z gnd
pullup pz z
`
	// A ratioed inverter: a strong nMOS beats the pull-up by design
	// (common practice), a contention that is no failed write.
	ratioedSrc = `design ratioed
input a
output z
nmos n a z gnd
pullup pz z
`
	// A gated ring of three inverting stages (a NAND and two inverters):
	// with en=1 it oscillates (common practice: an odd ring has no stable
	// state).
	ring3Src = `design ring3
input en
output x
use nand2 g en z x
use inv i1 x y
use inv i2 y z
`
	// The same with two stages: an even ring holds (common practice).
	ring2Src = `design ring2
input en
output x
use nand2 g en y x
use inv i1 x y
`
	// A cross-coupled NOR latch: with S and R falling together from 1 1 the
	// outputs race (Brzozowski and Seger 1995, the textbook critical race).
	srSrc = `design sr
input s r
output q qb
use nor2 g1 r qb q
use nor2 g2 s q qb
`
	// A device straight across the rails, gated by an input: s=1 shorts the
	// supply (issue 18 item 2).
	shortSrc = `design shorted
input s
output y
nmos across s vdd gnd
use inv i s y
`
	// A precharged stage whose evaluate device is gated by a decoded
	// select, g = NOT(a s + b s_b), an AND-OR-invert with s_b = NOT s made
	// inside: with a = b = 1, g is 0 whatever s, but when s rises alone
	// s_b falls a stage later (the static hazard of Eichelberger 1965, here
	// a 0 that may pulse to 1). pre=0 charges dyn; with pre=1 and dyn
	// holding 1 by charge, a pulse on g drains it for good: a glitch on a
	// dynamic node from a single-input step (common practice: a dynamic
	// gate's inputs must be hazard-free while it evaluates).
	dynSrc = `design dynsel
input pre s a b
output out
use inv is s s_b
pmos pa a vdd p1
pmos ps s vdd p1
pmos pb b p1 g
pmos psb s_b p1 g
nmos na a g n1
nmos ns s n1 gnd
nmos nb b g n2
nmos nsb s_b n2 gnd
pmos pc pre vdd dyn
nmos ev g dyn gnd
node dyn cap=10f
use inv o dyn out
`
)

func design(t testing.TB, name, src string) *switchsim.Netlist {
	t.Helper()
	var d *netfile.Design
	var err error
	if strings.HasPrefix(name, "demo:") {
		d, err = load.Host(load.Options{}).Design(name)
	} else {
		d, err = netfile.Read(name+".sw", []byte(src))
	}
	if err != nil {
		t.Fatal(err)
	}
	return d.Netlist
}

func explore(t testing.TB, nl *switchsim.Netlist, opt Options) *Report {
	t.Helper()
	opt.verifyKeys = true
	r, err := Search(context.Background(), nl, opt)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func find(r *Report, nl *switchsim.Netlist, k Kind, node string) *Finding {
	for i, f := range r.Findings {
		if f.Kind == k && (node == "" || (f.Node >= 0 && nl.NodeName(f.Node) == node)) {
			return &r.Findings[i]
		}
	}
	return nil
}

func describe(r *Report, nl *switchsim.Netlist) string {
	var b strings.Builder
	for _, f := range r.Findings {
		name := "-"
		if f.Node >= 0 {
			name = nl.NodeName(f.Node)
		}
		fmt.Fprintf(&b, "\n  %s %s (%d states, %d transitions, %d moves): %s", f.Kind, name, f.States, f.Transitions, moves(r, f), f.Message)
	}
	return b.String()
}

func moves(_ *Report, f Finding) int { return f.Moves }

func TestBusCountedByHand(t *testing.T) {
	nl := design(t, "bus", busSrc)
	r := explore(t, nl, Options{Mode: switchsim.Ideal})
	// Counted by hand. With en=1 the bus follows a and b: 4 states. With
	// en=0 it floats holding 0, 1 or X (X until first written, and again
	// after a fight), for each of the 4 values of a and b: 12 states. Each
	// state has 3 single-input flips: 48 transitions.
	if r.States != 16 || r.Transitions != 48 || r.Stopped != Done {
		t.Fatalf("%d states, %d transitions, stopped %v; want 16, 48, done", r.States, r.Transitions, r.Stopped)
	}
	c, fl := find(r, nl, Conflict, "bus"), find(r, nl, FloatingOutput, "bus")
	if c == nil || fl == nil || len(r.Findings) != 2 {
		t.Fatalf("findings:%s\nwant a conflict and a floating output on bus", describe(r, nl))
	}
	// The fight: en=1 with a != b, 2 states. Into each come 5 transitions:
	// en rising from the 3 floating states with the same a, b, and a or b
	// moving with en=1.
	if c.States != 2 || c.Transitions != 10 || !c.Failing() || moves(r, *c) != 2 {
		t.Errorf("conflict: %d states, %d transitions, %d moves; want 2, 10, 2", c.States, c.Transitions, moves(r, *c))
	}
	// Floating: the 12 en=0 states, entered by 24 flips of a or b among them
	// and 4 falls of en. The start itself floats: a 0-move sequence.
	if fl.States != 12 || fl.Transitions != 28 || !fl.Failing() || moves(r, *fl) != 0 {
		t.Errorf("floating output: %d states, %d transitions, %d moves; want 12, 28, 0", fl.States, fl.Transitions, moves(r, *fl))
	}
	if fl.Got.State != switchsim.StateZ || c.Got.State != switchsim.StateX {
		t.Errorf("states seen: floating %s, conflict %s; want Z and X", fl.Got.State, c.Got.State)
	}
}

func TestFirstSettleCounts(t *testing.T) {
	// Issue 17 item 8: a fight that the very first settle makes, and that
	// no later settle re-solves, must still be found, in both modes.
	nl := design(t, "pulls", pullsSrc)
	for _, m := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		r := explore(t, nl, Options{Mode: m})
		c := find(r, nl, Conflict, "y")
		if c == nil {
			t.Errorf("%s: no conflict on y:%s", m, describe(r, nl))
			continue
		}
		// y fights in every state (both states of a), from the start.
		if c.States != 2 || moves(r, *c) != 0 || c.Got.Value != switchsim.VX {
			t.Errorf("%s: conflict on y in %d states after %d moves (value %s); want 2 states from the start, X", m, c.States, moves(r, *c), c.Got.Value)
		}
	}
}

// kindCase is a design built to show a finding kind, or built not to.
type kindCase struct {
	name, src string
	mode      switchsim.Mode
	pairs     bool
	kind      Kind
	node      string // the node it names; "" for any
	fires     bool
	skip      string // the engine work the case waits for
}

const (
	needRace  = "needs the engine's race analysis (race warnings, issue 11 item 1): enable at merge"
	needWrite = "needs the engine's failed-write warnings (write-fail, issue 11 item 2): enable at merge"
	needShort = "needs the engine's short warnings (short, issue 18 item 2): enable at merge"
)

func TestEachKindFiresAndStaysSilent(t *testing.T) {
	cases := []kindCase{
		{"bus", busSrc, switchsim.Ideal, false, Conflict, "bus", true, ""},
		{"opsel", opselSrc, switchsim.Ideal, true, Conflict, "", false, ""},
		{"demo:lost_level", "", switchsim.Physical, false, LevelLost, "dout", true, ""},
		{"demo:mux2_tgate", "", switchsim.Physical, true, LevelLost, "", false, ""},
		{"bus", busSrc, switchsim.Physical, false, FloatingOutput, "bus", true, ""},
		{"opsel", opselSrc, switchsim.Physical, true, FloatingOutput, "", false, ""},
		// An nMOS passes a 1 only to vdd less a threshold (common practice).
		{"demo:mux2_pass", "", switchsim.Physical, false, DegradedOutput, "opnd", true, ""},
		{"demo:mux2_tgate", "", switchsim.Physical, false, DegradedOutput, "", false, ""},
		{"ratioed", ratioedSrc, switchsim.Physical, false, Contention, "z", true, ""},
		{"demo:static_latch", "", switchsim.Physical, false, Contention, "", false, ""},
		{"ring3", ring3Src, switchsim.Ideal, false, Oscillation, "", true, ""},
		{"ring2", ring2Src, switchsim.Ideal, false, Oscillation, "", false, ""},
		{"sr", srSrc, switchsim.Ideal, true, Race, "q", true, ""},
		{"sr", srSrc, switchsim.Ideal, true, Race, "qb", true, ""},
		// A master-slave flip-flop clocked with its data held steady has no
		// race in any reachable state (issue 11's outside checks).
		{"demo:flipflop", "", switchsim.Physical, false, Race, "", false, ""},
		{"dynsel", dynSrc, switchsim.Physical, false, Glitch, "dyn", true, ""},
		{"demo:dynamic_latch", "", switchsim.Physical, false, Glitch, "", false, ""},
		// The static-1 hazard of a two-level selector when its select changes
		// with both data 1 (Eichelberger 1965) is on a driven node: a hazard,
		// not a failing glitch; a transmission-gate selector has none.
		{"andor", andOrSrc, switchsim.Ideal, false, Hazard, "y", true, ""},
		{"opsel", opselSrc, switchsim.Ideal, false, Hazard, "", false, ""},
		{"demo:strong_keeper", "", switchsim.Physical, false, WriteFail, "s", true, ""},
		{"demo:static_latch", "", switchsim.Physical, false, WriteFail, "", false, ""},
		{"ratioed", ratioedSrc, switchsim.Physical, false, WriteFail, "", false, ""},
		{"shorted", shortSrc, switchsim.Physical, false, Short, "", true, ""},
		{"opsel", opselSrc, switchsim.Physical, true, Short, "", false, ""},
	}
	for _, c := range cases {
		verb := "silent"
		if c.fires {
			verb = "fires"
		}
		t.Run(fmt.Sprintf("%s/%s/%s/%s", c.kind, verb, c.name, c.mode), func(t *testing.T) {
			if c.skip != "" {
				t.Skip(c.skip)
			}
			nl := design(t, c.name, c.src)
			r := explore(t, nl, Options{Mode: c.mode, Pairs: c.pairs})
			f := find(r, nl, c.kind, c.node)
			switch {
			case c.fires && f == nil:
				t.Errorf("no %s on %q:%s", c.kind, c.node, describe(r, nl))
			case !c.fires && f != nil:
				t.Errorf("a %s where there should be none:%s", c.kind, describe(r, nl))
			case c.fires && f.Failing() != c.kind.Failing():
				t.Errorf("%s: failing %v", c.kind, f.Failing())
			}
		})
	}
}

// A two-level AND-OR selector, y = (a AND s) OR (b AND NOT s), from NAND
// gates: the textbook static-1 hazard (Eichelberger 1965).
const andOrSrc = `design andor
input s a b
output y
use inv si s sb
use nand2 g1 a s p
use nand2 g2 b sb q
use nand2 g3 p q y
`

func TestKindsThatFail(t *testing.T) {
	// switchsim/FORMATS.md's check contract: these fail, the rest are for reading.
	fail := map[Kind]bool{Conflict: true, LevelLost: true, FloatingOutput: true, Race: true, Glitch: true, WriteFail: true, Short: true}
	for _, k := range []Kind{Conflict, LevelLost, FloatingOutput, Race, Glitch, WriteFail, Short, Oscillation, Hazard, Contention, DegradedOutput} {
		if k.Failing() != fail[k] {
			t.Errorf("%s: failing %v, want %v", k, k.Failing(), fail[k])
		}
	}
}

func TestUninitialisedXIsNoFinding(t *testing.T) {
	// Before its first rising clock edge the flip-flop's slave holds X
	// (nothing was ever clocked into it): that is no finding, and a
	// flip-flop clocked with single changes has none at all.
	nl := design(t, "demo:flipflop", "")
	r := explore(t, nl, Options{Mode: switchsim.Physical})
	q, _ := nl.Lookup("q")
	sim := switchsim.NewSim(nl, switchsim.Options{Mode: switchsim.Physical})
	sim.Settle()
	for _, n := range nl.Inputs() {
		sim.SetInput(n, switchsim.Drive0)
	}
	sim.Settle()
	if v := sim.Node(q).Value; v != switchsim.VX {
		t.Fatalf("q is %s at the start; the test needs it never written (X)", v)
	}
	// Phase A on a clock edge puts clk and clk_b at X together, so q may be
	// reported as a hazard (a driven output that may pulse, not failing):
	// the ternary view of a clock and its complement. Nothing fails.
	for _, f := range r.Findings {
		if f.Kind.Failing() || f.Kind != Hazard {
			t.Errorf("findings on a correct flip-flop:%s", describe(r, nl))
			break
		}
	}
}

// bruteShortest replays every sequence of single-input flips of up to
// depth moves from a fresh simulator, and returns for each kind and node
// the fewest moves whose last settle shows it. It knows nothing of states.
func bruteShortest(nl *switchsim.Netlist, mode switchsim.Mode, depth int) map[string]int {
	best := map[string]int{}
	ins := nl.Inputs()
	var walk func(seq []int)
	walk = func(seq []int) {
		sim := switchsim.NewSim(nl, switchsim.Options{Mode: mode, Races: switchsim.RacesGlitches}) // as the search runs it
		sim.Settle()
		for _, n := range ins {
			sim.SetInput(n, switchsim.Drive0)
		}
		r := sim.Settle()
		var before []switchsim.Value
		var floated []bool
		for _, i := range seq {
			before, floated = before[:0], floated[:0]
			for n := 0; n < nl.NumNodes(); n++ {
				before = append(before, sim.Node(n).Value)
				floated = append(floated, sim.Node(n).Floating)
			}
			sim.SetInput(ins[i], 1-sim.InputDrive(ins[i]))
			r = sim.Settle()
		}
		note := func(k Kind, n int) {
			key := fmt.Sprintf("%s %s", k, nl.NodeName(n))
			if b, ok := best[key]; !ok || len(seq) < b {
				best[key] = len(seq)
			}
		}
		for _, w := range r.Warnings {
			switch w.Kind {
			case switchsim.WarnConflict:
				note(Conflict, w.Node)
			case switchsim.WarnLevelLost:
				note(LevelLost, w.Node)
			case switchsim.WarnContention:
				if sim.Node(w.Node).Value == switchsim.VX {
					note(Conflict, w.Node)
				} else {
					note(Contention, w.Node)
				}
			case switchsim.WarnOscillation:
				if len(seq) > 0 && before[w.Node] != switchsim.VX {
					note(Oscillation, w.Node)
				}
			case switchsim.WarnWriteFail:
				note(WriteFail, w.Node)
			case switchsim.WarnShort:
				note(Short, w.Node)
			case switchsim.WarnGlitch: // a glitch on a node held by charge before or after; else a hazard
				if len(seq) > 0 && (floated[w.Node] || sim.Node(w.Node).Floating) {
					note(Glitch, w.Node)
				} else if len(seq) > 0 {
					note(Hazard, w.Node)
				}
			}
		}
		for _, o := range nl.Outputs() {
			switch sim.Node(o).State {
			case switchsim.StateZ:
				note(FloatingOutput, o)
			case switchsim.StateL, switchsim.StateH:
				note(DegradedOutput, o)
			}
		}
		if len(seq) < depth {
			for i := range ins {
				walk(append(seq, i))
			}
		}
	}
	walk(nil)
	return best
}

func TestShortestAgainstBruteForce(t *testing.T) {
	for _, c := range []struct {
		name, src string
		mode      switchsim.Mode
	}{
		{"bus", busSrc, switchsim.Ideal},
		{"bus", busSrc, switchsim.Physical},
		{"demo:lost_level", "", switchsim.Physical},
		{"demo:strong_keeper", "", switchsim.Physical},
		{"demo:mux2_pass", "", switchsim.Physical},
		{"ring3", ring3Src, switchsim.Ideal},
		{"ratioed", ratioedSrc, switchsim.Physical},
	} {
		nl := design(t, c.name, c.src)
		const depth = 5
		want := bruteShortest(nl, c.mode, depth)
		r := explore(t, nl, Options{Mode: c.mode})
		got := map[string]int{}
		for _, f := range r.Findings {
			got[fmt.Sprintf("%s %s", f.Kind, nl.NodeName(f.Node))] = moves(r, f)
		}
		for k, w := range want {
			if g, ok := got[k]; !ok || g != w {
				t.Errorf("%s %s: %s after %d moves (found %v), brute force %d", c.name, c.mode, k, g, ok, w)
			}
		}
		for k, g := range got {
			if _, ok := want[k]; !ok && g <= depth {
				t.Errorf("%s %s: %s after %d moves, which brute force to %d moves never shows", c.name, c.mode, k, g, depth)
			}
		}
	}
}

// replay runs a finding's sequence on a fresh simulator as `railyard run`
// would and returns the last settle and the simulator.
func replay(nl *switchsim.Netlist, mode switchsim.Mode, f Finding) (*switchsim.Result, *switchsim.Sim) {
	sim := switchsim.NewSim(nl, switchsim.Options{Mode: mode})
	r := sim.Settle()
	for _, row := range f.Steps {
		for _, s := range row {
			sim.SetInput(s.Input, s.Drive)
		}
		r = sim.Settle()
	}
	return r, sim
}

func TestSequencesReproduce(t *testing.T) {
	for _, c := range []struct {
		name, src string
		mode      switchsim.Mode
		pairs     bool
	}{
		{"bus", busSrc, switchsim.Ideal, false},
		{"demo:lost_level", "", switchsim.Physical, false},
		{"demo:strong_keeper", "", switchsim.Physical, true},
		{"demo:static_latch", "", switchsim.Physical, true},
		{"demo:flipflop", "", switchsim.Physical, true},
		{"ring3", ring3Src, switchsim.Ideal, false},
	} {
		nl := design(t, c.name, c.src)
		r := explore(t, nl, Options{Mode: c.mode, Pairs: c.pairs})
		if len(r.Findings) == 0 {
			t.Errorf("%s: no findings to replay", c.name)
		}
		for _, f := range r.Findings {
			res, sim := replay(nl, c.mode, f)
			if got := sim.Node(f.Node); got.State != f.Got.State || got.Value != f.Got.Value {
				t.Errorf("%s %s %s: replayed to %s/%s, the search saw %s/%s", c.name, f.Kind, nl.NodeName(f.Node), got.State, got.Value, f.Got.State, f.Got.Value)
			}
			if f.Kind == Oscillation {
				shown := false
				for _, w := range res.Warnings {
					shown = shown || (w.Kind == switchsim.WarnOscillation && w.Node == f.Node)
				}
				if !shown {
					t.Errorf("%s: the replayed sequence's last step shows no oscillation on %s", c.name, nl.NodeName(f.Node))
				}
			}
		}
	}
}

func TestCapStopsTheSearch(t *testing.T) {
	nl := design(t, "bus", busSrc)
	r := explore(t, nl, Options{Mode: switchsim.Ideal, MaxStates: 5})
	if r.Stopped != AtCap || r.States != 5 || r.Pass() {
		t.Errorf("stopped %v at %d states, pass %v; want the cap at 5 and no pass", r.Stopped, r.States, r.Pass())
	}
	clean := design(t, "opsel", opselSrc)
	if r := explore(t, clean, Options{Mode: switchsim.Ideal, MaxStates: 3}); r.Pass() || r.AnyFailing() {
		t.Errorf("a clean design stopped at the cap must not pass (stopped %v)", r.Stopped)
	}
	if r := explore(t, clean, Options{Mode: switchsim.Ideal}); !r.Pass() || r.States != 8 {
		t.Errorf("the selector: %d states, pass %v; want its 8 input vectors and a pass", r.States, r.Pass())
	}
}

func TestTimeLimitStopsTheSearch(t *testing.T) {
	nl := design(t, "bus", busSrc)
	ctx, cancel := context.WithDeadline(context.Background(), time.Now().Add(-time.Second))
	defer cancel()
	r, err := Search(ctx, nl, Options{Mode: switchsim.Ideal})
	if err != nil || r.Stopped != AtTimeLimit || r.Pass() {
		t.Errorf("err %v, stopped %v; want the time limit", err, r.Stopped)
	}
}

func TestRefusals(t *testing.T) {
	var b strings.Builder
	b.WriteString("design wide\ninput")
	for i := 0; i < 21; i++ {
		fmt.Fprintf(&b, " i%d", i)
	}
	b.WriteString("\noutput y\npullup p y\n")
	for i := 0; i < 21; i++ {
		fmt.Fprintf(&b, "nmos n%d i%d y gnd\n", i, i)
	}
	wide := design(t, "wide", b.String())
	var tm *TooManyInputsError
	if _, err := Search(context.Background(), wide, Options{}); !errors.As(err, &tm) || tm.Inputs != 21 || tm.Max != MaxInputs {
		t.Errorf("21 inputs: %v", err)
	}
	// The bus: 3 inputs, 8 vectors, 3 moves a state, 2 devices: 48.
	bus := design(t, "bus", busSrc)
	p := Estimate(bus, Options{})
	if p.States != 8 || p.Moves != 3 || p.Cost != 48 {
		t.Errorf("plan %+v, want 8 states x 3 moves x 2 devices", p)
	}
	if p := Estimate(bus, Options{Pairs: true}); p.Moves != 6 {
		t.Errorf("with pairs %d moves, want 3 + 3", p.Moves)
	}
	var ob *OverBudgetError
	if _, err := Search(context.Background(), bus, Options{Budget: 47}); !errors.As(err, &ob) || ob.Plan.Cost != 48 {
		t.Errorf("budget 47: %v", err)
	}
	if _, err := Search(context.Background(), bus, Options{Budget: 48}); err != nil {
		t.Errorf("budget 48: %v", err)
	}
}

func TestReset(t *testing.T) {
	// Reset the latch to 1 (clk=1 d=1, then clk=0): the search starts from
	// a held 1, and every sequence begins with those rows. Counted by hand:
	// with clk=1 s follows d (2 states), with clk=0 it holds 0 or 1 for
	// either d (4); from every input 0 there are 2 more, s never written (X)
	// with clk=0.
	nl := design(t, "demo:static_latch", "")
	clk, _ := nl.Lookup("clk")
	d, _ := nl.Lookup("d")
	s, _ := nl.Lookup("s")
	reset := [][]Set{{{clk, switchsim.Drive1}, {d, switchsim.Drive1}}, {{clk, switchsim.Drive0}}}
	r := explore(t, nl, Options{Mode: switchsim.Physical, Reset: reset})
	if all := explore(t, nl, Options{Mode: switchsim.Physical}); all.States != 8 {
		t.Errorf("from every input 0: %d states, want 8", all.States)
	}
	if r.States != 6 || r.Stopped != Done || len(r.Findings) != 0 {
		t.Errorf("%d states, stopped %v:%s", r.States, r.Stopped, describe(r, nl))
	}
	fs := explore(t, nl, Options{Mode: switchsim.Physical, Reset: reset, MaxStates: 1})
	if fs.States != 1 {
		t.Fatalf("%d states", fs.States)
	}
	// The start state holds s high through the weak keeper.
	sim := switchsim.NewSim(nl, switchsim.Options{Mode: switchsim.Physical})
	sim.Settle()
	for _, row := range append([][]Set{{{clk, 0}, {d, 0}}}, reset...) {
		for _, st := range row {
			sim.SetInput(st.Input, st.Drive)
		}
		sim.Settle()
	}
	if v := sim.Node(s).Value; v != switchsim.V1 {
		t.Fatalf("s is %s after the reset, want 1", v)
	}
	bus := design(t, "bus", busSrc)
	en, _ := bus.Lookup("en")
	a, _ := bus.Lookup("a")
	rb := explore(t, bus, Options{Mode: switchsim.Ideal, Reset: [][]Set{{{en, switchsim.Drive1}, {a, switchsim.Drive1}}}})
	c := find(rb, bus, Conflict, "bus")
	if c == nil || moves(rb, *c) != 0 || len(c.Steps) != 2 {
		t.Errorf("after a reset into the fight the conflict is at the start: %+v", c)
	}
	if _, err := Search(context.Background(), bus, Options{Reset: [][]Set{{{bus.Outputs()[0], switchsim.Drive1}}}}); err == nil {
		t.Error("a reset row driving an output was taken")
	}
}

func TestSnapshotBudgetReplaysTheSameSearch(t *testing.T) {
	// With no room for snapshots every state is rebuilt by replaying its
	// sequence: the search must come out the same.
	for _, name := range []string{"demo:flipflop", "demo:lost_level", "demo:strong_keeper"} {
		nl := design(t, name, "")
		a := explore(t, nl, Options{Mode: switchsim.Physical, Pairs: true})
		b := explore(t, nl, Options{Mode: switchsim.Physical, Pairs: true, SnapshotBudget: 1})
		if b.Replays != b.States-1 || a.Replays != 0 {
			t.Errorf("%s: %d and %d replays for %d states", name, a.Replays, b.Replays, b.States)
		}
		if a.States != b.States || a.Transitions != b.Transitions || describe(a, nl) != describe(b, nl) {
			t.Errorf("%s: with snapshots %d states, %d transitions:%s\nreplayed %d, %d:%s", name,
				a.States, a.Transitions, describe(a, nl), b.States, b.Transitions, describe(b, nl))
		}
	}
}

func TestDemos(t *testing.T) {
	// Every demo in physical mode, single changes: each passes or names the
	// finding its comments intend.
	fails := map[string]string{
		"lost_level":    "level-lost dout",
		"strong_keeper": "write-fail s",
	}
	for _, name := range []string{"dynamic_latch", "flipflop", "lost_level", "mux2_pass", "mux2_tgate", "mux4_tgate", "static_latch", "strong_keeper", "xor_tgate"} {
		nl := design(t, "demo:"+name, "")
		r := explore(t, nl, Options{Mode: switchsim.Physical})
		want, bad := fails[name]
		if name == "strong_keeper" && find(r, nl, WriteFail, "s") == nil {
			t.Log(needWrite)
			continue
		}
		if r.Pass() == bad {
			t.Errorf("%s: pass %v:%s", name, r.Pass(), describe(r, nl))
		}
		if bad {
			f := strings.Fields(want)
			if find(r, nl, Kind(f[0]), f[1]) == nil {
				t.Errorf("%s: no %s:%s", name, want, describe(r, nl))
			}
		}
	}
}

func TestProgress(t *testing.T) {
	nl := design(t, "demo:mux4_tgate", "")
	var calls []Progress
	r := explore(t, nl, Options{Mode: switchsim.Ideal, Pairs: true, ProgressEvery: time.Nanosecond, Progress: func(p Progress) { calls = append(calls, p) }})
	if len(calls) < 2 {
		t.Fatalf("%d progress calls", len(calls))
	}
	last := calls[len(calls)-1]
	if last.States != r.States || last.Transitions != r.Transitions || last.Frontier != 0 {
		t.Errorf("last progress %+v, report %d states %d transitions", last, r.States, r.Transitions)
	}
	for i := 1; i < len(calls); i++ {
		if calls[i].Transitions < calls[i-1].Transitions || calls[i].States < calls[i-1].States {
			t.Errorf("progress went backwards: %+v then %+v", calls[i-1], calls[i])
		}
	}
}

// referenceCounts is a plain breadth-first search written apart from the
// package's: states keyed by a string of every drive and value, a map of
// snapshots, and counts of what each step shows (oscillation, judged on a
// node that had a value before the step) and of the outputs' states.
func referenceCounts(nl *switchsim.Netlist, mode switchsim.Mode, pairs bool) (states, transitions int, count map[string][2]int) {
	count = map[string][2]int{} // "kind node" -> {states, transitions}
	sim := switchsim.NewSim(nl, switchsim.Options{Mode: mode})
	sim.Settle()
	ins := nl.Inputs()
	for _, n := range ins {
		sim.SetInput(n, switchsim.Drive0)
	}
	sim.Settle()
	key := func() string {
		var b strings.Builder
		for _, n := range ins {
			b.WriteString(sim.InputDrive(n).String())
		}
		b.WriteByte('|')
		for n := 0; n < nl.NumNodes(); n++ {
			b.WriteString(sim.Node(n).Value.String())
		}
		return b.String()
	}
	outputs := func(newState, transition bool) {
		for _, o := range nl.Outputs() {
			k := ""
			switch sim.Node(o).State {
			case switchsim.StateZ:
				k = string(FloatingOutput)
			case switchsim.StateL, switchsim.StateH:
				k = string(DegradedOutput)
			default:
				continue
			}
			c := count[k+" "+nl.NodeName(o)]
			if newState {
				c[0]++
			}
			if transition {
				c[1]++
			}
			count[k+" "+nl.NodeName(o)] = c
		}
	}
	seen := map[string]bool{key(): true}
	queue := []*switchsim.Snapshot{sim.Snapshot()}
	outputs(true, false)
	for len(queue) > 0 {
		snap := queue[0]
		queue = queue[1:]
		sim.Restore(snap)
		var moves [][]int
		for i := range ins {
			moves = append(moves, []int{i})
			for j := i + 1; pairs && j < len(ins); j++ {
				moves = append(moves, []int{i, j})
			}
		}
		fromCounted := map[string]bool{}
		for _, mv := range moves {
			sim.Restore(snap)
			var before []switchsim.Value
			for n := 0; n < nl.NumNodes(); n++ {
				before = append(before, sim.Node(n).Value)
			}
			for _, i := range mv {
				sim.SetInput(ins[i], 1-sim.InputDrive(ins[i]))
			}
			r := sim.Settle()
			transitions++
			for _, w := range r.Warnings {
				if w.Kind == switchsim.WarnOscillation && before[w.Node] != switchsim.VX {
					k := string(Oscillation) + " " + nl.NodeName(w.Node)
					c := count[k]
					c[1]++
					if !fromCounted[k] {
						fromCounted[k] = true
						c[0]++
					}
					count[k] = c
				}
			}
			k := key()
			outputs(!seen[k], true)
			if !seen[k] {
				seen[k] = true
				queue = append(queue, sim.Snapshot())
			}
		}
	}
	return len(seen), transitions, count
}

func TestCountsAgainstReference(t *testing.T) {
	for _, c := range []struct {
		name, src string
		mode      switchsim.Mode
		pairs     bool
	}{
		{"bus", busSrc, switchsim.Ideal, false},
		{"bus", busSrc, switchsim.Physical, true},
		{"demo:flipflop", "", switchsim.Physical, true},
		{"demo:flipflop", "", switchsim.Ideal, true},
		{"demo:static_latch", "", switchsim.Physical, true},
		{"demo:lost_level", "", switchsim.Physical, true},
		{"demo:mux2_pass", "", switchsim.Physical, false},
		{"ring3", ring3Src, switchsim.Ideal, false},
	} {
		nl := design(t, c.name, c.src)
		states, transitions, want := referenceCounts(nl, c.mode, c.pairs)
		r := explore(t, nl, Options{Mode: c.mode, Pairs: c.pairs})
		if r.States != states || r.Transitions != transitions {
			t.Errorf("%s %s: %d states, %d transitions; the reference %d, %d", c.name, c.mode, r.States, r.Transitions, states, transitions)
		}
		got := map[string][2]int{}
		for _, f := range r.Findings {
			switch f.Kind {
			case Oscillation, FloatingOutput, DegradedOutput:
				got[string(f.Kind)+" "+nl.NodeName(f.Node)] = [2]int{f.States, f.Transitions}
			}
		}
		if fmt.Sprint(got) != fmt.Sprint(want) {
			t.Errorf("%s %s pairs %v: counts {states, transitions}\n %v\nthe reference\n %v", c.name, c.mode, c.pairs, got, want)
		}
	}
}

// A device across the rails whose gate nothing drives is a short from the
// first settle on, in every state, whatever the inputs do (issue 17 item 8:
// findings come from every settled state, the first included); the engine
// reports it only on the settle that solved its gate, so the search must
// hand it on. The same device between a rail and a node that an inverter
// drives is no short: the node is not a source.
func TestShortFromTheFirstSettleHoldsInEveryState(t *testing.T) {
	across := design(t, "undriven-across", `design undriven_across
input a
output y
node g
nmos across g vdd gnd
use inv i a y
`)
	for _, mode := range []switchsim.Mode{switchsim.Ideal, switchsim.Physical} {
		r := explore(t, across, Options{Mode: mode})
		f := find(r, across, Short, "")
		if f == nil {
			t.Fatalf("%s: no short from a device across the rails with an undriven gate:%s", mode, describe(r, across))
		}
		if f.States != r.States || f.Moves != 0 {
			t.Errorf("%s: short in %d of %d states, shortest sequence %d moves: want every state, from the start", mode, f.States, r.States, f.Moves)
		}
		if !f.Failing() {
			t.Errorf("%s: a short does not fail the check", mode)
		}
	}
	// The input that gates it turns it on and off: a short in half the states.
	gated := design(t, "gated-across", shortSrc)
	r := explore(t, gated, Options{Mode: switchsim.Ideal})
	if f := find(r, gated, Short, ""); f == nil || f.States*2 != r.States || f.Moves != 1 {
		t.Errorf("gated short: %+v in %d states: want half the states, one move away:%s", f, r.States, describe(r, gated))
	}
	inside := design(t, "undriven-inside", `design undriven_inside
input a
output y
node g
nmos leak g y gnd
use inv i a y
`)
	if f := find(explore(t, inside, Options{Mode: switchsim.Ideal}), inside, Short, ""); f != nil {
		t.Errorf("a device from a driven node to ground called a short: %s", f.Message)
	}
}
