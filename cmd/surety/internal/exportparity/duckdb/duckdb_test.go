package duckdb_test

import (
	"database/sql"
	"testing"

	_ "github.com/duckdb/duckdb-go/v2"

	"surety/cmd/surety/internal/exportparity"
)

// TestDuckDB runs the parity tests on DuckDB, which stores NaN and orders
// it above every number: half the missing numeric cells go in as NaN.
func TestDuckDB(t *testing.T) {
	exportparity.Run(t, exportparity.Engine{
		Name:   "DuckDB",
		Open:   func() (*sql.DB, error) { return sql.Open("duckdb", "") },
		Double: "DOUBLE",
		NaN:    true,
	})
}
