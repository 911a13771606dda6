package voters

import (
	"cmp"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
	"time"

	"surety/datasets"
)

// priorErrors counts, by brute force, the prior rows each voter gets wrong.
func priorErrors(t *datasets.Table, rows []int, vs []Voter) []int {
	errs := make([]int, len(vs))
	for i, v := range vs {
		for _, r := range rows {
			if v.Predict(r) != t.Label[r] {
				errs[i]++
			}
		}
	}
	return errs
}

// TestMaxVotersKeepsFewestErrors: under a tiny cap, the stumps kept are
// the ones with the fewest prior-row errors, counted row by row, ties to
// the earlier stump, in pool order.
func TestMaxVotersKeepsFewestErrors(t *testing.T) {
	cases := []struct {
		name      string
		classes   int
		miss      float64
		maxVoters int
		linear    int
		noFull    bool // the full linear voter, last, counts against the cap too
	}{
		{name: "two classes, one kept", classes: 2, maxVoters: 2},
		{name: "two classes, one kept, no full linear voter", classes: 2, maxVoters: 1, noFull: true},
		{name: "two classes with missing cells", classes: 2, miss: 0.1, maxVoters: 8},
		{name: "three classes with missing cells", classes: 3, miss: 0.1, maxVoters: 13},
		{name: "four classes, many ties", classes: 4, miss: 0.3, maxVoters: 26},
		{name: "linear voters count against the cap", classes: 3, miss: 0.05, maxVoters: 11, linear: 3},
		{name: "cap equal to the linear voters", classes: 2, maxVoters: 3, linear: 2},
		{name: "cap equal to the linear voters, no full linear voter", classes: 2, maxVoters: 2, linear: 2, noFull: true},
	}
	for i, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(uint64(i), 31))
			tab := randomTable(rng, 600, tc.classes, tc.miss)
			prior := rng.Perm(tab.Rows)[:300]
			full, err := BuildPool(tab, prior, PoolConfig{Thresholds: 6, LinearVoters: noLinear, NoFullLinear: true, MaxVoters: 1 << 20}, nil)
			if err != nil {
				t.Fatal(err)
			}
			errs := priorErrors(tab, prior, full.Voters)
			keep := tc.maxVoters - tc.linear
			if !tc.noFull {
				keep--
			}
			if len(full.Voters) <= keep {
				t.Fatalf("%d candidates, not over the %d kept: the case tests nothing", len(full.Voters), keep)
			}
			idx := make([]int, len(full.Voters))
			for k := range idx {
				idx[k] = k
			}
			slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(errs[a], errs[b]) })
			idx = idx[:keep]
			slices.Sort(idx)
			want := make([]Voter, keep)
			for k, j := range idx {
				want[k] = full.Voters[j]
			}

			linear := tc.linear
			capped, err := BuildPool(tab, prior, PoolConfig{Thresholds: 6, LinearVoters: &linear, MaxVoters: tc.maxVoters, NoFullLinear: tc.noFull},
				rand.New(rand.NewPCG(5, 5)))
			if err != nil {
				t.Fatal(err)
			}
			if len(capped.Voters) != tc.maxVoters {
				t.Fatalf("%d voters, want the cap %d", len(capped.Voters), tc.maxVoters)
			}
			for _, v := range capped.Voters[keep:] {
				if v.Kind() != KindLinear {
					t.Fatalf("voter after the %d stumps is a %s, want linear", keep, v.Kind())
				}
			}
			gotJSON, err := MarshalVoters(capped.Voters[:keep])
			if err != nil {
				t.Fatal(err)
			}
			wantJSON, err := MarshalVoters(want)
			if err != nil {
				t.Fatal(err)
			}
			if string(gotJSON) != string(wantJSON) {
				t.Fatalf("kept stumps\n%s\nwant the %d with the fewest prior-row errors\n%s", gotJSON, keep, wantJSON)
			}
		})
	}
}

// TestCandidateErrorsMatchRows: the error count each stump gets from the
// class counts equals a row-by-row count on the prior rows, missing cells
// included.
func TestCandidateErrorsMatchRows(t *testing.T) {
	for _, k := range []int{2, 3, 5} {
		rng := rand.New(rand.NewPCG(uint64(k), 77))
		tab := randomTable(rng, 800, k, 0.15)
		prior := rng.Perm(tab.Rows)[:500]
		cs := &candidates{m: len(prior)}
		for j := range tab.Columns {
			c := &tab.Columns[j]
			if c.Kind == datasets.Numeric {
				cs.numericStumps(tab, c, prior, 8)
			} else {
				cs.categoryStumps(tab, c, prior, 32)
			}
		}
		want := priorErrors(tab, prior, cs.voters)
		if !slices.Equal(cs.errs, want) {
			t.Errorf("%d classes: errors from counts %v, row by row %v", k, cs.errs, want)
		}
	}
}

// TestSchemaListsReadColumns: the schema holds exactly the columns some
// kept voter reads, in table order.
func TestSchemaListsReadColumns(t *testing.T) {
	const nan uint32 = datasets.MissingCode
	labels := []int{0, 0, 0, 1, 1, 1}
	tab := table([]string{"no", "yes"}, labels,
		numCol("constant", 3, 3, 3, 3, 3, 3),
		numCol("noise", 1, 4, 6, 2, 5, 3),
		numCol("good", 1, 2, 3, 4, 5, 6),
		catCol("empty", []string{"a"}, nan, nan, nan, nan, nan, nan),
		catCol("single", []string{"a"}, 0, 0, 0, 0, 0, 0),
	)
	one := 1
	cases := []struct {
		name string
		cfg  PoolConfig
		want []string
	}{
		{name: "stumps only: columns without a split are left out", cfg: PoolConfig{Thresholds: 2, LinearVoters: noLinear, NoFullLinear: true},
			want: []string{"noise", "good"}},
		{name: "the cap drops a column's stumps", cfg: PoolConfig{Thresholds: 2, LinearVoters: noLinear, NoFullLinear: true, MaxVoters: 1},
			want: []string{"good"}},
		{name: "a linear voter reads every usable column", cfg: PoolConfig{Thresholds: 2, LinearVoters: &one, LinearColumns: 10, MaxVoters: 1, NoFullLinear: true},
			want: []string{"constant", "noise", "good", "single"}},
		{name: "the full linear voter skips constant numeric columns", cfg: PoolConfig{Thresholds: 2, LinearVoters: noLinear, MaxVoters: 1},
			want: []string{"noise", "good", "single"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			p, err := BuildPool(tab, allRows(tab), tc.cfg, rand.New(rand.NewPCG(1, 1)))
			if err != nil {
				t.Fatal(err)
			}
			var got []string
			for _, s := range p.Schema {
				got = append(got, s.Name)
			}
			if !slices.Equal(got, tc.want) {
				t.Fatalf("schema %v, want %v", got, tc.want)
			}
			// A table with only the schema's columns binds the pool.
			narrow := table(tab.Classes, labels)
			for _, s := range p.Schema {
				narrow.Columns = append(narrow.Columns, tab.Columns[tab.Column(s.Name)])
			}
			if err := p.Bind(narrow); err != nil {
				t.Fatalf("binding to the schema's columns only: %v", err)
			}
		})
	}
}

// TestLinearRowsBelowCapChangesNothing: with no more prior rows than
// LinearRows, the sample is all the prior rows' size, as before the option
// existed; the pool is the same for every such LinearRows.
func TestLinearRowsBelowCapChangesNothing(t *testing.T) {
	rng := rand.New(rand.NewPCG(40, 41))
	tab := randomTable(rng, 1200, 3, 0.05)
	prior := rng.Perm(tab.Rows)[:700]
	four := 4
	build := func(linearRows int) string {
		p, err := BuildPool(tab, prior, PoolConfig{Thresholds: 4, LinearVoters: &four, LinearRows: linearRows}, rand.New(rand.NewPCG(8, 9)))
		if err != nil {
			t.Fatal(err)
		}
		j, err := MarshalVoters(p.Voters)
		if err != nil {
			t.Fatal(err)
		}
		return string(j)
	}
	ref := build(len(prior))
	cases := []struct {
		name       string
		linearRows int
	}{
		{"default", 0},
		{"one over the prior rows", len(prior) + 1},
		{"the default, spelt out", DefaultLinearRows},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if got := build(tc.linearRows); got != ref {
				t.Fatalf("LinearRows %d gives another pool than LinearRows = %d prior rows", tc.linearRows, len(prior))
			}
		})
	}
}

// TestLinearRowsSample: with fewer LinearRows than prior rows, a linear
// voter is fitted on a bootstrap sample of LinearRows rows and scaled on
// all the prior rows; its draws are those BuildPool documents.
func TestLinearRowsSample(t *testing.T) {
	rng := rand.New(rand.NewPCG(50, 51))
	tab := randomTable(rng, 1000, 2, 0)
	prior := rng.Perm(tab.Rows)[:600]
	one := 1
	const n = 90
	p, err := BuildPool(tab, prior, PoolConfig{Thresholds: 2, LinearVoters: &one, LinearRows: n, LinearColumns: 2, NoFullLinear: true},
		rand.New(rand.NewPCG(3, 3)))
	if err != nil {
		t.Fatal(err)
	}
	// The same draws by hand: the column subset, then n bootstrap rows.
	draw := rand.New(rand.NewPCG(3, 3))
	perm := draw.Perm(len(tab.Columns))[:2] // every column of randomTable is usable
	slices.Sort(perm)
	names := []string{tab.Columns[perm[0]].Name, tab.Columns[perm[1]].Name}
	sample := make([]int, n)
	for i := range sample {
		sample[i] = prior[draw.IntN(len(prior))]
	}
	want, err := FitLinear(tab, prior, sample, names, DefaultL2)
	if err != nil {
		t.Fatal(err)
	}
	got, err := MarshalVoters(p.Voters[len(p.Voters)-1:])
	if err != nil {
		t.Fatal(err)
	}
	wantJSON, err := MarshalVoters([]Voter{want})
	if err != nil {
		t.Fatal(err)
	}
	if string(got) != string(wantJSON) {
		t.Fatalf("linear voter\n%s\nwant the fit on %d drawn rows\n%s", got, n, wantJSON)
	}
}

// TestPoolCapConfigErrors: bad MaxVoters and LinearRows values are errors
// that name the field (and, for a cap below the linear voters, both counts).
func TestPoolCapConfigErrors(t *testing.T) {
	tab := table([]string{"no", "yes"}, []int{0, 1}, numCol("x", 1, 2))
	three := 3
	cases := []struct {
		name string
		cfg  PoolConfig
		want []string
	}{
		{"negative MaxVoters", PoolConfig{MaxVoters: -1}, []string{"MaxVoters is -1"}},
		{"MaxVoters below the default linear voters", PoolConfig{MaxVoters: 10}, []string{"MaxVoters is 10", "32 linear voters"}},
		{"MaxVoters below the linear voters", PoolConfig{MaxVoters: 2, LinearVoters: &three}, []string{"MaxVoters is 2", "3 linear voters"}},
		{"MaxVoters leaves no room for the full linear voter", PoolConfig{MaxVoters: 3, LinearVoters: &three}, []string{"MaxVoters is 3", "full linear voter"}},
		{"negative LinearRows", PoolConfig{LinearRows: -5}, []string{"LinearRows is -5"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := BuildPool(tab, []int{0, 1}, tc.cfg, rand.New(rand.NewPCG(1, 1)))
			if err == nil {
				t.Fatal("no error")
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not say %q", err, w)
				}
			}
		})
	}
}

// TestMNISTPoolCapped: golearn's MNIST sample (784 pixel columns, 10
// classes) gives far more stump candidates than the default cap; the pool
// keeps at most DefaultMaxVoters voters, the full linear voter among them,
// and Count works on 500 rows.
func TestMNISTPoolCapped(t *testing.T) {
	if testing.Short() {
		t.Skip("MNIST pool skipped under -short")
	}
	tab := readUCI(t, "mnist_train.csv", "label")
	rng := rand.New(rand.NewPCG(1, 2))
	perm := rng.Perm(tab.Rows)
	prior, rest := perm[:tab.Rows/2], perm[tab.Rows/2:tab.Rows/2+500]
	start := time.Now()
	peak := newPeakHeap()
	p, err := BuildPool(tab, prior, PoolConfig{}, rng)
	if err != nil {
		t.Fatal(err)
	}
	built := time.Since(start)
	stats, err := p.Count(tab, rest)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%d voters (%d columns in the schema); BuildPool %v, Count on %d rows %v; peak heap %.0f MiB",
		len(p.Voters), len(p.Schema), built.Round(time.Millisecond), stats.M, (time.Since(start) - built).Round(time.Millisecond),
		float64(peak.stop())/(1<<20))
	if len(p.Voters) > DefaultMaxVoters {
		t.Fatalf("%d voters, over the cap %d", len(p.Voters), DefaultMaxVoters)
	}
	if stats.M != 500 || len(stats.Errors) != len(p.Voters) {
		t.Fatalf("stats over %d rows for %d voters, want 500 rows and %d voters", stats.M, len(stats.Errors), len(p.Voters))
	}
	linear := 0
	for _, v := range p.Voters {
		if v.Kind() == KindLinear {
			linear++
		}
	}
	// The bootstrap linear voters and the full one.
	if linear != DefaultLinearVoters+1 || len(p.Voters) != DefaultMaxVoters {
		t.Fatalf("%d voters of which %d linear, want %d of which %d", len(p.Voters), linear, DefaultMaxVoters, DefaultLinearVoters+1)
	}
}
