// Package catalog loads, validates and merges phasebound catalogs: TOML
// files that map substances to correlation families, backends and
// parameters, and the embedded default catalog.
package catalog
