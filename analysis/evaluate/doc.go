// Package evaluate scores the whole analysis — decoding, tracking, step
// detection, fitting and intervals — against recordings rendered by
// dsp/synth with known truth, across the ranges whirlfit is meant for
// (blade counts 2–5, 4,800–33,000 rpm, SNR −5…30 dB, reverberation, hum,
// other machines, clipping, automatic gain, phone high-pass, a start from
// standstill, several file formats).
//
// The package holds only tests. `go test ./analysis/evaluate` runs a small
// sweep; more cases and a folder to keep the failing ones:
//
//	go test ./analysis/evaluate -run Sweep -eval.n 45 -eval.keep /tmp/eval -v
//
// Other seeds with -eval.seed. Three more tools run on the same cases:
// -eval.diag (TestSweepDiagnostics: every step's intervals and warnings,
// -eval.track case:from:to for track samples), -eval.tq (TestTrackQuality:
// the tracker alone against the true speed, -eval.tqcase N for one case)
// and -eval.blades (TestBladeReading: the blade count read without one).
//
// The figures are self-consistency checks against the project's own
// synthesizer, not an outside reference.
package evaluate
