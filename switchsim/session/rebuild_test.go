package session_test

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/session"
)

func openKeeper(t *testing.T, mode switchsim.Mode) *session.Session {
	t.Helper()
	s, err := session.Open("demo:strong_keeper", "", session.Options{Mode: mode})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func nodeOf(t *testing.T, s *session.Session, name string) int {
	t.Helper()
	n, ok := s.Netlist().Lookup(name)
	if !ok {
		t.Fatalf("no node %s", name)
	}
	return n
}

func deviceOf(t *testing.T, s *session.Session, name string) int {
	t.Helper()
	d, ok := s.Netlist().LookupDevice(name)
	if !ok {
		t.Fatalf("no device %s", name)
	}
	return d
}

// differing lists the nodes (not the rails or inputs) whose logic value
// differs between two sessions on the same netlist.
func differing(a, b *session.Session) []string {
	nl := a.Netlist()
	var out []string
	for n := 0; n < nl.NumNodes(); n++ {
		if nl.NodeKind(n) != switchsim.Internal {
			continue
		}
		if a.Node(n).Value != b.Node(n).Value {
			out = append(out, nl.NodeName(n))
		}
	}
	return out
}

// strong_keeper after its second step (clk=1 d=1, the write of a 1 over a
// stored 0): ideal mode decides the fight on s by strength alone, and the
// pass gate (strong) beats the keeper (weak), so s is 1; physical mode
// weighs the sizes, and the keeper's nMOS (1.44u/0.18u, a fifth of the
// gate's resistance) holds s at a 0. What follows s follows the fight: s_b
// (the inverter fwd) and q (the inverter out from s_b). clk_b depends on
// clk alone and is the same in both. So exactly s, s_b and q differ.
func TestRemodeStrongKeeperDiffers(t *testing.T) {
	phys := openKeeper(t, switchsim.Physical)
	phys.Next()
	phys.Next()
	if phys.Last().Failed() == false {
		t.Fatal("physical mode: step 2 of strong_keeper should fail (the demo's point)")
	}
	ideal, err := session.Remode(phys, switchsim.Ideal, nil)
	if err != nil {
		t.Fatal(err)
	}
	if ideal.Options().Mode != switchsim.Ideal || phys.Options().Mode != switchsim.Physical {
		t.Fatalf("modes: new %s, old %s", ideal.Options().Mode, phys.Options().Mode)
	}
	if got, want := strings.Join(differing(phys, ideal), " "), "q s s_b"; got != want {
		t.Errorf("nodes differing between the modes: %q, want %q", got, want)
	}
	if ideal.Len() != phys.Len() || ideal.NextStep() != 2 {
		t.Errorf("ideal session: %d actions in force, next step %d; want %d and 2", ideal.Len(), ideal.NextStep(), phys.Len())
	}
	if ideal.Last().Failed() {
		t.Error("ideal mode: step 2's checks should pass (the designer's intent holds when strengths alone decide)")
	}
	if v := ideal.Node(nodeOf(t, ideal, "s")).Value; v != switchsim.V1 {
		t.Errorf("ideal s = %s, want 1", v)
	}
	// and back: the same states as the session first had
	back, err := session.Remode(ideal, switchsim.Physical, nil)
	if err != nil {
		t.Fatal(err)
	}
	for n := 0; n < phys.Netlist().NumNodes(); n++ {
		if a, b := phys.Node(n), back.Node(n); a.State != b.State || a.Value != b.Value || !sameVolts(a.Volts, b.Volts) {
			t.Errorf("round trip: node %s was %+v, now %+v", phys.Netlist().NodeName(n), a, b)
		}
	}
}

func sameVolts(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

// The actions in force are replayed, not the undone ones: a set taken back
// leaves no trace in the rebuilt history; the attach hook runs before the
// replay, so a recorder attached there sees every action.
func TestRemodeReplaysActionsInForce(t *testing.T) {
	s := openKeeper(t, switchsim.Physical)
	s.Next()
	if _, err := s.SetByName("d", switchsim.Drive1); err != nil {
		t.Fatal(err)
	}
	s.GoBack()
	s.Next()
	var rec recorder
	ns, err := session.Remode(s, switchsim.Ideal, func(n *session.Session) error { return n.Attach(&rec) })
	if err != nil {
		t.Fatal(err)
	}
	if ns.Len() != 3 {
		t.Fatalf("%d actions in force, want 3 (start, step 1, step 2)", ns.Len())
	}
	var kinds []string
	for _, e := range rec.events {
		kinds = append(kinds, e.Action.Kind.String())
	}
	if got := strings.Join(kinds, " "); got != "start step step" {
		t.Errorf("the recorder saw %q, want the start and both steps", got)
	}
}

type recorder struct{ events []*session.Event }

func (r *recorder) Record(_ *session.Session, e *session.Event) { r.events = append(r.events, e) }

// A history whose oldest actions were folded away (past MaxHistory) cannot
// be replayed from the start: that is an error, not a wrong session.
func TestRemodeFoldedHistory(t *testing.T) {
	s, err := session.Open("demo:strong_keeper", "", session.Options{Mode: switchsim.Physical, MaxHistory: 8})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 20; i++ {
		s.Toggle(nodeOf(t, s, "d"))
	}
	if s.Folded() == 0 {
		t.Fatal("the history should have folded")
	}
	if _, err := session.Remode(s, switchsim.Ideal, nil); err == nil || !strings.Contains(err.Error(), "cannot be re-simulated") {
		t.Errorf("Remode of a folded history: %v", err)
	}
}

// Keeper sizing on strong_keeper. The write of step 2 (clk=1 d=1 over a
// stored 0) drives s through the transmission gate pass (pass.n and pass.p,
// both 0.36u/0.36u) against the keeper's nMOS keep.n (1.44u/0.18u, on while
// s_b = 1). Physical mode's estimate of a fight is a resistive divider
// (README, "Physical mode"; R = r_sq L / W, r_sq the technology's rn or rp):
// here keep.n, alone on the 0 side, is Rk = rn Lk / Wk, and the 1 side is
// pass.p, a resistor Rp = rp L/W that passes a 1 fully, in parallel with
// pass.n, which passes a 1 only up to its limit Vlim (vdd - vtn less the
// body effect, common practice): I_up(V) = (Vlim - V)/Rn + (vdd - V)/Rp.
// Vlim is read from the engine's own figures at the fight (the divider's
// up-side resistance and the node's volts). Physical mode decides a value
// by the input thresholds VIL and VIH (README, "Physical mode"): the keeper
// holds its 0 while s stays at or below VIL; once the divider lifts s above
// it, s is no longer a 0, the loop's feedback (fwd, then the keeper's
// gates) turns unknown, and the strong write wins. So the write flips where
// Rk* = VIL / I_up(VIL), and the widest keeper that lets it through is
// W* = rn Lk / Rk*. At 0.9 W* the write must succeed; at 1.1 W* fail, with
// s where the divider puts it.
func TestResizeKeeperFlipsTheWrite(t *testing.T) {
	s := openKeeper(t, switchsim.Physical)
	s.Next()
	s.Next()
	tech := s.Netlist().Tech
	vdd := tech.Vdd
	vil, _, _ := tech.Thresholds()
	sn := nodeOf(t, s, "s")
	kn := deviceOf(t, s, "keep.n")
	keeper := s.Netlist().Device(kn)
	if keeper.W != 1.44e-6 || keeper.L != 0.18e-6 {
		t.Fatalf("keep.n is %g/%g, the demo draws it 1.44u/0.18u", keeper.W, keeper.L)
	}
	pn, pp := s.Netlist().Device(deviceOf(t, s, "pass.n")), s.Netlist().Device(deviceOf(t, s, "pass.p"))
	rn, rp, rk := tech.Rn*pn.L/pn.W, tech.Rp*pp.L/pp.W, tech.Rn*keeper.L/keeper.W

	if st := s.Node(sn); st.Value != switchsim.V0 {
		t.Fatalf("at the demo's size s is %s: the keeper should win", st.State)
	}
	e := s.Explain(sn)
	if e.Divider == nil {
		t.Fatal("no divider for the contested node s")
	}
	if rel(e.Divider.Down, rk) > 0.01 {
		t.Fatalf("down side %.0f ohm, want keep.n's rn L/W = %.0f ohm", e.Divider.Down, rk)
	}
	v0 := e.Divider.Volts
	i0 := (vdd - v0) / e.Divider.Up
	vlim := v0 + rn*(i0-(vdd-v0)/rp)
	if vlim <= vdd-tech.Vtn-0.6 || vlim >= vdd-tech.Vtn {
		t.Fatalf("pass.n's limit worked out as %.3f V: not just below vdd - vtn = %.3f V", vlim, vdd-tech.Vtn)
	}
	iUp := func(v float64) float64 { return (vlim-v)/rn + (vdd-v)/rp }
	wStar := tech.Rn * keeper.L / (vil / iUp(vil))
	t.Logf("Vlim %.3f V, VIL %.3f V: the write flips below W* = %.4g m", vlim, vil, wStar)

	// narrower than W*: the write goes through, both checks pass
	ok, err := session.Resize(s, kn, 0.9*wStar, keeper.L, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !ok.Edited() || ok.Last().Failed() {
		t.Errorf("keep.n at 0.9 W*: edited %v, step 2 failed %v; want the write to succeed", ok.Edited(), ok.Last().Failed())
	}
	if v := ok.Node(sn).Value; v != switchsim.V1 {
		t.Errorf("keep.n at 0.9 W*: s is %s, want 1", ok.Node(sn).State)
	}
	if s.Edited() || s.Netlist().Device(kn).W != 1.44e-6 {
		t.Error("Resize changed the session it was given")
	}

	// wider than W*: the keeper still wins, and s sits on the divider:
	// V = (Vlim/Rn + vdd/Rp) / (1/Rn + 1/Rp + 1/Rk)
	bad, err := session.Resize(s, kn, 1.1*wStar, keeper.L, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !bad.Last().Failed() || bad.Node(sn).Value == switchsim.V1 {
		t.Errorf("keep.n at 1.1 W*: s is %s, step 2 failed %v; want the keeper to win still", bad.Node(sn).State, bad.Last().Failed())
	}
	rk1 := tech.Rn * keeper.L / (1.1 * wStar)
	want := (vlim/rn + vdd/rp) / (1/rn + 1/rp + 1/rk1)
	if got := bad.Node(sn).Volts; math.Abs(got-want) > 0.01 {
		t.Errorf("keep.n at 1.1 W*: s at %.3f V, the divider puts it at %.3f V", got, want)
	}
}

func rel(a, b float64) float64 { return math.Abs(a-b) / math.Abs(b) }

// The edited design's .sw: strong_keeper's keeper is a cell of the file
// used once, so the edit goes into that cell's statement and the rest of
// the file (its comments, its cells) stays; the text reads back with the
// new width, and its content hash is the session's. Setting the size back
// drops the edit and the design is the one loaded again.
func TestResizeWritesTheFile(t *testing.T) {
	s := openKeeper(t, switchsim.Physical)
	kn := deviceOf(t, s, "keep.n")
	ns, err := session.Resize(s, kn, 0.72e-6, 0.18e-6, nil)
	if err != nil {
		t.Fatal(err)
	}
	src := string(ns.Design().Source)
	for _, want := range []string{
		"# railyard explore: sizes tried on demo:strong_keeper",
		"#   keep.n W 1.44u -> 720n",
		"cell keeper IN OUT",
		"  nmos n IN OUT gnd w=720n l=180n strength=weak",
		"  pmos p IN vdd OUT w=1.44u l=180n strength=weak",
		"# keeper: marked weak, but drawn wide and short",
	} {
		if !strings.Contains(src, want) {
			t.Errorf("edited .sw lacks %q:\n%s", want, src)
		}
	}
	d, err := netfile.Read("edited.sw", ns.Design().Source)
	if err != nil {
		t.Fatal(err)
	}
	if k, _ := d.Netlist.LookupDevice("keep.n"); d.Netlist.Device(k).W != 0.72e-6 {
		t.Errorf("read back: keep.n W = %g", d.Netlist.Device(k).W)
	}
	if ns.DesignHash() != session.Hash(ns.Design().Source) || ns.DesignHash() == s.DesignHash() {
		t.Error("the edited design's hash should be its .sw text's, not the original's")
	}
	if eds := ns.Edits(); len(eds) != 1 || eds[0].WasW != 1.44e-6 || eds[0].W != 0.72e-6 {
		t.Errorf("edits: %+v", eds)
	}
	back, err := session.Resize(ns, kn, 1.44e-6, 0.18e-6, nil)
	if err != nil {
		t.Fatal(err)
	}
	if back.Edited() || back.Design() != s.Design() || back.DesignHash() != s.DesignHash() {
		t.Errorf("set back to 1.44u: edited %v, same design %v", back.Edited(), back.Design() == s.Design())
	}
}

// Where a statement makes more than the device edited, the edit cannot go
// into the file: the inverter fwd is the library's cell inv (used three
// times), and a transmission gate's length is both its halves'. The text
// is then the flat .sw with every instance expanded, and still reads back
// with the sizes tried and every other device as it was.
func TestResizeFlatWhereTheFileCannotSayIt(t *testing.T) {
	s := openKeeper(t, switchsim.Physical)
	for _, c := range []struct {
		dev  string
		w, l float64
	}{{"fwd.n", 0.72e-6, 0.18e-6}, {"pass.n", 0.36e-6, 0.18e-6}} {
		d := deviceOf(t, s, c.dev)
		ns, err := session.Resize(s, d, c.w, c.l, nil)
		if err != nil {
			t.Fatal(err)
		}
		src := ns.Design().Source
		if !bytes.Contains(src, []byte("every instance expanded")) || ns.Design().Tree != nil {
			t.Errorf("%s: want the flat .sw:\n%s", c.dev, src)
		}
		rd, err := netfile.Read("flat.sw", src)
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i < s.Netlist().NumDevices(); i++ {
			want := s.Netlist().Device(i)
			if i == d {
				want.W, want.L = c.w, c.l
			}
			k, ok := rd.Netlist.LookupDevice(want.Name)
			if got := rd.Netlist.Device(k); !ok || got.W != want.W || got.L != want.L {
				t.Errorf("%s: read back %s as %g/%g, want %g/%g", c.dev, want.Name, got.W, got.L, want.W, want.L)
			}
		}
	}
	// a transmission gate's width is its own half's: that goes in the file
	pn := deviceOf(t, s, "pass.n")
	ns, err := session.Resize(s, pn, 0.72e-6, 0.36e-6, nil)
	if err != nil {
		t.Fatal(err)
	}
	if src := string(ns.Design().Source); !strings.Contains(src, "tgate pass clk clk_b d s wn=720n wp=360n l=360n") {
		t.Errorf("pass.n W: want the tgate's wn changed in the file:\n%s", src)
	}
}

// A pull has no size and a size must be a positive length: both refused.
func TestResizeRefuses(t *testing.T) {
	d, err := netfile.Read("pulled.sw", []byte("design pulled\ninput a\noutput y\npullup up y\nnmos n a y gnd\n"))
	if err != nil {
		t.Fatal(err)
	}
	s := session.New(d, "pulled.sw", nil, session.Options{Mode: switchsim.Physical})
	up, _ := s.Netlist().LookupDevice("up")
	if _, err := session.Resize(s, up, 1e-6, 1e-6, nil); err == nil || !strings.Contains(err.Error(), "no W/L") {
		t.Errorf("resizing a pull: %v", err)
	}
	n, _ := s.Netlist().LookupDevice("n")
	for _, w := range []float64{0, -1e-6, math.NaN(), math.Inf(1)} {
		if _, err := session.Resize(s, n, w, 0.18e-6, nil); err == nil {
			t.Errorf("width %g accepted", w)
		}
	}
}

// Restart starts the same design (edits kept) on other steps, from the
// first settle.
func TestRestart(t *testing.T) {
	s := openKeeper(t, switchsim.Physical)
	s.Next()
	ns, err := session.Resize(s, deviceOf(t, s, "keep.n"), 0.36e-6, 0.72e-6, nil)
	if err != nil {
		t.Fatal(err)
	}
	r, err := session.Restart(ns, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Len() != 1 || r.NumSteps() != 0 || !r.Edited() || r.DesignHash() != ns.DesignHash() {
		t.Errorf("restart: %d actions, %d steps, edited %v", r.Len(), r.NumSteps(), r.Edited())
	}
}

// Once the edited design is saved, the session names it by that file, and
// only when the file holds the design's text.
func TestSavedAs(t *testing.T) {
	s := openKeeper(t, switchsim.Physical)
	if err := s.SavedAs("x.sw", s.Design().Source); err == nil {
		t.Error("an unedited design took another name")
	}
	ns, err := session.Resize(s, deviceOf(t, s, "keep.n"), 0.2e-6, 0.18e-6, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := ns.SavedAs("k.sw", []byte("other text")); err == nil || ns.DesignPath() != "demo:strong_keeper" {
		t.Errorf("other text: %v, path %s", err, ns.DesignPath())
	}
	if err := ns.SavedAs("k.sw", ns.Design().Source); err != nil || ns.DesignPath() != "k.sw" {
		t.Errorf("its own text: %v, path %s", err, ns.DesignPath())
	}
	// a rebuild keeps the name: the other mode of the saved design
	if r, err := session.Remode(ns, switchsim.Ideal, nil); err != nil || r.DesignPath() != "k.sw" {
		t.Errorf("remode after the save: %v, path %s", err, r.DesignPath())
	}
}
