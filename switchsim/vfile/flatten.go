package vfile

import (
	"fmt"
	"strconv"
	"strings"

	"railyard/switchsim"
	"railyard/switchsim/diag"
	"railyard/switchsim/internal/netbuild"
)

type flattener struct {
	file        string
	p           *parser
	opt         Options
	lim         Limits
	errs, notes *netbuild.Sink
	rails       netbuild.Rails
	nb          *netbuild.Design
	tree        *netbuild.Tree[*module]
	powerSeen   bool
	groundSeen  bool
	devs        int
	over        bool
	supplies    [2][]string // supply0 and supply1 nets met, for the note
}

// inst is one module instance being expanded (the top too).
type inst struct {
	m               *module
	key, want, orig string
	ports           map[string][]int32 // connected port bits, msb first
	depth           int
}

func newFlattener(file string, p *parser, opt Options, lim Limits, errs, notes *netbuild.Sink) *flattener {
	f := &flattener{file: file, p: p, opt: opt, lim: lim, errs: errs, notes: notes,
		rails: netbuild.NewRails(opt.Power, opt.Ground),
		nb:    netbuild.NewDesign(netbuild.Node{Want: "vdd"}, netbuild.Node{Want: "gnd"})}
	f.tree = &netbuild.Tree[*module]{What: "module", Name: func(m *module) string { return m.name },
		Depth: lim.Depth, Max: netbuild.Size{lim.Devices, lim.Devices}, Errs: errs,
		Body: func(m *module, use func(*module, diag.Pos)) netbuild.Size {
			n := 0
			for _, it := range m.items {
				switch {
				case it.prim == "cmos" || it.prim == "rcmos":
					n += 2
				case it.prim != "":
					n++
				default:
					if c := p.mods[it.module.text]; c != nil {
						use(c, it.pos)
					}
				}
			}
			return netbuild.Size{n, n}
		}}
	return f
}

func (f *flattener) run() *switchsim.Netlist {
	for _, m := range f.p.order { // cycles anywhere are errors, whichever module is the top
		f.tree.Measure(m, m.pos)
	}
	if f.errs.Any() {
		return nil
	}
	top := f.pickTop()
	if top == nil {
		return nil
	}
	if f.tree.Measure(top, top.pos)[0] > f.lim.Devices {
		f.errs.Add(top.pos, "the design expands to more than the limit of %d devices", f.lim.Devices)
	}
	if f.errs.Any() {
		return nil
	}
	in := &inst{m: top}
	f.expand(in)
	f.nb.Name = netbuild.Escape(top.name)
	f.nb.At = top.pos
	if f.errs.Any() {
		return nil
	}
	f.ports(top, in)
	for v, names := range f.supplies {
		if len(names) > 1 {
			f.notes.Add(top.pos, "supply%d nets %s are all the %s rail", v, strings.Join(names, ", "), [2]string{"ground", "power"}[v])
		}
	}
	if f.errs.Any() {
		return nil
	}
	return f.nb.Build(f.errs.S)
}

func (f *flattener) pickTop() *module {
	if f.opt.Top != "" {
		if m := f.p.mods[f.opt.Top]; m != nil {
			return m
		}
		f.errs.Add(diag.Pos{File: f.file}, "no module named %q (this file defines: %s)", f.opt.Top, f.modList(f.p.order))
		return nil
	}
	for _, m := range f.p.order {
		for _, it := range m.items {
			if it.prim == "" {
				if c := f.p.mods[it.module.text]; c != nil && c != m {
					c.used = true
				}
			}
		}
	}
	var tops []*module
	for _, m := range f.p.order {
		if !m.used {
			tops = append(tops, m)
		}
	}
	switch len(tops) {
	case 1:
		return tops[0]
	case 0:
		f.errs.Add(diag.Pos{File: f.file}, "every module is instantiated by another: give --top (this file defines: %s)", f.modList(f.p.order))
	default:
		f.errs.Add(diag.Pos{File: f.file}, "the file defines %d modules that none instantiates: give --top with one of %s", len(tops), f.modList(tops))
	}
	return nil
}

func (f *flattener) modList(ms []*module) string {
	names := make([]string, len(ms))
	for i, m := range ms {
		names[i] = m.name
	}
	return netbuild.List(names)
}

// netOf finds a name's declaration in m; undeclared names are implicit
// scalar wires (IEEE 1364-2005 §6: an identifier in a connection declares
// a net of the default type).
func netOf(m *module, name string) *net { return m.nets[name] }

// bits resolves a reference to its nodes, msb first.
func (f *flattener) bits(r ref, in *inst) []int32 {
	switch {
	case r.empty:
		return nil
	case r.konst == 0:
		return []int32{f.nb.Ground}
	case r.konst == 1:
		return []int32{f.nb.Power}
	}
	if len(r.name) > f.lim.NameBytes {
		f.errs.Add(r.pos, "name is longer than the limit of %d bytes", f.lim.NameBytes)
		return nil
	}
	n := netOf(in.m, r.name)
	width := 1
	if n != nil {
		width = n.width()
	}
	idx := func(b int) int32 { return f.bit(r, n, b, in) }
	if n == nil || !n.vector {
		if r.sel != 0 {
			f.errs.Add(r.pos, "%s is not a vector: it takes no bit select", r.name)
			return nil
		}
		return []int32{idx(-1)}
	}
	lo, hi := min(n.msb, n.lsb), max(n.msb, n.lsb)
	in1 := func(b int) bool { return b >= lo && b <= hi }
	switch r.sel {
	case 1:
		if !in1(r.msb) {
			f.errs.Add(r.pos, "bit %d of %s is outside its range [%d:%d]", r.msb, r.name, n.msb, n.lsb)
			return nil
		}
		return []int32{idx(r.msb)}
	case 2:
		if !in1(r.msb) || !in1(r.lsb) {
			f.errs.Add(r.pos, "bits [%d:%d] of %s are outside its range [%d:%d]", r.msb, r.lsb, r.name, n.msb, n.lsb)
			return nil
		}
		var out []int32
		step := 1
		if r.msb > r.lsb {
			step = -1
		}
		for b := r.msb; ; b += step {
			out = append(out, idx(b))
			if b == r.lsb {
				break
			}
		}
		return out
	}
	out := make([]int32, width)
	for i := range out {
		out[i] = idx(n.bit(i))
	}
	return out
}

// bit resolves one bit (b = -1 for a scalar) of a net of in.
func (f *flattener) bit(r ref, n *net, b int, in *inst) int32 {
	if ports, ok := in.ports[r.name]; ok && n != nil {
		i := 0
		if n.vector {
			i = abs(n.msb - b)
		}
		return ports[i]
	}
	kind := ""
	if n != nil {
		kind = n.kind
	}
	suffix := ""
	if b >= 0 {
		suffix = "[" + strconv.Itoa(b) + "]"
	}
	orig := r.name + suffix
	rk := 0
	switch {
	case kind == "supply1":
		rk = 1
	case kind == "supply0":
		rk = -1
	case b < 0:
		rk = f.rails.Kind(r.name)
	}
	switch rk {
	case 1:
		if kind == "supply1" {
			f.supply(1, orig)
		}
		if !f.powerSeen {
			f.powerSeen = true
			nd := &f.nb.Nodes[f.nb.Power]
			nd.Want, nd.Orig, nd.Pos = netbuild.RailWant(orig, true, false), orig, r.pos
		}
		return f.nb.Power
	case -1:
		if kind == "supply0" {
			f.supply(0, orig)
		}
		if !f.groundSeen {
			f.groundSeen = true
			nd := &f.nb.Nodes[f.nb.Ground]
			nd.Want, nd.Orig, nd.Pos = netbuild.RailWant(orig, false, false), orig, r.pos
		}
		return f.nb.Ground
	}
	want := in.want + netbuild.Escape(r.name) + suffix
	full := in.orig + orig
	charge := switchsim.HighZ
	if n != nil {
		charge = n.charge
	}
	return f.nb.Node(in.key+orig, netbuild.Node{Want: want, Orig: full, Exact: want == full, Pos: r.pos, Charge: charge})
}

func (f *flattener) supply(v int, name string) {
	for _, s := range f.supplies[v] {
		if s == name {
			return
		}
	}
	if len(f.supplies[v]) < 8 {
		f.supplies[v] = append(f.supplies[v], name)
	}
}

// one resolves a primitive terminal: exactly one bit.
func (f *flattener) one(r ref, in *inst, prim string) (int32, bool) {
	b := f.bits(r, in)
	if len(b) != 1 {
		if b != nil {
			f.errs.Add(r.pos, "a terminal of %s is one bit, and %s is %d bits wide: select a bit (%s[i])", prim, r.name, len(b), r.name)
		}
		return 0, false
	}
	return b[0], true
}

// expand adds the devices of one instance.
func (f *flattener) expand(in *inst) {
	for i := range in.m.items {
		if f.over || f.errs.Full() {
			return
		}
		it := &in.m.items[i]
		if it.prim == "" {
			f.instance(it, in)
			continue
		}
		var t [4]int32
		ok := true
		for j, r := range it.terms {
			var good bool
			t[j], good = f.one(r, in, it.prim)
			ok = ok && good
		}
		if !ok {
			continue
		}
		name := it.name.text
		if name == "" {
			// Unnamed instances (IEEE 1364-2005 allows them) are named by kind and position.
			name = fmt.Sprintf("%s_%d_%d", it.prim, it.pos.Line, it.pos.Col)
		}
		want := in.want + netbuild.Escape(name)
		orig := in.orig + name
		if it.name.text == "" {
			orig = ""
		}
		// rnmos rpmos rcmos rtran rtranif0 rtranif1: the resistive forms (§7.12).
		resist := strings.HasPrefix(it.prim, "r")
		base := strings.TrimPrefix(it.prim, "r")
		o := switchsim.DeviceOpts{Resistive: resist}
		dv := netbuild.Device{Want: want, Orig: orig, Exact: orig == "" || want == orig, Pos: it.pos, Gate: -1, Opts: o}
		add := func(d netbuild.Device) {
			f.devs++
			if f.devs > f.lim.Devices {
				f.errs.Add(it.pos, "the design expands to more than the limit of %d devices", f.lim.Devices)
				f.over = true
				return
			}
			f.nb.AddDevice(d)
		}
		switch base {
		case "nmos", "pmos": // (out, data, control)
			dv.Kind, dv.Gate, dv.A, dv.B = netbuild.NMOS, t[2], t[1], t[0]
			if base == "pmos" {
				dv.Kind = netbuild.PMOS
			}
			add(dv)
		case "cmos": // (out, data, ncontrol, pcontrol)
			n, p := dv, dv
			n.Want, p.Want = want+".n", want+".p"
			if orig != "" {
				n.Orig, p.Orig = orig+".n", orig+".p"
			}
			n.Kind, n.Gate, n.A, n.B = netbuild.NMOS, t[2], t[1], t[0]
			p.Kind, p.Gate, p.A, p.B = netbuild.PMOS, t[3], t[1], t[0]
			add(n)
			add(p)
		case "tran": // (a, b)
			dv.Kind, dv.A, dv.B = netbuild.Tran, t[0], t[1]
			add(dv)
		case "tranif1", "tranif0": // (a, b, control)
			dv.Kind, dv.Gate, dv.A, dv.B = netbuild.NMOS, t[2], t[0], t[1]
			if base == "tranif0" {
				dv.Kind = netbuild.PMOS
			}
			add(dv)
		case "pullup", "pulldown": // (y)
			up := base == "pullup"
			s := it.strength[0]
			if up {
				s = it.strength[1]
			}
			if s == switchsim.HighZ {
				s = switchsim.Pull // IEEE 1364-2005 §7.8: pull strength unless given
			}
			dv.Kind, dv.B, dv.Opts.Strength = netbuild.PullDown, t[0], s
			if up {
				dv.Kind = netbuild.PullUp
			}
			add(dv)
		}
	}
}

// instance expands a module instance with its connections.
func (f *flattener) instance(it *item, in *inst) {
	m := f.p.mods[it.module.text]
	if m == nil {
		f.errs.Add(it.module.pos, "instance %s of unknown module %s (this file defines: %s)", it.name.text, it.module.text, f.modList(f.p.order))
		return
	}
	if f.tree.Bad(m) {
		return
	}
	ports := map[string][]int32{}
	connect := func(port string, r ref) {
		n := m.nets[port]
		if r.empty || n == nil {
			return
		}
		b := f.bits(r, in)
		if b == nil {
			return
		}
		if len(b) != n.width() {
			f.errs.Add(r.pos, "port %s of module %s is %s wide, the connection %d", port, m.name, diag.Count(n.width(), "bit"), len(b))
			return
		}
		ports[port] = b
	}
	if it.isNamed {
		seen := map[string]bool{}
		for _, c := range it.named {
			if !contains(m.ports, c.port.text) {
				f.errs.Add(c.port.pos, "module %s has no port %s (its ports: %s)", m.name, c.port.text, strings.Join(m.ports, ", "))
				continue
			}
			if seen[c.port.text] {
				f.errs.Add(c.port.pos, "port %s connected twice", c.port.text)
				continue
			}
			seen[c.port.text] = true
			connect(c.port.text, c.ref)
		}
	} else {
		if len(it.terms) != len(m.ports) {
			f.errs.Add(it.pos, "wrong number of connections: module %s takes %s (%s), instance %s gives %d",
				m.name, diag.Count(len(m.ports), "port"), strings.Join(m.ports, ", "), it.name.text, len(it.terms))
			return
		}
		for i, r := range it.terms {
			connect(m.ports[i], r)
		}
	}
	sub := &inst{m: m, key: in.key + it.name.text + "\x00", want: in.want + netbuild.Escape(it.name.text) + ".",
		orig: in.orig + it.name.text + ".", ports: ports, depth: in.depth + 1}
	f.expand(sub)
}

func contains(s []string, x string) bool {
	for _, v := range s {
		if v == x {
			return true
		}
	}
	return false
}

// ports makes the top module's ports inputs and outputs: input ports and
// those named in Options.Inputs are inputs, the others outputs.
func (f *flattener) ports(top *module, in *inst) {
	given := map[string]bool{}
	for _, n := range f.opt.Inputs {
		given[n] = true
	}
	found := map[string]bool{}
	seen := map[int32]bool{}
	for _, name := range top.ports {
		n := top.nets[name]
		if n == nil {
			continue
		}
		bits := f.bits(ref{name: name, pos: n.pos, konst: -1}, in)
		for i, b := range bits {
			bitName := name
			if n.vector {
				bitName = name + "[" + strconv.Itoa(n.bit(i)) + "]"
			}
			if f.isRail(b) || seen[b] {
				continue
			}
			seen[b] = true
			// Either spelling: the module's, or the railyard name (a steps
			// file names an escaped identifier by the latter).
			esc, bitEsc := netbuild.Escape(name), netbuild.Escape(bitName)
			isIn := n.dir == "input" || given[name] || given[bitName] || given[esc] || given[bitEsc]
			found[name], found[bitName], found[esc], found[bitEsc] = true, true, true, true
			if !f.nb.Nodes[b].Used {
				f.notes.Add(n.pos, "port %s connects to no device: it is neither an input nor an output", bitName)
				continue
			}
			if isIn {
				f.nb.Inputs = append(f.nb.Inputs, b)
			} else {
				f.nb.Outputs = append(f.nb.Outputs, b)
			}
		}
	}
	for _, n := range f.opt.Inputs {
		if !found[n] {
			f.errs.Add(top.pos, "--inputs names %s, which is not a signal port of module %s", n, top.name)
		}
	}
}

func (f *flattener) isRail(n int32) bool { return n == f.nb.Power || n == f.nb.Ground }
