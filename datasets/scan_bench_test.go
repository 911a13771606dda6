package datasets

import (
	"fmt"
	"path/filepath"
	"strconv"
	"testing"
)

// BenchmarkScanNumeric reads a generated numeric CSV whole with ReadFile
// and in chunks of 32,768 rows with ScanFile, in the same run, both with
// every kind forced (as predict reads). Figures: MB/s of input text and
// peak-heap-MB (highest heap above a collected start, sampled each
// millisecond during one read). The 1,000,000 x 50 size is skipped under
// -short.
func BenchmarkScanNumeric(b *testing.B) {
	const chunkRows = 32768
	sizes := []struct{ rows, cols int }{{20000, 50}, {1000000, 50}}
	for _, sz := range sizes {
		b.Run(fmt.Sprintf("rows=%d/cols=%d", sz.rows, sz.cols), func(b *testing.B) {
			if testing.Short() && sz.rows > 100000 {
				b.Skip("the large file is skipped under -short")
			}
			path := filepath.Join(b.TempDir(), "numeric.csv")
			size, err := writeNumericCSV(path, sz.rows, sz.cols, 42)
			if err != nil {
				b.Fatal(err)
			}
			opts := ReadOptions{NoLabel: true, Kinds: map[string]Kind{}}
			for j := range sz.cols {
				opts.Kinds["x"+strconv.Itoa(j)] = Numeric
			}
			run := func(b *testing.B, read func() (int, error)) {
				b.ReportMetric(float64(benchRead(b, size, sz.rows, read))/1e6, "peak-heap-MB")
			}
			b.Run("ReadFile", func(b *testing.B) {
				run(b, func() (int, error) {
					t, err := ReadFile(path, opts)
					if err != nil {
						return 0, err
					}
					return t.Rows, nil
				})
			})
			b.Run("ScanFile", func(b *testing.B) {
				run(b, func() (int, error) {
					rows := 0
					_, err := ScanFile(path, opts, chunkRows, func(ch *Table, _ int) error {
						rows += ch.Rows
						return nil
					})
					return rows, err
				})
			})
		})
	}
}
