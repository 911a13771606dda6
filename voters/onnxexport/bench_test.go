package onnxexport_test

import (
	"bytes"
	"path/filepath"
	"testing"

	"surety/datasets"
	"surety/voters"
	"surety/voters/onnxexport"
)

// BenchmarkWrite reports the time to write a vote and the file's size: the
// demo model (the default pool on 2,000 prior rows of datasets/demodata)
// and a 2,048-voter vote (the default pool on the digits, capped).
func BenchmarkWrite(b *testing.B) {
	cases := []struct {
		name  string
		table func(b *testing.B) *datasets.Table
	}{
		{"demo", func(b *testing.B) *datasets.Table { return demoTable(b, 4000, 1) }},
		{"digits-2048", func(b *testing.B) *datasets.Table {
			return readFile(b, filepath.Join(testdataDir(b), "bench", "digits_train.csv"), "label")
		}},
	}
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			tab := c.table(b)
			v, schema := poolVote(b, tab, voters.PoolConfig{}, 11)
			var buf bytes.Buffer
			b.ResetTimer()
			for b.Loop() {
				buf.Reset()
				if err := onnxexport.Write(&buf, v, schema, onnxexport.Options{}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(buf.Len()), "bytes")
			b.ReportMetric(float64(len(v.Voters)), "voters")
		})
	}
}
