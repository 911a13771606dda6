// Package ucidata forwards to surety/datasets/ucidata, where the helper
// moved so that packages outside datasets can use it too.
package ucidata

import (
	"testing"

	"surety/datasets/ucidata"
)

// Path is ucidata.Path.
func Path(tb testing.TB, name string) string {
	tb.Helper()
	return ucidata.Path(tb, name)
}
