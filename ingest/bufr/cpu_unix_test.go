//go:build unix

package bufr

import "syscall"

// cpuSeconds is the process's user and system CPU time, for benchmark
// figures that do not depend on how busy a shared machine is.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}
