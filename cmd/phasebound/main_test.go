package main

import (
	"os"
	"testing"
)

// TestMain lets the test binary stand in for the phasebound binary when the
// in-process server's plugin host re-executes it as a backend
// ("backend NAME").
func TestMain(m *testing.M) {
	if len(os.Args) > 1 && os.Args[1] == "backend" {
		os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}
