package thermo

import "math"

// Closed-form correlations for the tests of curves, tables and phase
// location; they do not depend on the registered families.

// tstExpCorr is ln(P/P0) = −b·(1/T − 1/T0): a vapour-like curve (b > 0).
type tstExpCorr struct {
	t0, p0, b float64
	r         Range
}

func newTstExp(t0, p0, b, tmin, tmax float64) *tstExpCorr {
	c := &tstExpCorr{t0: t0, p0: p0, b: b}
	c.r = Range{Tmin: tmin, Tmax: tmax}
	c.r.Pmin, c.r.Pmax = c.eval(tmin), c.eval(tmax)
	if c.r.Pmin > c.r.Pmax {
		c.r.Pmin, c.r.Pmax = c.r.Pmax, c.r.Pmin
	}
	return c
}

func (c *tstExpCorr) eval(t float64) float64 { return c.p0 * math.Exp(-c.b*(1/t-1/c.t0)) }

func (c *tstExpCorr) PressureSlopeBeyond(t float64) (float64, float64, error) {
	if err := CheckTemperature(t, Range{Tmin: 0, Tmax: math.Inf(1)}); err != nil {
		return 0, 0, err
	}
	p := c.eval(t)
	return p, p * c.b / (t * t), nil
}

func (c *tstExpCorr) TemperatureBeyond(p float64) (float64, error) {
	if err := CheckPressure(p, Range{Pmin: 0, Pmax: math.Inf(1)}); err != nil {
		return 0, err
	}
	return 1 / (1/c.t0 - math.Log(p/c.p0)/c.b), nil
}

func (c *tstExpCorr) PressureSlope(t float64) (float64, float64, error) {
	if err := CheckTemperature(t, c.r); err != nil {
		return 0, 0, err
	}
	return c.PressureSlopeBeyond(t)
}

func (c *tstExpCorr) Pressure(t float64) (float64, error) {
	p, _, err := c.PressureSlope(t)
	return p, err
}

func (c *tstExpCorr) Slope(t float64) (float64, error) {
	_, d, err := c.PressureSlope(t)
	return d, err
}

func (c *tstExpCorr) Temperature(p float64) (float64, error) {
	if err := CheckPressure(p, c.r); err != nil {
		return 0, err
	}
	return c.TemperatureBeyond(p)
}

func (c *tstExpCorr) Range() Range { return c.r }

// tstLinCorr is P = P0 + k·(T − T0): a melting-like line of either slope.
type tstLinCorr struct {
	t0, p0, k float64
	r         Range
}

func newTstLin(t0, p0, k, tmin, tmax float64) *tstLinCorr {
	c := &tstLinCorr{t0: t0, p0: p0, k: k}
	c.r = Range{Tmin: tmin, Tmax: tmax}
	c.r.Pmin, c.r.Pmax = c.eval(tmin), c.eval(tmax)
	if c.r.Pmin > c.r.Pmax {
		c.r.Pmin, c.r.Pmax = c.r.Pmax, c.r.Pmin
	}
	return c
}

func (c *tstLinCorr) eval(t float64) float64 { return c.p0 + c.k*(t-c.t0) }

func (c *tstLinCorr) PressureSlopeBeyond(t float64) (float64, float64, error) {
	if err := CheckTemperature(t, Range{Tmin: 0, Tmax: math.Inf(1)}); err != nil {
		return 0, 0, err
	}
	return c.eval(t), c.k, nil
}

func (c *tstLinCorr) TemperatureBeyond(p float64) (float64, error) {
	if err := CheckPressure(p, Range{Pmin: 0, Pmax: math.Inf(1)}); err != nil {
		return 0, err
	}
	return c.t0 + (p-c.p0)/c.k, nil
}

func (c *tstLinCorr) PressureSlope(t float64) (float64, float64, error) {
	if err := CheckTemperature(t, c.r); err != nil {
		return 0, 0, err
	}
	return c.PressureSlopeBeyond(t)
}

func (c *tstLinCorr) Pressure(t float64) (float64, error) {
	p, _, err := c.PressureSlope(t)
	return p, err
}

func (c *tstLinCorr) Slope(t float64) (float64, error) {
	_, d, err := c.PressureSlope(t)
	return d, err
}

func (c *tstLinCorr) Temperature(p float64) (float64, error) {
	if err := CheckPressure(p, c.r); err != nil {
		return 0, err
	}
	return c.TemperatureBeyond(p)
}

func (c *tstLinCorr) Range() Range { return c.r }

var (
	_ Correlation  = (*tstExpCorr)(nil)
	_ Extrapolator = (*tstExpCorr)(nil)
	_ Correlation  = (*tstLinCorr)(nil)
	_ Extrapolator = (*tstLinCorr)(nil)
)
