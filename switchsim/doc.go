// Package switchsim is railyard's switch-level engine.
//
// A design is built with a Builder, compiled into a Netlist of dense arrays
// (node and device indices, channel and gate adjacency in flat slices), and
// simulated by a Sim. The engine knows nothing of files, flags or terminals:
// readers build designs through Builder, and the session layer drives a Sim.
//
// This comment is the project's statement of the model the engine
// implements, in sections that the code's comments cite as "switchsim
// §N". DEVELOPERS.md ("The engine's rules, exactly") pins down every choice
// the code makes, precisely enough for the reference solver in the tests to
// be written from it; switchsim/FORMATS.md states the file formats and the
// command-line contract. Every rule here comes from a published method or
// standard, or is marked as common practice.
//
// # §1 What is simulated
//
// A flat network of nodes and devices, cells expanded. Nodes are the two
// rails, the primary inputs and internal nodes; an internal node has a
// capacitance and a charge class (small, medium, large: the charge
// strengths of IEEE 1364-2005 §7). Unless the design says otherwise, a node
// that gates no device and is no output (a diffusion node inside a series
// stack, or between pass devices) holds charge at class small and has the
// technology's diffusion capacitance cdiff; every other node is medium with
// the default capacitance cnode (common practice: a junction holds far less
// charge than a node loaded by the gates of the next stage). Devices are
// enhancement nMOS and pMOS transistors (gate, two channel terminals, width,
// length, strength cap), pulls to a rail, and always-on channels between two
// nodes (IEEE 1364 tran, or a netlist's resistor); resistive devices reduce
// the strength they pass by the table of IEEE 1364-2005 §7.12. The channel is
// symmetric: which terminal acts as source is decided by the voltages, never
// by the order written (common practice). A transmission gate is an nMOS and
// a pMOS in parallel, expanded into those two devices.
//
// # §2 Values, strengths and six states
//
// A node carries a value (0, 1 or X), a strength and, in physical mode, an
// estimated voltage. Strengths are those of IEEE 1364-2005 §7, ranked with
// every charge strength below every driving strength (Bryant 1984): supply,
// strong, pull, weak, then large, medium, small, then highz. Rails and driven
// inputs are supply; a signal leaves a device at the lesser of its strength
// and the device's cap (strong for a transistor). Equal strengths with
// different values give X. Each node is summarised by one of the six letters
// of IEEE 1164: 0 and 1 (strong or supply, full level, no opposing path), L
// and H (weak, degraded or contested), Z (floating: the node keeps its value
// as charge) and X (a fight, an unknown gate that could change the result, or
// a lost level). Nodes start as stored X.
//
// # §3 Steady state of a group
//
// After R. E. Bryant, "A Switch-Level Model and Simulator for MOS Digital
// Systems", IEEE Trans. Computers C-33(2), 1984. A device is on, off or of
// unknown state by its gate's value. Nodes joined by channels of devices not
// off form a group, bounded by the rails and driven inputs. Each node gets the
// strongest signal reaching it along a path of conducting devices (a maximin
// path), weaker signals blocked at a node. Devices of unknown state are
// handled by the ternary method: what surely reaches a node (unknown devices
// open) against what could (unknown devices closed); a value stands only if
// no opposing signal of at least its strength could arrive. A floating node
// keeps its charge; floating nodes joined share it, the larger charge class
// winning in ideal mode and equal classes of different values giving X.
//
// X kept alive only by an unknown start (pass-transistor XORs and adders,
// whose X nodes gate the devices that would resolve them) is settled by case
// analysis, the splitting of Bryant and Seger's ternary symbolic simulation:
// an X node that gates devices is set to 0 and to 1 in turn, each branch
// settled to a consistent state, and what both branches agree on holds
// whatever the node's true value. A branch that contradicts itself (ends with
// the node at the other value, or in a fight no signal can override) cannot
// be real, and the other branch decides. The splits are bounded in number and
// work; what differs stays X, as real unknown state (a latch never written).
//
// # §4 Physical mode: first-order voltages
//
// Ideal mode is §2 and §3 alone. Physical mode, the default, estimates
// voltages from the technology (vdd, thresholds with the body effect, k',
// sizes, capacitances) and lets them decide levels:
//   - Threshold drops: an nMOS passes a 1 only up to Vg - Vt(Vout), a pMOS a
//     0 only down to Vg + |Vt|, with Vt = Vt0 + gamma (sqrt(phi + Vsb) -
//     sqrt(phi)) solved in closed form; a path is as good as its worst
//     device, and a device gated by a degraded level drops the level again
//     (gate-cascaded pass devices lose a threshold each, common practice).
//   - Logic thresholds: VIL and VIH are the unity-gain points of the
//     square-law reference inverter; VM = (Vtn + r (vdd - |Vtp|)) / (1 + r),
//     r = sqrt(kp wp / (kn wn)).
//   - One rule of levels: a value holds while its level does (a 1 at or above
//     VIH, a 0 at or below VIL); otherwise it is lost, X, never flipped, and
//     the warning says which side of the band the level fell.
//   - Fights: where a 0 path meets a 1 path, the DC operating point of the
//     part by the level-1 device equations (Shichman and Hodges, IEEE JSSC
//     1968; body effect in, channel-length modulation out), by Newton's
//     method with a bracketed fallback; the voltages decide by VIL/VIH. A
//     device off by logic whose gate still passes its threshold (partly on)
//     takes part in the solve and is reported with its static current.
//   - Devices of unknown state: where the ternary method of §2 leaves a node
//     X in a group with at most 6 devices of unknown state, the group is
//     solved at every on/off assignment of them (each on with its gate at
//     the full level, or off). A node voltage moves monotonically with each
//     device's conductance, so a node driven to one value at every
//     assignment has it whatever those devices do, at the level of its worst
//     assignment; one that floats at some assignment, or differs, stays X.
//     Strengths cannot tell an inverter that holds its node through a
//     transmission gate against a clocked inverter's stack from a write that
//     loses; the devices can (a flip-flop's clock edge, both phases briefly
//     at one level).
//   - Margins: a node's noise margin is V - VIH for a 1, VIL - V for a 0; a
//     contested node that drives a stage also has a write margin |V - VM|
//     against that stage's own switching threshold.
//   - Charge sharing: floating nodes joined settle at sum(C V) / sum(C), a
//     pass device carrying charge only until its lower side reaches Vg - Vt.
//   - Corners: the same design at other technology values; a verdict holds
//     only if it holds at every corner the design names (common practice).
//   - Delay: each change gets an Elmore delay (Elmore 1948; Rubinstein,
//     Penfield and Horowitz 1983) along its driving path, from effective
//     resistances R = r_sq L / W.
//
// These are first-order estimates for finding logic-level problems early.
// They do not replace circuit simulation or a foundry's sign-off flow.
//
// # §5 Time: rounds, races and hazards
//
// After inputs change the engine advances in unit-delay rounds, re-solving
// the groups whose devices changed in the round before, until a round
// changes nothing: the rounds are how a person watches a change spread. On
// their own they cannot say whether a result depends on delays; ternary race
// analysis can (E. B. Eichelberger, IBM J. Res. Dev. 9(2), 1965; Brzozowski
// and Seger, "Asynchronous Circuits", Springer 1995). Phase A sets the
// changing inputs to X and settles; phase B gives them their new values and
// settles again. A node 0 or 1 after phase B has that value under every
// assignment of delays; one still X is a race (or an oscillation, where no
// stable state exists: an odd ring); one that went X in phase A and came back
// may glitch, which matters on a dynamic node, a node that gates a pass device
// or an output. The analysis runs on every step that changes more than one
// input, on every settle whose rounds do not settle within a round limit
// scaled to the design (in physical mode not counting rounds that only
// move voltages, by ever smaller steps: a loop nearing its DC point), and
// on every step when asked; where it and the rounds disagree, it decides.
// For glitches alone, phase A can run by itself on a single-input step, the
// rounds deciding the values: a node it makes X that the rounds bring back
// may pulse. A fight left after the settle on a node inside
// a feedback loop is a failed write; a device on between sources of different
// values is a short.
//
// # §6 Explanation
//
// For any node the engine says why it holds its state: the winning paths back
// to a rail or input device by device with each gate's state and voltage, the
// opposing paths, the device that degraded the level, the fight's operating
// point, the floating group and its charges, and which phase of race analysis
// or which case split decided it.
//
// # §7 Every reachable state
//
// A cell's verdict must hold in every state it can reach. From the settled
// state with every input 0 (or after a reset sequence), each single input
// flipped (and, when asked, each pair changed together, through race
// analysis) leads to a next state; a breadth-first search visits each state
// once, so every finding comes with a shortest input sequence (package
// switchsim/reach). X that a node holds only because it was never written is
// not a finding.
package switchsim
