package cardfile_test

import (
	"fmt"
	"strings"
	"testing"

	"railyard/switchsim/cardfile"
)

// extractedChain is a flat netlist in the style of layout extraction: n
// inverter stages with machine-made names and a parasitic on every node.
func extractedChain(n int) []byte {
	var b strings.Builder
	b.WriteString("* chain\n.subckt chain in out vdd vss\n")
	prev := "in"
	for i := 0; i < n; i++ {
		next := fmt.Sprintf("a_%d_47#", i)
		if i == n-1 {
			next = "out"
		}
		fmt.Fprintf(&b, "X%d %s %s vss vss kit_nfet w=420000u l=150000u\nX%d_p %s %s vdd vdd kit_pfet w=840000u l=150000u\nC%d %s vss 0.8fF\n",
			i, next, prev, i, next, prev, i, next)
		prev = next
	}
	b.WriteString(".ends\n")
	return []byte(b.String())
}

// BenchmarkReadCards reads and compiles a 100k-transistor extracted chain;
// ns/op over the device count is the cost of one transistor card.
func BenchmarkReadCards(b *testing.B) {
	src := extractedChain(50_000)
	b.SetBytes(int64(len(src)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := cardfile.Read("chain.sp", src, cardfile.Options{Inputs: []string{"in"}}); err != nil {
			b.Fatal(err)
		}
	}
}
