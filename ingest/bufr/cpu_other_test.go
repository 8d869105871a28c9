//go:build !unix

package bufr

func cpuSeconds() float64 { return 0 }
