package thermo

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// rosenbrock is Rosenbrock's function as residuals: r = (10(x₂ − x₁²), 1 − x₁),
// minimum S = 0 at (1, 1).
func rosenbrock(analytic bool) LeastSquares {
	p := LeastSquares{M: 2, N: 2, Residuals: func(r, x []float64) error {
		r[0] = 10 * (x[1] - x[0]*x[0])
		r[1] = 1 - x[0]
		return nil
	}}
	if analytic {
		p.Jacobian = func(j *mat.Dense, x []float64) error {
			j.Set(0, 0, -20*x[0])
			j.Set(0, 1, 10)
			j.Set(1, 0, -1)
			j.Set(1, 1, 0)
			return nil
		}
	}
	return p
}

// Moré, Garbow & Hillstrom (1981), problem 10 (Meyer): data of a
// thermistor's resistance against temperature, y = x₁·exp(x₂/(t + x₃)).
var meyerY = []float64{34780, 28610, 23650, 19630, 16370, 13720, 11540, 9744, 8261, 7030, 6005, 5147, 4427, 3820, 3307, 2872}

func meyer() LeastSquares {
	return LeastSquares{M: 16, N: 3, Residuals: func(r, x []float64) error {
		for i, y := range meyerY {
			t := 45 + 5*float64(i+1)
			r[i] = x[0]*math.Exp(x[1]/(t+x[2])) - y
		}
		return nil
	}}
}

func TestLevenbergMarquardt(t *testing.T) {
	t.Parallel()
	decayT := make([]float64, 21)
	for i := range decayT {
		decayT[i] = float64(i)
	}
	tests := []struct {
		name    string
		p       LeastSquares
		x0      []float64
		want    []float64 // nil: only SSR is checked
		wantSSR float64
		tolX    float64
		tolSSR  float64 // absolute when wantSSR = 0, else relative
	}{
		{"Rosenbrock analytic", rosenbrock(true), []float64{-1.2, 1}, []float64{1, 1}, 0, 1e-10, 1e-20},    // Moré, Garbow & Hillstrom (1981), problem 1: minimum 0 at (1, 1)
		{"Rosenbrock differences", rosenbrock(false), []float64{-1.2, 1}, []float64{1, 1}, 0, 1e-8, 1e-16}, // Moré, Garbow & Hillstrom (1981), problem 1
		{"exponential decay", LeastSquares{M: 21, N: 3, Residuals: func(r, x []float64) error {
			for i, tt := range decayT {
				r[i] = x[0]*math.Exp(-x[1]*tt) + x[2] - (5*math.Exp(-0.3*tt) + 1)
			}
			return nil
		}}, []float64{1, 1, 0}, []float64{5, 0.3, 1}, 0, 1e-9, 1e-20},
		{"Powell singular", LeastSquares{M: 4, N: 4, Residuals: func(r, x []float64) error {
			r[0] = x[0] + 10*x[1]
			r[1] = math.Sqrt(5) * (x[2] - x[3])
			r[2] = (x[1] - 2*x[2]) * (x[1] - 2*x[2])
			r[3] = math.Sqrt(10) * (x[0] - x[3]) * (x[0] - x[3])
			return nil
		}}, []float64{3, -1, 0, 1}, []float64{0, 0, 0, 0}, 0, 1e-4, 1e-16}, // Moré, Garbow & Hillstrom (1981), problem 13: minimum 0 at the origin, singular Jacobian there
		{"Meyer", meyer(), []float64{0.02, 4000, 250}, nil, 87.9458, 0, 1e-5}, // Moré, Garbow & Hillstrom (1981), problem 10: minimum S = 87.9458 (from memory)
	}
	for _, tc := range tests {
		res, err := LevenbergMarquardt(tc.p, tc.x0, nil)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		for j, w := range tc.want {
			if !scalar.EqualWithinAbsOrRel(res.X[j], w, tc.tolX, tc.tolX) {
				t.Errorf("%s: x[%d] = %.12g, want %g (status %v after %d iterations)", tc.name, j, res.X[j], w, res.Status, res.Iterations)
			}
		}
		if tc.wantSSR == 0 && res.SSR > tc.tolSSR || tc.wantSSR != 0 && !scalar.EqualWithinRel(res.SSR, tc.wantSSR, tc.tolSSR) {
			t.Errorf("%s: S = %.10g, want %g", tc.name, res.SSR, tc.wantSSR)
		}
		if r, c := res.Jacobian.Dims(); r != tc.p.M || c != tc.p.N {
			t.Errorf("%s: Jacobian %d×%d", tc.name, r, c)
		}
	}
}

func TestLevenbergMarquardtMeyerSolution(t *testing.T) {
	t.Parallel()
	res, err := LevenbergMarquardt(meyer(), []float64{0.02, 4000, 250}, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{5.6096e-3, 6181.35, 345.224} // Moré, Garbow & Hillstrom (1981), problem 10, minimiser (from memory)
	for j := range want {
		if !scalar.EqualWithinRel(res.X[j], want[j], 1e-4) {
			t.Errorf("x[%d] = %.8g, want %g", j, res.X[j], want[j])
		}
	}
}

func TestLevenbergMarquardtErrors(t *testing.T) {
	t.Parallel()
	abort := errors.New("abort")
	calls := 0
	failing := LeastSquares{M: 2, N: 2, Residuals: func(r, x []float64) error {
		calls++
		if calls > 3 {
			return abort
		}
		return rosenbrock(false).Residuals(r, x)
	}}
	if _, err := LevenbergMarquardt(failing, []float64{-1.2, 1}, nil); !errors.Is(err, abort) {
		t.Errorf("callback error: %v", err)
	}
	nanStart := LeastSquares{M: 1, N: 1, Residuals: func(r, x []float64) error { r[0] = math.Log(x[0]); return nil }}
	if _, err := LevenbergMarquardt(nanStart, []float64{-1}, nil); !errors.Is(err, ErrBadParam) {
		t.Errorf("NaN at start: %v", err)
	}
	for _, tc := range []struct {
		name string
		p    LeastSquares
		x0   []float64
	}{
		{"M < N", LeastSquares{M: 1, N: 2, Residuals: rosenbrock(false).Residuals}, []float64{0, 0}},
		{"N = 0", LeastSquares{M: 1, N: 0, Residuals: rosenbrock(false).Residuals}, nil},
		{"x0 length", rosenbrock(false), []float64{0}},
		{"x0 NaN", rosenbrock(false), []float64{math.NaN(), 0}},
		{"no residuals", LeastSquares{M: 2, N: 2}, []float64{0, 0}},
	} {
		if _, err := LevenbergMarquardt(tc.p, tc.x0, nil); !errors.Is(err, ErrBadParam) {
			t.Errorf("%s: %v", tc.name, err)
		}
	}
	res, err := LevenbergMarquardt(meyer(), []float64{0.02, 4000, 250}, &LMSettings{MaxIterations: 3})
	if !errors.Is(err, ErrNoConvergence) || res == nil || res.Status != LMIterations {
		t.Errorf("iteration limit: %v, %+v", err, res)
	}
	// Residuals that go non-finite away from the start: the solver must
	// reject those steps and still converge. ln(x) residual with target at
	// x = 1e-3 from x = 10: a full Gauss–Newton step overshoots below 0.
	logp := LeastSquares{M: 1, N: 1, Residuals: func(r, x []float64) error { r[0] = math.Log(x[0]) - math.Log(1e-3); return nil }}
	res, err = LevenbergMarquardt(logp, []float64{10}, &LMSettings{InitialDamping: 1e-9})
	if err != nil || !scalar.EqualWithinRel(res.X[0], 1e-3, 1e-9) {
		t.Errorf("non-finite trial points: %v, x = %v", err, res)
	}
	for s, want := range map[LMStatus]string{LMGradient: "gradient", LMStep: "step", LMCost: "cost", LMZero: "zero residual", LMStalled: "stalled", LMIterations: "iteration limit", 0: "LMStatus(0)"} {
		if s.String() != want {
			t.Errorf("%d: %q", int(s), s.String())
		}
	}
}

var lmSink float64

func BenchmarkLevenbergMarquardtMeyer(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		res, _ := LevenbergMarquardt(meyer(), []float64{0.02, 4000, 250}, nil)
		lmSink += res.SSR
	}
}
