package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// muxCell is a 2^k:1 transmission-gate selector tree with its select
// inverters (k selects, 2^k data inputs).
func muxCell(name string, k int) string {
	var b strings.Builder
	fmt.Fprintf(&b, "design %s\ninput", name)
	n := 1 << k
	for i := 0; i < k; i++ {
		fmt.Fprintf(&b, " s%d", i)
	}
	level := make([]string, n)
	for i := range level {
		level[i] = fmt.Sprintf("d%d", i)
		fmt.Fprintf(&b, " d%d", i)
	}
	b.WriteString("\noutput y\n")
	for l := 0; len(level) > 1; l++ {
		fmt.Fprintf(&b, "use inv i%d s%d s%db\n", l, l, l)
		var next []string
		for j := 0; j < len(level); j += 2 {
			out := fmt.Sprintf("m%d_%d", l, j/2)
			if len(level) == 2 {
				out = "y"
			}
			fmt.Fprintf(&b, "tgate a%d_%d s%db s%d %s %s\n", l, j, l, l, level[j], out)
			fmt.Fprintf(&b, "tgate b%d_%d s%d s%db %s %s\n", l, j, l, l, level[j+1], out)
			next = append(next, out)
		}
		level = next
	}
	return b.String()
}

// latchCell is a transmission-gate latch with a weak keeper of width w um.
func latchCell(name string, w float64) string {
	return fmt.Sprintf(`design %s
input clk d
output q
use inv ci clk clk_b
tgate pass clk clk_b d s wn=0.36u wp=0.72u l=0.18u
use inv fwd s s_b
pmos kp s_b vdd s w=%gu l=1.44u strength=weak
nmos kn s_b s gnd w=%gu l=1.44u strength=weak
use inv out s_b q
`, name, w, w)
}

// ffCell is a chain of n master-slave flip-flops from latches with weak
// keepers, clocked through a local inverter.
func ffCell(name string, n int) string {
	var b strings.Builder
	fmt.Fprintf(&b, `design %s
input clk d
output q%d
cell latch D CK CKB QB
  tgate pass CK CKB D x wn=0.36u wp=0.72u l=0.18u
  use inv fwd x QB
  pmos kp QB vdd x w=0.36u l=1.44u strength=weak
  nmos kn QB x gnd w=0.36u l=1.44u strength=weak
end
use inv ci clk clk_b
`, name, n-1)
	d := "d"
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "use latch m%d %s clk_b clk mq%d\nuse latch s%d mq%d clk clk_b qb%d\nuse inv o%d qb%d q%d\n", i, d, i, i, i, i, i, i, i)
		d = fmt.Sprintf("q%d", i)
	}
	return b.String()
}

// BenchmarkLibraryCheck checks a generated library of 200 cells (selector
// trees of 2 to 8 inputs, latches with keepers of three sizes, flip-flop
// chains of 1 to 3 stages) with --exhaustive on one worker and on two.
func BenchmarkLibraryCheck(b *testing.B) {
	dir := b.TempDir()
	for i := 0; i < 200; i++ {
		var src, sub string
		switch i % 3 {
		case 0:
			sub, src = "mux", muxCell(fmt.Sprintf("mux%d", i), 1+(i/3)%3)
		case 1:
			sub, src = "latch", latchCell(fmt.Sprintf("latch%d", i), []float64{0.36, 0.5, 0.72}[(i/3)%3])
		default:
			sub, src = "ff", ffCell(fmt.Sprintf("ff%d", i), 1+(i/3)%3)
		}
		os.MkdirAll(filepath.Join(dir, sub), 0o755)
		if err := os.WriteFile(filepath.Join(dir, sub, fmt.Sprintf("cell%03d.sw", i)), []byte(src), 0o644); err != nil {
			b.Fatal(err)
		}
	}
	for _, j := range []string{"1", "2"} {
		b.Run("j"+j, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if code := run([]string{"check", dir, "--exhaustive", "-j", j}, io.Discard, io.Discard); code != 0 {
					var out strings.Builder
					run([]string{"check", dir, "--exhaustive"}, &out, &out)
					b.Fatalf("exit %d\n%s", code, out.String())
				}
			}
			b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/library")
		})
	}
}
