// Package e2e holds the end-to-end test: it builds the real phasebound
// binary, serves it on a loopback port with real backend processes and
// queries it over gRPC.
package e2e
