//go:build unix

package dsp

import "syscall"

// processCPUSeconds returns the user+system CPU time of this process, for
// benchmark figures that do not depend on how busy the machine is.
func processCPUSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}
