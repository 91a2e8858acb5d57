//go:build unix

package testref

import (
	"syscall"
	"testing"
	"time"
)

// ReportCPU starts counting the process's CPU time (user and system, all
// threads) and returns the function that reports it per operation as the
// benchmark metric cpu-ns/op: on the shared machine the wall time per
// operation is several times the CPU the work takes, and the CPU time is
// the figure to compare. Call it after the benchmark's setup and defer the
// function it returns.
func ReportCPU(b *testing.B) func() {
	cpu := func() time.Duration {
		var ru syscall.Rusage
		if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
			return 0
		}
		return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
	}
	start := cpu()
	return func() {
		if b.N > 0 {
			b.ReportMetric(float64(cpu()-start)/float64(b.N), "cpu-ns/op")
		}
	}
}
