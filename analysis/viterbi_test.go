package analysis

import (
	"math"
	"math/rand/v2"
	"testing"
)

// predecessors agrees with the windowed maximum taken by brute force, both
// where the window never binds (the shortcut) and where it does (the
// deque), on values with exact ties too.
func TestPredecessorsBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 6))
	const K = 240
	prev := make([]float32, K)
	best, arg, dq := make([]float32, K), make([]int32, K), make([]int32, K)
	for trial := 0; trial < 400; trial++ {
		for k := range prev {
			prev[k] = float32(rng.NormFloat64())
			if trial%4 == 0 {
				prev[k] = float32(rng.IntN(3)) // ties
			}
			if rng.Float64() < 0.05 {
				prev[k] = float32(math.Inf(-1)) // states made impossible
			}
		}
		r := ridgePath{K: K, lambda: float32(rng.Float64()) * 0.05, maxJump: make([]int32, K)}
		w := int32(rng.IntN(K + 20))
		for k := range r.maxJump {
			r.maxJump[k] = w + int32(k/40) // k − maxJump and k + maxJump nondecreasing
		}
		r.predecessors(prev, best, arg, dq)
		for k := 0; k < K; k++ {
			want, wantJ := float32(math.Inf(-1)), int32(-1)
			for j := max(0, k-int(r.maxJump[k])); j <= min(K-1, k+int(r.maxJump[k])); j++ {
				d := k - j
				if d < 0 {
					d = -d
				}
				if b := prev[j] - r.lambda*float32(d); b > want {
					want, wantJ = b, int32(j)
				}
			}
			if best[k] != want && !(math.IsInf(float64(want), -1) && math.IsInf(float64(best[k]), -1)) {
				t.Fatalf("trial %d window %d state %d: best %g (from %d), brute force %g (from %d)", trial, w, k, best[k], arg[k], want, wantJ)
			}
			if arg[k] >= 0 && prev[arg[k]]-r.lambda*float32(max(int32(k)-arg[k], arg[k]-int32(k))) != best[k] {
				t.Fatalf("trial %d state %d: arg %d does not give best", trial, k, arg[k])
			}
		}
	}
}
