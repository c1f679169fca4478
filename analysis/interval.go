package analysis

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Confidence intervals for a least-squares fit whose residuals are
// correlated.
//
// Neighbouring track samples come from overlapping STFT frames, so their
// errors are correlated over about one window length; the textbook Wald
// covariance s²(JᵀJ)⁻¹ then understates the uncertainty several times over.
// corrCovariance estimates the residual autocorrelation ρ_k from the fit
// itself (up to its first non-positive value, and never below what the
// overlap of analysis windows alone imposes), forms the stationary error covariance Σ = c·R(ρ) and returns the sandwich
//
//	Cov = (JᵀJ)⁻¹ JᵀΣJ (JᵀJ)⁻¹,
//
// the covariance of a least-squares estimate under correlated errors
// (the heteroskedasticity-and-autocorrelation-consistent form of W. K. Newey
// & K. D. West, Econometrica 55(3):703–708, 1987, here with the
// autocovariances pooled over the fit window instead of summed locally; from
// memory). The scale c is set so that the expected residual sum of squares
// under Σ, tr((I − H)Σ) with H the hat matrix, equals the observed one —
// with smooth errors the fitted curve absorbs far more than p·σ² of the
// noise, and ignoring that makes s² too small. The t quantile uses the
// effective number of observations n_eff = n/(1 + 2Σρ_k) (the standard
// variance-inflation argument for correlated samples, e.g. D. S. Wilks,
// Statistical Methods in the Atmospheric Sciences; from memory) minus the
// number of parameters.
//
// The moving-block bootstrap in bootstrap.go is the cross-check.

// corrCov is the outcome of corrCovariance.
type corrCov struct {
	cov   *mat.SymDense
	nEff  float64
	df    float64 // degrees of freedom for the t quantile
	rho   []float64
	scale float64 // c
	// ridged reports that some direction was not determined by the data
	// (see ridgeInverseNormal).
	ridged bool
}

// corrCovariance computes the correlated-error covariance of the free
// parameters. idx holds each residual's index on the uniform frame grid
// (gaps allowed); maxLag bounds the lags (in frames) considered. floor, when
// given, is a lower bound on ρ_k per lag: the correlation that overlapping
// analysis windows impose by themselves (kernelAutocorr).
func corrCovariance(J *mat.Dense, resid []float64, idx []int, maxLag int, floor []float64) (*corrCov, error) {
	n, np := J.Dims()
	if n <= np+1 {
		return nil, errors.New("analysis: too few samples for an interval")
	}
	if maxLag < 1 {
		maxLag = 1
	}
	maxLag = min(maxLag, n/4)
	inv, err := InverseNormal(J)
	ridged := false
	if err != nil {
		// A direction the data do not determine (a time constant far
		// below what the window resolves, say): give it a huge but finite
		// variance instead of failing, so that its interval spans the
		// whole search range.
		if inv, err = ridgeInverseNormal(J); err != nil {
			return nil, err
		}
		ridged = true
	}
	// Autocorrelation over grid lags, pairs present in the data only.
	first := idx[0]
	span := idx[n-1] - first + 1
	pos := make([]int, span)
	for i := range pos {
		pos[i] = -1
	}
	for i, q := range idx {
		pos[q-first] = i
	}
	gamma := make([]float64, maxLag+1)
	for k := 0; k <= maxLag; k++ {
		s, m := 0.0, 0
		for i, q := range idx {
			g := q - first + k
			if g >= span || pos[g] < 0 {
				continue
			}
			s += resid[i] * resid[pos[g]]
			m++
		}
		if m > 0 {
			// Biased (1/n-type) estimate keeps R positive semi-definite.
			gamma[k] = s / float64(m) * float64(n-k) / float64(n)
		}
	}
	if !(gamma[0] > 0) {
		return nil, errors.New("analysis: residuals are all zero; no interval")
	}
	// Keep the initial positive sequence: past the first non-positive
	// value the estimates are mostly the fit's own imprint (residuals of a
	// fitted curve swing negative) and noise (as in Geyer's
	// initial-sequence estimators of a long-run variance; from memory).
	rho := make([]float64, maxLag+1)
	for k := range rho {
		r := gamma[k] / gamma[0]
		if r <= 0 {
			break
		}
		rho[k] = r
	}
	for k := range rho {
		if floor != nil && k < len(floor) {
			rho[k] = math.Max(rho[k], floor[k])
		}
	}
	// Local scale: where the residuals are locally larger than on average
	// (a transition the model follows less well than the plateaus, a
	// stretch of tracker trouble), the errors are taken as larger there,
	// s_i = max(1, local RMS / overall RMS) over ±maxLag/4 samples — the
	// heteroskedasticity-consistent idea of H. White, Econometrica 48(4),
	// 1980 (from memory), applied to the pooled correlation. It only
	// widens: a quiet stretch never makes the interval narrower.
	sc := localScale(resid, max(2, maxLag/4))
	// M = Jᵀ S R S J with R_ij = ρ_|idx_i − idx_j| and S = diag(s).
	M := mat.NewSymDense(np, nil)
	row := make([]float64, np)
	for i := 0; i < n; i++ {
		for k := -maxLag; k <= maxLag; k++ {
			g := idx[i] - first + k
			if g < 0 || g >= span || pos[g] < 0 {
				continue
			}
			j := pos[g]
			r := rho[absInt(k)] * sc[i] * sc[j]
			for a := 0; a < np; a++ {
				row[a] = J.At(j, a) * r
			}
			for a := 0; a < np; a++ {
				ja := J.At(i, a)
				for b := a; b < np; b++ {
					M.SetSym(a, b, M.At(a, b)+ja*row[b])
				}
			}
		}
	}
	// tr(H R) = tr((JᵀJ)⁻¹ JᵀRJ).
	var prod mat.Dense
	prod.Mul(inv, M)
	trHR := mat.Trace(&prod)
	rss := 0.0
	for _, r := range resid {
		rss += r * r
	}
	trR := 0.0
	for _, v := range sc {
		trR += v * v
	}
	denom := trR - trHR
	if denom < float64(n)/20 {
		denom = float64(n) / 20
	}
	c := rss / denom
	var tmp, cv mat.Dense
	tmp.Mul(inv, M)
	cv.Mul(&tmp, inv)
	cov := mat.NewSymDense(np, nil)
	for a := 0; a < np; a++ {
		for b := a; b < np; b++ {
			cov.SetSym(a, b, c*(cv.At(a, b)+cv.At(b, a))/2)
		}
	}
	sumRho := 0.0
	for k := 1; k <= maxLag; k++ {
		sumRho += rho[k]
	}
	nEff := float64(n) / math.Max(1+2*sumRho, 1)
	df := math.Max(nEff-float64(np), 2)
	return &corrCov{cov: cov, nEff: nEff, df: df, rho: rho, scale: c, ridged: ridged}, nil
}

// ridgeInverseNormal returns (JᵀJ + λI)⁻¹ with λ = 10⁻¹²·σ_max², which is
// (JᵀJ)⁻¹ where J is well conditioned and gives an undetermined direction
// a variance 10¹² times that of the best determined one.
func ridgeInverseNormal(J *mat.Dense) (*mat.SymDense, error) {
	_, np := J.Dims()
	var jtj mat.SymDense
	jtj.SymOuterK(1, J.T())
	maxD := 0.0
	for a := 0; a < np; a++ {
		maxD = math.Max(maxD, jtj.At(a, a))
	}
	if !(maxD > 0) {
		return nil, errors.New("analysis: the Jacobian is zero; parameters are not identifiable")
	}
	for a := 0; a < np; a++ {
		jtj.SetSym(a, a, jtj.At(a, a)+1e-12*maxD)
	}
	var ch mat.Cholesky
	if !ch.Factorize(&jtj) {
		return nil, errors.New("analysis: parameters are not identifiable")
	}
	out := mat.NewSymDense(np, nil)
	if err := ch.InverseTo(out); err != nil {
		return nil, err
	}
	return out, nil
}

// localScale returns max(1, local RMS / overall RMS) of r over ±h samples.
func localScale(r []float64, h int) []float64 {
	n := len(r)
	cum := make([]float64, n+1)
	for i, v := range r {
		cum[i+1] = cum[i] + v*v
	}
	overall := cum[n] / float64(n)
	out := make([]float64, n)
	for i := range out {
		lo, hi := max(0, i-h), min(n, i+h+1)
		local := (cum[hi] - cum[lo]) / float64(hi-lo)
		out[i] = 1
		if overall > 0 && local > overall {
			out[i] = math.Sqrt(local / overall)
		}
	}
	return out
}

// tQuantile975 is the two-sided 95 % quantile of Student's t with df
// degrees of freedom.
func tQuantile975(df float64) float64 {
	if !(df > 0) {
		df = 1
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(0.975)
}

func absInt(k int) int {
	if k < 0 {
		return -k
	}
	return k
}

// kernelAutocorr returns the autocorrelation of a track's smoothing kernel
// at lags of 0..maxLag hops: the correlation of two samples' errors when
// each is the kernel-weighted average of white noise, i.e. what the overlap
// of analysis windows alone makes. Nil without a kernel.
func kernelAutocorr(k []float64, dt, hop float64, maxLag int) []float64 {
	if len(k) == 0 || !(dt > 0) || !(hop > 0) {
		return nil
	}
	k2 := 0.0
	for _, v := range k {
		k2 += v * v
	}
	if !(k2 > 0) {
		return nil
	}
	out := make([]float64, maxLag+1)
	for lag := range out {
		x := float64(lag) * hop / dt
		m := int(x)
		f := x - float64(m)
		a, b := 0.0, 0.0
		for j := 0; j+m < len(k); j++ {
			a += k[j] * k[j+m]
			if j+m+1 < len(k) {
				b += k[j] * k[j+m+1]
			}
		}
		out[lag] = ((1-f)*a + f*b) / k2
	}
	return out
}
