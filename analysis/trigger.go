package analysis

import "whirlfit/dsp"

// TriggerEdges returns command times from a trigger line.
func TriggerEdges(sig dsp.Signal) []float64 { return triggerEdges(sig) }

func triggerEdges(sig dsp.Signal) []float64 { return nil }
