package switchsim_test

import (
	"fmt"
	"os"
	"runtime"
	"sort"
	"syscall"
	"testing"
	"time"

	sw "railyard/switchsim"
)

func threadCPU() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(1, &ru) // RUSAGE_THREAD
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func TestZZCPU(t *testing.T) {
	if os.Getenv("ZZ_CPU") == "" {
		t.Skip()
	}
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	for _, bn := range physBenchNets() {
		nl, _ := bn.build().Compile()
		var per [2][]float64
		for rep := 0; rep < 5; rep++ {
			for mi, m := range []sw.Mode{sw.Ideal, sw.Physical} {
				_, step := physBenchSim(t, bn, nl, m)
				n := 2000
				if bn.name == "mux256_tgate_data" || bn.name == "mux64_nmos_data" {
					n = 50000
				}
				c0 := threadCPU()
				for i := 0; i < n; i++ {
					step()
				}
				per[mi] = append(per[mi], float64(threadCPU()-c0)/float64(n))
			}
		}
		sort.Float64s(per[0])
		sort.Float64s(per[1])
		fmt.Printf("%-20s %5.2f  ideal %8.0f ns  physical %8.0f ns\n", bn.name, per[1][1]/per[0][1], per[0][1], per[1][1])
	}
}
