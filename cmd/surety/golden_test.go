package main

import (
	"bytes"
	"context"
	"flag"
	"os"
	"path/filepath"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/ from the current output")

// runCLI runs the command line in-process with args (without the program
// name) and returns what it wrote and its exit status.
func runCLI(t *testing.T, args ...string) (stdout, stderr string, code int) {
	t.Helper()
	var out, errOut bytes.Buffer
	e := &env{stdin: bytes.NewReader(nil), stdout: &out, stderr: &errOut}
	code = dispatch(context.Background(), args, e)
	return out.String(), errOut.String(), code
}

// checkGolden compares got with testdata/name, or rewrites that file when
// the test runs with -update.
func checkGolden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("output differs from %s (run go test -update to accept it):\n--- got\n%s\n--- want\n%s", path, got, want)
	}
}
