package thermo

import (
	"fmt"
	"math"
)

// The families Fit supports: how each is parameterised, started and
// evaluated with its gradient. The formulas are the catalog families'
// (family_*.go); Fit re-evaluates every result through the registered
// family, so a mismatch would show in the reported deviations.

var fitters = map[string]fitter{
	"clausius-clapeyron": {shape: increasing, allowed: []string{"t0", "p0", "delta_h"}, setup: setupClausiusClapeyron},
	"clapeyron-linear":   {shape: monotone, allowed: []string{"t0", "p0", "delta_h", "delta_v", "linearized"}, setup: setupClapeyronLinear},
	"simon-glatzel":      {shape: monotone, allowed: []string{"t0", "p0", "a", "c"}, setup: setupSimonGlatzel},
	"antoine":            {shape: increasing, allowed: []string{"a", "b", "c"}, setup: setupAntoine},
	"extended-antoine":   {shape: increasing, allowed: []string{"a", "b", "c", "d", "e"}, setup: setupExtendedAntoine},
	"wagner":             {shape: increasing, allowed: []string{"t_ref", "p_ref", "a", "e"}, setup: reducedWagner.setup},
	"power-sum":          {shape: anyShape, allowed: []string{"t_ref", "p_ref", "a", "b"}, setup: reducedPowerSum.setup},
	"log-power-sum":      {shape: anyShape, allowed: []string{"t_ref", "p_ref", "a", "b"}, setup: reducedLogPowerSum.setup},
	"shifted-power-sum":  {shape: anyShape, allowed: []string{"t_ref", "p_ref", "a", "b"}, setup: reducedShiftedPowerSum.setup},
	"inverse-log-power-sum": {shape: anyShape, allowed: []string{"t_ref", "p_ref", "a", "b"},
		setup: reducedInverseLogPowerSum.setup},
}

// vecModel holds a family's fittable parameters as one vector, some of
// them fixed.
type vecModel struct {
	family string
	names  []string
	start  []float64
	fixed  []bool
	// p returns P(T) for the full vector and, when g is not nil, ∂P/∂all.
	// It returns NaN outside the formula's domain.
	p     func(all []float64, t float64, g []float64) float64
	build func(all []float64) Params
}

// fix marks the scalar parameter name fixed when fx gives it.
func (v *vecModel) fix(fx Params, name string) error {
	val, ok := fx[name]
	if !ok {
		return nil
	}
	if len(val) != 1 {
		return fmt.Errorf("%w: %s: fixed %q must be a single number, got %d values", ErrBadParam, v.family, name, len(val))
	}
	for k, n := range v.names {
		if n == name {
			v.start[k], v.fixed[k] = val[0], true
		}
	}
	return nil
}

// fixList marks the list parameter name ("a" for a[0], a[1], ...) fixed
// when fx gives it; its length must be k.
func (v *vecModel) fixList(fx Params, name string, k int) error {
	val, ok := fx[name]
	if !ok {
		return nil
	}
	if len(val) != k {
		return fmt.Errorf("%w: %s: fixed %q has %d values but the fit has %d terms", ErrBadParam, v.family, name, len(val), k)
	}
	for i, x := range val {
		for j, n := range v.names {
			if n == fmt.Sprintf("%s[%d]", name, i) {
				v.start[j], v.fixed[j] = x, true
			}
		}
	}
	return nil
}

// model turns the vector model into the solver's view of the free
// parameters.
func (v *vecModel) model() (*fitModel, error) {
	var free []int
	for k := range v.names {
		if !v.fixed[k] {
			free = append(free, k)
		}
	}
	if len(free) == 0 {
		return nil, fmt.Errorf("%w: %s: every parameter is fixed; nothing to fit", ErrBadParam, v.family)
	}
	all := append([]float64(nil), v.start...)
	gAll := make([]float64, len(all))
	m := &fitModel{}
	for _, k := range free {
		m.names = append(m.names, v.names[k])
		m.x0 = append(m.x0, v.start[k])
	}
	fill := func(x []float64) {
		for j, k := range free {
			all[k] = x[j]
		}
	}
	m.pressure = func(x []float64, t float64, grad []float64) float64 {
		fill(x)
		if grad == nil {
			return v.p(all, t, nil)
		}
		p := v.p(all, t, gAll)
		for j, k := range free {
			grad[j] = gAll[k]
		}
		return p
	}
	m.params = func(x []float64) Params {
		fill(x)
		return v.build(all)
	}
	return m, nil
}

// fixedPositive returns the fixed scalar name, or def when absent; it must
// be > 0.
func fixedPositive(fx Params, family, name, unit string, def float64) (float64, error) {
	if _, ok := fx[name]; !ok {
		return def, nil
	}
	v, err := fx.Scalar(name)
	if err != nil {
		return 0, fmt.Errorf("%s: %w", family, err)
	}
	if v <= 0 {
		return 0, fmt.Errorf("%w: %s: fixed %s = %g %s must be > 0", ErrBadParam, family, name, v, unit)
	}
	return v, nil
}

// lsStart is weightedLS that returns zeros (and no error) when there are
// fewer points than unknowns: Fit reports that case with the family's own
// message right after setup.
func lsStart(cols [][]float64, y, w []float64) ([]float64, float64, error) {
	if len(y) < len(cols) {
		return make([]float64, len(cols)), math.Inf(1), nil
	}
	return weightedLS(cols, y, w)
}

func setupClausiusClapeyron(fx Params, _ FitOptions, d *fitData) (*fitModel, error) {
	const family = "clausius-clapeyron"
	t0, err := fixedPositive(fx, family, "t0", "K", d.medianT())
	if err != nil {
		return nil, err
	}
	c, _, err := lsStart([][]float64{ones(d), column(d, func(t float64) float64 { return 1/t - 1/t0 })}, logP(d), d.w)
	if err != nil {
		return nil, fmt.Errorf("%s: starting values: %w", family, err)
	}
	v := &vecModel{family: family, names: []string{"p0", "delta_h"}, start: []float64{math.Exp(c[0]), -R * c[1]}, fixed: make([]bool, 2),
		p: func(all []float64, t float64, g []float64) float64 {
			x := 1/t - 1/t0
			p := all[0] * math.Exp(-all[1]/R*x)
			if g != nil {
				g[0], g[1] = p/all[0], -p*x/R
			}
			return p
		},
		build: func(all []float64) Params {
			return Params{"t0": {t0}, "p0": {all[0]}, "delta_h": {all[1]}}
		},
	}
	if v.start[0] == 0 {
		v.start[0] = d.p[d.order[0]]
	}
	for _, n := range v.names {
		if err := v.fix(fx, n); err != nil {
			return nil, err
		}
	}
	return v.model()
}

func setupClapeyronLinear(fx Params, _ FitOptions, d *fitData) (*fitModel, error) {
	const family = "clapeyron-linear"
	t0, err := fixedPositive(fx, family, "t0", "K", d.medianT())
	if err != nil {
		return nil, err
	}
	linear := false
	if _, ok := fx["linearized"]; ok {
		l, err := fx.Scalar("linearized")
		if err != nil {
			return nil, fmt.Errorf("%s: %w", family, err)
		}
		if l != 0 && l != 1 {
			return nil, fmt.Errorf("%w: %s: linearized = %g must be 0 (logarithmic form) or 1 (straight line)", ErrBadParam, family, l)
		}
		linear = l == 1
	}
	_, hasH := fx["delta_h"]
	_, hasV := fx["delta_v"]
	if !hasH && !hasV {
		return nil, fmt.Errorf("%w: %s: the data determine only the ratio ΔH/ΔV; fix delta_v (the volume change, m³/mol) or delta_h (J/mol)", ErrMissingParam, family)
	}
	g := func(t float64) float64 { return math.Log(t / t0) }
	if linear {
		g = func(t float64) float64 { return (t - t0) / t0 }
	}
	c, _, err := lsStart([][]float64{ones(d), column(d, g)}, d.p, relWeights(d))
	if err != nil {
		return nil, fmt.Errorf("%s: starting values: %w", family, err)
	}
	p0, k := c[0], c[1]
	dh, dv := 1.0, 1.0
	if hasV {
		if dv, err = fx.Scalar("delta_v"); err != nil {
			return nil, fmt.Errorf("%s: %w", family, err)
		}
		dh = k * dv
	} else {
		if dh, err = fx.Scalar("delta_h"); err != nil {
			return nil, fmt.Errorf("%s: %w", family, err)
		}
		if k != 0 {
			dv = dh / k
		}
	}
	v := &vecModel{family: family, names: []string{"p0", "delta_h", "delta_v"}, start: []float64{p0, dh, dv}, fixed: make([]bool, 3),
		p: func(all []float64, t float64, gr []float64) float64 {
			x := g(t)
			if gr != nil {
				gr[0], gr[1], gr[2] = 1, x/all[2], -all[1]*x/(all[2]*all[2])
			}
			return all[0] + all[1]/all[2]*x
		},
		build: func(all []float64) Params {
			p := Params{"t0": {t0}, "p0": {all[0]}, "delta_h": {all[1]}, "delta_v": {all[2]}}
			if l, ok := fx["linearized"]; ok {
				p["linearized"] = append([]float64(nil), l...)
			}
			return p
		},
	}
	for _, n := range v.names {
		if err := v.fix(fx, n); err != nil {
			return nil, err
		}
	}
	return v.model()
}

func setupSimonGlatzel(fx Params, _ FitOptions, d *fitData) (*fitModel, error) {
	const family = "simon-glatzel"
	t0, err := fixedPositive(fx, family, "t0", "K", d.tmin())
	if err != nil {
		return nil, err
	}
	p0Fixed, hasP0 := 0.0, false
	if _, ok := fx["p0"]; ok {
		if p0Fixed, err = fx.Scalar("p0"); err != nil {
			return nil, fmt.Errorf("%s: %w", family, err)
		}
		hasP0 = true
	}
	w := relWeights(d)
	best := math.Inf(1)
	start := []float64{d.p[d.order[0]], 1, 1}
	y := d.p
	if hasP0 {
		y = make([]float64, len(d.p))
		for i, p := range d.p {
			y[i] = p - p0Fixed
		}
	}
	for _, c := range signedLogGrid(0.05, 200, 90) {
		phi := column(d, func(t float64) float64 { return math.Pow(t/t0, c) - 1 })
		cols := [][]float64{ones(d), phi}
		if hasP0 {
			cols = cols[1:]
		}
		u, ssr, err := lsStart(cols, y, w)
		if err != nil || ssr >= best {
			continue
		}
		best = ssr
		if hasP0 {
			start = []float64{p0Fixed, u[0], c}
		} else {
			start = []float64{u[0], u[1], c}
		}
	}
	v := &vecModel{family: family, names: []string{"p0", "a", "c"}, start: start, fixed: make([]bool, 3),
		p: func(all []float64, t float64, g []float64) float64 {
			th := t / t0
			tc := math.Pow(th, all[2])
			if g != nil {
				g[0], g[1], g[2] = 1, tc-1, all[1]*tc*math.Log(th)
			}
			return all[0] + all[1]*(tc-1)
		},
		build: func(all []float64) Params {
			return Params{"t0": {t0}, "p0": {all[0]}, "a": {all[1]}, "c": {all[2]}}
		},
	}
	for _, n := range v.names {
		if err := v.fix(fx, n); err != nil {
			return nil, err
		}
	}
	return v.model()
}

func setupAntoine(fx Params, _ FitOptions, d *fitData) (*fitModel, error) {
	const family = "antoine"
	start := []float64{10, 1000, 0}
	if len(d.t) >= 3 {
		a, b, c, err := startAntoine(d)
		if err != nil {
			return nil, err
		}
		start = []float64{a, b, c}
	}
	v := &vecModel{family: family, names: []string{"a", "b", "c"}, start: start, fixed: make([]bool, 3),
		p: func(all []float64, t float64, g []float64) float64 {
			u := t + all[2]
			if u <= 0 {
				return math.NaN()
			}
			p := math.Pow(10, all[0]-all[1]/u)
			if g != nil {
				q := p * math.Ln10
				g[0], g[1], g[2] = q, -q/u, q*all[1]/(u*u)
			}
			return p
		},
		build: func(all []float64) Params {
			return Params{"a": {all[0]}, "b": {all[1]}, "c": {all[2]}}
		},
	}
	for _, n := range v.names {
		if err := v.fix(fx, n); err != nil {
			return nil, err
		}
	}
	return v.model()
}

func setupExtendedAntoine(fx Params, _ FitOptions, d *fitData) (*fitModel, error) {
	const family = "extended-antoine"
	grid := []float64{-3, -2, -1, -0.5, 0.5, 1, 1.5, 2, 2.5, 3, 4, 5, 6, 8}
	if _, ok := fx["e"]; ok {
		e, err := fx.Scalar("e")
		if err != nil {
			return nil, fmt.Errorf("%s: %w", family, err)
		}
		grid = []float64{e}
	}
	y := logP(d)
	best := math.Inf(1)
	start := []float64{0, 0, 0, 0, grid[0]}
	for _, e := range grid {
		cols := [][]float64{ones(d), column(d, func(t float64) float64 { return 1 / t }),
			column(d, math.Log), column(d, func(t float64) float64 { return math.Pow(t, e) })}
		u, ssr, err := lsStart(cols, y, d.w)
		if err != nil || !(ssr < best) {
			continue
		}
		best = ssr
		start = []float64{u[0], u[1], u[2], u[3], e}
	}
	v := &vecModel{family: family, names: []string{"a", "b", "c", "d", "e"}, start: start, fixed: make([]bool, 5),
		p: func(all []float64, t float64, g []float64) float64 {
			lt := math.Log(t)
			te := math.Exp(all[4] * lt)
			p := math.Exp(all[0] + all[1]/t + all[2]*lt + all[3]*te)
			if g != nil {
				g[0], g[1], g[2], g[3], g[4] = p, p/t, p*lt, p*te, p*all[3]*te*lt
			}
			return p
		},
		build: func(all []float64) Params {
			return Params{"a": {all[0]}, "b": {all[1]}, "c": {all[2]}, "d": {all[3]}, "e": {all[4]}}
		},
	}
	for _, n := range v.names {
		if err := v.fix(fx, n); err != nil {
			return nil, err
		}
	}
	return v.model()
}

// reducedForm is one of the reduced-sum families: ln(P/P*) or P/P* − 1
// equals Σ aᵢ·φ(θ, bᵢ), θ = T/T*.
type reducedForm struct {
	family  string
	logForm bool   // ln(P/P*) is the sum; otherwise P/P* − 1
	expName string // "b", or "e" for wagner
	// basis returns φ(θ, b) and ∂φ/∂b (NaN outside the domain).
	basis func(theta, b float64) (phi, dphi float64)
	// grid is the exponent scan for a single fitted term; nil means the
	// exponents must be given.
	grid []float64
	// domain reports whether data at θ can be fitted, with why not.
	domain func(theta float64, exps []float64, fitted bool) (bool, string)
}

func powBasis(theta, b float64) (float64, float64) {
	l := math.Log(theta)
	return math.Expm1(b * l), math.Exp(b*l) * l
}

var (
	reducedPowerSum = reducedForm{family: "power-sum", expName: "b", basis: powBasis,
		grid: signedLogGrid(0.1, 200, 60)}
	reducedLogPowerSum = reducedForm{family: "log-power-sum", logForm: true, expName: "b", basis: powBasis,
		grid: signedLogGrid(0.1, 60, 60)}
	reducedInverseLogPowerSum = reducedForm{family: "inverse-log-power-sum", logForm: true, expName: "b",
		basis: func(theta, b float64) (float64, float64) {
			f := math.Pow(theta, b-1)
			return f, f * math.Log(theta)
		},
		grid: []float64{-4, -3, -2, -1.5, -1, -0.5, 0, 0.5, 1.5, 2, 2.5, 3, 4, 5}}
	reducedShiftedPowerSum = reducedForm{family: "shifted-power-sum", expName: "b",
		basis: func(theta, b float64) (float64, float64) {
			x := theta - 1
			f := math.Pow(x, b)
			if x == 0 {
				return f, 0
			}
			return f, f * math.Log(x)
		},
		grid: logGrid(0.3, 10, 60),
		domain: func(theta float64, exps []float64, fitted bool) (bool, string) {
			if theta >= 1 {
				return true, ""
			}
			if fitted {
				return false, "lies below t_ref, where (T/T* − 1)^b is undefined for a fitted (non-integer) exponent"
			}
			for _, b := range exps {
				if b != math.Trunc(b) {
					return false, "lies below t_ref, where (T/T* − 1)^b is undefined for non-integer b"
				}
			}
			return true, ""
		}}
	reducedWagner = reducedForm{family: "wagner", logForm: true, expName: "e",
		basis: func(theta, e float64) (float64, float64) {
			tau := 1 - theta
			if tau == 0 {
				return 0, 0
			}
			f := math.Pow(tau, e) / theta
			return f, f * math.Log(tau)
		},
		domain: func(theta float64, _ []float64, _ bool) (bool, string) {
			if theta <= 1 {
				return true, ""
			}
			return false, "lies above t_ref, where τ = 1 − T/T_ref < 0 and the Wagner form is undefined"
		}}
)

func (r reducedForm) setup(fx Params, opt FitOptions, d *fitData) (*fitModel, error) {
	tr, err := fixedPositive(fx, r.family, "t_ref", "K", 0)
	if err != nil {
		return nil, err
	}
	pr, err := fixedPositive(fx, r.family, "p_ref", "Pa", 0)
	if err != nil {
		return nil, err
	}
	if tr == 0 || pr == 0 {
		return nil, fmt.Errorf("%w: %s: fix t_ref and p_ref, the reference point the form is reduced by (a triple point, or the critical point for wagner)",
			ErrMissingParam, r.family)
	}
	exps, given := fx[r.expName]
	fitted := opt.FitExponents || !given
	if given && len(exps) == 0 {
		return nil, fmt.Errorf("%w: %s: fixed %q is empty", ErrBadParam, r.family, r.expName)
	}
	if !given && r.grid == nil {
		return nil, fmt.Errorf("%w: %s: give the exponents %q (fixed; the coefficients a are fitted), e.g. 1, 1.5, 3, 3.5, 4, 7.5",
			ErrMissingParam, r.family, r.expName)
	}
	if r.domain != nil {
		for i, t := range d.t {
			if ok, why := r.domain(t/tr, exps, fitted); !ok {
				return nil, &FitDataError{Row: i + 1, Reason: fmt.Sprintf("temperature %g K %s (t_ref = %g K)", t, why, tr)}
			}
		}
	}
	theta := column(d, func(t float64) float64 { return t / tr })
	y := make([]float64, len(d.p))
	w := d.w
	if r.logForm {
		for i, p := range d.p {
			y[i] = math.Log(p / pr)
		}
	} else {
		w = make([]float64, len(d.p))
		for i, p := range d.p {
			y[i] = p/pr - 1
			w[i] = d.w[i] * (pr / p) * (pr / p)
		}
	}
	solveA := func(bs []float64) ([]float64, float64, error) {
		cols := make([][]float64, len(bs))
		for j, b := range bs {
			cols[j] = make([]float64, len(theta))
			for i, th := range theta {
				cols[j][i], _ = r.basis(th, b)
			}
		}
		return lsStart(cols, y, w)
	}
	var bs, as []float64
	if given {
		bs = append([]float64(nil), exps...)
		if as, _, err = solveA(bs); err != nil {
			return nil, fmt.Errorf("%s: starting values: %w", r.family, err)
		}
	} else {
		best := math.Inf(1)
		for _, b := range r.grid {
			a, ssr, err := solveA([]float64{b})
			if err == nil && ssr < best {
				best, as, bs = ssr, a, []float64{b}
			}
		}
		if as == nil {
			return nil, fmt.Errorf("%w: %s: no starting exponent found", ErrNoConvergence, r.family)
		}
	}
	k := len(bs)
	v := &vecModel{family: r.family, start: append(append([]float64(nil), as...), bs...), fixed: make([]bool, 2*k)}
	for i := range k {
		v.names = append(v.names, fmt.Sprintf("a[%d]", i))
	}
	for i := range k {
		v.names = append(v.names, fmt.Sprintf("%s[%d]", r.expName, i))
		v.fixed[k+i] = !fitted
	}
	v.p = func(all []float64, t float64, g []float64) float64 {
		th := t / tr
		s := 0.0
		for i := range k {
			phi, dphi := r.basis(th, all[k+i])
			s += all[i] * phi
			if g != nil {
				g[i], g[k+i] = phi, all[i]*dphi
			}
		}
		scale := pr // ∂P/∂s
		p := pr * (1 + s)
		if r.logForm {
			p = pr * math.Exp(s)
			scale = p
		}
		if g != nil {
			for i := range g {
				g[i] *= scale
			}
		}
		return p
	}
	v.build = func(all []float64) Params {
		return Params{"t_ref": {tr}, "p_ref": {pr},
			"a": append([]float64(nil), all[:k]...), r.expName: append([]float64(nil), all[k:]...)}
	}
	if err := v.fixList(fx, "a", k); err != nil {
		return nil, err
	}
	return v.model()
}
