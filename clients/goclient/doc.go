// Package goclient is the Go client of the phasebound BoundaryService: it
// dials one or several servers and evaluates batches of any size.
package goclient
