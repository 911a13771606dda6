package onnxexport_test

import (
	"bytes"
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"testing"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/datasets/ucidata"
	"surety/voters"
)

// The parity tests: every row's class from onnxruntime equals Vote.Predict's,
// margins within 1e-9 (the tolerance; the log says how many are the
// same bits). Each vote is a pool built by voters.BuildPool on the prior
// half of the rows with seeded random weights on the simplex, so that every
// voter counts (a trained vote leans on a few); rows are all of the table.

// randomVote gives the pool's voters weights drawn from a flat Dirichlet
// (normalised exponential draws), seeded.
func randomVote(p *voters.Pool, seed uint64) *voters.Vote {
	rng := rand.New(rand.NewPCG(seed, 2))
	w := make([]float64, len(p.Voters))
	var sum float64
	for i := range w {
		w[i] = rng.ExpFloat64()
		sum += w[i]
	}
	for i := range w {
		w[i] /= sum
	}
	return &voters.Vote{Voters: p.Voters, Weights: w, Classes: p.Classes}
}

// poolVote builds a pool on the first half of a seeded permutation of
// tab's rows and weights it at random.
func poolVote(t *testing.T, tab *datasets.Table, cfg voters.PoolConfig, seed uint64) (*voters.Vote, []voters.ColumnSpec) {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 1))
	prior := rng.Perm(tab.Rows)[:tab.Rows/2]
	slices.Sort(prior)
	p, err := voters.BuildPool(tab, prior, cfg, rng)
	if err != nil {
		t.Fatal(err)
	}
	return randomVote(p, seed), p.Schema
}

func allRows(tab *datasets.Table) []int {
	rows := make([]int, tab.Rows)
	for i := range rows {
		rows[i] = i
	}
	return rows
}

func readFile(t *testing.T, path, label string) *datasets.Table {
	t.Helper()
	tab, err := datasets.ReadFile(path, datasets.ReadOptions{Label: label})
	if err != nil {
		t.Fatal(err)
	}
	return tab
}

func demoTable(t *testing.T, rows int, seed uint64) *datasets.Table {
	t.Helper()
	var buf bytes.Buffer
	if err := demodata.Write(&buf, demodata.Config{Rows: rows}, seed); err != nil {
		t.Fatal(err)
	}
	tab, err := datasets.Read(&buf, "pipes.csv", datasets.ReadOptions{Label: demodata.Label})
	if err != nil {
		t.Fatal(err)
	}
	return tab
}

func TestParityDataSets(t *testing.T) {
	small := new(4)
	cases := []struct {
		name  string
		table func(t *testing.T) *datasets.Table
		cfg   voters.PoolConfig
	}{
		// datasets/demodata: numeric and categorical columns, missing depth_m cells.
		{"demo", func(t *testing.T) *datasets.Table { return demoTable(t, 2000, 1) }, voters.PoolConfig{}},
		// UCI Congressional Voting Records (golearn's house-votes-84.csv):
		// 16 categorical columns, "?" cells missing.
		{"house-votes", func(t *testing.T) *datasets.Table {
			return readFile(t, ucidata.Path(t, "house-votes-84.csv"), "party")
		}, voters.PoolConfig{}},
		// Three classes: scikit-learn's iris (testdata/bench).
		{"iris", func(t *testing.T) *datasets.Table {
			return readFile(t, filepath.Join(testdataDir(t), "bench", "iris_train.csv"), "label")
		}, voters.PoolConfig{}},
		// Ten classes, 64 columns: scikit-learn's digits (testdata/bench).
		{"digits", func(t *testing.T) *datasets.Table {
			return readFile(t, filepath.Join(testdataDir(t), "bench", "digits_train.csv"), "label")
		}, voters.PoolConfig{Thresholds: 4, LinearVoters: small}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			tab := c.table(t)
			v, schema := poolVote(t, tab, c.cfg, 7)
			parity(t, v, schema, tab, allRows(tab), false)
		})
	}
}

// nextUp and nextDown are the neighbouring doubles.
func nextUp(x float64) float64   { return math.Nextafter(x, math.Inf(1)) }
func nextDown(x float64) float64 { return math.Nextafter(x, math.Inf(-1)) }
