package analysis

import "math"

// The first-order-plus-dead-time (FOPDT) step response and the same response
// as the tracker sees it through its analysis window.
//
// With onset t0 = tc + θ (command time plus dead time), the true shaft speed
// is
//
//	f(t) = r0 + Δ·g((t − t0)/τ),   g(u) = 1 − e^{−u} for u ≥ 0, 0 before,
//
// and a track sample at time t is ≈ Σ_j K_j f(t + o_j) (Track.Kernel; for an
// STFT ridge the normalised w² of the window, see analysis/track.go). The
// kernel is kept as a histogram: bin j has weight w_j spread evenly over the
// offsets [a_j, b_j]. The average of g over one bin has a closed form through
// the primitive
//
//	H(u) = ∫₀ᵘ g = u − 1 + e^{−u} (u ≥ 0; 0 before),
//	(1/(b−a)) ∫ₐᵇ g((s+o)/τ) do = τ·[H((s+b)/τ) − H((s+a)/τ)]/(b − a),
//
// so the seen curve r0 + Δ·G(t − t0) is exact for the histogram kernel
// however small τ is (no fine time grid, no bias for τ ≪ window). Far from
// the onset G is 1 − e^{−(s+a₀)/τ}·C(τ) with C(τ) a sum over bins (a₀ the
// kernel's left edge), which costs O(1) per sample.
//
// Textbook first-order facts used in reports (e.g. K. Ogata, Modern Control
// Engineering, chapter on transient response of first-order systems; from
// memory): 1 − e^{−n} = 63.2, 86.5, 95.0, 98.2 % at n = 1…4 time constants,
// 10–90 % rise time τ·ln 9.

// fopdtKernel is the histogram form of a track's smoothing kernel.
type fopdtKernel struct {
	a, b, w []float64 // bin edges (s, relative to the sample time) and weights
	left    float64   // a[0]: smallest offset
	right   float64   // b[len-1]: largest offset
	// coef[j] = w[j]/(b[j] − a[j]); ca, xa (cb, xb) are the suffix sums
	// of coef and coef·a (coef·b) from bin j on (see fopdtTau).
	coef, ca, xa, cb, xb []float64
}

// finish fills the kernel's τ-independent sums.
func (k *fopdtKernel) finish() {
	n := len(k.w)
	k.left, k.right = k.a[0], k.b[n-1]
	k.coef = make([]float64, n)
	k.ca, k.xa = make([]float64, n), make([]float64, n)
	k.cb, k.xb = make([]float64, n), make([]float64, n)
	for j := n - 1; j >= 0; j-- {
		c := k.w[j] / (k.b[j] - k.a[j])
		k.coef[j] = c
		k.ca[j], k.xa[j] = c, c*k.a[j]
		k.cb[j], k.xb[j] = c, c*k.b[j]
		if j+1 < n {
			k.ca[j] += k.ca[j+1]
			k.xa[j] += k.xa[j+1]
			k.cb[j] += k.cb[j+1]
			k.xb[j] += k.xb[j+1]
		}
	}
}

// maxKernelBins bounds the histogram: 48 bins over an 80 ms window are
// 1.7 ms wide; the histogram's error is second order in the bin width.
const maxKernelBins = 48

// pointKernelHalfWidthS stands in for a missing kernel: a track that sees
// the trajectory directly.
const pointKernelHalfWidthS = 1e-7

// newFOPDTKernel bins kernel taps (spacing dt, centred) into at most
// maxKernelBins bins. A nil or empty kernel becomes a near-point kernel.
func newFOPDTKernel(k []float64, dt float64) fopdtKernel {
	sum := 0.0
	for _, v := range k {
		if v > 0 && !math.IsInf(v, 0) {
			sum += v
		}
	}
	if len(k) == 0 || !(dt > 0) || !(sum > 0) {
		kb := fopdtKernel{a: []float64{-pointKernelHalfWidthS}, b: []float64{pointKernelHalfWidthS}, w: []float64{1}}
		kb.finish()
		return kb
	}
	// Trim zero taps at both ends.
	lo, hi := 0, len(k)-1
	for lo < hi && !(k[lo] > 0) {
		lo++
	}
	for hi > lo && !(k[hi] > 0) {
		hi--
	}
	c := float64(len(k)-1) / 2
	per := (hi - lo + 1 + maxKernelBins - 1) / maxKernelBins
	var kb fopdtKernel
	for j := lo; j <= hi; j += per {
		end := min(j+per, hi+1)
		w := 0.0
		for q := j; q < end; q++ {
			if k[q] > 0 && !math.IsInf(k[q], 0) {
				w += k[q]
			}
		}
		kb.a = append(kb.a, (float64(j)-c-0.5)*dt)
		kb.b = append(kb.b, (float64(end-1)-c+0.5)*dt)
		kb.w = append(kb.w, w/sum)
	}
	kb.finish()
	return kb
}

// SpanS returns the kernel's total width in seconds.
func (k *fopdtKernel) spanS() float64 { return k.right - k.left }

// sdS returns the kernel's standard deviation in seconds.
func (k *fopdtKernel) sdS() float64 {
	m, m2 := 0.0, 0.0
	for j := range k.w {
		c := (k.a[j] + k.b[j]) / 2
		h := k.b[j] - k.a[j]
		m += k.w[j] * c
		m2 += k.w[j] * (c*c + h*h/12)
	}
	return math.Sqrt(math.Max(m2-m*m, 0))
}

// riseS returns the time the seen curve of an instantaneous step takes to
// go from 10 % to 90 %: the kernel's 10–90 % width. No track transition can
// be sharper than this.
func (k *fopdtKernel) riseS() float64 {
	at := func(q float64) float64 {
		c := 0.0
		for j, w := range k.w {
			if c+w >= q {
				return k.a[j] + (q-c)/w*(k.b[j]-k.a[j])
			}
			c += w
		}
		return k.right
	}
	return at(0.9) - at(0.1)
}

// maxMass returns the largest share of the kernel's weight that falls in
// any interval of length w: the largest fraction of an instantaneous step
// that two track samples w apart can differ by (1 for a point kernel).
func (k *fopdtKernel) maxMass(w float64) float64 {
	if k.spanS() <= w {
		return 1
	}
	// Cumulative weight at an offset, linear within each bin.
	cdf := func(x float64) float64 {
		c := 0.0
		for j, wt := range k.w {
			switch {
			case x >= k.b[j]:
				c += wt
			case x > k.a[j]:
				c += wt * (x - k.a[j]) / (k.b[j] - k.a[j])
			}
		}
		return c
	}
	best := 0.0
	for j := range k.w {
		for _, x := range []float64{k.a[j], k.b[j] - w} {
			best = math.Max(best, cdf(x+w)-cdf(x))
		}
	}
	return math.Min(best, 1)
}

// fopdtTau caches what depends on τ alone.
//
// Near the onset (a sample whose kernel straddles it) G is a sum over bin
// edges. Write c_j = w_j/(b_j − a_j); then
//
//	G(s) = τ·Σ_j c_j·[H(u(b_j)) − H(u(a_j))],   u(x) = (s + x)/τ,
//
// and each of the two sums runs over the edges x_i past the onset (x_i > −s),
// a suffix of the sorted edges. With H(u) = u − 1 + e^{−u} it splits into
// sums that do not depend on s:
//
//	Σ_{i≥i0} c_i·H(u_i) = [(s − τ)·C_{i0} + X_{i0}]/τ + e^{−u_{i0}}·E_{i0}
//	C_k = Σ_{i≥k} c_i,  X_k = Σ_{i≥k} c_i·x_i,  E_k = Σ_{i≥k} c_i·e^{−(x_i − x_k)/τ},
//
// and the derivatives likewise with F_k = Σ_{i≥k} c_i·x_i·e^{−(x_i − x_k)/τ}.
// E and F are built from the last edge down (E_k = c_k + e^{−(x_{k+1} − x_k)/τ}·E_{k+1}),
// every exponent negative, so no term overflows however small τ is. A
// sample then costs one exponential and a binary search instead of three
// per bin edge (TestSeenSuffixAgrees holds it to the per-bin sums).
type fopdtTau struct {
	tau  float64
	c    float64 // C(τ): G = 1 − e^{−(s+left)/τ}·C far from the onset
	dcdt float64 // dC/dτ
	// Suffix sums over the left edges (a) and the right edges (b).
	ea, fa, eb, fb [maxKernelBins]float64
}

func (k *fopdtKernel) prepare(tau float64) fopdtTau {
	ft := fopdtTau{tau: tau}
	// The bins are contiguous and nearly all of one width, so most of the
	// exponentials below repeat an argument already seen: each is taken
	// once (the values are those computed afresh, bit for bit).
	var ex, exm memo
	for j := range k.w {
		al := k.a[j] - k.left
		be := k.b[j] - k.left
		h := be - al
		ea := ex.of(-al/tau, math.Exp)
		eb := ex.of(-be/tau, math.Exp)
		// τ(e^{−α/τ} − e^{−β/τ})/h, written with expm1 for narrow bins.
		d := -ea * exm.of(-h/tau, math.Expm1)
		ft.c += k.w[j] * tau * d / h
		ft.dcdt += k.w[j] / h * (d + (al*ea-be*eb)/tau)
	}
	n := len(k.w)
	var er memo
	for j := n - 1; j >= 0; j-- {
		c := k.coef[j]
		ft.ea[j], ft.fa[j] = c, c*k.a[j]
		ft.eb[j], ft.fb[j] = c, c*k.b[j]
		if j+1 < n {
			ra := er.of(-(k.a[j+1]-k.a[j])/tau, math.Exp)
			rb := er.of(-(k.b[j+1]-k.b[j])/tau, math.Exp)
			ft.ea[j] += ra * ft.ea[j+1]
			ft.fa[j] += ra * ft.fa[j+1]
			ft.eb[j] += rb * ft.eb[j+1]
			ft.fb[j] += rb * ft.fb[j+1]
		}
	}
	return ft
}

// memo remembers the last few values of a function by their argument.
type memo struct {
	x, v [4]float64
	n    int // entries filled
	next int // the one replaced next
}

// of returns f(x), from memory when x was one of the last arguments.
func (m *memo) of(x float64, f func(float64) float64) float64 {
	for i := range m.n {
		if m.x[i] == x {
			return m.v[i]
		}
	}
	v := f(x)
	m.x[m.next], m.v[m.next] = x, v
	m.next = (m.next + 1) % len(m.x)
	m.n = min(m.n+1, len(m.x))
	return v
}

// edgeSums returns, for the edges x (increasing) with suffix sums C, X and
// the τ-dependent E, F, the sums over the edges past the onset of c·H(u),
// c·g(u) and c·(H − u·g)(u) at offset s.
func edgeSums(s, tau float64, x, C, X, E, F []float64) (sh, sg, shug float64) {
	// First edge with s + x > 0.
	lo, hi := 0, len(x)
	for lo < hi {
		m := int(uint(lo+hi) >> 1)
		if s+x[m] > 0 {
			hi = m
		} else {
			lo = m + 1
		}
	}
	if lo == len(x) {
		return 0, 0, 0
	}
	u0 := (s + x[lo]) / tau
	e := math.Exp(-u0)
	cs, xs, es, fs := C[lo], X[lo], E[lo], F[lo]
	sh = ((s-tau)*cs+xs)/tau + e*es
	sg = cs - e*es
	// Σ c·(e^{−u}(1 + u) − 1), with Σ c·u·e^{−u} = e^{−u0}·(s·E + F)/τ.
	shug = e*(es+(s*es+fs)/tau) - cs
	return sh, sg, shug
}

// primH is H(u); primHug is H(u) − u·g(u) = ∂(τH(v/τ))/∂τ.
func primH(u float64) float64 {
	if u <= 0 {
		return 0
	}
	return u + math.Expm1(-u)
}

func stepG(u float64) float64 {
	if u <= 0 {
		return 0
	}
	return -math.Expm1(-u)
}

func primHug(u float64) float64 {
	if u <= 0 {
		return 0
	}
	return math.Expm1(-u) + u*math.Exp(-u)
}

// seen returns G(s), ∂G/∂s and ∂G/∂τ for a sample s = t − t0 after the
// onset, as the track sees it.
func (k *fopdtKernel) seen(s float64, ft *fopdtTau) (G, dGds, dGdtau float64) {
	tau := ft.tau
	if s+k.right <= 0 {
		return 0, 0, 0
	}
	if s+k.left >= 0 {
		x := (s + k.left) / tau
		e := math.Exp(-x)
		G = 1 - e*ft.c
		dGds = e * ft.c / tau
		dGdtau = -(e*x/tau*ft.c + e*ft.dcdt)
		return G, dGds, dGdtau
	}
	n := len(k.w)
	bh, bg, bhug := edgeSums(s, tau, k.b, k.cb, k.xb, ft.eb[:n], ft.fb[:n])
	ah, ag, ahug := edgeSums(s, tau, k.a, k.ca, k.xa, ft.ea[:n], ft.fa[:n])
	return tau * (bh - ah), bg - ag, bhug - ahug
}

// seenG returns G(s) alone (the profile search needs no derivatives).
func (k *fopdtKernel) seenG(s float64, ft *fopdtTau) float64 {
	tau := ft.tau
	if s+k.right <= 0 {
		return 0
	}
	if s+k.left >= 0 {
		return 1 - math.Exp(-(s+k.left)/tau)*ft.c
	}
	G, _, _ := k.seen(s, ft)
	return G
}

// fopdtTrue is the true (unsmoothed) response fraction g((t − t0)/τ).
func fopdtTrue(t, t0, tau float64) float64 { return stepG((t - t0) / tau) }
