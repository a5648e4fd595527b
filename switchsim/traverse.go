package switchsim

// BreadthFirst visits every node reachable from seeds through device channels,
// whatever the devices' states, and returns how many it visited. seen must
// have NumNodes entries and is left marked. It is the plain traversal over
// the compiled arrays that benchmarks compare a settle with, and the
// reachability that static checks use.
func (nl *Netlist) BreadthFirst(seeds []int32, seen []bool, queue []int32) int {
	queue = queue[:0]
	for _, n := range seeds {
		if !seen[n] {
			seen[n] = true
			queue = append(queue, n)
		}
	}
	for i := 0; i < len(queue); i++ {
		n := queue[i]
		for _, d := range nl.chanDev[nl.chanStart[n]:nl.chanStart[n+1]] {
			o := nl.other(d, n)
			if !seen[o] {
				seen[o] = true
				queue = append(queue, o)
			}
		}
	}
	return len(queue)
}
