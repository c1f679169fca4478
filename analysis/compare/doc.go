// Package compare sets analysed recordings side by side — the same motor
// with different propellers, controller settings or supply voltages — and
// says in plain words where they differ.
//
// Steps are matched across files by direction and order: the k-th up step
// of one file is compared with the k-th up step of every other file, and
// likewise for down steps (up and down steps of a motor differ, and a test
// run usually repeats the same throttle programme). Where a file has fewer
// steps of a direction, its cells are empty.
//
// Two results are called different when their 95 % confidence intervals do
// not overlap. That is a conservative test (non-overlap of two 95 %
// intervals corresponds to a difference well beyond the 5 % level); the
// difference with its own interval, from the half-widths combined in
// quadrature (independent estimates, symmetric approximation), is given as
// well.
package compare
