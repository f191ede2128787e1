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
// accepted only when it lands strictly inside the interval and is at most
// half the step before it. Otherwise the step bisects. Every third step, if
// the interval has not halved (counted in doubles) and the Newton steps
// relative to x have not shrunk eightfold, the step bisects regardless.
// Every evaluation replaces one end of the interval, so the iteration can
// never leave the bracket and converges at least as fast as bisection; near
// a simple root it converges quadratically like Newton's method. A
// derivative that is zero, NaN or infinite only forces bisection, so a wrong
// or missing derivative slows the solver down but never breaks it.
//
// Iteration stops when f(x) is exactly zero, when the last accepted step or
// the interval width is at most Tol·|x|, when the interval holds no double
// besides its ends, or when MaxIter evaluations are spent,
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
	// the bracket ends. Zero means 200, enough for the worst case of the
	// forced bisections (3 × 64) on any bracket of finite doubles.
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
	// Bracket size and relative step when last checked.
	ref, relRef := span(a, b), relStep(dx, x)
	for i := range maxIter {
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
		l, h := math.Min(lo, hi), math.Max(lo, hi)
		n := span(l, h)
		if h-l <= tol*math.Abs(x) || n <= 1 {
			return x, nil
		}
		// Every third step: when the bracket has not halved and the
		// steps relative to x are not shrinking fast (Newton converging
		// linearly, as at a multiple root), bisect. The steps are
		// judged relative to x because the tolerance is: Newton
		// walking towards a root far below the bracket's scale (a
		// double root at 1e-151 seen from 0.05) halves its absolute
		// step every iteration yet gains no relative accuracy.
		force := false
		if i%3 == 2 {
			rel := relStep(dx, x)
			force = n > ref/2 && !(rel <= relRef/8)
			ref, relRef = n, rel
		}
		// Newton step, accepted only inside the open bracket and when
		// it shrinks fast enough.
		if !force && !math.IsInf(fx, 0) && dfx != 0 && !math.IsNaN(dfx) && !math.IsInf(dfx, 0) {
			step := fx / dfx
			newton := x - step
			if newton > l && newton < h && math.Abs(step) <= 0.5*dxOld {
				dxOld = dx
				dx = math.Abs(step)
				x = newton
				if dx <= tol*math.Abs(x) {
					// One more evaluation would not move x
					// beyond the tolerance.
					return x, nil
				}
				continue
			}
		}
		dxOld = dx
		mid := bisect(l, h)
		dx = math.Abs(mid - x)
		x = mid
	}
	return x, fmt.Errorf("%w: %d iterations left the bracket at [%g, %g]", ErrNoConvergence, maxIter, math.Min(lo, hi), math.Max(lo, hi))
}

// relStep returns the step dx relative to the iterate x it led to; +Inf
// when x is zero.
func relStep(dx, x float64) float64 {
	if x == 0 {
		return math.Inf(1)
	}
	return dx / math.Abs(x)
}

// bisect returns the midpoint of a and b (a ≠ b) in the ordered bit
// patterns of the doubles, which splits the doubles between them in half.
// For a bracket within one binade this is the arithmetic midpoint; a bracket
// spanning many orders of magnitude, or straddling zero, still shrinks to
// adjacent doubles in at most 64 steps instead of the ~2000 halvings
// arithmetic bisection would take to reach a root near the underflow limit.
func bisect(a, b float64) float64 {
	if a > b {
		a, b = b, a
	}
	ka, kb := orderedBits(a), orderedBits(b)
	m := fromOrderedBits(ka/2 + kb/2 + (ka%2+kb%2)/2)
	if m <= a || m >= b {
		return 0.5 * (a + b)
	}
	return m
}

// span counts the doubles from a to b, a ≤ b.
func span(a, b float64) uint64 {
	return uint64(orderedBits(b)) - uint64(orderedBits(a))
}

// orderedBits maps a float64 to an int64 whose order is the float's order
// (−0 and +0 both map to 0).
func orderedBits(x float64) int64 {
	u := int64(math.Float64bits(math.Abs(x)))
	if math.Signbit(x) {
		return -u
	}
	return u
}

// fromOrderedBits inverts orderedBits.
func fromOrderedBits(k int64) float64 {
	if k < 0 {
		return -math.Float64frombits(uint64(-k))
	}
	return math.Float64frombits(uint64(k))
}

// epsilon is the machine epsilon of float64, 2⁻⁵².
const epsilon = 1.0 / (1 << 52)
