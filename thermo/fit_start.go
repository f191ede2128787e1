package thermo

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Starting values for Fit: linearised fits and one-dimensional scans.
// Every nonlinear form Fit supports is linear in all but at most one of its
// parameters once the data are transformed (ln P against 1/T for the
// Clausius–Clapeyron form, the three-parameter Antoine linearisation
// T·log10 P = A·T − C·log10 P + (A·C − B), P/P* − 1 or ln(P/P*) against the
// basis functions of the reduced sums); the remaining exponent (Simon–Glatzel
// c, extended-Antoine E, a single fitted power) is scanned over a grid with
// the linear parameters solved at each grid point, and the best point
// starts Levenberg–Marquardt.

// weightedLS solves min Σᵢ wᵢ·(yᵢ − Σⱼ cⱼ·colsⱼ[i])² by SVD with the columns
// scaled to unit norm, and returns c and the minimum.
func weightedLS(cols [][]float64, y, w []float64) ([]float64, float64, error) {
	n, k := len(y), len(cols)
	if k == 0 || n < k {
		return nil, 0, fmt.Errorf("%w: linear least squares with %d unknowns and %d points", ErrBadParam, k, n)
	}
	a := mat.NewDense(n, k, nil)
	b := mat.NewVecDense(n, nil)
	scale := make([]float64, k)
	for j, col := range cols {
		s := 0.0
		for i, v := range col {
			s += w[i] * v * v
		}
		s = math.Sqrt(s)
		if s == 0 || math.IsNaN(s) || math.IsInf(s, 0) {
			return nil, 0, fmt.Errorf("%w: basis column %d is zero or not finite", ErrBadParam, j)
		}
		scale[j] = s
		for i, v := range col {
			a.Set(i, j, math.Sqrt(w[i])*v/s)
		}
	}
	for i := range y {
		b.SetVec(i, math.Sqrt(w[i])*y[i])
	}
	// SVD with a relative rank cut: a singular basis (two equal exponents,
	// say) still gives the minimum-norm start, and the statistics at the
	// solution report the dependence.
	var svd mat.SVD
	if !svd.Factorize(a, mat.SVDThin) {
		return nil, 0, fmt.Errorf("%w: linearised fit: SVD failed", ErrBadParam)
	}
	rank := svd.Rank(1e-13)
	if rank == 0 {
		return nil, 0, fmt.Errorf("%w: linearised fit: zero basis", ErrBadParam)
	}
	var cm mat.Dense
	svd.SolveTo(&cm, b, rank)
	c := mat.NewVecDense(k, nil)
	for j := 0; j < k; j++ {
		c.SetVec(j, cm.At(j, 0))
	}
	out := make([]float64, k)
	for j := range out {
		out[j] = c.AtVec(j) / scale[j]
	}
	ssr := 0.0
	for i := range y {
		r := y[i]
		for j := range cols {
			r -= out[j] * cols[j][i]
		}
		ssr += w[i] * r * r
	}
	return out, ssr, nil
}

// logGrid returns n points from lo to hi (both > 0) spaced evenly in ln.
func logGrid(lo, hi float64, n int) []float64 {
	g := make([]float64, n)
	for i := range g {
		g[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return g
}

// signedLogGrid returns logGrid(lo, hi, n) and its negatives.
func signedLogGrid(lo, hi float64, n int) []float64 {
	g := logGrid(lo, hi, n)
	for _, v := range logGrid(lo, hi, n) {
		g = append(g, -v)
	}
	return g
}

// relWeights returns wᵢ/Pᵢ², which turns absolute residuals in P into
// relative ones.
func relWeights(d *fitData) []float64 {
	w := make([]float64, len(d.p))
	for i := range w {
		w[i] = d.w[i] / (d.p[i] * d.p[i])
	}
	return w
}

// column returns f(Tᵢ) over the data.
func column(d *fitData, f func(t float64) float64) []float64 {
	c := make([]float64, len(d.t))
	for i, t := range d.t {
		c[i] = f(t)
	}
	return c
}

// logP returns ln Pᵢ over the data.
func logP(d *fitData) []float64 {
	y := make([]float64, len(d.p))
	for i, p := range d.p {
		y[i] = math.Log(p)
	}
	return y
}

// ones returns a column of ones over the data.
func ones(d *fitData) []float64 { return column(d, func(float64) float64 { return 1 }) }

// startAntoine returns the best of the three-parameter linearisation and a
// scan over C, judged by the weighted relative sum of squares.
func startAntoine(d *fitData) (a, b, c float64, err error) {
	logp := make([]float64, len(d.p))
	for i, p := range d.p {
		logp[i] = math.Log10(p)
	}
	tmin := d.tmin()
	best := math.Inf(1)
	try := func(aa, bb, cc float64) {
		if math.IsNaN(aa+bb+cc) || tmin+cc <= 0 {
			return
		}
		s := 0.0
		for i, t := range d.t {
			r := math.Pow(10, aa-bb/(t+cc))/d.p[i] - 1
			s += d.w[i] * r * r
		}
		if s < best {
			best, a, b, c = s, aa, bb, cc
		}
	}
	// T·y = A·T − C·y + (A·C − B)
	ty := make([]float64, len(d.t))
	negY := make([]float64, len(d.t))
	for i, t := range d.t {
		ty[i] = t * logp[i]
		negY[i] = -logp[i]
	}
	if u, _, err := weightedLS([][]float64{d.t, negY, ones(d)}, ty, d.w); err == nil {
		try(u[0], u[0]*u[1]-u[2], u[1])
	}
	// Scan C with A and B linear: y = A − B/(T + C).
	for k := 0; k <= 240; k++ {
		cc := -0.98*tmin + float64(k)/240*(0.98*tmin+2*d.tmax())
		inv := column(d, func(t float64) float64 { return -1 / (t + cc) })
		if u, _, err := weightedLS([][]float64{ones(d), inv}, logp, d.w); err == nil {
			try(u[0], u[1], cc)
		}
	}
	if math.IsInf(best, 1) {
		return 0, 0, 0, fmt.Errorf("%w: antoine: no starting values found; are the data a vapour-pressure curve in K and Pa?", ErrNoConvergence)
	}
	return a, b, c, nil
}
