package exportparity_test

import (
	"database/sql"
	"testing"

	_ "modernc.org/sqlite"

	"surety/cmd/surety/internal/exportparity"
)

// TestSQLite runs the parity tests on SQLite through modernc.org/sqlite
// (SQLite 3.54 compiled to Go, no cgo). SQLite has no NaN: every missing
// cell is NULL.
func TestSQLite(t *testing.T) {
	exportparity.Run(t, exportparity.Engine{
		Name:   "SQLite",
		Open:   func() (*sql.DB, error) { return sql.Open("sqlite", ":memory:") },
		Double: "REAL",
	})
}
