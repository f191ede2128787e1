package main

import (
	"bytes"
	"strings"
	"testing"
)

func TestBackendCommandRefusesToRunByHand(t *testing.T) {
	t.Setenv("PHASEBOUND_BACKEND_COOKIE", "") // as in an interactive shell
	for _, args := range [][]string{{"backend", "vapor"}, {"backend", "no-such"}} {
		var stdout, stderr bytes.Buffer
		code := run(args, strings.NewReader(""), &stdout, &stderr)
		if code == 0 {
			t.Errorf("%v: exit 0, want non-zero", args)
		}
		if !strings.Contains(stderr.String(), "this is a phasebound backend; the server starts it") {
			t.Errorf("%v: stderr = %q", args, stderr.String())
		}
		if stdout.Len() != 0 {
			t.Errorf("%v: stdout = %q, want nothing", args, stdout.String())
		}
	}
}
