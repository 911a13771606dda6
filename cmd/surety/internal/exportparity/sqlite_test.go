package exportparity_test

import (
	"database/sql"
	"testing"

	_ "modernc.org/sqlite"

	"surety/cmd/surety/internal/exportparity"
)

// TestSQLite runs the parity tests on SQLite through modernc.org/sqlite
// (SQLite 3.54 compiled to Go, no cgo). SQLite has no NaN: every missing
// cell is NULL. The same votes and rows also run as ONNX on
// onnxruntime-node (ONNX: true), once, here rather than in every engine's test.
func TestSQLite(t *testing.T) {
	exportparity.Run(t, exportparity.Engine{
		Name:   "SQLite",
		Open:   func() (*sql.DB, error) { return sql.Open("sqlite", ":memory:") },
		Double: "REAL",
		ONNX:   true,
	})
}
