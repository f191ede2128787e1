package server

import (
	"context"
	"errors"
	"fmt"
	"time"

	"github.com/phasebound/phasebound/server/catalog"
	"github.com/phasebound/phasebound/server/metrics"
)

// ReloadFrom loads a catalog with load (the serve command passes the
// function that reads --catalog) and swaps it in with Reload. It is what
// SIGHUP does. On any failure (unreadable or broken file, a backend that
// does not start or whose SHA-256 does not match, a table that misses its
// tolerance) the served catalog stays as it was, and the error says why and
// which version is still served. A catalog with the version already served
// is not recompiled; changed reports whether a new catalog was swapped in.
// Every outcome is counted in the default metrics.
func (s *Server) ReloadFrom(ctx context.Context, load func() (*catalog.Catalog, error)) (changed bool, err error) {
	if load == nil {
		return false, errors.New("server: ReloadFrom needs a catalog loader")
	}
	defer func() { metrics.Default().CatalogReloaded(err) }()
	old := s.CatalogVersion()
	t0 := time.Now()
	cat, err := load()
	if err != nil {
		return false, fmt.Errorf("catalog reload failed, still serving version %s: %w", short(old), err)
	}
	if cat.Version != "" && cat.Version == old {
		return false, nil
	}
	if err := s.Reload(ctx, cat); err != nil {
		return false, fmt.Errorf("catalog reload failed, still serving version %s: %w", short(old), err)
	}
	metrics.Default().ObserveCatalogCompile(time.Since(t0).Seconds())
	s.RecordMetrics(ctx, metrics.Default())
	return true, nil
}

// RecordMetrics names the served catalog's substances in m (so only they
// get their own metric labels) and sets the build time and measured table
// error of every branch. Call it after New; ReloadFrom calls it after a
// reload.
func (s *Server) RecordMetrics(ctx context.Context, m *metrics.Metrics) {
	snap := s.snap.Load()
	if snap == nil {
		return
	}
	m.ResetTables()
	for _, id := range snap.ids {
		for _, cv := range snap.byID[id].curves {
			for _, b := range cv.branch {
				m.ObserveTable(id, cv.kind.String(), b.name, b.buildS, b.maxErr)
			}
		}
	}
	m.SetSubstances(snap.ids)
}

// short abbreviates a catalog version (a hex SHA-256) for messages.
func short(version string) string {
	if len(version) > 12 {
		return version[:12]
	}
	if version == "" {
		return "(none)"
	}
	return version
}
