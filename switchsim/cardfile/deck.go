package cardfile

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/netfile"
	"railyard/switchsim/steps"
)

// DeckOptions shape the testbench WriteDeck writes (railyard export).
type DeckOptions struct {
	// Period is the time each step lasts, in seconds (--period); 0 takes 10 ns.
	Period float64
	// Edge is the rise and fall time of the inputs (--edge); 0 takes 100 ps.
	Edge float64
	// NMOSModel and PMOSModel name the device models the transistor cards
	// use (--nmos-models, --pmos-models: the first name of each list); ""
	// takes generic names with level-1 .model cards from the technology.
	NMOSModel, PMOSModel string
	// Source names the design and the steps in the deck's header.
	Source string
	// Mode is the mode whose first step decides the initial conditions.
	Mode switchsim.Mode
}

// Generic model names of the decks written without --nmos-models and
// --pmos-models; the reader types them by their names too.
const (
	GenericNMOS = "nfet_l1"
	GenericPMOS = "pfet_l1"
	switchModel = "ry_release"
)

// WriteDeck writes a testbench in the card format for a circuit simulator:
// the cell as a subcircuit (sizes kept; ports its inputs, its outputs and
// its rails), level-1 models from the technology (unless models are
// named), the supply, one piecewise-linear source per input (step k holds
// from (k-1) Period to k Period, each change ramping over Edge; x is half
// the supply; an input released with z is cut off by a voltage-controlled
// switch that opens for the steps it floats), initial conditions for the
// nodes that float after the first step (the charge the later steps rely
// on, at railyard's stored value, half the supply for a stored X), a
// transient analysis over every step, and one measure line per check at
// the end of its step with the value railyard expects beside it.
//
// Devices the format has no words for are written as what they stand for,
// each with a comment: a weak or pull transistor at the default size as
// one lengthened to railyard's default resistance for its strength, a pull
// as a resistor to its rail, a tran as a resistor of its resistance.
func WriteDeck(w io.Writer, nl *switchsim.Netlist, st *steps.Steps, opt DeckOptions) error {
	if opt.Period <= 0 {
		opt.Period = 10e-9
	}
	if opt.Edge <= 0 {
		opt.Edge = 100e-12
	}
	if opt.Edge >= opt.Period {
		return fmt.Errorf("the edge time (%s) must be shorter than the period (%s)", cardNumber(opt.Edge), cardNumber(opt.Period))
	}
	if st == nil || len(st.Rows) == 0 {
		return fmt.Errorf("a testbench needs steps: no rows to apply")
	}
	name := nl.Name
	if name == "" {
		name = "cell"
	}
	if err := caseClashes(nl); err != nil {
		return err
	}
	t := nl.Tech
	nm, pm := opt.NMOSModel, opt.PMOSModel
	if nm == "" {
		nm = GenericNMOS
	}
	if pm == "" {
		pm = GenericPMOS
	}
	pw, gn := cardName(nl, nl.Power()), cardName(nl, nl.Ground())
	var ports []int
	ports = append(ports, nl.Inputs()...)
	ports = append(ports, nl.Outputs()...)
	bw := bufio.NewWriter(w)
	p := func(format string, a ...any) { fmt.Fprintf(bw, format+"\n", a...) }
	p("* railyard testbench for %s: %d steps of %s, edges of %s", name, len(st.Rows), cardRounded(opt.Period), cardRounded(opt.Edge))
	if opt.Source != "" {
		p("* from %s", opt.Source)
	}
	p("* railyard's results are first-order switch-level estimates: this deck is for confirming them")
	p("")
	var portNames []string
	var pin []string
	for i, n := range ports {
		portNames = append(portNames, cardName(nl, n))
		dir := "i"
		if i >= len(nl.Inputs()) {
			dir = "o"
		}
		pin = append(pin, cardName(nl, n)+":"+dir)
	}
	p(".subckt %s %s %s %s", name, strings.Join(portNames, " "), pw, gn)
	p("*.pininfo %s %s:p %s:g", strings.Join(pin, " "), pw, gn)
	elems := map[string]bool{}
	var clash error
	devName := func(letter byte, s string) string {
		if s == "" || s[0]|0x20 != letter {
			s = string(letter) + s
		}
		if l := strings.ToLower(s); elems[l] && clash == nil {
			clash = fmt.Errorf("two devices are both %s in the card format, which does not tell case apart", s)
		} else {
			elems[l] = true
		}
		return s
	}
	for d := 0; d < nl.NumDevices(); d++ {
		dv := nl.Device(d)
		switch dv.Kind {
		case switchsim.NMOS, switchsim.PMOS:
			model, bulk, rsq, w0 := nm, gn, t.Rn, t.Wn
			if dv.Kind == switchsim.PMOS {
				model, bulk, rsq, w0 = pm, pw, t.Rp, t.Wp
			}
			l := cardNumber(dv.L) // sizes from the design are written exactly
			if dv.Strength < switchsim.Strong && dv.W == w0 && dv.L == t.L {
				if r := t.DefaultResistance(dv.Strength); r > rsq*dv.L/dv.W {
					l = cardRounded(r * dv.W / rsq)
					p("* %s is %s in railyard: lengthened to its default resistance of %s ohm", dv.Name, dv.Strength, cardRounded(r))
				}
			}
			if dv.Resistive {
				p("* %s is resistive in railyard (IEEE 1364-2005 §7.12): a plain transistor here", dv.Name)
			}
			p("%s %s %s %s %s %s w=%s l=%s", devName('m', devCardName(nl, d)), cardName(nl, dv.A), cardName(nl, dv.Gate), cardName(nl, dv.B), bulk, model,
				cardNumber(dv.W), l)
		default:
			r := dv.Ohms
			if r == 0 {
				r = t.DefaultResistance(dv.Strength)
				p("* %s is a %s of strength %s in railyard: its default resistance", dv.Name, dv.Kind, dv.Strength)
			}
			p("%s %s %s %s", devName('r', devCardName(nl, d)), cardName(nl, dv.A), cardName(nl, dv.B), cardRounded(r))
		}
	}
	var given, dflt []int
	for n := 0; n < nl.NumNodes(); n++ {
		if n == nl.Power() || n == nl.Ground() || !touched(nl, n) {
			continue
		}
		if nl.NodeCap(n) == nl.DefaultCap(n) { // cnode, or cdiff on a diffusion node
			dflt = append(dflt, n)
		} else {
			given = append(given, n)
		}
	}
	if len(given) > 0 {
		p("* node capacitances the design gives")
	}
	for _, n := range given {
		p("cn_%s %s %s %s", cardName(nl, n), cardName(nl, n), gn, cardNumber(nl.NodeCap(n)))
	}
	if len(dflt) > 0 {
		p("* railyard's default node capacitances (cnode, cdiff on diffusion nodes) on the other nodes: delete those your device models account for")
	}
	for _, n := range dflt {
		p("cn_%s %s %s %s", cardName(nl, n), cardName(nl, n), gn, cardNumber(nl.NodeCap(n)))
	}
	if clash != nil {
		return clash
	}
	p(".ends %s", name)
	p("")
	if opt.NMOSModel == "" || opt.PMOSModel == "" {
		p("* level-1 models from railyard's technology %q (KP in A/V^2, VTO in V)", t.Name)
	}
	if opt.NMOSModel == "" {
		p(".model %s nmos (level=1 vto=%s kp=%s gamma=%s phi=%s)", GenericNMOS, cardNumber(t.Vtn), cardNumber(t.Kn), cardNumber(t.Gamma), cardNumber(t.Phi))
	}
	if opt.PMOSModel == "" {
		p(".model %s pmos (level=1 vto=%s kp=%s gamma=%s phi=%s)", GenericPMOS, cardNumber(-t.Vtp), cardNumber(t.Kp), cardNumber(t.Gamma), cardNumber(t.Phi))
	}
	if opt.NMOSModel == "" || opt.PMOSModel == "" {
		p("")
	}
	p("v%s %s 0 dc %s", pw, pw, cardNumber(t.Vdd))
	p("xdut %s %s 0 %s", strings.Join(portNames, " "), pw, name)
	p("")
	if err := writeSources(bw, nl, st, opt); err != nil {
		return err
	}
	writeInitial(bw, nl, st, opt)
	stop := float64(len(st.Rows)) * opt.Period
	p(".tran %s %s", cardRounded(math.Min(opt.Edge/4, opt.Period/50)), cardRounded(stop))
	writeMeasures(bw, nl, st, opt)
	p(".end")
	return bw.Flush()
}

// touched reports whether a device reaches node n (gate or channel).
func touched(nl *switchsim.Netlist, n int) bool {
	return len(nl.ChannelDevices(n)) > 0 || len(nl.GatedDevices(n)) > 0
}

// caseClashes refuses names that differ only in case: the card format
// does not tell them apart.
func caseClashes(nl *switchsim.Netlist) error {
	seen := map[string]string{}
	for n := 0; n < nl.NumNodes(); n++ {
		s := cardName(nl, n)
		l := strings.ToLower(s)
		if prev, ok := seen[l]; ok && prev != s {
			return fmt.Errorf("nodes %s and %s differ only in case, which the card format does not tell apart", prev, s)
		}
		seen[l] = s
	}
	return nil
}

// level is the voltage a drive stands for; z keeps the last one (the
// switch is open then).
func level(d switchsim.Drive, vdd, last float64) float64 {
	switch d {
	case switchsim.Drive0:
		return 0
	case switchsim.Drive1:
		return vdd
	case switchsim.DriveX:
		return vdd / 2
	}
	return last
}

func writeSources(bw *bufio.Writer, nl *switchsim.Netlist, st *steps.Steps, opt DeckOptions) error {
	vdd := nl.Tech.Vdd
	col := map[int]int{}
	for c, n := range st.Apply {
		col[n] = c
	}
	fmt.Fprintf(bw, "* inputs: step k holds from (k-1) x %s to k x %s; x is half the supply\n", cardRounded(opt.Period), cardRounded(opt.Period))
	for _, in := range nl.Inputs() {
		name := cardName(nl, in)
		c, applied := col[in]
		drives := make([]switchsim.Drive, len(st.Rows))
		released := false
		for k, r := range st.Rows {
			drives[k] = switchsim.DriveX // never applied: railyard holds it at x
			if applied {
				drives[k] = r.Drives[c]
			}
			released = released || drives[k] == switchsim.DriveZ
		}
		src := name
		if released {
			src = name + "_drv"
		}
		fmt.Fprintf(bw, "v%s %s 0 pwl(%s)\n", name, src, pwl(drives, opt, func(d switchsim.Drive, last float64) float64 { return level(d, vdd, last) }))
		if released {
			fmt.Fprintf(bw, "* %s is released (z) in some steps: a switch cuts it off while the enable source is low\n", name)
			fmt.Fprintf(bw, "s%s %s %s %s_en 0 %s\n", name, src, name, name, switchModel)
			fmt.Fprintf(bw, "v%s_en %s_en 0 pwl(%s)\n", name, name, pwl(drives, opt, func(d switchsim.Drive, _ float64) float64 {
				if d == switchsim.DriveZ {
					return 0
				}
				return 1
			}))
		}
	}
	for _, in := range nl.Inputs() {
		for _, r := range st.Rows {
			if c, ok := col[in]; ok && r.Drives[c] == switchsim.DriveZ {
				fmt.Fprintf(bw, ".model %s sw (vt=0.5 vh=0.1 ron=1 roff=1e12)\n", switchModel)
				return nil
			}
		}
	}
	return nil
}

// pwl writes the corner points of a piecewise-linear waveform: the first
// step's level from time 0, then for each change a ramp of Edge starting
// where its step starts.
func pwl(drives []switchsim.Drive, opt DeckOptions, volts func(switchsim.Drive, float64) float64) string {
	var pts []string
	last := volts(drives[0], 0)
	pts = append(pts, "0 "+cardNumber(last))
	for k := 1; k < len(drives); k++ {
		v := volts(drives[k], last)
		if v == last {
			continue
		}
		t0 := float64(k) * opt.Period
		pts = append(pts, cardRounded(t0)+" "+cardNumber(last), cardRounded(t0+opt.Edge)+" "+cardNumber(v))
		last = v
	}
	return strings.Join(pts, " ")
}

// writeInitial sets the nodes that float after the first step, where a
// circuit simulator's operating point could not find them, at railyard's
// stored value: the charge later steps rely on.
func writeInitial(bw *bufio.Writer, nl *switchsim.Netlist, st *steps.Steps, opt DeckOptions) {
	s := switchsim.NewSim(nl, switchsim.Options{Mode: opt.Mode})
	applyRow(s, st, 0)
	s.Settle()
	checked := map[int]bool{}
	for _, n := range st.Check {
		checked[n] = true
	}
	vdd := nl.Tech.Vdd
	var lines []string
	for n := 0; n < nl.NumNodes(); n++ {
		ns := s.Node(n)
		if !ns.Floating || (!checked[n] && len(nl.GatedDevices(n)) == 0) || !touched(nl, n) {
			continue
		}
		v := vdd / 2
		switch ns.Value {
		case switchsim.V0:
			v = 0
		case switchsim.V1:
			v = vdd
		}
		lines = append(lines, fmt.Sprintf("v(%s)=%s", nodeRef(nl, n), cardNumber(v)))
	}
	if len(lines) == 0 {
		return
	}
	fmt.Fprintf(bw, "* nodes floating after step 1, at the charge railyard stores (a stored X at half the supply)\n")
	for _, l := range lines {
		fmt.Fprintf(bw, ".ic %s\n", l)
	}
}

func applyRow(s *switchsim.Sim, st *steps.Steps, k int) {
	for c, n := range st.Apply {
		s.SetInput(n, st.Rows[k].Drives[c])
	}
}

// nodeRef is how the testbench's top level names node n: a port by its
// own name, an inner node through the instance.
func nodeRef(nl *switchsim.Netlist, n int) string {
	if nl.NodeKind(n) == switchsim.Input {
		return cardName(nl, n)
	}
	for _, o := range nl.Outputs() {
		if o == n {
			return cardName(nl, n)
		}
	}
	return "xdut." + cardName(nl, n)
}

// cardName is how the deck spells node n: the spelling the design came
// with (a netlist's own a_193_47#), so that reading the deck back gives
// the same railyard names, or the railyard name where that spelling is no
// word of the card format.
func cardName(nl *switchsim.Netlist, n int) string {
	if o := nl.DisplayName(n); cardWord(o) {
		return o
	}
	return nl.NodeName(n)
}

func devCardName(nl *switchsim.Netlist, d int) string {
	if o := nl.DeviceDisplayName(d); cardWord(o) {
		return o
	}
	return nl.Device(d).Name
}

// cardWord reports whether s reads back as one name where a node or a
// device's name stands (never first on a line): no space, none of the
// characters the scanner splits words at, not 0 (ground) or a lone $ (a
// comment).
func cardWord(s string) bool {
	if s == "" || s == "0" || s == "$" {
		return false
	}
	for i := 0; i < len(s); i++ {
		if c := s[i]; c <= ' ' || c == 0x7f || strings.IndexByte("=(),{}'\";", c) >= 0 {
			return false
		}
	}
	return true
}

func writeMeasures(bw *bufio.Writer, nl *switchsim.Netlist, st *steps.Steps, opt DeckOptions) {
	vil, vih, _ := nl.Tech.Thresholds()
	fmt.Fprintf(bw, "* checks at the end of each step: railyard's logic thresholds are vil %.3f V and vih %.3f V\n", vil, vih)
	for k, r := range st.Rows {
		end := float64(k+1) * opt.Period
		for c, n := range st.Check {
			want := r.Wants[c]
			if want == steps.WantAny {
				continue
			}
			label := ""
			if r.Label != "" {
				label = " " + strconv.Quote(r.Label)
			}
			fmt.Fprintf(bw, "* step %d%s: railyard wants %s %s\n", k+1, label, cardName(nl, n), wantWords(want))
			fmt.Fprintf(bw, ".measure tran s%d_%s find v(%s) at=%s\n", k+1, measureName(cardName(nl, n)), nodeRef(nl, n), cardRounded(end))
		}
	}
}

func wantWords(w steps.Want) string {
	switch w {
	case steps.Want0:
		return "0 (at or below vil)"
	case steps.Want1:
		return "1 (at or above vih)"
	case steps.WantX:
		return "X (between vil and vih, or unknown)"
	case steps.WantZ:
		return "Z (floating: no path drives it)"
	case steps.WantL:
		return "L (a weak or degraded 0)"
	case steps.WantH:
		return "H (a weak or degraded 1)"
	}
	return w.String()
}

func measureName(s string) string {
	b := []byte(s)
	for i, c := range b {
		if !isAlnum(c) && c != '_' {
			b[i] = '_'
		}
	}
	return string(b)
}

// cardRounded prints a computed value (a time, a default resistance, a
// lengthened gate): 3 x 10n is 30n, not 30.000000000000004n; 12 digits
// are plenty. Sizes and capacitances from the design are written exactly.
func cardRounded(v float64) string {
	if r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 12, 64), 64); err == nil {
		v = r
	}
	return cardNumber(v)
}

// cardNumber prints v for the card format: engineering notation with the
// format's own suffixes (meg for mega; the format reads M as milli).
func cardNumber(v float64) string {
	s := netfile.FormatNumber(v)

	switch {
	case strings.HasSuffix(s, "M"):
		return s[:len(s)-1] + "meg"
	case strings.HasSuffix(s, "G"):
		return s[:len(s)-1] + "g"
	case strings.ContainsAny(s, "e"):
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return s
}
