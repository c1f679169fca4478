// Package synth renders synthetic recordings of a multirotor motor and
// propeller whose shaft frequency follows a known trajectory. whirlfit's
// tests, benchmarks and embedded demo are made with it, so that every
// analysis result can be compared with the exact truth.
//
// # Method
//
// The rotor's tonal sound is made by phase integration. The shaft phase in
// cycles, φ(t) = ∫ f(t) dt, is accumulated in float64 on the sample grid with
// Simpson's rule (the trajectory is evaluated at each sample and half-way
// between samples) and wrapped to [0, 1) after every sample. Harmonic h is
// sin(2π(h·φ + p_h)), so its instantaneous frequency is exactly h·f(t) with
// no drift however long the recording: the truth that the analysis is checked
// against is the Trajectory itself.
//
// A rotor with B blades radiates (see Rotor):
//   - blade-pass harmonics h = B, 2B, 3B, … — the strongest lines;
//   - a weaker shaft (imbalance) line h = 1 and its low harmonics;
//   - electrical whine at h = pole pairs (the commutation frequency of the
//     motor's electrical cycle) and optionally its second harmonic;
//   - broadband rotor noise whose level rises with speed and that is
//     modulated at the blade-pass rate;
//   - optionally, switching noise of the speed controller: a PWM carrier
//     with sidebands at ± multiples of the electrical frequency, lines that
//     move with the speed without being its harmonics.
//
// Amplitude law (engineering judgement, not a published model): thrust grows
// as the square of the shaft speed and the loading noise of the tonal lines
// follows the thrust, so each tonal amplitude is proportional to
// (f/Rotor.RefHz)^Rotor.LevelExponent with the exponent 2 by default; the
// broadband rotor noise amplitude uses the same law. A stopped rotor (f = 0)
// is therefore silent. Per-rotor harmonic amplitudes (±Rotor.SpreadDB) and
// phases are drawn from the scene's seed, and a slow random amplitude
// modulation of depth Rotor.AMDepth is applied.
//
// # Scene
//
// A Scene places the rotor in a room: broadband noise at a stated SNR,
// structural resonances, reverberation, mains hum, a fixed tone from another
// machine, other independent machines, knocks, a phone-like high-pass, slow
// automatic gain control, clipping, a DC offset and dropouts; Scene.Mic
// renders further microphones of the same event. The signal chain and the SNR
// definition are given on Scene. Render returns mono float32 samples in
// [-1, 1]; RenderStereo adds a command (trigger) channel with an edge at
// each throttle command. WriteWAV and EncodeWAV store the result as 16- or
// 24-bit PCM or 32-bit IEEE float WAV; WriteFile also writes FLAC, MP3, AAC,
// Vorbis and Opus through ffmpeg.
//
// Trajectories are built from Steps (first order plus dead time, chained
// from the value reached), Ramp, Constant, Add, Stopped and Wobble; a start
// from standstill is Steps from 0 Hz.
//
// RandomScene draws varied scenes across the ranges whirlfit must handle
// (blade counts 2–5, shaft 80–550 Hz, SNR −5…30 dB, τ 8–120 ms, dead time
// 0–15 ms, closely spaced steps, every impairment on or off, several file
// formats) together with their truth, for generality tests of the tracker
// and the step fit. The test TestDumpCases writes such a set to disk with a
// JSON truth file beside each recording:
//
//	go test ./dsp/synth -run TestDumpCases -dump /tmp/cases -dumpn 45
//
// All randomness comes from math/rand/v2 PCG generators seeded from
// Scene.Seed: the same scene always renders the same samples.
package synth
