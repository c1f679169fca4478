//go:build !unix

package ui

import "time"

func cpuTime() time.Duration { return 0 }
func resetPeakRSS()          {}
func peakRSS() int64         { return 0 }
