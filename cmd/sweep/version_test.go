package main

import (
	"runtime"
	"strings"
	"testing"
)

// TestVersion: --version names the program, its build and the Go
// release it was built with, and exits 0 (common practice for a
// command-line program).
func TestVersion(t *testing.T) {
	out, errOut, code := sweep(t, "--version")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	line := strings.TrimSpace(out)
	if !strings.HasPrefix(line, "sweep ") || !strings.HasSuffix(line, runtime.Version()) || strings.Count(out, "\n") != 1 {
		t.Errorf("--version printed %q, want one line \"sweep VERSION ... %s\"", out, runtime.Version())
	}
}
