package server

import (
	"context"
	"errors"
	"fmt"
	"time"

	phaseboundpb "github.com/phasebound/phasebound/proto/phasebound/v1"
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
// get their own metric labels) and sets the measured table error of every
// branch. Call it after New; ReloadFrom calls it after a reload.
func (s *Server) RecordMetrics(ctx context.Context, m *metrics.Metrics) {
	list, err := s.ListSubstances(ctx, &phaseboundpb.ListSubstancesRequest{})
	if err != nil {
		return
	}
	ids := make([]string, 0, len(list.GetSubstances()))
	for _, sub := range list.GetSubstances() {
		ids = append(ids, sub.GetId())
		for _, c := range sub.GetCurves() {
			kind := c.GetKind().String()
			if k, ok := KindFromProto(c.GetKind()); ok {
				kind = k.String()
			}
			for _, b := range c.GetBranches() {
				m.ObserveTableError(sub.GetId(), kind, b.GetName(), b.GetTableMaxRelError())
			}
		}
	}
	m.SetSubstances(ids)
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
