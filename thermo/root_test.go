package thermo

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestRootFinder checks the solver on functions with known roots, including
// wrong or missing derivatives, which must only slow it down.
func TestRootFinder(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		f    func(x float64) (float64, float64)
		a, b float64
		want float64
	}{
		{"linear", func(x float64) (float64, float64) { return 2*x - 3, 2 }, 0, 10, 1.5},
		{"reversed bracket", func(x float64) (float64, float64) { return 2*x - 3, 2 }, 10, 0, 1.5},
		{"decreasing", func(x float64) (float64, float64) { return 3 - 2*x, -2 }, 0, 10, 1.5},
		{"cubic", func(x float64) (float64, float64) { return x*x*x - 2, 3 * x * x }, 0, 2, math.Cbrt(2)},
		{"sqrt 2 no derivative", func(x float64) (float64, float64) { return x*x - 2, 0 }, 0, 2, math.Sqrt2},
		{"wrong derivative", func(x float64) (float64, float64) { return x*x - 2, -1e9 }, 0, 2, math.Sqrt2},
		{"NaN derivative", func(x float64) (float64, float64) { return x*x - 2, math.NaN() }, 0, 2, math.Sqrt2},
		{"root at lower end", func(x float64) (float64, float64) { return x - 1, 1 }, 1, 2, 1},
		{"root at upper end", func(x float64) (float64, float64) { return x - 2, 1 }, 1, 2, 2},
		{"steep exponential", func(x float64) (float64, float64) { return math.Exp(50*x) - 1e10, 50 * math.Exp(50*x) }, 0, 1, math.Log(1e10) / 50},
		{"flat near root (x^5)", func(x float64) (float64, float64) { return math.Pow(x-0.3, 5), 5 * math.Pow(x-0.3, 4) }, 0, 1, 0.3},
		{"infinite end value", func(x float64) (float64, float64) {
			if x <= 0 {
				return math.Inf(-1), math.NaN()
			}
			return math.Log(x), 1 / x
		}, 0, 10, 1},
		{"root at zero", func(x float64) (float64, float64) { return math.Sin(x), math.Cos(x) }, -1, 0.5, 0},
		{"triple root at zero", func(x float64) (float64, float64) { return -x * x * x, -3 * x * x }, -49, 143, 0},
		{"root near underflow", func(x float64) (float64, float64) { return x + 1e-300, 1 }, -6, 0, -1e-300},
		// Newton halves x at every step towards this root far below
		// the bracket's scale (FuzzRoot regression).
		{"nearly double root near underflow", func(x float64) (float64, float64) {
			return (27*x-57)*x*x + 2e-301, (81*x - 114) * x
		}, 2, 0, math.Sqrt(2e-301 / 57)},
		{"large scale", func(x float64) (float64, float64) { return x - 6.3e9, 1 }, 1e9, 2e10, 6.3e9},
		{"vapour-like ln P", func(T float64) (float64, float64) { return 20 - 5000/T - math.Log(1e5), 5000 / (T * T) }, 200, 700, 5000 / (20 - math.Log(1e5))},
	} {
		got, err := RootFinder{}.Solve(tc.f, tc.a, tc.b)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		// Default tolerance 1e-14 relative; the quintic's root is
		// only determined to (1e-16)^(1/5) by its values.
		tol := 1e-13
		if tc.name == "flat near root (x^5)" {
			tol = 1e-3
		}
		if !scalar.EqualWithinAbsOrRel(got, tc.want, 1e-305, tol) {
			t.Errorf("%s: root %.17g, want %.17g", tc.name, got, tc.want)
		}
	}
}

// TestRootFinderErrors checks the sentinel errors.
func TestRootFinderErrors(t *testing.T) {
	t.Parallel()
	sq := func(x float64) (float64, float64) { return x*x + 1, 2 * x }
	if _, err := (RootFinder{}).Solve(sq, -1, 1); !errors.Is(err, ErrNoBracket) {
		t.Errorf("no sign change: %v, want ErrNoBracket", err)
	}
	lin := func(x float64) (float64, float64) { return x, 1 }
	for _, ab := range [][2]float64{{math.NaN(), 1}, {-1, math.Inf(1)}} {
		if _, err := (RootFinder{}).Solve(lin, ab[0], ab[1]); !errors.Is(err, ErrNoBracket) {
			t.Errorf("bracket %v: %v, want ErrNoBracket", ab, err)
		}
	}
	nan := func(x float64) (float64, float64) {
		if x > -0.5 && x < 0.9 {
			return math.NaN(), 0
		}
		return x, 1
	}
	if _, err := (RootFinder{}).Solve(nan, -1, 1); !errors.Is(err, ErrNoConvergence) {
		t.Errorf("NaN inside: %v, want ErrNoConvergence", err)
	}
	nanEnd := func(x float64) (float64, float64) { return math.NaN(), 0 }
	if _, err := (RootFinder{}).Solve(nanEnd, -1, 1); !errors.Is(err, ErrNoBracket) {
		t.Errorf("NaN at ends: %v, want ErrNoBracket", err)
	}
	// Too few iterations for bisection on a function without derivative.
	slow := func(x float64) (float64, float64) { return x*x*x - 0.3, 0 }
	if _, err := (RootFinder{MaxIter: 5}).Solve(slow, 0, 1); !errors.Is(err, ErrNoConvergence) {
		t.Errorf("MaxIter 5: %v, want ErrNoConvergence", err)
	}
	// A loose tolerance is honoured.
	x, err := RootFinder{Tol: 1e-3}.Solve(slow, 0, 1)
	if err != nil || math.Abs(x-math.Cbrt(0.3)) > 2e-3 {
		t.Errorf("Tol 1e-3: %g, %v", x, err)
	}
}

// FuzzRoot checks, for random cubics with a sign change on the bracket,
// that the solver returns a point inside the bracket where the cubic
// vanishes to within the tolerance the bracket allows.
func FuzzRoot(f *testing.F) {
	f.Add(1.0, 0.0, -2.0, 0.0, 0.0, 2.0)
	f.Add(-1.0, 3.0, 0.5, -0.1, -10.0, 10.0)
	f.Add(1e-3, 0.0, 0.0, -1e-9, 0.0, 1.0)
	f.Add(5.0, -5.0, 1.0, 0.0, -1e3, 1e3)
	f.Add(0.0, 0.0, 1.0, 1e-300, -1.0, 1.0)
	f.Add(0.0, 0.0, 1.0, 1e-300, -6.0, 0.0)   // root near the underflow limit, bracket ending at 0
	f.Add(-68.0, 0.0, 0.0, 0.0, -49.0, 143.0) // triple root at 0: Newton converges only linearly
	f.Fuzz(func(t *testing.T, c3, c2, c1, c0, a, b float64) {
		for _, v := range []float64{c3, c2, c1, c0, a, b} {
			if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > 1e6 {
				return
			}
		}
		p := func(x float64) (float64, float64) {
			return ((c3*x+c2)*x+c1)*x + c0, (3*c3*x+2*c2)*x + c1
		}
		fa, _ := p(a)
		fb, _ := p(b)
		x, err := RootFinder{}.Solve(p, a, b)
		if (fa > 0 && fb > 0) || (fa < 0 && fb < 0) {
			if !errors.Is(err, ErrNoBracket) {
				t.Fatalf("same signs f(%g)=%g, f(%g)=%g: got %g, %v", a, fa, b, fb, x, err)
			}
			return
		}
		if err != nil {
			t.Fatalf("bracket [%g, %g] with f = %g, %g: %v", a, b, fa, fb, err)
		}
		if x < math.Min(a, b) || x > math.Max(a, b) {
			t.Fatalf("root %g outside [%g, %g]", x, a, b)
		}
		// The returned x is within Tol·|x| of a sign change of the
		// computed polynomial: check that a slightly wider interval
		// around x brackets it.
		h := 1e-13*math.Abs(x) + 1e-300
		lo, hi := math.Max(math.Min(a, b), x-h), math.Min(math.Max(a, b), x+h)
		fl, _ := p(lo)
		fh, _ := p(hi)
		fx, _ := p(x)
		if fx != 0 && fl != 0 && fh != 0 && (fl > 0) == (fh > 0) {
			// Rounding of the polynomial near a multiple root can
			// hide the change; accept a value at rounding level.
			scale := math.Abs(c3*x*x*x) + math.Abs(c2*x*x) + math.Abs(c1*x) + math.Abs(c0)
			if math.Abs(fx) > 1e-9*scale {
				t.Fatalf("x = %.17g: f = %g, no sign change in [%g, %g] (f = %g, %g)", x, fx, lo, hi, fl, fh)
			}
		}
	})
}
