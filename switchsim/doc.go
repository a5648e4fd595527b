// Package switchsim is railyard's switch-level engine.
//
// A design is built with a Builder, compiled into a Netlist of dense arrays
// (node and device indices, channel and gate adjacency in flat slices), and
// simulated by a Sim. The engine resolves every channel-connected group of
// nodes by maximin strength paths (Bryant 1984), handles devices whose gate
// is unknown by Bryant's ternary method, keeps charge on floating nodes, and
// advances in unit-delay rounds until nothing changes. Physical mode adds
// first-order voltage estimates on top of the same resolution.
//
// The engine knows nothing of files, flags or terminals: readers build
// designs through Builder, and the session layer drives a Sim.
package switchsim
