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
func poolVote(t testing.TB, tab *datasets.Table, cfg voters.PoolConfig, seed uint64) (*voters.Vote, []voters.ColumnSpec) {
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

func readFile(t testing.TB, path, label string) *datasets.Table {
	t.Helper()
	tab, err := datasets.ReadFile(path, datasets.ReadOptions{Label: label})
	if err != nil {
		t.Fatal(err)
	}
	return tab
}

func demoTable(t testing.TB, rows int, seed uint64) *datasets.Table {
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

// Awkward columns: a name that is an SQL keyword, one with a quote, and a
// level with a quote and a comma.
const (
	colSelect = "select"
	colQuote  = `a"b`
	colX      = "x"
	levelP    = "p"
	levelQ    = `q"r,`
	unseen    = "zz-unseen"
)

var awkwardSchema = []voters.ColumnSpec{
	{Name: colSelect, Kind: datasets.Numeric},
	{Name: colQuote, Kind: datasets.Categorical},
	{Name: colX, Kind: datasets.Numeric},
}

// product returns a table holding every combination of the given cells,
// levels sorted as the reader sorts them.
func product(sel []float64, cats []string, xs []float64) *datasets.Table {
	levels := []string{levelP, levelQ, unseen}
	slices.Sort(levels)
	var num1, num2 []float64
	var codes []uint32
	for _, s := range sel {
		for _, c := range cats {
			for _, x := range xs {
				num1, num2 = append(num1, s), append(num2, x)
				code := uint32(datasets.MissingCode)
				if i := slices.Index(levels, c); i >= 0 {
					code = uint32(i)
				}
				codes = append(codes, code)
			}
		}
	}
	return &datasets.Table{Source: "awkward", Rows: len(num1), Columns: []datasets.Column{
		{Name: colSelect, Kind: datasets.Numeric, Num: num1},
		{Name: colQuote, Kind: datasets.Categorical, Codes: codes, Levels: levels},
		{Name: colX, Kind: datasets.Numeric, Num: num2},
	}}
}

// TestParityAwkward: hand-made votes on every combination of awkward cells:
// values at each threshold and one ulp either side, NaN, +Inf, -Inf, -0 in
// both numeric columns; each level, an unseen one and a missing cell in the
// categorical one. The expected classes are Vote.Predict's; the rules it
// follows are in voters/voter.go and voters/linear.go (a stump sends v <=
// threshold below, NaN to its missing side; a linear voter skips missing
// cells and unseen levels, and a NaN score never wins; ties go to the lower
// class). Margins must be the same bits, since the export adds in Go's order.
func TestParityAwkward(t *testing.T) {
	inf := math.Inf(1)
	around := func(ts ...float64) []float64 {
		var out []float64
		for _, x := range ts {
			out = append(out, nextDown(x), x, nextUp(x))
		}
		return out
	}
	sel := append(around(1.5, -0.5), math.NaN(), inf, -inf, math.Copysign(0, -1), 0, math.MaxFloat64)
	xs := append(around(-2), math.NaN(), inf, -inf, 5)
	tab := product(sel, []string{levelP, levelQ, unseen, ""}, xs)

	lin := &voters.Linear{
		Inputs: []voters.LinearInput{
			{Column: colSelect, Kind: datasets.Numeric, Mean: 1, Scale: 2},
			{Column: colQuote, Kind: datasets.Categorical, Levels: []string{levelP, levelQ}},
			{Column: colX, Kind: datasets.Numeric, Mean: 0.1, Scale: 3},
		},
		Weights: [][]float64{{0.3, -1, 0.5, 0.7}, {-0.2, 0.4, 0, -0.9}, {0.1, 0.2, -0.3, 0.25}},
		Bias:    []float64{0.1, -0.1, 0},
	}
	// Voters of one column are interleaved with others' so that the order
	// Vote.Predict adds them in (grouped by column) differs from vote order,
	// and weights are decimals, whose sums depend on that order.
	mixed := &voters.Vote{
		Classes: []string{"a", "b", "c"},
		Voters: []voters.Voter{
			&voters.Stump{Column: colSelect, Threshold: 1.5, Below: 0, Above: 1, MissingBelow: true},
			&voters.CategoryStump{Column: colQuote, Level: levelP, Equal: 2, Other: 0},
			&voters.Stump{Column: colX, Threshold: -2, Below: 1, Above: 2},
			&voters.Stump{Column: colSelect, Threshold: 1.5, Below: 2, Above: 0},
			lin,
			&voters.CategoryStump{Column: colQuote, Level: levelQ, Equal: 1, Other: 2, MissingEqual: true},
			&voters.Stump{Column: colSelect, Threshold: -0.5, Below: 1, Above: 0},
			&voters.Stump{Column: colX, Threshold: -2, Below: 0, Above: 1, MissingBelow: true},
		},
		Weights: []float64{0.1, 0.2, 0.3, 0.15, 0.1, 0.05, 0.07, 0.03},
	}
	// Equal dyadic weights: two voters against two is an exact tie, which
	// goes to the lower class.
	tie2 := &voters.Vote{
		Classes: []string{"no", "yes"},
		Voters: []voters.Voter{
			&voters.Stump{Column: colSelect, Threshold: 1.5, Below: 0, Above: 1},
			&voters.Stump{Column: colX, Threshold: -2, Below: 1, Above: 0, MissingBelow: true},
			&voters.CategoryStump{Column: colQuote, Level: levelP, Equal: 0, Other: 1},
			&voters.CategoryStump{Column: colQuote, Level: levelQ, Equal: 1, Other: 0, MissingEqual: true},
		},
		Weights: []float64{0.25, 0.25, 0.25, 0.25},
	}
	// Three classes where the upper two tie and the first gets nothing on
	// many rows: the tie goes to "mid", not "high". A voter of weight 0 is
	// left out, as Vote.Predict leaves it out.
	tie3 := &voters.Vote{
		Classes: []string{"low", "mid", "high"},
		Voters: []voters.Voter{
			&voters.Stump{Column: colSelect, Threshold: -0.5, Below: 1, Above: 2},
			&voters.Stump{Column: colX, Threshold: -2, Below: 2, Above: 1},
			&voters.CategoryStump{Column: colQuote, Level: levelQ, Equal: 0, Other: 0},
			lin,
		},
		Weights: []float64{0.5, 0.5, 0, 0},
	}
	// The order of addition decides the class: "second" gets 0.01, 0.01
	// and 0.04 from stumps on two columns, "first" 0.06. In vote order
	// (0.01 + 0.01) + 0.04 is 0.06, a tie that "first" would win; in the
	// order Vote.Predict adds them (the column "select" first) (0.01 + 0.04)
	// + 0.01 is 0.060000000000000005, and "second" wins (IEEE 754 double
	// sums; Python 3.11 prints the same two values for these expressions).
	order := &voters.Vote{
		Classes: []string{"first", "second"},
		Voters: []voters.Voter{
			&voters.Stump{Column: colSelect, Threshold: 1.5, Below: 1, Above: 1},
			&voters.Stump{Column: colX, Threshold: -2, Below: 1, Above: 1},
			&voters.Stump{Column: colSelect, Threshold: -0.5, Below: 1, Above: 1, MissingBelow: true},
			&voters.CategoryStump{Column: colQuote, Level: levelP, Equal: 0, Other: 0},
		},
		Weights: []float64{0.01, 0.01, 0.04, 0.06},
	}
	for _, c := range []struct {
		name string
		v    *voters.Vote
	}{{"mixed", mixed}, {"tie-two-classes", tie2}, {"tie-three-classes", tie3}, {"order-of-addition", order}} {
		t.Run(c.name, func(t *testing.T) {
			parity(t, c.v, awkwardSchema, tab, allRows(tab), true)
		})
	}
}

// TestParityAwkwardPool: a pool built by BuildPool on 600 random rows of the
// awkward columns (three classes, a tenth of each column missing), then run
// on rows made from its own voters: each stump threshold and one ulp either
// side, with the other cells NaN, +Inf, -Inf, missing or unseen in turn.
func TestParityAwkwardPool(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	const n = 600
	levels := []string{levelP, levelQ, "s", unseen}
	slices.Sort(levels)
	sel, xs := make([]float64, n), make([]float64, n)
	codes := make([]uint32, n)
	label := make([]int, n)
	for i := range n {
		sel[i], xs[i] = math.Round(rng.NormFloat64()*100)/37, rng.NormFloat64()
		code := rng.IntN(len(levels))
		for levels[code] == unseen {
			code = rng.IntN(len(levels))
		}
		codes[i] = uint32(code)
		label[i] = (int(sel[i]+xs[i]) + code + rng.IntN(2)) % 3
		label[i] = max(label[i], -label[i])
		switch rng.IntN(30) {
		case 0:
			sel[i] = math.NaN()
		case 1:
			xs[i] = math.NaN()
		case 2:
			codes[i] = datasets.MissingCode
		}
	}
	prior := allRows(&datasets.Table{Rows: n})
	// The awkward rows follow the random ones.
	addRow := func(s float64, code uint32, x float64) {
		sel, xs, codes, label = append(sel, s), append(xs, x), append(codes, code), append(label, 0)
	}
	tab := func() *datasets.Table {
		return &datasets.Table{Source: "awkward-pool", Rows: len(sel), Classes: []string{"a", "b", "c"}, Label: label,
			Columns: []datasets.Column{
				{Name: colSelect, Kind: datasets.Numeric, Num: sel},
				{Name: colQuote, Kind: datasets.Categorical, Codes: codes, Levels: levels},
				{Name: colX, Kind: datasets.Numeric, Num: xs},
			}}
	}
	p, err := voters.BuildPool(tab(), prior, voters.PoolConfig{Thresholds: 12, LinearVoters: new(3)}, rng)
	if err != nil {
		t.Fatal(err)
	}
	v := randomVote(p, 5)
	others := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0.5}
	unseenCode := uint32(slices.Index(levels, unseen))
	otherCodes := []uint32{datasets.MissingCode, unseenCode, 0, 1}
	thresholds := 0
	for _, vt := range v.Voters {
		s, ok := vt.(*voters.Stump)
		if !ok {
			continue
		}
		thresholds++
		for _, val := range []float64{nextDown(s.Threshold), s.Threshold, nextUp(s.Threshold)} {
			for i, o := range others {
				if s.Column == colSelect {
					addRow(val, otherCodes[i], o)
				} else {
					addRow(o, otherCodes[i], val)
				}
			}
		}
	}
	for _, code := range otherCodes {
		for _, a := range others {
			for _, b := range others {
				addRow(a, code, b)
			}
		}
	}
	if thresholds == 0 {
		t.Fatal("the pool has no stump")
	}
	rows := make([]int, 0, len(sel)-n)
	for r := n; r < len(sel); r++ {
		rows = append(rows, r)
	}
	t.Logf("%d stumps, %d awkward rows", thresholds, len(rows))
	parity(t, v, p.Schema, tab(), rows, true)
}
