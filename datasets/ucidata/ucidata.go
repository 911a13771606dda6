// Package ucidata locates the open UCI datasets that the golearn module ships
// under examples/datasets, for tests (in any package of the module) that check Surety against them.
//
// The blank import keeps golearn a real dependency of this module, so that
// `go mod download` (and so a clean CI checkout) brings the files into the
// module cache.
package ucidata

import (
	"fmt"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	_ "github.com/sjwhitworth/golearn/utilities"
)

const module = "github.com/sjwhitworth/golearn"

var (
	once sync.Once
	dir  string
	err  error
)

// Path returns the path of the named file in golearn's examples/datasets
// folder, failing the test when the module cannot be found.
func Path(tb testing.TB, name string) string {
	tb.Helper()
	p, err := File(name)
	if err != nil {
		tb.Fatal(err)
	}
	return p
}

// File returns the path of the named file in golearn's examples/datasets
// folder, found with `go list` from the current folder (inside this
// module).
func File(name string) (string, error) {
	once.Do(func() {
		var out []byte
		out, err = exec.Command("go", "list", "-m", "-f", "{{.Dir}}", module).Output()
		dir = strings.TrimSpace(string(out))
	})
	if err != nil || dir == "" {
		return "", fmt.Errorf("ucidata: cannot locate module %s (run `go mod download`): %v", module, err)
	}
	return filepath.Join(dir, "examples", "datasets", name), nil
}
