package voters

import (
	"fmt"
	"math/rand/v2"
	"runtime"
	"testing"

	"surety/datasets"
)

// synthTable returns m rows of cols standard normal numeric columns and a
// two-class label that depends on the first three columns, with 10% noise.
func synthTable(m, cols int, seed uint64) *datasets.Table {
	rng := rand.New(rand.NewPCG(seed, 1))
	t := &datasets.Table{Source: "synthetic", Classes: []string{"no", "yes"}, Rows: m, Label: make([]int, m)}
	for j := range cols {
		c := datasets.Column{Name: fmt.Sprintf("x%d", j), Kind: datasets.Numeric, Num: make([]float64, m)}
		for i := range c.Num {
			c.Num[i] = rng.NormFloat64()
		}
		t.Columns = append(t.Columns, c)
	}
	for i := range t.Label {
		s := t.Columns[0].Num[i] + 0.5*t.Columns[1].Num[i] - 0.7*t.Columns[2].Num[i]
		if s > 0 {
			t.Label[i] = 1
		}
		if rng.Float64() < 0.1 {
			t.Label[i] = 1 - t.Label[i]
		}
	}
	return t
}

// BenchmarkCount measures one pass of Pool.Count (evaluation and the
// counts of e and T) with 1,600 stumps and 32 linear voters on 50 numeric
// columns; it reports seconds per pass and the peak heap beyond the table.
func BenchmarkCount(b *testing.B) {
	for _, m := range []int{250_000, 500_000, 1_000_000} {
		b.Run(fmt.Sprintf("rows=%d", m), func(b *testing.B) {
			if testing.Short() && m > 250_000 {
				b.Skip("large size skipped under -short")
			}
			t := synthTable(m, 50, 7)
			prior := make([]int, 20_000)
			for i := range prior {
				prior[i] = i
			}
			// Without the full linear voter, so figures stay comparable with
			// runs from before it existed.
			pool, err := BuildPool(t, prior, PoolConfig{NoFullLinear: true}, rand.New(rand.NewPCG(1, 2)))
			if err != nil {
				b.Fatal(err)
			}
			rows := make([]int, m)
			for i := range rows {
				rows[i] = i
			}
			runtime.GC()
			var before runtime.MemStats
			runtime.ReadMemStats(&before)
			peak := newPeakHeap()
			b.ResetTimer()
			for b.Loop() {
				if _, err := pool.Count(t, rows); err != nil {
					b.Fatal(err)
				}
			}
			b.StopTimer()
			b.ReportMetric(float64(len(pool.Voters)), "voters")
			b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/pass")
			b.ReportMetric(float64(peak.stop()-before.HeapAlloc)/(1<<20), "peak-MiB-beyond-table")
		})
	}
}

// BenchmarkBuildPool measures BuildPool with 32 linear voters on 500,000
// prior rows of a 1,000,000 x 50 numeric table, as the trainer's default
// split gives: each linear voter fitted on a bootstrap sample of all the
// prior rows (what BuildPool did before LinearRows) and of the default
// LinearRows, both without the full linear voter, then the default pool
// with it (cross-validated on a 20,000-row sample). It reports seconds per build and the peak heap beyond the
// table. Run with -benchtime 1x; skipped under -short.
func BenchmarkBuildPool(b *testing.B) {
	if testing.Short() {
		b.Skip("1,000,000-row table skipped under -short")
	}
	const m = 1_000_000
	t := synthTable(m, 50, 7)
	prior := make([]int, m/2)
	for i := range prior {
		prior[i] = i
	}
	for _, tc := range []struct {
		name   string
		rows   int
		noFull bool
	}{
		{"linear-rows=all-prior", len(prior), true},
		{"linear-rows=default", 0, true},
		{"linear-rows=default,full-linear", 0, false},
	} {
		b.Run(tc.name, func(b *testing.B) {
			runtime.GC()
			var before runtime.MemStats
			runtime.ReadMemStats(&before)
			peak := newPeakHeap()
			var pool *Pool
			for b.Loop() {
				var err error
				if pool, err = BuildPool(t, prior, PoolConfig{LinearRows: tc.rows, NoFullLinear: tc.noFull}, rand.New(rand.NewPCG(1, 2))); err != nil {
					b.Fatal(err)
				}
			}
			b.StopTimer()
			b.ReportMetric(float64(len(pool.Voters)), "voters")
			b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/build")
			b.ReportMetric(float64(peak.stop()-before.HeapAlloc)/(1<<20), "peak-MiB-beyond-table")
		})
	}
}
