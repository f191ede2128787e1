// Package units parses temperatures and pressures written with unit suffixes
// ("25degC", "2bar", "200MPa", "1atm") into SI values (K, Pa).
package units
