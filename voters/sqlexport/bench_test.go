package sqlexport_test

import (
	"fmt"
	"io"
	"math/rand/v2"
	"testing"

	"surety/datasets"
	"surety/voters"
	"surety/voters/sqlexport"
)

// BenchmarkWrite2048 exports a vote of 2,048 voters of non-zero weight
// (2,015 stumps over 12 numeric columns and 33 linear voters on 3 of them,
// the shape of the default pool capped at 2,048) and reports the SQL's
// size. The issue asks for an export under a second.
func BenchmarkWrite2048(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	var schema []voters.ColumnSpec
	for j := range 12 {
		schema = append(schema, voters.ColumnSpec{Name: fmt.Sprintf("f%d", j), Kind: datasets.Numeric})
	}
	v := &voters.Vote{Classes: []string{"neg", "pos"}}
	for i := range 2048 {
		if i < 2015 {
			v.Voters = append(v.Voters, &voters.Stump{Column: schema[i%12].Name, Threshold: rng.NormFloat64(), Below: i % 2, Above: 1 - i%2})
		} else {
			l := &voters.Linear{Bias: []float64{0, rng.NormFloat64()}, Weights: [][]float64{{0, 0, 0}, {rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}}}
			for k := range 3 {
				l.Inputs = append(l.Inputs, voters.LinearInput{Column: schema[(i+k)%12].Name, Kind: datasets.Numeric, Mean: rng.NormFloat64(), Scale: 1 + rng.Float64()})
			}
			v.Voters = append(v.Voters, l)
		}
		v.Weights = append(v.Weights, rng.Float64()/1024)
	}
	var n countWriter
	for b.Loop() {
		n = 0
		if err := sqlexport.Write(&n, v, schema, sqlexport.Options{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(n), "bytes")
}

type countWriter int

func (c *countWriter) Write(p []byte) (int, error) { *c += countWriter(len(p)); return len(p), nil }

var _ io.Writer = (*countWriter)(nil)
