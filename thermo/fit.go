package thermo

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// Fitting a curve family to measured (T, P) points.
//
// Fit minimises the weighted sum of squared relative deviations
//
//	S = Σᵢ wᵢ·(P_fit(Tᵢ)/Pᵢ − 1)²
//
// (the trade's usual objective: it treats a 1 % miss at 600 Pa like one at
// 20 MPa) with LevenbergMarquardt, from starting values found by linearised
// fits (ln P against 1/T, the three-parameter Antoine linearisation,
// ordinary least squares for every form linear in its coefficients, and a
// one-dimensional scan for the exponent of the Simon–Glatzel form). It
// reports the parameters ready for the catalog, standard errors and
// correlations from the Jacobian at the solution (covariance
// σ²·(JᵀJ)⁻¹, σ² = S/(n − p)), the relative deviation at every point, and
// warnings when the data do not determine a parameter or the curve misses
// them by more than 100 %.
//
// The fitted parameters, per family (everything else is fixed and passed in
// FitOptions.Fixed; names as in the catalog):
//
//	clapeyron-linear       p0 and one of delta_h, delta_v (the data determine
//	                       only ΔH/ΔV: the other must be fixed); t0 fixed
//	                       (default: the median data temperature); optional
//	                       linearized (0/1) fixed
//	clausius-clapeyron     p0, delta_h; t0 fixed (default: median temperature)
//	simon-glatzel          p0, a, c; t0 fixed (default: lowest data temperature);
//	                       p0 may be fixed too (the triple-point pressure)
//	antoine                a, b, c (log10 P/Pa, T in K)
//	extended-antoine       a, b, c, d and e; e is fixed when given
//	wagner                 a (list); t_ref, p_ref and the exponents e fixed
//	power-sum,             a (list); t_ref, p_ref fixed; exponents b fixed
//	log-power-sum,         when given, fitted too with FitExponents (the given
//	shifted-power-sum,     values are the start); when b is absent, one term
//	inverse-log-power-sum  is fitted with its exponent, started from a scan
//
// Any fitted parameter may be fixed instead by giving it in Fixed.
//
// The fitted validity range is the data's temperature range unless
// FitOptions widens it explicitly. A fit is only as good as the data and
// the form: use it within its range, and not as a substitute for design
// codes.

// FitPoint is one measured point.
type FitPoint struct {
	Temperature float64 // K, > 0
	Pressure    float64 // Pa, > 0
	// Weight multiplies the squared relative deviation; 0 means 1 (so
	// the zero value weighs every point alike); negative is an error.
	Weight float64
}

// FitOptions tunes Fit. The zero value fits with the family's defaults.
type FitOptions struct {
	// Fixed holds parameters that are not fitted: reference points
	// (t0, t_ref, p_ref), exponents, or any fitted parameter the caller
	// wants held.
	Fixed Params
	// FitExponents also fits the exponent list of the reduced families
	// (b, or e for wagner), starting from the values given in Fixed.
	FitExponents bool
	// Tmin and Tmax widen the validity range beyond the data (0: the
	// data's range). They may not narrow it.
	Tmin, Tmax float64
	// Solver settings; nil means the defaults.
	Solver *LMSettings
}

// FitResult is the outcome of Fit.
type FitResult struct {
	Family string
	// Params are the complete catalog parameters (fixed and fitted).
	Params Params
	// Names label the fitted parameters ("p0", "a[1]", ...) in the order
	// of Values, StdErr and Correlation.
	Names  []string
	Values []float64
	// StdErr holds the standard errors of the fitted parameters, shaped
	// like Params (a list parameter gets a list); nil when they cannot be
	// estimated (as many points as parameters, a singular Jacobian, or
	// errors beyond floating-point range).
	StdErr Params
	// Correlation is the correlation matrix of the fitted parameters in
	// Names order; nil when StdErr is nil.
	Correlation [][]float64
	// N is the number of points, DOF = N − len(Names).
	N, DOF int
	// RMSRelDev and MaxRelDev are the root-mean-square and the largest
	// absolute relative deviation P_fit/P − 1 (unweighted); MaxRelDevRow is
	// the 1-based data row of the latter.
	RMSRelDev, MaxRelDev float64
	MaxRelDevRow         int
	// Residuals are the relative deviations P_fit/P − 1, in data order.
	Residuals []float64
	// Tmin and Tmax are the validity range (the data's unless widened).
	Tmin, Tmax float64
	// Condition is the condition number of the column-scaled Jacobian
	// (1 is perfect; above about 1e8 the parameters are nearly dependent).
	Condition float64
	// Warnings explain what the data fail to determine.
	Warnings []string
	// Iterations and Status report the solver's work.
	Iterations int
	Status     LMStatus
}

// FitDataError reports a bad data row; Row is 1-based (0 when the problem
// is not one row's, e.g. too few points).
type FitDataError struct {
	Row    int
	Reason string
}

func (e *FitDataError) Error() string {
	if e.Row > 0 {
		return fmt.Sprintf("thermo: fit data row %d: %s", e.Row, e.Reason)
	}
	return "thermo: fit data: " + e.Reason
}

// FitFamilies returns the families Fit supports, sorted.
func FitFamilies() []string {
	names := make([]string, 0, len(fitters))
	for n := range fitters {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// fitData is the validated data, in the caller's order.
type fitData struct {
	t, p, w []float64
	order   []int // indices sorted by temperature
}

func (d *fitData) tmin() float64 { return d.t[d.order[0]] }
func (d *fitData) tmax() float64 { return d.t[d.order[len(d.order)-1]] }

// medianT returns the temperature of the median data point.
func (d *fitData) medianT() float64 { return d.t[d.order[(len(d.order)-1)/2]] }

// monotony says what a family requires of P(T).
type monotony int

const (
	anyShape   monotony = iota // no requirement
	monotone                   // strictly monotonic, either direction
	increasing                 // strictly increasing (vapour pressure)
)

// fitModel is one family's problem, ready for the solver.
type fitModel struct {
	names []string
	x0    []float64
	// pressure returns P(T) at x and, when grad is not nil, ∂P/∂x.
	pressure func(x []float64, t float64, grad []float64) float64
	// params returns the complete catalog parameters for x.
	params func(x []float64) Params
}

// fitter describes how a family is fitted.
type fitter struct {
	shape   monotony
	allowed []string // parameter names the family knows
	setup   func(fx Params, opt FitOptions, d *fitData) (*fitModel, error)
}

// Fit fits family to data; see the comment at the top of this file for
// what is fitted and how. Bad data give a *FitDataError naming the
// 1-based row; unknown families and bad fixed parameters give errors
// wrapping ErrUnknownFamily and ErrBadParam or ErrMissingParam; a solver
// that does not converge gives an error wrapping ErrNoConvergence.
func Fit(family string, data []FitPoint, opt FitOptions) (*FitResult, error) {
	ft, ok := fitters[family]
	if !ok {
		return nil, fmt.Errorf("%w %q for fitting (valid: %s)", ErrUnknownFamily, family, strings.Join(FitFamilies(), ", "))
	}
	for name, v := range opt.Fixed {
		if !slices.Contains(ft.allowed, name) {
			return nil, fmt.Errorf("%w: %s has no parameter %q to fix (parameters: %s)", ErrBadParam, family, name, strings.Join(ft.allowed, ", "))
		}
		for i, x := range v {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, fmt.Errorf("%w: fixed %s[%d] is %v", ErrBadParam, name, i, x)
			}
		}
	}
	d, err := checkFitData(data, ft.shape, family)
	if err != nil {
		return nil, err
	}
	m, err := ft.setup(opt.Fixed, opt, d)
	if err != nil {
		return nil, err
	}
	n, np := len(d.t), len(m.names)
	if n < np {
		return nil, &FitDataError{Reason: fmt.Sprintf("too few points: %s fits %d parameters (%s) and needs at least %d data rows, got %d",
			family, np, strings.Join(m.names, ", "), np, n)}
	}
	tmin, tmax := d.tmin(), d.tmax()
	var warnings []string
	if opt.Tmin != 0 {
		if math.IsNaN(opt.Tmin) || opt.Tmin <= 0 || opt.Tmin > tmin {
			return nil, fmt.Errorf("%w: validity t_min %g K may only widen the data range [%g, %g] K (0 < t_min ≤ %g)", ErrBadParam, opt.Tmin, tmin, tmax, tmin)
		}
		if opt.Tmin < tmin {
			warnings = append(warnings, fmt.Sprintf("validity range widened below the data: %g K < %g K (extrapolation, unverified)", opt.Tmin, tmin))
		}
		tmin = opt.Tmin
	}
	if opt.Tmax != 0 {
		if math.IsNaN(opt.Tmax) || math.IsInf(opt.Tmax, 0) || opt.Tmax < tmax {
			return nil, fmt.Errorf("%w: validity t_max %g K may only widen the data range [%g, %g] K (t_max ≥ %g)", ErrBadParam, opt.Tmax, d.tmin(), tmax, tmax)
		}
		if opt.Tmax > tmax {
			warnings = append(warnings, fmt.Sprintf("validity range widened above the data: %g K > %g K (extrapolation, unverified)", opt.Tmax, tmax))
		}
		tmax = opt.Tmax
	}
	if tmin == tmax {
		return nil, &FitDataError{Reason: fmt.Sprintf("all points lie at one temperature, %g K", tmin)}
	}

	sw := make([]float64, n)
	for i := range sw {
		sw[i] = math.Sqrt(d.w[i])
	}
	grad := make([]float64, np)
	problem := LeastSquares{M: n, N: np,
		Residuals: func(r, x []float64) error {
			for i := range r {
				r[i] = sw[i] * (m.pressure(x, d.t[i], nil)/d.p[i] - 1)
			}
			return nil
		},
		Jacobian: func(j *mat.Dense, x []float64) error {
			for i := range n {
				m.pressure(x, d.t[i], grad)
				for k, g := range grad {
					j.Set(i, k, sw[i]*g/d.p[i])
				}
			}
			return nil
		},
	}
	settings := opt.Solver
	if settings == nil {
		settings = &LMSettings{MaxIterations: 2000}
	}
	sol, err := LevenbergMarquardt(problem, m.x0, settings)
	if err != nil {
		return nil, fmt.Errorf("thermo: fitting %s: %w", family, err)
	}
	res := &FitResult{
		Family: family, Params: m.params(sol.X), Names: m.names, Values: sol.X,
		N: n, DOF: n - np, Tmin: tmin, Tmax: tmax,
		Iterations: sol.Iterations, Status: sol.Status, Warnings: warnings,
	}
	// Evaluate through the registered family: the result must be servable
	// as it stands, and the deviations are the catalog's, not the model's.
	fam, err := GetFamily(family)
	if err != nil {
		return nil, err
	}
	corr, err := fam.New(res.Params, tmin, tmax)
	if err != nil {
		return nil, fmt.Errorf("thermo: the fitted %s parameters are not a valid curve over [%g, %g] K (the form does not describe these data there: fix a parameter at a known value, e.g. p0 at a triple point, choose another family, or add data): %w",
			family, tmin, tmax, err)
	}
	res.Residuals = make([]float64, n)
	for i := range n {
		pf, err := corr.Pressure(d.t[i])
		if err != nil {
			return nil, fmt.Errorf("thermo: the fitted %s curve fails at data row %d: %w", family, i+1, err)
		}
		dev := pf/d.p[i] - 1
		if math.IsNaN(dev) || math.IsInf(dev, 0) {
			return nil, fmt.Errorf("thermo: the fitted %s curve gives %g Pa at data row %d (%g K, %g Pa): the relative deviation is not a finite number; the form does not describe these data",
				family, pf, i+1, d.t[i], d.p[i])
		}
		res.Residuals[i] = dev
		if a := math.Abs(dev); a > res.MaxRelDev || res.MaxRelDevRow == 0 {
			res.MaxRelDev, res.MaxRelDevRow = a, i+1
		}
	}
	// The weights the solver used may be tiny, so its finite weighted sum
	// says nothing about the unweighted one: a sum of squares of
	// deviations above 1e154 overflows.
	res.RMSRelDev = rms(res.Residuals)
	if res.MaxRelDev > 1 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("the fitted curve misses data row %d by %.3g %% (relative deviation above 100 %%): the %s form does not describe these data; check the data, fix a parameter at a known value, or choose another family",
			res.MaxRelDevRow, 100*res.MaxRelDev, family))
	}
	res.statistics(sol, m)
	return res, nil
}

// rms returns the root mean square of xs (finite, not empty) without
// overflow or underflow in the squares.
func rms(xs []float64) float64 {
	scale := 0.0
	for _, x := range xs {
		scale = math.Max(scale, math.Abs(x))
	}
	if scale == 0 {
		return 0
	}
	ss := 0.0
	for _, x := range xs {
		ss += (x / scale) * (x / scale)
	}
	return scale * math.Sqrt(ss/float64(len(xs)))
}

// statistics fills StdErr, Correlation, Condition and the warnings from
// the Jacobian at the solution.
func (res *FitResult) statistics(sol *LMResult, m *fitModel) {
	n, np := sol.Jacobian.Dims()
	// Column scaling: the condition number and the dependence of the
	// parameters should not depend on their units.
	scale := make([]float64, np)
	js := mat.NewDense(n, np, nil)
	for k := 0; k < np; k++ {
		col := mat.Col(nil, k, sol.Jacobian)
		norm := 0.0
		for _, v := range col {
			norm += v * v
		}
		norm = math.Sqrt(norm)
		scale[k] = norm
		if norm == 0 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("the data do not determine %s: the deviations do not depend on it", m.names[k]))
			res.Condition = math.Inf(1)
			continue
		}
		for i := range n {
			js.Set(i, k, col[i]/norm)
		}
	}
	if math.IsInf(res.Condition, 1) {
		return
	}
	var svd mat.SVD
	if !svd.Factorize(js, mat.SVDThin) {
		res.Warnings = append(res.Warnings, "the Jacobian could not be factorised; no standard errors")
		return
	}
	sv := svd.Values(nil)
	smax, smin := sv[0], sv[len(sv)-1]
	res.Condition = smax / smin
	if smin <= 1e-13*smax {
		var v mat.Dense
		svd.VTo(&v)
		var involved []string
		for k := 0; k < np; k++ {
			if math.Abs(v.At(k, np-1)) > 0.1 {
				involved = append(involved, m.names[k])
			}
		}
		res.Condition = math.Inf(1)
		res.Warnings = append(res.Warnings, fmt.Sprintf("the data do not determine %s separately (singular Jacobian); fix one of them or add data", strings.Join(involved, ", ")))
		return
	}
	if res.Condition > 1e8 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("ill-conditioned fit (condition number %.3g): the parameters are nearly dependent and their values individually uncertain", res.Condition))
	}
	if res.DOF == 0 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("as many points as parameters (%d): the curve interpolates the data; no standard errors", np))
		return
	}
	// (JᵀJ)⁻¹ = S⁻¹·V·Σ⁻²·Vᵀ·S⁻¹ with S the column scaling.
	var v mat.Dense
	svd.VTo(&v)
	sigma2 := sol.SSR / float64(res.DOF)
	cov := make([][]float64, np)
	for a := range np {
		cov[a] = make([]float64, np)
		for b := range np {
			s := 0.0
			for k := range np {
				s += v.At(a, k) * v.At(b, k) / (sv[k] * sv[k])
			}
			cov[a][b] = sigma2 * s / (scale[a] * scale[b])
		}
	}
	se := make([]float64, np)
	for a := range np {
		se[a] = math.Sqrt(cov[a][a])
		if math.IsInf(se[a], 0) || math.IsNaN(se[a]) {
			// Deviations or sensitivities beyond floating-point range
			// (data of wildly different magnitudes): no honest number.
			res.Warnings = append(res.Warnings, fmt.Sprintf("the standard error of %s is beyond floating-point range; no standard errors (the fit says nothing about its parameters' uncertainty)", m.names[a]))
			return
		}
	}
	res.Correlation = make([][]float64, np)
	for a := range np {
		res.Correlation[a] = make([]float64, np)
		for b := range np {
			if a == b {
				res.Correlation[a][b] = 1
			} else if se[a] > 0 && se[b] > 0 {
				res.Correlation[a][b] = max(-1, min(1, cov[a][b]/(se[a]*se[b])))
			}
		}
	}
	res.StdErr = Params{}
	for k, name := range m.names {
		base, idx := splitParamName(name)
		if idx < 0 {
			res.StdErr[base] = []float64{se[k]}
		} else {
			full := res.Params[base]
			if res.StdErr[base] == nil {
				res.StdErr[base] = make([]float64, len(full))
			}
			res.StdErr[base][idx] = se[k]
		}
		if x := res.Values[k]; se[k] > math.Abs(x) {
			res.Warnings = append(res.Warnings, fmt.Sprintf("the data do not determine %s: its standard error %.3g exceeds its value %.6g", name, se[k], x))
		}
	}
	for a := range np {
		for b := a + 1; b < np; b++ {
			if math.Abs(res.Correlation[a][b]) > 0.9999 {
				res.Warnings = append(res.Warnings, fmt.Sprintf("%s and %s are almost fully correlated (%.6f): the data determine mainly a combination of them",
					m.names[a], m.names[b], res.Correlation[a][b]))
			}
		}
	}
}

// splitParamName splits "a[2]" into ("a", 2) and "p0" into ("p0", -1).
func splitParamName(s string) (string, int) {
	i := strings.IndexByte(s, '[')
	if i < 0 || !strings.HasSuffix(s, "]") {
		return s, -1
	}
	var k int
	if _, err := fmt.Sscanf(s[i+1:len(s)-1], "%d", &k); err != nil {
		return s, -1
	}
	return s[:i], k
}

// checkFitData validates the points and sorts them by temperature.
func checkFitData(data []FitPoint, shape monotony, family string) (*fitData, error) {
	if len(data) == 0 {
		return nil, &FitDataError{Reason: "no data points"}
	}
	d := &fitData{t: make([]float64, len(data)), p: make([]float64, len(data)), w: make([]float64, len(data))}
	for i, pt := range data {
		row := i + 1
		switch t := pt.Temperature; {
		case math.IsNaN(t) || math.IsInf(t, 0):
			return nil, &FitDataError{Row: row, Reason: fmt.Sprintf("temperature %v K is not a finite number", t)}
		case t <= 0:
			return nil, &FitDataError{Row: row, Reason: fmt.Sprintf("temperature %g K must be > 0 K", t)}
		}
		switch p := pt.Pressure; {
		case math.IsNaN(p) || math.IsInf(p, 0):
			return nil, &FitDataError{Row: row, Reason: fmt.Sprintf("pressure %v Pa is not a finite number", p)}
		case p <= 0:
			return nil, &FitDataError{Row: row, Reason: fmt.Sprintf("pressure %g Pa must be > 0 Pa", p)}
		}
		w := pt.Weight
		switch {
		case math.IsNaN(w) || math.IsInf(w, 0) || w < 0:
			return nil, &FitDataError{Row: row, Reason: fmt.Sprintf("weight %v must be a finite number ≥ 0 (0 means 1)", w)}
		case w == 0:
			w = 1
		}
		d.t[i], d.p[i], d.w[i] = pt.Temperature, pt.Pressure, w
	}
	d.order = make([]int, len(data))
	for i := range d.order {
		d.order[i] = i
	}
	sort.SliceStable(d.order, func(a, b int) bool { return d.t[d.order[a]] < d.t[d.order[b]] })
	for k := 1; k < len(d.order); k++ {
		i, j := d.order[k-1], d.order[k]
		if d.t[i] == d.t[j] {
			a, b := min(i, j)+1, max(i, j)+1
			return nil, &FitDataError{Row: b, Reason: fmt.Sprintf("temperature %g K repeats row %d; a curve has one pressure per temperature (average repeated measurements, or drop one)", d.t[j], a)}
		}
	}
	if shape == anyShape || len(d.order) < 2 {
		return d, nil
	}
	dir := 1.0
	if shape == monotone && d.p[d.order[len(d.order)-1]] < d.p[d.order[0]] {
		dir = -1
	}
	for k := 1; k < len(d.order); k++ {
		i, j := d.order[k-1], d.order[k]
		if (d.p[j]-d.p[i])*dir <= 0 {
			what := "rises"
			if dir < 0 {
				what = "falls"
			}
			why := "the " + family + " form is monotonic and the data's overall trend " + what
			if shape == increasing {
				why = "a vapour-pressure curve rises with temperature"
			}
			return nil, &FitDataError{Row: j + 1, Reason: fmt.Sprintf("pressure %g Pa at %g K does not continue the trend of row %d (%g Pa at %g K): %s; check the row or the column order",
				d.p[j], d.t[j], i+1, d.p[i], d.t[i], why)}
		}
	}
	return d, nil
}
