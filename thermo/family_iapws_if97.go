package thermo

import (
	"fmt"
	"math"
)

// IAPWSIF97Family is the family "iapws-if97": the saturation curve of
// ordinary water (region 4) of the IAPWS Industrial Formulation 1997, with
// its basic equation for P(T) and the algebraically exact backward
// equation for T(P). It takes no parameters.
//
// The basic equation is a quadratic in β and θ,
//
//	β²θ² + n1·β²θ + n2·β² + n3·βθ² + n4·βθ + n5·β + n6·θ² + n7·θ + n8 = 0,
//	β = (P/1 MPa)^(1/4),    θ = T/1 K + n9/(T/1 K − n10),
//
// solved for the pressure,
//
//	P/1 MPa = [ 2C / (−B + (B² − 4AC)^(1/2)) ]⁴,
//	A = θ² + n1·θ + n2,  B = n3·θ² + n4·θ + n5,  C = n6·θ² + n7·θ + n8,
//
// and for the temperature,
//
//	T/1 K = [ n10 + D − ((n10 + D)² − 4(n9 + n10·D))^(1/2) ] / 2,
//	D = 2G / (−F − (F² − 4EG)^(1/2)),
//	E = β² + n3·β + n6,  F = n1·β² + n4·β + n7,  G = n2·β² + n5·β + n8.
//
// The slope follows from implicit differentiation of the quadratic:
//
//	dβ/dθ = −(A′β² + B′β + C′) / (2Aβ + B),  dθ/dT = 1 − n9/(T − n10)²,
//	dP/dT = 4β³·(dβ/dθ)·(dθ/dT) · 1 MPa/K.
//
// Range: 273.15 K ≤ T ≤ 647.096 K (611.213 Pa ≤ P ≤ 22.064 MPa); a
// catalog branch may narrow it but not widen it. The formulation's
// saturation pressure agrees with the scientific formulation IAPWS-95
// within about ±0.025 % over the whole range and much better over most of
// it (from memory); the backward equation is the exact algebraic inverse of
// the basic one, so T(P(T)) returns T to rounding error. Outside the range the
// methods return a *RangeError; Extrapolator continues the formula below
// 273.15 K (subcooled liquid, no claim of accuracy) and refuses T above
// the critical temperature, where no saturation exists.
//
// References:
//
//	IAPWS R7-97(2012), Revised Release on the IAPWS Industrial Formulation
//	1997 for the Thermodynamic Properties of Water and Steam, International
//	Association for the Properties of Water and Steam, Lucerne, 2007
//	(revised 2012), section 8 (region 4), equations 30, 31.
//	W. Wagner et al., "The IAPWS Industrial Formulation 1997 for the
//	Thermodynamic Properties of Water and Steam", J. Eng. Gas Turbines
//	Power 122 (2000) 150–182.
type IAPWSIF97Family struct{}

// Name implements Family.
func (IAPWSIF97Family) Name() string { return "iapws-if97" }

// IF97 region 4 limits: the validity range of the saturation equation.
const (
	IF97Tmin = 273.15   // K, lower end of region 4 (P = 611.213 Pa)
	IF97Tc   = 647.096  // K, critical temperature, upper end of region 4
	IF97Pc   = 22.064e6 // Pa, critical pressure
)

// Coefficients n1…n10 of IAPWS-IF97 region 4, Table 34.
const (
	if97n1  = 0.11670521452767e4
	if97n2  = -0.72421316703206e6
	if97n3  = -0.17073846940092e2
	if97n4  = 0.12020824702470e5
	if97n5  = -0.32325550322333e7
	if97n6  = 0.14915108613530e2
	if97n7  = -0.48232657361591e4
	if97n8  = 0.40511340542057e6
	if97n9  = -0.23855557567849
	if97n10 = 0.65017534844798e3
)

var if97Spec = paramSpec{family: "iapws-if97"}

// New implements Family.
func (f IAPWSIF97Family) New(p Params, tmin, tmax float64) (Correlation, error) {
	name := f.Name()
	if err := if97Spec.check(p); err != nil {
		return nil, err
	}
	if err := checkInterval(name, tmin, tmax); err != nil {
		return nil, err
	}
	if tmin < IF97Tmin || tmax > IF97Tc {
		return nil, fmt.Errorf("%w: %s: range [%g, %g] K must lie within the region 4 range [%g, %g] K",
			ErrBadParam, name, tmin, tmax, IF97Tmin, IF97Tc)
	}
	return asCorrelation(newCurve(name, if97Pressure, if97Temperature, tmin, tmax, 0, IF97Tc))
}

// if97Pressure is IAPWS-IF97 equation 30 with its analytic slope.
func if97Pressure(t float64) (p, dpdt float64) {
	dt := t - if97n10
	th := t + if97n9/dt
	th2 := th * th
	a := th2 + if97n1*th + if97n2
	b := if97n3*th2 + if97n4*th + if97n5
	c := if97n6*th2 + if97n7*th + if97n8
	beta := 2 * c / (-b + math.Sqrt(b*b-4*a*c))
	da := 2*th + if97n1
	db := 2*if97n3*th + if97n4
	dc := 2*if97n6*th + if97n7
	dbeta := -(da*beta*beta + db*beta + dc) / (2*a*beta + b)
	dth := 1 - if97n9/(dt*dt)
	b2 := beta * beta
	return b2 * b2 * 1e6, 4 * b2 * beta * dbeta * dth * 1e6
}

// if97Temperature is IAPWS-IF97 equation 31.
func if97Temperature(p float64) (float64, bool) {
	beta := math.Sqrt(math.Sqrt(p * 1e-6))
	b2 := beta * beta
	e := b2 + if97n3*beta + if97n6
	f := if97n1*b2 + if97n4*beta + if97n7
	g := if97n2*b2 + if97n5*beta + if97n8
	d := 2 * g / (-f - math.Sqrt(f*f-4*e*g))
	s := if97n10 + d
	t := (s - math.Sqrt(s*s-4*(if97n9+if97n10*d))) / 2
	return t, !math.IsNaN(t) && t > 0
}

func init() { Register(IAPWSIF97Family{}) }
