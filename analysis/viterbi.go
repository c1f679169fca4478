package analysis

import (
	"math"
	"slices"
)

// ridgePath finds the globally best ridge through a salience matrix by
// dynamic programming (the Viterbi algorithm over candidate states, as in
// ridge and pitch trackers: R. Carmona, W. L. Hwang and B. Torrésani,
// "Multiridge detection and time-frequency reconstruction", IEEE Trans.
// Signal Processing 47(2):480–492, 1999; pYIN, M. Mauch and S. Dixon,
// ICASSP 2014). It maximises
//
//	Σ_t score_t(k_t) − λ·Σ_t |k_t − k_{t−1}| − switchCost·(voicing changes)
//
// where score_t(k) = sal[t·K + k] for a voiced state k (the salience already
// has its voicing threshold subtracted) and 0 for the unvoiced state, and a
// move between frames is limited to |k_t − k_{t−1}| ≤ maxJump[k_t] grid
// steps: the physical bound on acceleration. The absolute-value cost lets
// the path jump at a step (one cost, however fast) but makes a detour to a
// passing line and back cost twice. Each frame costs O(K): the windowed
// maximum of J(j) − λ|k − j| is split into its two one-sided halves, each a
// sliding-window maximum (predecessors).
//
// The result holds the chosen candidate per frame, −1 for unvoiced.
type ridgePath struct {
	T, K       int
	lambda     float32
	switchCost float32
	maxJump    []int32 // per candidate, nondecreasing k − maxJump[k] and k + maxJump[k]
	// force, when not nil, fixes the voicing of frames: 1 = voiced,
	// −1 = unvoiced, 0 = free.
	force []int8
	// bp, when not nil, keeps the back-pointer table (T·K entries) for the
	// next solve: the tracker solves one matrix several times, and a long
	// recording's table is tens of megabytes.
	bp *[]int16
}

func (r *ridgePath) solve(sal []float32) []int32 {
	T, K := r.T, r.K
	path := make([]int32, T)
	if T == 0 || K == 0 {
		for i := range path {
			path[i] = -1
		}
		return path
	}
	var bp []int16 // previous state, −1 = unvoiced; every row but the first is written
	if r.bp != nil && cap(*r.bp) >= T*K {
		bp = (*r.bp)[:T*K]
	} else {
		bp = make([]int16, T*K)
		if r.bp != nil {
			*r.bp = bp
		}
	}
	bpu := make([]int32, T) // unvoiced's previous state, −1 = unvoiced
	prev := make([]float32, K)
	cur := make([]float32, K)
	best := make([]float32, K) // best predecessor value for each k
	arg := make([]int32, K)
	dq := make([]int32, K)
	negInf := float32(math.Inf(-1))

	copy(prev, sal[:K])
	prevU := float32(0)
	if r.force != nil {
		switch r.force[0] {
		case 1:
			prevU = negInf
		case -1:
			for k := range prev {
				prev[k] = negInf
			}
		}
	}
	for t := 1; t < T; t++ {
		r.predecessors(prev, best, arg, dq)
		// Unvoiced predecessor, and the best voiced state for the next
		// unvoiced frame.
		bestV, argV := negInf, int32(-1)
		for k := 0; k < K; k++ {
			if prev[k] > bestV {
				bestV, argV = prev[k], int32(k)
			}
		}
		fromU := prevU - r.switchCost
		row := sal[t*K : (t+1)*K]
		bprow := bp[t*K : (t+1)*K]
		for k := 0; k < K; k++ {
			b, a := best[k], arg[k]
			if fromU > b {
				b, a = fromU, -1
			}
			cur[k] = row[k] + b
			bprow[k] = int16(a)
		}
		if u := bestV - r.switchCost; u > prevU {
			prevU, bpu[t] = u, argV
		} else {
			bpu[t] = -1
		}
		if r.force != nil {
			switch r.force[t] {
			case 1:
				prevU = negInf
			case -1:
				for k := range cur {
					cur[k] = negInf
				}
			}
		}
		prev, cur = cur, prev
		// Keep the numbers bounded: subtract the best state's value.
		if t%64 == 0 {
			off := max(prevU, slices.Max(prev))
			for k := range prev {
				prev[k] -= off
			}
			prevU -= off
		}
	}
	// Backtrack from the best final state.
	state, bestV := int32(-1), prevU
	for k := 0; k < K; k++ {
		if prev[k] > bestV {
			bestV, state = prev[k], int32(k)
		}
	}
	for t := T - 1; t >= 0; t-- {
		path[t] = state
		if t == 0 {
			break
		}
		if state < 0 {
			state = bpu[t]
		} else {
			state = int32(bp[t*K+int(state)])
		}
	}
	return path
}

// predecessors writes, for each state k, the best voiced predecessor value
// best[k] = max over j within maxJump of prev[j] − λ|k − j| and its j
// (arg[k]); dq is scratch of K entries.
//
// Each half (j ≤ k, then j ≥ k) is a sliding-window maximum of
// prev[j] ± λj, kept in a monotone deque. The best j over the whole half
// (a running maximum, the latest of equals as the deque keeps it) is the
// best in the window whenever it lies in the window, which is nearly
// always so: the deque runs only for a frame where it does not, from the
// start (the values the shortcut wrote before it stopped are the deque's
// too, and its strict comparisons leave them).
func (r *ridgePath) predecessors(prev, best []float32, arg, dq []int32) {
	K, lam := len(prev), r.lambda
	negInf := float32(math.Inf(-1))
	for k := range best {
		best[k], arg[k] = negInf, -1
	}
	// Left half: j ≤ k, value prev[j] + λj, window j ≥ k − maxJump[k].
	fast := true
	for k, a := 0, int32(0); k < K; k++ {
		if prev[k]+lam*float32(k) >= prev[a]+lam*float32(a) {
			a = int32(k)
		}
		if int32(k)-a > r.maxJump[k] {
			fast = false
			break
		}
		if b := prev[a] - lam*float32(int32(k)-a); b > best[k] {
			best[k], arg[k] = b, a
		}
	}
	h, n := 0, 0
	for k := 0; k < K && !fast; k++ {
		v := prev[k] + lam*float32(k)
		for n > h && prev[dq[n-1]]+lam*float32(dq[n-1]) <= v {
			n--
		}
		dq[n] = int32(k)
		n++
		lo := int32(k) - r.maxJump[k]
		for dq[h] < lo {
			h++
		}
		j := dq[h]
		if b := prev[j] - lam*float32(int32(k)-j); b > best[k] {
			best[k], arg[k] = b, j
		}
	}
	// Right half: j ≥ k, value prev[j] − λj, window j ≤ k + maxJump[k].
	fast = true
	for k, a := K-1, int32(K-1); k >= 0; k-- {
		if prev[k]-lam*float32(k) >= prev[a]-lam*float32(a) {
			a = int32(k)
		}
		if a-int32(k) > r.maxJump[k] {
			fast = false
			break
		}
		if b := prev[a] - lam*float32(a-int32(k)); b > best[k] {
			best[k], arg[k] = b, a
		}
	}
	h, n = 0, 0
	for k := K - 1; k >= 0 && !fast; k-- {
		v := prev[k] - lam*float32(k)
		for n > h && prev[dq[n-1]]-lam*float32(dq[n-1]) <= v {
			n--
		}
		dq[n] = int32(k)
		n++
		hi := int32(k) + r.maxJump[k]
		for dq[h] > hi {
			h++
		}
		j := dq[h]
		if b := prev[j] - lam*float32(j-int32(k)); b > best[k] {
			best[k], arg[k] = b, j
		}
	}
}
