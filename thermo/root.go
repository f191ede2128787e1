package thermo

import (
	"fmt"
	"math"
)

// RootFinder finds a zero of a scalar function on a bracketing interval by
// a safeguarded Newton–bisection iteration. The zero value is ready to use
// and means the documented defaults.
//
// The method keeps an interval [lo, hi] on which f changes sign. Each step
// tries the Newton step x − f(x)/f′(x) from the current iterate; the step is
// accepted only when it lands strictly inside the interval and, unless the
// function is near its root, when the interval shrank by at least half over
// the previous step. Otherwise the step bisects. Every evaluation replaces
// one end of the interval, so the iteration can never leave the bracket and
// converges at least as fast as bisection; near a simple root it converges
// quadratically like Newton's method. A derivative that is zero, NaN or
// infinite only forces bisection, so a wrong or missing derivative slows the
// solver down but never breaks it.
//
// Iteration stops when f(x) is exactly zero, when the last accepted step or
// the interval width is at most Tol·|x| (plus the smallest normal number,
// so that roots at zero terminate), or when MaxIter evaluations are spent,
// which is reported as ErrNoConvergence.
//
// References:
//
//	W. H. Press, S. A. Teukolsky, W. T. Vetterling, B. P. Flannery,
//	Numerical Recipes: The Art of Scientific Computing, 3rd ed., Cambridge
//	University Press, 2007, §9.4 (Newton–Raphson using derivative, with
//	bisection safeguard).
//	J. E. Dennis, R. B. Schnabel, Numerical Methods for Unconstrained
//	Optimization and Nonlinear Equations, SIAM, 1996, §2.5 (hybrid
//	methods for one nonlinear equation).
type RootFinder struct {
	// Tol is the relative tolerance on the root. Zero means 1e-14; values
	// below 4·ε (machine epsilon) are raised to 4·ε.
	Tol float64
	// MaxIter bounds the number of function evaluations after the two at
	// the bracket ends. Zero means 200, enough to bisect any bracket of
	// finite doubles down to the tolerance.
	MaxIter int
}

// DefaultRootTol is the relative tolerance a zero RootFinder uses.
const DefaultRootTol = 1e-14

const defaultRootMaxIter = 200

// Solve returns x in [a, b] with f(x) = 0, where f returns the function
// value and its derivative. f(a) and f(b) must have opposite signs (or one
// of them be zero); otherwise the error wraps ErrNoBracket. f may return ±Inf
// values (their sign is used); a NaN value is an error wrapping
// ErrNoConvergence. a and b may be given in either order.
//
// Solve does not retain f, so a closure passed to it need not escape to
// the heap.
func (r RootFinder) Solve(f func(x float64) (y, dydx float64), a, b float64) (float64, error) {
	tol := r.Tol
	if tol == 0 {
		tol = DefaultRootTol
	}
	if tol < 4*epsilon {
		tol = 4 * epsilon
	}
	maxIter := r.MaxIter
	if maxIter <= 0 {
		maxIter = defaultRootMaxIter
	}
	if math.IsNaN(a) || math.IsNaN(b) || math.IsInf(a, 0) || math.IsInf(b, 0) {
		return math.NaN(), fmt.Errorf("%w: bracket [%g, %g] is not finite", ErrNoBracket, a, b)
	}
	if a > b {
		a, b = b, a
	}
	fa, _ := f(a)
	if fa == 0 {
		return a, nil
	}
	fb, _ := f(b)
	if fb == 0 {
		return b, nil
	}
	if math.IsNaN(fa) || math.IsNaN(fb) {
		return math.NaN(), fmt.Errorf("%w: f is NaN at a bracket end (f(%g) = %g, f(%g) = %g)", ErrNoBracket, a, fa, b, fb)
	}
	if (fa > 0) == (fb > 0) {
		return math.NaN(), fmt.Errorf("%w: f(%g) = %g and f(%g) = %g have the same sign", ErrNoBracket, a, fa, b, fb)
	}
	// Orient so that f(lo) < 0 < f(hi); lo may be above hi.
	lo, hi := a, b
	if fa > 0 {
		lo, hi = b, a
	}
	x := 0.5 * (a + b)
	// Start from the secant point when both values are finite: for the
	// nearly linear curves of this package it is much closer than the
	// midpoint.
	if !math.IsInf(fa, 0) && !math.IsInf(fb, 0) {
		s := a - fa*(b-a)/(fb-fa)
		if s > a && s < b {
			x = s
		}
	}
	dxOld := math.Abs(b - a)
	dx := dxOld
	for range maxIter {
		fx, dfx := f(x)
		if fx == 0 {
			return x, nil
		}
		if math.IsNaN(fx) {
			return x, fmt.Errorf("%w: f(%g) is NaN", ErrNoConvergence, x)
		}
		if fx < 0 {
			lo = x
		} else {
			hi = x
		}
		small := tol*math.Abs(x) + math.SmallestNonzeroFloat64*(1<<52)
		if math.Abs(hi-lo) <= small {
			return x, nil
		}
		// Newton step, accepted only inside the open bracket and when
		// it shrinks fast enough.
		newton := math.NaN()
		if !math.IsInf(fx, 0) && dfx != 0 && !math.IsNaN(dfx) && !math.IsInf(dfx, 0) {
			newton = x - fx/dfx
		}
		inside := newton > math.Min(lo, hi) && newton < math.Max(lo, hi)
		if inside && math.Abs(fx/dfx) <= 0.5*dxOld {
			dxOld = dx
			dx = math.Abs(newton - x)
			x = newton
			if dx <= small {
				// One more evaluation would not move x beyond
				// the tolerance.
				return x, nil
			}
			continue
		}
		dxOld = dx
		mid := 0.5 * (lo + hi)
		dx = math.Abs(mid - x)
		x = mid
	}
	return x, fmt.Errorf("%w: %d iterations left the bracket at [%g, %g]", ErrNoConvergence, maxIter, math.Min(lo, hi), math.Max(lo, hi))
}

// epsilon is the machine epsilon of float64, 2⁻⁵².
const epsilon = 1.0 / (1 << 52)
