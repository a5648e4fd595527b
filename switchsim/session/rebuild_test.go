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
// weighs the sizes, and the keeper's nMOS (1.44u/0.18u, W/L 8 against the
// gate's 1) holds s at a 0. What follows s follows the fight: s_b
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

// level1 is the drain current of the level-1 (square-law) model of
// Shichman and Hodges, IEEE JSSC 1968, for an nMOS-like device with
// overdrive vgs - vt and drain-source voltage vds >= 0: beta (ov vds -
// vds^2/2) below saturation, beta ov^2 / 2 in it, none below threshold.
func level1(beta, vt, vgs, vds float64) float64 {
	ov := vgs - vt
	switch {
	case ov <= 0 || vds <= 0:
		return 0
	case vds >= ov:
		return beta / 2 * ov * ov
	}
	return beta * (ov*vds - vds*vds/2)
}

// bisect finds x in [lo, hi] where f changes sign (f(lo) < 0 < f(hi) or
// the reverse).
func bisect(lo, hi float64, f func(float64) float64) float64 {
	neg := f(lo) < 0
	for i := 0; i < 80; i++ {
		mid := (lo + hi) / 2
		if (f(mid) < 0) == neg {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// Keeper sizing on strong_keeper. The write of step 2 (clk=1 d=1 over a
// stored 0) drives s through the transmission gate pass (pass.n and pass.p,
// both 0.36u/0.36u) against the keeper (keep.n and keep.p, 1.44u/0.18u,
// gated by s_b, which the inverter fwd makes from s). Physical mode solves
// a fight at its DC point with the level-1 equations (README, "Two modes";
// beta = k' W/L, Vt with the body effect for a source above its body, the
// lower terminal the source), and a device whose gate sits between the
// rails conducts as those equations say. With s at V and s_b at U:
//
//	pass.n  gate vdd, source s:     In(V) = b/2 (vdd - V - Vt(V))^2 (saturated),
//	                                Vt(V) = vtn + gamma (sqrt(phi+V) - sqrt(phi))
//	pass.p  gate gnd, source d=vdd: Ip(V) = level1(bp, vtp, vdd, vdd - V)
//	keep.n  gate U, source gnd:     Ik(V, U) = level1(bk, vtn, U, V)
//	keep.p  gate U, source vdd:     Ikp(V, U) = level1(bkp, vtp, vdd - U, vdd - V)
//	fwd     U = VTC(V), where its nMOS and pMOS currents are equal
//
// The test checks In + Ip and Ik against the engine's own figures at the
// fight (the divider's currents: Up = (vdd-V)/I, Down = V/I). The keeper
// holds s low at a V where Ik(V, VTC(V)) = In + Ip + Ikp; the width that
// takes is r(V) = (In + Ip + Ikp)(V) / (Ik(V, VTC(V)) per metre of width).
// The rounds settle the loop from U = vdd towards the first such V, and a
// keeper narrower than every r(V) up to VIL has none: s rises past VIL,
// where physical mode no longer reads it as a 0, and the write wins. So
// the widest keeper that lets the write through is W* = min r(V) over V up
// to VIL. At 0.95 W* the write must succeed. At 1.05 W* and 1.2 W* the
// rounds settle and the keeper holds s at the first V where its width
// does. (switchsim's TestDCReferenceKeeperNearTheFlip checks the same flip
// against the DC reference, from 0.999 to 1.001 of it.)
func TestResizeKeeperFlipsTheWrite(t *testing.T) {
	s := openKeeper(t, switchsim.Physical)
	s.Next()
	s.Next()
	nl, tech := s.Netlist(), s.Netlist().Tech
	vdd, vtn, vtp := tech.Vdd, tech.Vtn, tech.Vtp
	vil, _, _ := tech.Thresholds()
	sn := nodeOf(t, s, "s")
	kn := deviceOf(t, s, "keep.n")
	keeper := nl.Device(kn)
	if keeper.W != 1.44e-6 || keeper.L != 0.18e-6 {
		t.Fatalf("keep.n is %g/%g, the demo draws it 1.44u/0.18u", keeper.W, keeper.L)
	}
	beta := func(name string) float64 {
		d := nl.Device(deviceOf(t, s, name))
		if d.Kind == switchsim.PMOS {
			return tech.Kp * d.W / d.L
		}
		return tech.Kn * d.W / d.L
	}
	bn, bp, bkp, bfn, bfp := beta("pass.n"), beta("pass.p"), beta("keep.p"), beta("fwd.n"), beta("fwd.p")
	iWrite := func(v float64) float64 {
		vt := vtn + tech.Gamma*(math.Sqrt(tech.Phi+v)-math.Sqrt(tech.Phi))
		return level1(bn, vt, vdd-v, vdd-v) + level1(bp, vtp, vdd, vdd-v)
	}
	vtc := func(v float64) float64 {
		return bisect(0, vdd, func(u float64) float64 { return level1(bfn, vtn, v, u) - level1(bfp, vtp, vdd-v, vdd-u) })
	}
	iUp := func(v float64) float64 { return iWrite(v) + level1(bkp, vtp, vdd-vtc(v), vdd-v) }
	perWidth := func(v float64) float64 { return level1(tech.Kn/keeper.L, vtn, vtc(v), v) } // Ik per metre of W
	r := func(v float64) float64 { return iUp(v) / perWidth(v) }
	// where a keeper of width w holds s: the first V with w >= r(V)
	holds := func(w float64) (float64, bool) {
		const n = 4000
		for i := 1; i <= n; i++ {
			if v := vil * float64(i) / n; w >= r(v) {
				return bisect(vil*float64(i-1)/n, v, func(x float64) float64 { return w*perWidth(x) - iUp(x) }), true
			}
		}
		return 0, false
	}

	if st := s.Node(sn); st.Value != switchsim.V0 {
		t.Fatalf("at the demo's size s is %s: the keeper should win", st.State)
	}
	e := s.Explain(sn)
	if e.Divider == nil {
		t.Fatal("no divider for the contested node s")
	}
	v0 := e.Divider.Volts
	if got, want := v0/e.Divider.Down, keeper.W*perWidth(v0); rel(got, want) > 0.01 {
		t.Fatalf("keeper current at %.3f V: the engine's %.4g A, the level-1 equation's %.4g A", v0, got, want)
	}
	if got, want := (vdd-v0)/e.Divider.Up, iWrite(v0); rel(got, want) > 0.01 {
		t.Fatalf("write current at %.3f V: the engine's %.4g A, the level-1 equations' %.4g A", v0, got, want)
	}
	if v, ok := holds(keeper.W); !ok || math.Abs(v-v0) > 0.005 {
		t.Fatalf("at 1.44u the equations hold s at %.3f V, the engine at %.3f V", v, v0)
	}
	wStar := math.Inf(1)
	for i := 1; i <= 4000; i++ {
		wStar = min(wStar, r(vil*float64(i)/4000))
	}
	t.Logf("s at %.3f V with the keeper at 1.44u; VIL %.3f V: the write flips below W* = %.4g m", v0, vil, wStar)

	// narrower than W*: the write goes through, both checks pass
	ok, err := session.Resize(s, kn, 0.95*wStar, keeper.L, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !ok.Edited() || ok.Last().Failed() {
		t.Errorf("keep.n at 0.95 W*: edited %v, step 2 failed %v; want the write to succeed", ok.Edited(), ok.Last().Failed())
	}
	if v := ok.Node(sn).Value; v != switchsim.V1 {
		t.Errorf("keep.n at 0.95 W*: s is %s, want 1", ok.Node(sn).State)
	}
	if s.Edited() || s.Netlist().Device(kn).W != 1.44e-6 {
		t.Error("Resize changed the session it was given")
	}

	// just wider than W* and clear of it: the keeper wins, the rounds
	// settle (near W* they near the keeper's point slowly, moving only
	// voltages, and such rounds do not count towards the round limit:
	// DEVELOPERS.md "Rounds"), and s sits where the equations hold it
	for _, f := range []float64{1.05, 1.2} {
		bad, err := session.Resize(s, kn, f*wStar, keeper.L, nil)
		if err != nil {
			t.Fatal(err)
		}
		if e := bad.Last(); !e.Failed() || e.Unsettled || e.Decided || bad.Node(sn).Value == switchsim.V1 {
			t.Errorf("keep.n at %g W*: s is %s, step 2 failed %v, unsettled %v, decided %v; want the keeper to win, settled", f, bad.Node(sn).State, e.Failed(), e.Unsettled, e.Decided)
		}
		if want, held := holds(f * wStar); !held {
			t.Errorf("the equations hold nothing at %g W*", f)
		} else if got := bad.Node(sn).Volts; math.Abs(got-want) > 0.01 {
			t.Errorf("keep.n at %g W*: s at %.3f V, the equations put it at %.3f V", f, got, want)
		}
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
