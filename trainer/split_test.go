package trainer

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
	"time"

	"surety/datasets"
	"surety/voters"
)

// longTailTable generates rows with a long-tail label: with probability
// 0.85 one of four main classes, set by which quarter of [0, 1) x falls
// in; with probability 0.15 one of 60 rare classes, drawn uniformly and
// unrelated to the features. At 500 rows a rare class is seen about 1.25
// times, so how a split treats classes seen once or three times decides
// how many rare rows the certify part holds.
func longTailTable(tb testing.TB, rows int, seed uint64) *datasets.Table {
	tb.Helper()
	rng := rand.New(rand.NewPCG(seed, 0x7a11))
	var buf bytes.Buffer
	buf.WriteString("x,noise,label\n")
	for range rows {
		x, noise := rng.Float64(), rng.Float64()
		label := fmt.Sprintf("main%d", int(4*x))
		if rng.Float64() < 0.15 {
			label = fmt.Sprintf("rare%02d", rng.IntN(60))
		}
		fmt.Fprintf(&buf, "%.4f,%.4f,%s\n", x, noise, label)
	}
	// A long tail of rare classes is the point here, so no cap on classes
	// (the default would take 64 classes on 500 rows for a misread).
	t, err := datasets.Read(&buf, "long tail", datasets.ReadOptions{MaxClasses: -1})
	if err != nil {
		tb.Fatal(err)
	}
	return t
}

// TestCoverageLongTail is TestCoverage on a long-tail label: the certify
// rows must be a fair sample of the rows (FIELD-GUIDE.md, rule 7), rare
// classes included, or the certificate misses their errors. With 60 runs
// the count of failures is binomial with p <= 0.1; the limit is 0.1 plus
// 3 standard deviations (3 sqrt(0.1*0.9/60) = 0.116, common practice, no
// source). The true error is counted on 50,000 fresh rows (standard
// deviation under 0.0023).
func TestCoverageLongTail(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: 60 train-and-certify runs")
	}
	t.Parallel()
	const runs, rows, freshRows, delta = 60, 500, 50000, 0.1
	fresh := longTailTable(t, freshRows, 1<<40)
	fails, start := 0, time.Now()
	for r := range runs {
		tab := longTailTable(t, rows, uint64(r))
		// The split is under test, not the pool: without the full
		// linear voter (a 64-class multinomial fit with 5-fold CV) the
		// 60 runs take a sixth of the time.
		m, err := Train(context.Background(), tab, Config{Seed: uint64(r), Delta: delta, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2), MaxVoters: 64, NoFullLinear: true}})
		if err != nil {
			t.Fatal(err)
		}
		// Fresh rows hold rare classes the training rows never saw, which
		// CountErrors refuses; every such row is an error of the vote.
		cls, margins, err := m.Vote.Predict(fresh, allRows(fresh))
		if err != nil {
			t.Fatal(err)
		}
		errs := 0
		for i, c := range cls {
			if margins[i] == 0 || m.Classes[c] != fresh.Classes[fresh.Label[i]] {
				errs++
			}
		}
		if float64(errs)/float64(fresh.Rows) > m.Certificate.RiskBound {
			fails++
		}
	}
	limit := delta + 3*math.Sqrt(delta*(1-delta)/runs)
	if rate := float64(fails) / runs; rate > limit {
		t.Errorf("certificate below the true error in %d of %d runs (%.3f > %.3f)", fails, runs, rate, limit)
	}
	t.Logf("certificate below the true error in %d of %d runs (%v)", fails, runs, time.Since(start))
}

// TestPrepareSplitIgnoresLabels: the prior and certify rows depend on the
// row count, the fraction and the seed only, so relabelling the rows
// leaves the split as it was.
func TestPrepareSplitIgnoresLabels(t *testing.T) {
	base := longTailTable(t, 500, 3)
	cases := []struct {
		name    string
		relabel func(l []int) []int
	}{
		{"reversed", func(l []int) []int { l = slices.Clone(l); slices.Reverse(l); return l }},
		{"rotated", func(l []int) []int { return append(slices.Clone(l[1:]), l[0]) }},
		{"sorted", func(l []int) []int { l = slices.Clone(l); slices.Sort(l); return l }},
	}
	cfg := Config{Seed: 5, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(0)}}
	want, err := Prepare(context.Background(), base, cfg)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			tab := *base
			tab.Label = tc.relabel(base.Label)
			got, err := Prepare(context.Background(), &tab, cfg)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got.priorRows, want.priorRows) || !slices.Equal(got.certRows, want.certRows) {
				t.Error("relabelled rows split differently")
			}
		})
	}
}
