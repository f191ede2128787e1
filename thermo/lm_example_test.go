package thermo_test

import (
	"fmt"
	"math"

	"github.com/phasebound/phasebound/thermo"
)

// Fitting y = a·exp(−k·t) + c to exact data: the solver returns the
// generating parameters and says why it stopped.
func ExampleLevenbergMarquardt() {
	ts := []float64{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	ys := make([]float64, len(ts))
	for i, t := range ts {
		ys[i] = 5*math.Exp(-0.3*t) + 1
	}
	problem := thermo.LeastSquares{
		M: len(ts), N: 3,
		Residuals: func(r, x []float64) error {
			for i, t := range ts {
				r[i] = x[0]*math.Exp(-x[1]*t) + x[2] - ys[i]
			}
			return nil
		},
		// Jacobian nil: central differences.
	}
	res, err := thermo.LevenbergMarquardt(problem, []float64{1, 1, 0}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("a = %.6f, k = %.6f, c = %.6f, S < 1e-20: %v\n", res.X[0], res.X[1], res.X[2], res.SSR < 1e-20)
	// Output:
	// a = 5.000000, k = 0.300000, c = 1.000000, S < 1e-20: true
}
