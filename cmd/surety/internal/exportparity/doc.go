// Package exportparity holds the parity tests of the vote exports: an
// exported vote runs on a real engine and must give, on every row, the class
// and margin that the vote's own prediction (what `surety predict` prints)
// gives. [Run] runs them on an [Engine]; this package's test runs them on
// SQLite (modernc.org/sqlite, pure Go), and the separate module in duckdb/
// on DuckDB, whose cgo driver is too heavy for the main module's tests.
// With [Engine].ONNX the same votes and rows also run as ONNX files on
// onnxruntime-node (through package onnxrun); SQLite's test sets it.
// Nothing here is for use outside tests.
package exportparity
