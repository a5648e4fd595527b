package listing

// Shorten fits each name in w cells. A long name is cut in the middle
// (its head, the ellipsis, its tail), because the two ends say what a node
// is: the cell instance at the front, the index or the _b at the back.
// Names that would then read alike (slice3.mux.out and slice4.mux.out both
// as slice….out) get, as a set, the split that tells them apart, the one
// closest to the middle; only when no split does is a collision left.
// Names are counted in runes, one cell each (they come through
// diag.Printable, which leaves no control codes).
func Shorten(names []string, w int, ellipsis string) []string {
	out := make([]string, len(names))
	ell := []rune(ellipsis)
	keep := w - len(ell) // runes kept around the ellipsis
	var long []int
	for i, n := range names {
		if runeLen(n) <= w {
			out[i] = n
			continue
		}
		if keep < 2 {
			out[i] = string([]rune(n)[:max(w, 0)])
			continue
		}
		long = append(long, i)
		out[i] = cut(n, (keep+1)/2, keep, ell)
	}
	if len(long) == 0 {
		return out
	}
	uses := make(map[string]int, len(names))
	for _, s := range out {
		uses[s]++
	}
	done := make(map[string]bool)
	for _, i := range long {
		label := out[i]
		if uses[label] < 2 || done[label] {
			continue
		}
		done[label] = true
		var group []int
		for _, j := range long {
			if out[j] == label {
				group = append(group, j)
			}
		}
		// heads from the middle outwards: keep/2, keep/2+1, keep/2-1, ...
		mid := (keep + 1) / 2
		for step := 1; step < 2*keep; step++ {
			h := mid + step/2
			if step%2 == 0 {
				h = mid - step/2
			}
			if h < 1 || h > keep-1 {
				continue
			}
			labels := make([]string, len(group))
			seen := make(map[string]bool, len(group))
			ok := true
			for k, j := range group {
				l := cut(names[j], h, keep, ell)
				others := uses[l] // names outside the group that read l
				if l == label {
					others -= len(group)
				}
				if seen[l] || others > 0 {
					ok = false
					break
				}
				seen[l] = true
				labels[k] = l
			}
			if !ok {
				continue
			}
			uses[label] -= len(group)
			for k, j := range group {
				out[j] = labels[k]
				uses[labels[k]]++
			}
			break
		}
	}
	return out
}

// cut keeps the first head runes and the last keep-head runes of s.
func cut(s string, head, keep int, ell []rune) string {
	r := []rune(s)
	b := make([]rune, 0, keep+len(ell))
	b = append(b, r[:head]...)
	b = append(b, ell...)
	return string(append(b, r[len(r)-(keep-head):]...))
}

func runeLen(s string) int {
	n := 0
	for range s {
		n++
	}
	return n
}
