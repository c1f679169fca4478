//go:build !unix

package dsp

// processCPUSeconds is not measured on this platform.
func processCPUSeconds() float64 { return 0 }
