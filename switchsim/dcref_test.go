package switchsim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"railyard/designs"
	sw "railyard/switchsim"
	"railyard/switchsim/gen"
	"railyard/switchsim/load"
)

// An independent DC reference for physical mode. It is written from the
// model's text (DEVELOPERS.md (physical mode), as the README and DEVELOPERS.md word it:
// level-1 devices of Shichman and Hodges 1968 with the body effect, pulls as
// resistors, the documented default sizes) and shares no code with the
// engine: it reads a settled Sim only through the exported API, builds the
// channel network of every driven part with each device's gate at its gate
// node's settled voltage, and solves all its node voltages at once by
// damped Newton with a Jacobian by finite differences and a dense
// elimination, from the middle of the supply. Where the devices leave a
// node's voltage undetermined (no current over a range: a pass device cut
// off at its limit, a node held by its charge), a conductance 1e-12 of the
// largest to the engine's voltage picks that voltage, the only choice that
// does not need the node's history.

// dcRef is one technology's constants.
type dcRef struct {
	t        sw.Tech
	vil, vih float64
}

func newDCRef(t sw.Tech) dcRef {
	r := dcRef{t: t}
	r.vil, r.vih = refUnityGain(t)
	return r
}

// refUnityGain finds VIL and VIH as the input voltages where the square-law
// reference inverter's transfer curve has slope -1 (DEVELOPERS.md, physical mode), by finite
// differences on its output found by bisection of the current balance,
// unless the technology gives them.
func refUnityGain(t sw.Tech) (vil, vih float64) {
	bn, bp := t.Kn*t.Wn/t.L, t.Kp*t.Wp/t.L
	out := func(vi float64) float64 {
		lo, hi := 0.0, t.Vdd
		for i := 0; i < 200; i++ {
			vo := (lo + hi) / 2
			in := refIds(bn, vi-t.Vtn, vo)
			ip := refIds(bp, t.Vdd-vi-t.Vtp, t.Vdd-vo)
			if in < ip {
				lo = vo
			} else {
				hi = vo
			}
		}
		return (lo + hi) / 2
	}
	slope := func(vi float64) float64 { const h = 1e-6; return (out(vi+h) - out(vi-h)) / (2 * h) }
	// VM, where both carry the same saturated current
	r := math.Sqrt(bp / bn)
	vm := (t.Vtn + r*(t.Vdd-t.Vtp)) / (1 + r)
	find := func(lo, hi float64, steepAbove bool) float64 {
		for i := 0; i < 100; i++ {
			mid := (lo + hi) / 2
			if (slope(mid) < -1) == steepAbove {
				hi = mid
			} else {
				lo = mid
			}
		}
		return (lo + hi) / 2
	}
	vil, vih = find(t.Vtn+1e-4, vm-1e-4, true), find(vm+1e-4, t.Vdd-t.Vtp-1e-4, false)
	if t.VIL > 0 {
		vil = t.VIL
	}
	if t.VIH > 0 {
		vih = t.VIH
	}
	return vil, vih
}

// refIds is the level-1 drain current for overdrive ov and drain-source
// voltage vds >= 0.
func refIds(beta, ov, vds float64) float64 {
	switch {
	case ov <= 0:
		return 0
	case vds >= ov:
		return beta / 2 * ov * ov
	}
	return beta * (ov*vds - vds*vds/2)
}

// current is device d's channel current from its terminal A to B with the
// terminals at va, vb and the gate at vg.
func (r dcRef) current(dev sw.Device, beta, vg, va, vb float64) float64 {
	t := r.t
	sign := 1.0
	switch dev.Kind {
	case sw.PullUp, sw.PullDown:
		return beta * (va - vb)
	case sw.NMOS: // the source is the lower terminal, the body at ground
		if va < vb {
			va, vb, sign = vb, va, -1
		}
		vt := t.Vtn + t.Gamma*(math.Sqrt(t.Phi+vb)-math.Sqrt(t.Phi))
		return sign * refIds(beta, vg-vb-vt, va-vb)
	}
	// pMOS: the source is the higher terminal, the body at vdd
	if va < vb {
		va, vb, sign = vb, va, -1
	}
	vt := t.Vtp + t.Gamma*(math.Sqrt(t.Phi+t.Vdd-va)-math.Sqrt(t.Phi))
	return sign * refIds(beta, va-vg-vt, va-vb)
}

// beta is device d's k' W / L, an unsized pull or weak transistor's length
// stretched to its documented default resistance, max(rn L / wn, rp L / wp)
// times 10 (pull) or 40 (weak); a pull's is 1 / R with R that default
// (0.1 for supply, 1 for strong).
func (r dcRef) beta(dev sw.Device) float64 {
	t := r.t
	ref := math.Max(t.Rn*t.L/t.Wn, t.Rp*t.L/t.Wp)
	factor, ok := map[sw.Strength]float64{sw.Supply: 0.1, sw.Pull: 10, sw.Weak: 40}[dev.Strength]
	if !ok {
		factor = 1
	}
	if dev.Kind >= sw.PullUp { // pulls and always-on links are resistors
		if dev.Ohms > 0 {
			return 1 / dev.Ohms
		}
		return 1 / (factor * ref)
	}
	k, rsq, w0 := t.Kn, t.Rn, t.Wn
	if dev.Kind == sw.PMOS {
		k, rsq, w0 = t.Kp, t.Rp, t.Wp
	}
	b := k * dev.W / dev.L
	if dev.Strength < sw.Strong && dev.W == w0 && dev.L == t.L {
		b *= math.Min(1, rsq*dev.L/dev.W/(factor*ref))
	}
	return b
}

// refPart is one driven part: its nodes, the devices that can conduct
// between them and to sources, and the values those devices bring.
type refPart struct {
	nodes []int
	devs  []int
	has   [3]bool // the values of the sources devices on reach
	reach [3]bool // and of those any device that conducts reaches
	// crossLeak: a partly-on device joins two nodes that are not sources.
	// The engine solves a partly-on device only towards a source or within
	// the part of devices on (DEVELOPERS.md, physical mode), so such parts
	// are counted, not compared.
	crossLeak bool
}

// dcCompare checks every driven part of s's settled state against the
// reference and returns the largest difference in volts and how many
// nodes it compared.
func dcCompare(t *testing.T, what string, s *sw.Sim) (worst float64, compared, skipped int) {
	t.Helper()
	nl := s.Netlist()
	r := newDCRef(nl.Tech)
	nn := nl.NumNodes()
	volts := func(n int) float64 { return s.Node(n).Volts }
	isSource := make([]bool, nn) // rails and driven inputs (a released input is a node)
	for n := 0; n < nn; n++ {
		k := nl.NodeKind(n)
		isSource[n] = k == sw.Power || k == sw.Ground || (k == sw.Input && s.InputDrive(n) != sw.DriveZ)
	}
	gateV := func(d int) float64 {
		dev := nl.Device(d)
		if dev.Gate < 0 {
			return math.NaN()
		}
		return volts(dev.Gate)
	}
	// can reports whether a device can conduct at all with its gate where
	// it is: a pull, or a gate past the threshold from the rail its body
	// is tied to.
	can := func(d int) bool {
		dev := nl.Device(d)
		switch dev.Kind {
		case sw.PullUp, sw.PullDown:
			return true
		case sw.NMOS:
			return gateV(d) > nl.Tech.Vtn
		}
		return nl.Tech.Vdd-gateV(d) > nl.Tech.Vtp
	}
	seen := make([]bool, nn)
	for seed := 0; seed < nn; seed++ {
		if seen[seed] || isSource[seed] {
			continue
		}
		var p refPart
		ok := true
		queue := []int{seed}
		seen[seed] = true
		devSeen := map[int]bool{}
		for i := 0; i < len(queue); i++ {
			m := queue[i]
			p.nodes = append(p.nodes, m)
			for _, d := range nl.ChannelDevices(m) {
				if devSeen[d] {
					continue
				}
				dev := nl.Device(d)
				if s.Conduction(d) == sw.Unknown || (dev.Gate >= 0 && math.IsNaN(gateV(d))) {
					ok = false // a gate of unknown voltage: no reference
					continue
				}
				if !can(d) || dev.A == dev.B {
					continue
				}
				devSeen[d] = true
				p.devs = append(p.devs, d)
				o := nl.Other(d, m)
				if s.Conduction(d) == sw.Off && !isSource[o] {
					p.crossLeak = true
				}
				if isSource[o] {
					p.reach[s.Node(o).Value] = true
					if s.Conduction(d) == sw.On { // a partly-on device brings current, not a value
						p.has[s.Node(o).Value] = true
					}
				} else if !seen[o] {
					seen[o] = true
					queue = append(queue, o)
				}
			}
		}
		driven := true
		for _, n := range p.nodes {
			x := s.Node(n)
			driven = driven && !x.Floating && !math.IsNaN(x.Volts)
		}
		if !ok || !driven || p.reach[sw.VX] || (!p.has[sw.V0] && !p.has[sw.V1]) {
			continue
		}
		if p.crossLeak {
			skipped += len(p.nodes)
			continue
		}
		got := r.solve(nl, s, p)
		for j, n := range p.nodes {
			x := s.Node(n)
			diff := math.Abs(got[j] - x.Volts)
			worst = math.Max(worst, diff)
			compared++
			if diff > 5e-3 {
				t.Errorf("%s: %s at %.4f V, the reference %.4f V%s", what, nl.NodeName(n), x.Volts, got[j], dcState(s))
			}
			if want := r.value(p, got[j], s.Node(n)); want != x.Value {
				t.Errorf("%s: %s is %v at %.4f V, the reference reads %v at %.4f V", what, nl.NodeName(n), x.Value, x.Volts, want, got[j])
			}
		}
	}
	return worst, compared, skipped
}

// dcState prints the inputs' drives and every node's state, to reproduce a
// difference.
func dcState(s *sw.Sim) string {
	nl := s.Netlist()
	out := "\ninputs:"
	for _, n := range nl.Inputs() {
		out += fmt.Sprintf(" %s=%v", nl.NodeName(n), s.InputDrive(n))
	}
	out += "\nnodes:"
	for n := 0; n < nl.NumNodes(); n++ {
		x := s.Node(n)
		out += fmt.Sprintf(" %s=%v/%v@%.4f", nl.NodeName(n), x.State, x.Value, x.Volts)
	}
	return out
}

// value is the logic value the model gives a node of part p at v: where
// devices on bring both values to the part, by VIL/VIH; where they bring
// one, that value while the level holds it and X where it does not (the
// level lost, never flipped: DEVELOPERS.md (physical mode)), whatever partly-on devices do
// to the level.
func (r dcRef) value(p refPart, v float64, x sw.NodeState) sw.Value {
	switch {
	case p.has[sw.V0] && p.has[sw.V1]:
		switch {
		case v <= r.vil:
			return sw.V0
		case v >= r.vih:
			return sw.V1
		}
		return sw.VX
	case p.has[sw.V1]:
		if v >= r.vih {
			return sw.V1
		}
	case p.has[sw.V0]:
		if v <= r.vil {
			return sw.V0
		}
	}
	return sw.VX
}

// solve finds part p's node voltages by damped Newton.
func (r dcRef) solve(nl *sw.Netlist, s *sw.Sim, p refPart) []float64 {
	k := len(p.nodes)
	idx := map[int]int{}
	for j, n := range p.nodes {
		idx[n] = j
	}
	vdd := r.t.Vdd
	type el struct {
		dev    sw.Device
		beta   float64
		vg     float64
		a, b   int // local index, -1 a source
		va, vb float64
	}
	els := make([]el, 0, len(p.devs))
	gmax := 0.0
	for _, d := range p.devs {
		dev := nl.Device(d)
		e := el{dev: dev, beta: r.beta(dev), a: -1, b: -1}
		if dev.Gate >= 0 {
			e.vg = s.Node(dev.Gate).Volts
		}
		if j, ok := idx[dev.A]; ok {
			e.a = j
		} else {
			e.va = s.Node(dev.A).Volts
		}
		if j, ok := idx[dev.B]; ok {
			e.b = j
		} else {
			e.vb = s.Node(dev.B).Volts
		}
		g := e.beta
		if dev.Kind == sw.NMOS || dev.Kind == sw.PMOS {
			g *= vdd
		}
		gmax = math.Max(gmax, g)
		els = append(els, e)
	}
	hold := make([]float64, k)
	for j, n := range p.nodes {
		hold[j] = s.Node(n).Volts
	}
	gmin := 1e-12 * gmax
	resid := func(x []float64) []float64 {
		f := make([]float64, k)
		for j := range f {
			f[j] = gmin * (x[j] - hold[j])
		}
		for _, e := range els {
			va, vb := e.va, e.vb
			if e.a >= 0 {
				va = x[e.a]
			}
			if e.b >= 0 {
				vb = x[e.b]
			}
			i := r.current(e.dev, e.beta, e.vg, va, vb)
			if e.a >= 0 {
				f[e.a] += i
			}
			if e.b >= 0 {
				f[e.b] -= i
			}
		}
		return f
	}
	norm := func(f []float64) float64 {
		s := 0.0
		for _, v := range f {
			s += v * v
		}
		return math.Sqrt(s)
	}
	x := make([]float64, k)
	for j := range x {
		x[j] = vdd / 2
	}
	f := resid(x)
	for it := 0; it < 3000; it++ {
		// Jacobian by central differences
		jac := make([][]float64, k)
		for j := range jac {
			jac[j] = make([]float64, k)
		}
		const h = 1e-7
		for c := 0; c < k; c++ {
			xp, xm := append([]float64(nil), x...), append([]float64(nil), x...)
			xp[c] += h
			xm[c] -= h
			fp, fm := resid(xp), resid(xm)
			for j := 0; j < k; j++ {
				jac[j][c] = (fp[j] - fm[j]) / (2 * h)
			}
			// the tiny conductance exactly: where the devices are flat its
			// slope is below what differences of the currents resolve
			jac[c][c] = math.Max(jac[c][c], gmin)
		}
		step := refGauss(jac, f)
		if step == nil {
			break
		}
		big := 0.0
		for _, v := range step {
			big = math.Max(big, math.Abs(v))
		}
		alpha := math.Min(1, 0.1/math.Max(big, 1e-300)) // at most 0.1 V a step
		var nx, nf []float64
		for h := 0; h < 30; h++ {
			nx = make([]float64, k)
			for j := range nx {
				nx[j] = math.Min(math.Max(x[j]-alpha*step[j], 0), vdd)
			}
			nf = resid(nx)
			if norm(nf) <= norm(f) {
				break
			}
			alpha /= 2
		}
		moved := 0.0
		for j := range x {
			moved = math.Max(moved, math.Abs(nx[j]-x[j]))
		}
		x, f = nx, nf
		if moved < 1e-13 {
			break
		}
	}
	return x
}

// refGauss solves a x = b by elimination with partial pivoting (nil if singular).
func refGauss(a [][]float64, b []float64) []float64 {
	k := len(b)
	m := make([][]float64, k)
	for i := range m {
		m[i] = append(append([]float64(nil), a[i]...), b[i])
	}
	for c := 0; c < k; c++ {
		p := c
		for r := c + 1; r < k; r++ {
			if math.Abs(m[r][c]) > math.Abs(m[p][c]) {
				p = r
			}
		}
		if m[p][c] == 0 {
			return nil
		}
		m[c], m[p] = m[p], m[c]
		for r := c + 1; r < k; r++ {
			f := m[r][c] / m[c][c]
			for cc := c; cc <= k; cc++ {
				m[r][cc] -= f * m[c][cc]
			}
		}
	}
	x := make([]float64, k)
	for r := k - 1; r >= 0; r-- {
		v := m[r][k]
		for c := r + 1; c < k; c++ {
			v -= m[r][c] * x[c]
		}
		x[r] = v / m[r][r]
	}
	return x
}

// TestDCReferenceDemos compares every driven part of every demo after each
// of its steps, and after random drives.
func TestDCReferenceDemos(t *testing.T) {
	rng := rand.New(rand.NewPCG(12, 7))
	worst, compared, skipped := 0.0, 0, 0
	for _, e := range designs.List() {
		ld, err := load.Host(load.Options{}).Open("demo:"+e.Name, "")
		if err != nil {
			t.Fatal(err)
		}
		nl := ld.Design.Netlist
		s := sw.NewSim(nl, sw.Options{})
		s.Settle()
		check := func(what string) {
			w, c, k := dcCompare(t, "demo:"+e.Name+" "+what, s)
			worst, compared, skipped = math.Max(worst, w), compared+c, skipped+k
		}
		if st := ld.Steps; st != nil {
			for _, row := range st.Rows {
				for i, n := range st.Apply {
					s.SetInput(n, row.Drives[i])
				}
				s.Settle()
				check(fmt.Sprintf("steps line %d", row.Line))
			}
		}
		for step := 0; step < 20; step++ {
			for _, n := range nl.Inputs() {
				if rng.IntN(3) == 0 {
					s.SetInput(n, sw.Drive(rng.IntN(2)))
				}
			}
			s.Settle()
			check("random drives")
		}
	}
	t.Logf("demos: %d node voltages compared, worst difference %.3g V", compared, worst)
	if compared == 0 || skipped > 0 {
		t.Fatalf("%d compared, %d skipped: every driven part of a demo must be compared", compared, skipped)
	}
}

// TestDCReferenceRandom does the same on random small networks
// (switchsim/gen) under random drives, with a random technology now and
// then.
func TestDCReferenceRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 23))
	nets := 300
	if testing.Short() {
		nets = 60
	}
	worst, compared, skipped := 0.0, 0, 0
	for net := 0; net < nets; net++ {
		spec := gen.Random(rng, 2+rng.IntN(10), 2+rng.IntN(18))
		b, err := spec.Builder()
		if err != nil {
			t.Fatal(err)
		}
		if net%3 == 1 {
			tc := b.Tech()
			tc.Vtn *= 0.6 + 0.8*rng.Float64()
			tc.Vtp *= 0.6 + 0.8*rng.Float64()
			tc.Gamma *= 1.5 * rng.Float64()
			if tc.Validate() == nil {
				b.SetTech(tc)
			}
		}
		nl, err := b.Compile()
		if err != nil {
			t.Fatal(err)
		}
		s := sw.NewSim(nl, sw.Options{})
		for step := 0; step < 8; step++ {
			for _, in := range nl.Inputs() {
				if step == 0 || rng.IntN(3) == 0 {
					s.SetInput(in, []sw.Drive{sw.Drive0, sw.Drive1, sw.Drive0, sw.Drive1, sw.DriveZ}[rng.IntN(5)])
				}
			}
			if s.Settle().Oscillated {
				continue
			}
			w, c, k := dcCompare(t, fmt.Sprintf("net %d step %d\n%s", net, step, spec), s)
			worst, compared, skipped = math.Max(worst, w), compared+c, skipped+k
		}
	}
	t.Logf("random networks: %d node voltages compared, worst difference %.3g V; %d nodes in parts with a partly-on device between two nodes not compared", compared, worst, skipped)
	if skipped*20 > compared {
		t.Errorf("%d nodes skipped for %d compared", skipped, compared)
	}
}
