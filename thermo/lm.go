package thermo

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// LeastSquares is a nonlinear least-squares problem: find x ∈ ℝᴺ that
// minimises S(x) = Σᵢ rᵢ(x)², i = 1..M.
type LeastSquares struct {
	M, N int // number of residuals and of unknowns, M ≥ N ≥ 1
	// Residuals writes r(x) into r (length M). It may return an error to
	// abort the solve; non-finite residuals at a trial point make the
	// solver reject the step (so a model may simply return NaN or +Inf
	// outside its domain), but they are an error at the starting point.
	Residuals func(r, x []float64) error
	// Jacobian writes ∂rᵢ/∂xⱼ into jac (M×N). When nil, the solver uses
	// central differences with steps of about ε^(1/3)·max(|xⱼ|, ε^(1/3)).
	Jacobian func(jac *mat.Dense, x []float64) error
}

// LMSettings tunes LevenbergMarquardt. The zero value means the defaults
// given with each field.
type LMSettings struct {
	// MaxIterations bounds the number of Jacobian evaluations (0: 200 + 50·N).
	MaxIterations int
	// GradTol stops when the largest cosine between r and a scaled column
	// of J is at most GradTol (0: 1e-12).
	GradTol float64
	// StepTol stops when the scaled step is at most StepTol times the
	// scaled x (0: 1e-12).
	StepTol float64
	// CostTol stops when both the actual and the predicted relative
	// reduction of S are at most CostTol (0: 1e-15).
	CostTol float64
	// InitialDamping is the starting damping parameter μ relative to the
	// scaled normal matrix (0: 1e-3).
	InitialDamping float64
}

// LMStatus says why LevenbergMarquardt stopped.
type LMStatus int

// Stopping reasons.
const (
	LMGradient   LMStatus = iota + 1 // the gradient test held: a stationary point
	LMStep                           // the step became negligible
	LMCost                           // the reduction of S became negligible
	LMZero                           // S(x) = 0 exactly
	LMStalled                        // no step reduces S any more (damping overflow)
	LMIterations                     // MaxIterations reached (an error is returned too)
)

// String names the status.
func (s LMStatus) String() string {
	switch s {
	case LMGradient:
		return "gradient"
	case LMStep:
		return "step"
	case LMCost:
		return "cost"
	case LMZero:
		return "zero residual"
	case LMStalled:
		return "stalled"
	case LMIterations:
		return "iteration limit"
	}
	return fmt.Sprintf("LMStatus(%d)", int(s))
}

// LMResult is the outcome of LevenbergMarquardt.
type LMResult struct {
	X         []float64  // the solution
	Residuals []float64  // r(X)
	SSR       float64    // S(X) = Σ rᵢ²
	Jacobian  *mat.Dense // J(X), M×N
	// Iterations counts accepted and rejected trial steps; Evaluations
	// counts calls of Residuals (including those for difference Jacobians).
	Iterations, Evaluations int
	Status                  LMStatus
}

// LevenbergMarquardt minimises Σ rᵢ(x)² from the starting point x0 by the
// Levenberg–Marquardt method: each step solves the damped linearised
// problem
//
//	min ‖J·h + r‖² + μ‖D·h‖²
//
// by a QR factorisation of the stacked matrix [J; √μ·D] (never forming
// JᵀJ, so ill-conditioned fits keep their digits), where J is the Jacobian
// at x and D = diag(dⱼ) holds the largest column norms of J seen so far
// (Marquardt's scaling, which makes the method invariant to the units of
// the unknowns). A step is taken when the ratio ρ of the actual to the
// predicted reduction of S is positive; μ then shrinks by
// max(1/3, 1 − (2ρ − 1)³), otherwise it grows by a factor that doubles with
// each consecutive rejection (Nielsen's rule).
//
// It returns the best point found. When MaxIterations is reached the
// result is returned with an error wrapping ErrNoConvergence. A start where
// r is not finite, bad dimensions and errors from the callbacks are errors
// too. settings may be nil.
//
// References:
//
//	Levenberg, K. (1944). A method for the solution of certain non-linear
//	problems in least squares. Quart. Appl. Math. 2, 164–168.
//	Marquardt, D. W. (1963). An algorithm for least-squares estimation of
//	nonlinear parameters. J. SIAM 11(2), 431–441.
//	Moré, J. J. (1978). The Levenberg–Marquardt algorithm: implementation
//	and theory. In Numerical Analysis (G. A. Watson, ed.), LNM 630,
//	Springer, 105–116.
//	Nielsen, H. B. (1999). Damping parameter in Marquardt's method.
//	Report IMM-REP-1999-05, Technical University of Denmark.
func LevenbergMarquardt(p LeastSquares, x0 []float64, settings *LMSettings) (*LMResult, error) {
	var s LMSettings
	if settings != nil {
		s = *settings
	}
	if p.M < 1 || p.N < 1 || p.M < p.N {
		return nil, fmt.Errorf("%w: least squares needs M ≥ N ≥ 1, got M = %d residuals, N = %d unknowns", ErrBadParam, p.M, p.N)
	}
	if len(x0) != p.N {
		return nil, fmt.Errorf("%w: starting point has %d values, want N = %d", ErrBadParam, len(x0), p.N)
	}
	if p.Residuals == nil {
		return nil, fmt.Errorf("%w: least squares without a Residuals function", ErrBadParam)
	}
	for j, v := range x0 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: starting point x[%d] = %v", ErrBadParam, j, v)
		}
	}
	if s.MaxIterations <= 0 {
		s.MaxIterations = 200 + 50*p.N
	}
	if s.GradTol <= 0 {
		s.GradTol = 1e-12
	}
	if s.StepTol <= 0 {
		s.StepTol = 1e-12
	}
	if s.CostTol <= 0 {
		s.CostTol = 1e-15
	}
	if s.InitialDamping <= 0 {
		s.InitialDamping = 1e-3
	}
	m, n := p.M, p.N
	res := &LMResult{X: append([]float64(nil), x0...), Residuals: make([]float64, m), Jacobian: mat.NewDense(m, n, nil)}
	eval := func(r, x []float64) (float64, error) {
		res.Evaluations++
		if err := p.Residuals(r, x); err != nil {
			return 0, err
		}
		ssr := 0.0
		for _, v := range r {
			ssr += v * v
		}
		return ssr, nil
	}
	var err error
	if res.SSR, err = eval(res.Residuals, res.X); err != nil {
		return nil, err
	}
	if math.IsNaN(res.SSR) || math.IsInf(res.SSR, 0) {
		return nil, fmt.Errorf("%w: the residuals are not finite at the starting point %v", ErrBadParam, x0)
	}
	jacobian := func() error {
		if p.Jacobian != nil {
			return p.Jacobian(res.Jacobian, res.X)
		}
		return res.centralDifferences(eval, m, n)
	}
	if err := jacobian(); err != nil {
		return nil, err
	}

	d := make([]float64, n)  // Marquardt scaling
	h := make([]float64, n)  // step
	xt := make([]float64, n) // trial point
	rt := make([]float64, m) // trial residuals
	jh := make([]float64, m) // J·h
	rhs := mat.NewVecDense(m+n, nil)
	aug := mat.NewDense(m+n, n, nil)
	var qr mat.QR
	mu, nu := s.InitialDamping, 2.0
	needJ := false
	for res.Iterations = 0; res.Iterations < s.MaxIterations; res.Iterations++ {
		if res.SSR == 0 {
			res.Status = LMZero
			return res, nil
		}
		if needJ {
			if err := jacobian(); err != nil {
				return nil, err
			}
			needJ = false
		}
		// Scaling and the gradient test (cosine of the angle between r
		// and each column of J).
		rnorm := math.Sqrt(res.SSR)
		gmax := 0.0
		for j := 0; j < n; j++ {
			col := 0.0
			g := 0.0
			for i := 0; i < m; i++ {
				a := res.Jacobian.At(i, j)
				if math.IsNaN(a) || math.IsInf(a, 0) {
					return nil, fmt.Errorf("%w: Jacobian entry (%d, %d) is %v at x = %v", ErrNoConvergence, i, j, a, res.X)
				}
				col += a * a
				g += a * res.Residuals[i]
			}
			col = math.Sqrt(col)
			d[j] = math.Max(d[j], col)
			if col > 0 {
				gmax = math.Max(gmax, math.Abs(g)/(col*rnorm))
			}
		}
		if gmax <= s.GradTol {
			res.Status = LMGradient
			return res, nil
		}
		// Solve the damped problem for h.
		for {
			sq := math.Sqrt(mu)
			aug.Zero()
			aug.Slice(0, m, 0, n).(*mat.Dense).Copy(res.Jacobian)
			for j := 0; j < n; j++ {
				dj := d[j]
				if dj == 0 {
					dj = 1 // a column of zeros: the data do not see x[j]
				}
				aug.Set(m+j, j, sq*dj)
			}
			for i := 0; i < m; i++ {
				rhs.SetVec(i, -res.Residuals[i])
			}
			for j := 0; j < n; j++ {
				rhs.SetVec(m+j, 0)
			}
			qr.Factorize(aug)
			var hv mat.VecDense
			if err := qr.SolveVecTo(&hv, false, rhs); err != nil {
				// Numerically singular even with damping: damp harder.
				if mu *= nu; mu > 1e32 {
					res.Status = LMStalled
					return res, nil
				}
				nu *= 2
				res.Iterations++
				if res.Iterations >= s.MaxIterations {
					break
				}
				continue
			}
			for j := 0; j < n; j++ {
				h[j] = hv.AtVec(j)
			}
			break
		}
		if res.Iterations >= s.MaxIterations {
			break
		}
		// Step test, in the scaled norm.
		dh, dx := 0.0, 0.0
		for j := 0; j < n; j++ {
			dj := d[j]
			if dj == 0 {
				dj = 1
			}
			dh += (dj * h[j]) * (dj * h[j])
			dx += (dj * res.X[j]) * (dj * res.X[j])
		}
		dh, dx = math.Sqrt(dh), math.Sqrt(dx)
		if dh <= s.StepTol*(dx+s.StepTol) {
			res.Status = LMStep
			return res, nil
		}
		// Trial point and gain ratio.
		floats.AddTo(xt, res.X, h)
		ssrt, err := eval(rt, xt)
		if err != nil {
			return nil, err
		}
		for i := 0; i < m; i++ {
			jh[i] = res.Residuals[i]
			for j := 0; j < n; j++ {
				jh[i] += res.Jacobian.At(i, j) * h[j]
			}
		}
		pred := res.SSR - floats.Dot(jh, jh)
		actual := res.SSR - ssrt
		finite := !math.IsNaN(ssrt) && !math.IsInf(ssrt, 0)
		if finite && pred > 0 && actual > 0 {
			rho := actual / pred
			copy(res.X, xt)
			copy(res.Residuals, rt)
			old := res.SSR
			res.SSR = ssrt
			needJ = true
			mu *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
			nu = 2
			if actual <= s.CostTol*old && pred <= s.CostTol*old {
				if err := jacobian(); err != nil {
					return nil, err
				}
				res.Status = LMCost
				return res, nil
			}
			continue
		}
		if finite && pred >= 0 && pred <= s.CostTol*res.SSR && math.Abs(actual) <= s.CostTol*res.SSR {
			// No model reduction is available any more: a minimum to
			// rounding.
			res.Status = LMCost
			return res, nil
		}
		mu *= nu
		nu *= 2
		if mu > 1e32 || math.IsInf(nu, 0) {
			res.Status = LMStalled
			return res, nil
		}
	}
	if needJ {
		if err := jacobian(); err != nil {
			return nil, err
		}
	}
	res.Status = LMIterations
	return res, fmt.Errorf("%w: Levenberg–Marquardt stopped after %d iterations with S = %g", ErrNoConvergence, res.Iterations, res.SSR)
}

// centralDifferences fills res.Jacobian at res.X by central differences.
func (res *LMResult) centralDifferences(eval func(r, x []float64) (float64, error), m, n int) error {
	const step = 6.0554544523933395e-06 // ε^(1/3)
	x := append([]float64(nil), res.X...)
	rp := make([]float64, m)
	rm := make([]float64, m)
	for j := 0; j < n; j++ {
		hj := step * math.Max(math.Abs(x[j]), step)
		xj := x[j]
		x[j] = xj + hj
		if _, err := eval(rp, x); err != nil {
			return err
		}
		x[j] = xj - hj
		if _, err := eval(rm, x); err != nil {
			return err
		}
		x[j] = xj
		for i := 0; i < m; i++ {
			res.Jacobian.Set(i, j, (rp[i]-rm[i])/(2*hj))
		}
	}
	return nil
}
