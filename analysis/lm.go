package analysis

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// LMProblem is a nonlinear least-squares problem for LevenbergMarquardt:
// minimise Σ r_i(p)² over p.
type LMProblem struct {
	// N is the number of residuals, P the number of parameters.
	N, P int
	// Residuals writes r_i = y_i − f_i(p) (weighted if the problem is
	// weighted) into dst, which has length N.
	Residuals func(dst, p []float64)
	// Jacobian writes ∂f_i/∂p_j (the model's Jacobian, so that ∂r/∂p =
	// −J) into dst, N×P. When nil, forward differences are used.
	Jacobian func(dst *mat.Dense, p []float64)
}

// LMSettings tunes LevenbergMarquardt; the zero value means defaults.
type LMSettings struct {
	// MaxIter bounds the number of Jacobian evaluations (default 200).
	MaxIter int
	// StepTol stops when every step component is below
	// StepTol·(|p_j| + StepTol) (default 1e-11).
	StepTol float64
	// Lower and Upper, when non-nil, clamp each parameter after a step.
	Lower, Upper []float64
	// MaxRelStep limits each step to |δ_j| ≤ MaxRelStep·max(|p_j|, |p0_j|)
	// (a larger damping is tried instead); default 1, so that one step can
	// at most double a parameter or take it to zero. Negative: no limit.
	// This keeps the iteration out of the region where an exponential's
	// rate runs away while its amplitude is still far off (the trap of
	// NIST StRD BoxBOD from start 1).
	MaxRelStep float64
}

// LMResult is the outcome of LevenbergMarquardt.
type LMResult struct {
	// P is the solution, RSS the residual sum of squares there.
	P   []float64
	RSS float64
	// Iter is the number of accepted steps; Converged reports whether the
	// step-size test stopped the iteration (rather than MaxIter).
	Iter      int
	Converged bool
}

// ErrNoProgress is returned when LevenbergMarquardt cannot reduce the
// residual sum of squares from its starting point at all.
var ErrNoProgress = errors.New("analysis: Levenberg–Marquardt made no progress")

// LevenbergMarquardt minimises the residual sum of squares of prob from p0.
//
// Each iteration solves (JᵀJ + λ·D) δ = Jᵀr, with D the running maximum of
// diag(JᵀJ) (Marquardt's scaling as kept by Moré), and accepts δ when the
// sum of squares falls; λ is updated from the gain ratio ρ of actual to
// predicted reduction as Nielsen proposes (λ·max(1/3, 1 − (2ρ − 1)³) on
// success, doubling factors on failure).
//
// References: K. Levenberg, Quart. Appl. Math. 2:164–168, 1944;
// D. W. Marquardt, J. SIAM 11(2):431–441, 1963; J. J. Moré, "The
// Levenberg–Marquardt algorithm: implementation and theory", Lecture Notes
// in Mathematics 630, 1978; H. B. Nielsen, "Damping parameter in Marquardt's
// method", IMM-REP-1999-05, DTU, 1999 (all from memory).
func LevenbergMarquardt(prob LMProblem, p0 []float64, set *LMSettings) (LMResult, error) {
	n, np := prob.N, prob.P
	if n <= 0 || np <= 0 || len(p0) != np {
		panic("analysis: LevenbergMarquardt: bad problem size")
	}
	var s LMSettings
	if set != nil {
		s = *set
	}
	if s.MaxIter <= 0 {
		s.MaxIter = 200
	}
	if s.StepTol <= 0 {
		s.StepTol = 1e-11
	}
	if s.MaxRelStep == 0 {
		s.MaxRelStep = 1
	}
	p := append([]float64(nil), p0...)
	r := make([]float64, n)
	rTry := make([]float64, n)
	pTry := make([]float64, np)
	prob.Residuals(r, p)
	rss := sumSq(r)
	if math.IsNaN(rss) || math.IsInf(rss, 0) {
		return LMResult{P: p, RSS: rss}, fmt.Errorf("analysis: Levenberg–Marquardt: residuals not finite at the start")
	}
	J := mat.NewDense(n, np, nil)
	var JTJ mat.SymDense
	JTJ.ReuseAsSym(np)
	A := mat.NewSymDense(np, nil)
	g := mat.NewVecDense(np, nil)
	delta := mat.NewVecDense(np, nil)
	D := make([]float64, np)
	var chol mat.Cholesky

	lambda := -1.0
	nu := 2.0
	res := LMResult{}
	progressed := false
	for it := 0; it < s.MaxIter; it++ {
		jacobian(prob, J, p, r)
		JTJ.SymOuterK(1, J.T())
		g.MulVec(J.T(), mat.NewVecDense(n, r))
		for j := 0; j < np; j++ {
			D[j] = math.Max(D[j], JTJ.At(j, j))
			if D[j] == 0 {
				D[j] = 1e-300
			}
		}
		if lambda < 0 {
			lambda = 1e-3 // relative to the scaling D
		}
		accepted := false
		for inner := 0; inner < 60; inner++ {
			A.CopySym(&JTJ)
			for j := 0; j < np; j++ {
				A.SetSym(j, j, JTJ.At(j, j)+lambda*D[j])
			}
			if ok := chol.Factorize(A); !ok {
				lambda *= nu
				nu *= 2
				continue
			}
			if err := chol.SolveVecTo(delta, g); err != nil {
				lambda *= nu
				nu *= 2
				continue
			}
			if s.MaxRelStep > 0 && tooLong(delta, p, p0, s.MaxRelStep) {
				lambda *= nu
				nu *= 2
				continue
			}
			for j := 0; j < np; j++ {
				pTry[j] = p[j] + delta.AtVec(j)
				if s.Lower != nil && pTry[j] < s.Lower[j] {
					pTry[j] = s.Lower[j]
				}
				if s.Upper != nil && pTry[j] > s.Upper[j] {
					pTry[j] = s.Upper[j]
				}
			}
			prob.Residuals(rTry, pTry)
			rssTry := sumSq(rTry)
			// Predicted reduction of the linear model: δᵀ(λDδ + g).
			pred := 0.0
			for j := 0; j < np; j++ {
				dj := delta.AtVec(j)
				pred += dj * (lambda*D[j]*dj + g.AtVec(j))
			}
			small := true
			for j := 0; j < np; j++ {
				if math.Abs(pTry[j]-p[j]) > s.StepTol*(math.Abs(p[j])+s.StepTol) {
					small = false
					break
				}
			}
			if !math.IsNaN(rssTry) && rssTry <= rss {
				rho := (rss - rssTry) / math.Max(pred, 1e-300)
				copy(p, pTry)
				copy(r, rTry)
				improved := rssTry < rss
				rss = rssTry
				lambda *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
				nu = 2
				res.Iter++
				accepted = true
				if improved {
					progressed = true
				}
				if small || !improved {
					res.Converged = true
				}
				break
			}
			if small {
				res.Converged = true
				break
			}
			lambda *= nu
			nu *= 2
		}
		if res.Converged || !accepted {
			if !accepted {
				res.Converged = true
			}
			break
		}
	}
	res.P, res.RSS = p, rss
	if !progressed && res.Iter == 0 && rss > 0 {
		// The start may already be the optimum; let the caller decide by
		// the gradient. Report no error if the gradient vanishes.
		jacobian(prob, J, p, r)
		g.MulVec(J.T(), mat.NewVecDense(n, r))
		if mat.Norm(g, math.Inf(1)) > 1e-8*math.Sqrt(rss) {
			return res, ErrNoProgress
		}
	}
	return res, nil
}

// tooLong reports whether a step exceeds the relative limit.
func tooLong(delta *mat.VecDense, p, p0 []float64, rel float64) bool {
	for j := range p {
		scale := math.Max(math.Abs(p[j]), math.Abs(p0[j]))
		if scale > 0 && math.Abs(delta.AtVec(j)) > rel*scale {
			return true
		}
	}
	return false
}

// jacobian fills J at p, by prob.Jacobian or by forward differences.
func jacobian(prob LMProblem, J *mat.Dense, p, r []float64) {
	if prob.Jacobian != nil {
		prob.Jacobian(J, p)
		return
	}
	n, np := prob.N, prob.P
	pp := append([]float64(nil), p...)
	rr := make([]float64, n)
	for j := 0; j < np; j++ {
		h := math.Sqrt(2.2e-16) * math.Max(math.Abs(p[j]), 1e-8)
		pp[j] = p[j] + h
		prob.Residuals(rr, pp)
		pp[j] = p[j]
		for i := 0; i < n; i++ {
			// r = y − f, so ∂f/∂p = −∂r/∂p.
			J.Set(i, j, -(rr[i]-r[i])/h)
		}
	}
}

func sumSq(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v * v
	}
	return s
}

// InverseNormal returns (JᵀJ)⁻¹ computed from the singular value
// decomposition of J (J = UΣVᵀ ⇒ (JᵀJ)⁻¹ = VΣ⁻²Vᵀ), which keeps the digits
// that forming JᵀJ explicitly would lose on ill-conditioned problems.
// It returns an error when J is rank deficient.
func InverseNormal(J mat.Matrix) (*mat.SymDense, error) {
	var svd mat.SVD
	if !svd.Factorize(J, mat.SVDThin) {
		return nil, errors.New("analysis: SVD of the Jacobian failed")
	}
	sv := svd.Values(nil)
	_, np := J.Dims()
	if len(sv) < np || sv[np-1] <= sv[0]*1e-13 || sv[np-1] == 0 {
		return nil, errors.New("analysis: the Jacobian is rank deficient; parameters are not identifiable")
	}
	var V mat.Dense
	svd.VTo(&V)
	out := mat.NewSymDense(np, nil)
	for a := 0; a < np; a++ {
		for b := a; b < np; b++ {
			s := 0.0
			for k := 0; k < np; k++ {
				s += V.At(a, k) * V.At(b, k) / (sv[k] * sv[k])
			}
			out.SetSym(a, b, s)
		}
	}
	return out, nil
}

// WaldCovariance returns the asymptotic covariance s²(JᵀJ)⁻¹ of a
// least-squares estimate with s² = RSS/(n − p): the standard errors that
// NIST StRD certifies for its nonlinear regression data sets.
func WaldCovariance(J mat.Matrix, rss float64) (*mat.SymDense, error) {
	n, np := J.Dims()
	if n <= np {
		return nil, fmt.Errorf("analysis: %d observations cannot give a covariance for %d parameters", n, np)
	}
	inv, err := InverseNormal(J)
	if err != nil {
		return nil, err
	}
	inv.ScaleSym(rss/float64(n-np), inv)
	return inv, nil
}
