// Package metrics counts what the phasebound server does (calls, points,
// latencies, errors, plugin restarts, table builds) in its own Prometheus
// registry and serves it on a separate listener at /metrics.
package metrics
