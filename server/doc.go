// Package server implements the phasebound.v1.BoundaryService gRPC service:
// it loads a catalog, starts the backends, compiles every curve into
// verified tables and answers queries from them.
package server
