// Package audit checks a catalog substance for thermodynamic consistency:
// curves meeting at triple points and the critical point, validity ranges
// without gaps, slopes against the Clapeyron equation, and latent heats
// against the catalog's reference values.
package audit
