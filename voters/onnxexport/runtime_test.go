package onnxexport_test

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"surety/datasets"
	"surety/voters"
	"surety/voters/onnxexport"
	"surety/voters/onnxexport/onnxrun"
)

// The runtime checks use two outside programs, driven by package onnxrun:
// onnxruntime-node from the npm registry (testdata/onnx/run.js) and the onnx
// package's checker (Debian's python3-onnx, testdata/onnx/check.py). Without
// them a test skips, except under CI=true, where it fails.

// testdataDir returns the module's testdata folder, where the benchmark
// sets live beside the other shared fixtures.
func testdataDir(t testing.TB) string { return onnxrun.Testdata(t) }

// writeModel writes v's model to a temporary file and returns its path.
func writeModel(t *testing.T, v *voters.Vote, schema []voters.ColumnSpec) string {
	t.Helper()
	var b bytes.Buffer
	if err := onnxexport.Write(&b, v, schema, onnxexport.Options{ProducerVersion: "test",
		Metadata: []onnxexport.Property{{Key: "certificate", Value: "test vote, no certificate"}}}); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "vote.onnx")
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// parity exports v, checks the file with the onnx checker, runs it with
// onnxruntime on rows of tab in one batch, and compares every row with
// Vote.Predict (onnxrun.Compare): the same class, margins and class totals
// within 1e-9; with exact set, margins the same bits.
func parity(t *testing.T, v *voters.Vote, schema []voters.ColumnSpec, tab *datasets.Table, rows []int, exact bool) {
	t.Helper()
	path := writeModel(t, v, schema)
	onnxrun.Check(t, path)
	got := onnxrun.Run(t, path, onnxrun.Batch(t, tab, schema, rows))
	onnxrun.Compare(t, v, tab, rows, got, exact)
}
