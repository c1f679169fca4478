// Package analysis turns a recording of a motor and propeller into
// rotor speed over time and the first-order-plus-dead-time dynamics of each
// throttle step.
//
// The stages are: a harmonic ridge tracker over the STFT (track.go,
// tracker*.go) that gives shaft frequency, blade-pass frequency and rpm per
// frame; step detection on that track; a window-aware fit of
//
//	rpm(t) = r0                                  t < tc + θ
//	rpm(t) = r0 + Δ·(1 − exp(−(t − tc − θ)/τ))   t ≥ tc + θ
//
// to each step with 95 % confidence intervals; and Run, the one entry point
// that the command line and the window share.
package analysis
