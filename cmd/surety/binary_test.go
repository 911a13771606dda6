package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"testing"
)

// The tests that run surety as a program (the progress line on a
// pseudo-terminal, the README's commands) share one build of it.
var built struct {
	once sync.Once
	dir  string
	path string
	err  error
}

// suretyBinary builds cmd/surety once per test run and returns its path.
func suretyBinary(t *testing.T) string {
	t.Helper()
	built.once.Do(func() {
		if built.dir, built.err = os.MkdirTemp("", "surety-bin-"); built.err != nil {
			return
		}
		built.path = filepath.Join(built.dir, "surety")
		out, err := exec.Command("go", "build", "-o", built.path, ".").CombinedOutput()
		if err != nil {
			built.err = &buildError{err, out}
		}
	})
	if built.err != nil {
		t.Fatalf("building surety: %v", built.err)
	}
	return built.path
}

type buildError struct {
	err error
	out []byte
}

func (b *buildError) Error() string { return b.err.Error() + "\n" + string(b.out) }

func TestMain(m *testing.M) {
	code := m.Run()
	if built.dir != "" {
		os.RemoveAll(built.dir)
	}
	os.Exit(code)
}
