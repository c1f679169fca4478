package analysis

import (
	"math"
	"testing"
)

func TestFirstOrderTextbook(t *testing.T) {
	// Textbook first-order step response (K. Ogata, Modern Control
	// Engineering, transient response of first-order systems; values from
	// memory): 63.2, 86.5, 95.0, 98.2 % of the change at 1–4 τ, and the
	// 10–90 % rise time τ·ln 9 ≈ 2.197 τ.
	const tau = 0.03
	for n, want := range []float64{0.632, 0.865, 0.950, 0.982} {
		got := fopdtTrue(float64(n+1)*tau, 0, tau)
		if math.Abs(got-want) > 0.0005 {
			t.Errorf("at %d τ: %.4f of the change, want %.3f", n+1, got, want)
		}
	}
	t10 := -tau * math.Log(0.9)
	t90 := -tau * math.Log(0.1)
	if got := fopdtTrue(t10, 0, tau); math.Abs(got-0.1) > 1e-12 {
		t.Errorf("at t10: %.6f, want 0.1", got)
	}
	if got, want := t90-t10, tau*math.Log(9); math.Abs(got-want) > 1e-15 {
		t.Errorf("10–90 %% rise %.6g s, want τ·ln 9 = %.6g s", got, want)
	}
	if got := math.Log(9); math.Abs(got-2.197) > 5e-4 {
		t.Errorf("ln 9 = %.4f, want 2.197", got)
	}
}

func TestSeenModelAgainstDirectConvolution(t *testing.T) {
	// Self-consistency: the closed-form histogram convolution equals a
	// direct sum of the kernel taps against the true curve, also for τ far
	// below the window (5 ms in an 80 ms Hann² window), and its
	// derivatives equal central differences.
	for _, c := range []struct{ windowS, tau float64 }{{0.08, 0.005}, {0.02, 0.05}, {0.045, 0.012}} {
		taps := hann2Kernel(c.windowS, synthKernelDtS)
		k := newFOPDTKernel(taps, synthKernelDtS)
		mid := float64(len(taps)-1) / 2
		ft := k.prepare(c.tau)
		maxErr := 0.0
		for s := -c.windowS; s < c.windowS+5*c.tau; s += 0.0007 {
			direct := 0.0
			for j, w := range taps {
				// Each tap averaged over its own width, as the histogram
				// treats it: fine sub-sampling of the tap.
				for q := 0; q < 8; q++ {
					o := (float64(j) - mid + (float64(q)+0.5)/8 - 0.5) * synthKernelDtS
					direct += w / 8 * fopdtTrue(s+o, 0, c.tau)
				}
			}
			G, dGds, dGdtau := k.seen(s, &ft)
			maxErr = math.Max(maxErr, math.Abs(G-direct))
			if g2 := k.seenG(s, &ft); math.Abs(g2-G) > 1e-12 {
				t.Fatalf("seenG %.15f ≠ seen %.15f at s = %g", g2, G, s)
			}
			h := 1e-6
			gp, _, _ := k.seen(s+h, &ft)
			gm, _, _ := k.seen(s-h, &ft)
			if d := (gp - gm) / (2 * h); math.Abs(d-dGds) > 1e-4*math.Max(1, math.Abs(d)) {
				t.Fatalf("∂G/∂s = %g, central difference %g (s = %g, τ = %g)", dGds, d, s, c.tau)
			}
			ftp, ftm := k.prepare(c.tau+h), k.prepare(c.tau-h)
			gp, _, _ = k.seen(s, &ftp)
			gm, _, _ = k.seen(s, &ftm)
			if d := (gp - gm) / (2 * h); math.Abs(d-dGdtau) > 1e-4*math.Max(1, math.Abs(d)) {
				t.Fatalf("∂G/∂τ = %g, central difference %g (s = %g, τ = %g)", dGdtau, d, s, c.tau)
			}
		}
		t.Logf("window %.0f ms, τ %.0f ms: %d-bin histogram vs direct convolution, max error %.2e of the step", 1e3*c.windowS, 1e3*c.tau, len(k.w), maxErr)
		// 48 bins over the window: the histogram's error is second order in
		// the bin width, well under 0.2 % of the step.
		if maxErr > 2e-3 {
			t.Errorf("window %.0f ms, τ %.0f ms: max error %.2e, want < 2e-3", 1e3*c.windowS, 1e3*c.tau, maxErr)
		}
	}
}

func TestKernelSmearing(t *testing.T) {
	// methods.md §1.5 (from the reference notes): the w² kernel of a Hann
	// window has a standard deviation of 0.1414·L.
	const L = 0.0853 // 4096 samples at 48 kHz
	k := newFOPDTKernel(hann2Kernel(L, synthKernelDtS), synthKernelDtS)
	if got := k.sdS() / L; math.Abs(got-0.1414) > 0.002 {
		t.Errorf("kernel sd %.4f·L, want 0.1414·L", got)
	}
	t.Logf("Hann² kernel: sd %.2f ms for a %.1f ms window, 10–90 %% width of an instantaneous step %.1f ms", 1e3*k.sdS(), 1e3*L, 1e3*k.riseS())
}

// seenPerBin is the per-bin form of seen (three primitives per bin edge),
// the reference for the suffix sums.
func seenPerBin(k *fopdtKernel, s, tau float64) (G, dGds, dGdtau float64) {
	for j := range k.w {
		h := k.b[j] - k.a[j]
		ua := (s + k.a[j]) / tau
		ub := (s + k.b[j]) / tau
		if ub <= 0 {
			continue
		}
		G += k.w[j] * tau * (primH(ub) - primH(ua)) / h
		dGds += k.w[j] * (stepG(ub) - stepG(ua)) / h
		dGdtau += k.w[j] * (primHug(ub) - primHug(ua)) / h
	}
	return G, dGds, dGdtau
}

// The suffix-sum form of the convolution agrees with the per-bin sums for
// time constants from the fit's floor (0.3 ms) to 2 s in 20–85 ms windows.
func TestSeenSuffixAgrees(t *testing.T) {
	var worstG, worstD float64
	for _, windowS := range []float64{0.02, 0.0427, 0.0853} {
		taps := hann2Kernel(windowS, synthKernelDtS)
		k := newFOPDTKernel(taps, synthKernelDtS)
		for _, tau := range []float64{3e-4, 1e-3, 0.005, 0.03, 0.12, 2} {
			ft := k.prepare(tau)
			for s := k.left * 1.01; s < -k.left; s += windowS / 157 {
				G, ds, dt := k.seen(s, &ft)
				g0, ds0, dt0 := seenPerBin(&k, s, tau)
				if s+k.left >= 0 || s+k.right <= 0 {
					continue
				}
				eg := math.Abs(G - g0)
				ed := math.Max(math.Abs(ds-ds0)/math.Max(1, math.Abs(ds0)), math.Abs(dt-dt0)/math.Max(1, math.Abs(dt0)))
				worstG, worstD = math.Max(worstG, eg), math.Max(worstD, ed)
				if eg > 1e-10 || ed > 1e-8 {
					t.Fatalf("window %g s τ %g s at s = %g: G %.15g/%.15g ∂s %.12g/%.12g ∂τ %.12g/%.12g",
						windowS, tau, s, G, g0, ds, ds0, dt, dt0)
				}
			}
		}
	}
	t.Logf("largest difference from the per-bin sums: G %.1e of the step, derivatives %.1e (relative)", worstG, worstD)
}
