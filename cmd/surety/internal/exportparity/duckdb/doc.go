// Package duckdb runs the export parity tests on DuckDB. It is its own
// module, outside the main module's `go test ./...`: its driver needs cgo
// and a prebuilt DuckDB library of about 700 MB in the module cache. Run it
// with `cd cmd/surety/internal/exportparity/duckdb && go test ./...`.
package duckdb
