// Package thermo implements the numerics of phase boundaries: correlation
// families for saturation, melting and sublimation curves, their inverses and
// slopes, curves made of branches, Clapeyron relations, phase location,
// compiled tables and least-squares fitting. It does no I/O.
//
// Every quantity is SI: temperature in K, pressure in Pa, molar enthalpy in
// J/mol, molar volume in m³/mol, slopes dP/dT in Pa/K.
package thermo
