package switchsim

// Structure found once per netlist, from the devices' connections alone
// (DEVELOPERS.md "Structure"): which nodes sit inside a feedback loop (a
// keeper), which devices close such a loop, which nodes gate pass devices,
// and which devices join two sources directly (a short when they conduct
// between different values).

// Node flags.
const (
	nodeLoop      uint8 = 1 << iota // inside a feedback loop: its channel-connected component feeds back to itself through gates
	nodeOutput                      // a declared output
	nodeGatePass                    // gates a pass device
	nodeDiffusion                   // a diffusion node (Diffusion), set by diffusionDefaults
)

// Device flags.
const (
	devFeedback uint8 = 1 << iota // gated by a node of the loop its channel belongs to
	devPass                       // passes a signal, not a pull from a rail stack (see markPass)
	devShort                      // both channel terminals are rails or inputs
	devStrong                     // passes every driving signal at strong: not resistive, cap strong
)

// structure fills nl's node and device flags.
func (nl *Netlist) structure() {
	nn, nd := len(nl.nodeName), len(nl.devName)
	nl.nodeFlag, nl.devFlag = make([]uint8, nn), make([]uint8, nd)
	for _, o := range nl.outputs {
		nl.nodeFlag[o] |= nodeOutput
	}
	for d := 0; d < nd; d++ {
		nl.top = max(nl.top, min(Supply, nl.devCap[d]))
	}
	boundary := func(n int32) bool { return nl.nodeKind[n] != Internal }

	// Static channel-connected components: internal nodes joined by any
	// device's channel, whatever its state, bounded by rails and inputs.
	parent := make([]int32, nn)
	for i := range parent {
		parent[i] = int32(i)
	}
	var find func(x int32) int32
	find = func(x int32) int32 {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	for d := 0; d < nd; d++ {
		a, b := nl.devA[d], nl.devB[d]
		if nl.devCap[d] == Strong && (nl.devResist == nil || !nl.devResist[d]) {
			nl.devFlag[d] |= devStrong
		}
		if boundary(a) && boundary(b) && a != b {
			nl.devFlag[d] |= devShort
			nl.shortDevs = append(nl.shortDevs, int32(d))
		}
		if !boundary(a) && !boundary(b) {
			if ra, rb := find(a), find(b); ra != rb {
				parent[ra] = rb
			}
		}
	}
	comp := make([]int32, nn) // node -> component number, -1 for rails and inputs
	nc := int32(0)
	id := make([]int32, nn)
	for i := range id {
		id[i] = -1
	}
	for n := 0; n < nn; n++ {
		comp[n] = -1
		if boundary(int32(n)) {
			continue
		}
		r := find(int32(n))
		if id[r] < 0 {
			id[r] = nc
			nc++
		}
		comp[n] = id[r]
	}

	// The component graph: an edge from the component of a device's gate to
	// each component its channel touches. A component on a cycle (a strongly
	// connected component of more than one, or with an edge to itself) holds
	// a feedback loop.
	chanComp := func(d int, emit func(int32)) {
		if c := comp[nl.devA[d]]; c >= 0 {
			emit(c)
		}
		if c := comp[nl.devB[d]]; c >= 0 && nl.devB[d] != nl.devA[d] {
			emit(c)
		}
	}
	start := make([]int32, nc+1)
	for d := 0; d < nd; d++ {
		if g := nl.devGate[d]; g >= 0 && comp[g] >= 0 {
			chanComp(d, func(int32) { start[comp[g]+1]++ })
		}
	}
	for c := int32(0); c < nc; c++ {
		start[c+1] += start[c]
	}
	edge := make([]int32, start[nc])
	fill := append([]int32(nil), start[:nc]...)
	self := make([]bool, nc)
	for d := 0; d < nd; d++ {
		if g := nl.devGate[d]; g >= 0 && comp[g] >= 0 {
			from := comp[g]
			chanComp(d, func(to int32) {
				edge[fill[from]] = to
				fill[from]++
				if to == from {
					self[from] = true
				}
			})
		}
	}
	scc := sccs(nc, start, edge)
	size := make([]int32, nc)
	for c := int32(0); c < nc; c++ {
		size[scc[c]]++
	}
	loop := func(c int32) bool { return c >= 0 && (size[scc[c]] > 1 || self[c]) }
	for n := 0; n < nn; n++ {
		if loop(comp[n]) {
			nl.nodeFlag[n] |= nodeLoop
			nl.loops = true
		}
	}
	for d := 0; d < nd; d++ {
		g := nl.devGate[d]
		if g < 0 || comp[g] < 0 || !loop(comp[g]) {
			continue
		}
		chanComp(d, func(c int32) {
			if scc[c] == scc[comp[g]] {
				nl.devFlag[d] |= devFeedback
			}
		})
	}
	nl.markPass()
}

// markPass flags pass devices and the nodes that gate them. A pass device
// carries a signal rather than pulling a stage to a rail: neither channel
// terminal is a rail, and a terminal is an input, or another device joins
// the same two nodes (a transmission gate's other half), or each terminal
// is an output or gates a device (so neither is the inside of a series
// stack). A pulse on such a gate lets a wrong value through for its length.
func (nl *Netlist) markPass() {
	rail := func(n int32) bool { return n == nl.power || n == nl.ground }
	signal := func(n int32) bool {
		return nl.nodeKind[n] == Input || nl.nodeFlag[n]&nodeOutput != 0 || nl.gateStart[n+1] > nl.gateStart[n]
	}
	for d := range nl.devName {
		a, b, g := nl.devA[d], nl.devB[d], nl.devGate[d]
		if g < 0 || rail(a) || rail(b) || a == b {
			continue
		}
		pass := nl.nodeKind[a] == Input || nl.nodeKind[b] == Input || (signal(a) && signal(b))
		for _, o := range nl.chanDev[nl.chanStart[a]:nl.chanStart[a+1]] {
			if int(o) != d && nl.Other(int(o), int(a)) == int(b) {
				pass = true
			}
		}
		if pass {
			nl.devFlag[d] |= devPass
			nl.nodeFlag[g] |= nodeGatePass
		}
	}
}

// sccs numbers the strongly connected components of a graph of n vertices
// given as CSR adjacency (Tarjan's algorithm, iterative, so a deep graph
// cannot overflow the stack). It returns each vertex's component number.
func sccs(n int32, start, edge []int32) []int32 {
	index, low, comp := make([]int32, n), make([]int32, n), make([]int32, n)
	on := make([]bool, n)
	for i := range index {
		index[i], comp[i] = -1, -1
	}
	var stack, call []int32
	var pos []int32 // the next edge to look at, per frame of call
	next, ncomp := int32(0), int32(0)
	for root := int32(0); root < n; root++ {
		if index[root] >= 0 {
			continue
		}
		call, pos = append(call[:0], root), append(pos[:0], start[root])
		index[root], low[root] = next, next
		next++
		stack = append(stack, root)
		on[root] = true
		for len(call) > 0 {
			v := call[len(call)-1]
			if p := pos[len(pos)-1]; p < start[v+1] {
				pos[len(pos)-1]++
				w := edge[p]
				switch {
				case index[w] < 0:
					index[w], low[w] = next, next
					next++
					stack = append(stack, w)
					on[w] = true
					call, pos = append(call, w), append(pos, start[w])
				case on[w]:
					low[v] = min(low[v], index[w])
				}
				continue
			}
			call, pos = call[:len(call)-1], pos[:len(pos)-1]
			if len(call) > 0 {
				u := call[len(call)-1]
				low[u] = min(low[u], low[v])
			}
			if low[v] == index[v] {
				for {
					w := stack[len(stack)-1]
					stack = stack[:len(stack)-1]
					on[w] = false
					comp[w] = ncomp
					if w == v {
						break
					}
				}
				ncomp++
			}
		}
	}
	return comp
}

// InFeedbackLoop reports whether node n lies inside a feedback loop (its
// channel-connected component feeds back to itself through gates): a
// keeper's node, a latch's storage node, a ring.
func (nl *Netlist) InFeedbackLoop(n int) bool { return nl.nodeFlag[n]&nodeLoop != 0 }

// ClosesLoop reports whether device d closes a feedback loop: its gate and
// its channel are in the same loop.
func (nl *Netlist) ClosesLoop(d int) bool { return nl.devFlag[d]&devFeedback != 0 }

// PassDevice reports whether device d passes a signal rather than pulling
// a stage to a rail (DEVELOPERS.md "Structure").
func (nl *Netlist) PassDevice(d int) bool { return nl.devFlag[d]&devPass != 0 }
