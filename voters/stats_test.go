package voters

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"surety/datasets"
)

// randomTable returns a table of m rows with numeric and categorical
// columns, missing cells at rate miss, and k classes loosely tied to the
// first columns.
func randomTable(rng *rand.Rand, m, k int, miss float64) *datasets.Table {
	t := &datasets.Table{Source: "random", Rows: m, Label: make([]int, m)}
	for c := range k {
		t.Classes = append(t.Classes, fmt.Sprintf("c%d", c))
	}
	for j := range 3 {
		c := datasets.Column{Name: fmt.Sprintf("n%d", j), Kind: datasets.Numeric, Num: make([]float64, m)}
		for i := range c.Num {
			c.Num[i] = math.Round(rng.NormFloat64()*4) / 2 // repeated values, as real columns have
			if rng.Float64() < miss {
				c.Num[i] = math.NaN()
			}
		}
		t.Columns = append(t.Columns, c)
	}
	for j := range 2 {
		c := datasets.Column{Name: fmt.Sprintf("c%d", j), Kind: datasets.Categorical, Codes: make([]uint32, m),
			Levels: []string{"a", "b", "c", "d"}[:2+j*2]}
		for i := range c.Codes {
			c.Codes[i] = uint32(rng.IntN(len(c.Levels)))
			if rng.Float64() < miss {
				c.Codes[i] = datasets.MissingCode
			}
		}
		t.Columns = append(t.Columns, c)
	}
	for i := range t.Label {
		s := t.Columns[0].Num[i]
		if math.IsNaN(s) {
			s = 0
		}
		s += float64(t.Columns[4].Codes[i]%4) + rng.NormFloat64()
		t.Label[i] = min(k-1, max(0, int(s/2+float64(k)/2)))
	}
	return t
}

// naiveStats counts errors and joint errors with Predict and a triple loop.
func naiveStats(vs []Voter, t *datasets.Table, rows []int) *Stats {
	n := len(vs)
	wrong := make([][]bool, n)
	for i, v := range vs {
		wrong[i] = make([]bool, len(rows))
		for r, row := range rows {
			wrong[i][r] = v.Predict(row) != t.Label[row]
		}
	}
	k := len(t.Classes)
	s := &Stats{M: len(rows), Errors: make([]int64, n), Joint: make([]int64, n*n), ClassErrors: make([]int64, n*k)}
	for i := range n {
		for j := range n {
			for r := range rows {
				if wrong[i][r] && wrong[j][r] {
					s.Joint[i*n+j]++
				}
			}
		}
		s.Errors[i] = s.Joint[i*n+i]
		for r, row := range rows {
			if wrong[i][r] {
				s.ClassErrors[i*k+t.Label[row]]++
			}
		}
	}
	return s
}

func sameStats(t *testing.T, what string, got, want *Stats) {
	t.Helper()
	if got.M != want.M || !slices.Equal(got.Errors, want.Errors) || !slices.Equal(got.Joint, want.Joint) {
		for i := range want.Joint {
			if got.Joint[i] != want.Joint[i] {
				n := len(want.Errors)
				t.Fatalf("%s: M %d/%d; Joint[%d,%d] = %d, want %d", what, got.M, want.M, i/n, i%n, got.Joint[i], want.Joint[i])
			}
		}
		t.Fatalf("%s: M = %d, errors %v; want M = %d, errors %v", what, got.M, got.Errors, want.M, want.Errors)
	}
	if !slices.Equal(got.ClassErrors, want.ClassErrors) {
		t.Fatalf("%s: errors by class %v, want %v", what, got.ClassErrors, want.ClassErrors)
	}
}

// TestCountMatchesNaive is the property test of the issue: the counts of
// the bit-set pass equal a naive triple loop on random tables, at any
// GOMAXPROCS, and merged halves equal the whole.
func TestCountMatchesNaive(t *testing.T) {
	cases := []struct {
		name    string
		m, k    int
		miss    float64
		certify int // number of certify rows drawn (with their order shuffled)
		// priorMissOnly puts the missing cells in prior rows only.
		priorMissOnly bool
	}{
		{name: "binary, no missing, one partial panel", m: 900, k: 2, certify: 517},
		{name: "binary, missing, three panels", m: 12000, k: 2, miss: 0.05, certify: 9000},
		{name: "binary, missing only among prior rows", m: 6000, k: 2, miss: 0.1, certify: 4500, priorMissOnly: true},
		{name: "three classes, missing", m: 6000, k: 3, miss: 0.05, certify: 5000},
		{name: "five classes, a 64-row multiple", m: 4096 + 2000, k: 5, miss: 0.02, certify: 4096},
	}
	for seed, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(uint64(seed), 99))
			tab := randomTable(rng, tc.m, tc.k, tc.miss)
			perm := rng.Perm(tc.m)
			prior, rows := perm[tc.certify:], perm[:tc.certify]
			if tc.priorMissOnly {
				for _, r := range rows {
					for j := range tab.Columns {
						c := &tab.Columns[j]
						if c.Kind == datasets.Numeric && math.IsNaN(c.Num[r]) {
							c.Num[r] = 0
						}
						if c.Kind == datasets.Categorical && c.Codes[r] == datasets.MissingCode {
							c.Codes[r] = 0
						}
					}
				}
			}
			four := 4
			pool, err := BuildPool(tab, prior, PoolConfig{Thresholds: 6, LinearVoters: &four}, rand.New(rand.NewPCG(3, 4)))
			if err != nil {
				t.Fatal(err)
			}
			want := naiveStats(pool.Voters, tab, rows)
			for _, procs := range []int{1, 2, 3} {
				old := runtime.GOMAXPROCS(procs)
				got, err := pool.Count(tab, rows)
				runtime.GOMAXPROCS(old)
				if err != nil {
					t.Fatal(err)
				}
				sameStats(t, fmt.Sprintf("GOMAXPROCS=%d", procs), got, want)
			}
			// With the linear voters' classes remembered: on the shuffled
			// rows (which Count sorts, setting them aside) and sorted ones.
			sorted := slices.Sorted(slices.Values(rows))
			for name, rs := range map[string][]int{"shuffled": rows, "sorted": sorted} {
				known, err := pool.Remember(tab, rs)
				if err != nil {
					t.Fatal(err)
				}
				got, err := pool.CountKnown(known)
				if err != nil {
					t.Fatal(err)
				}
				sameStats(t, "remembered, "+name+" rows", got, want)
			}
			half := len(rows) / 3
			a, err := pool.Count(tab, rows[:half])
			if err != nil {
				t.Fatal(err)
			}
			b, err := pool.Count(tab, rows[half:])
			if err != nil {
				t.Fatal(err)
			}
			if err := a.Merge(b); err != nil {
				t.Fatal(err)
			}
			sameStats(t, "merged shards", a, want)
		})
	}
}

// TestDisagreementsMatchDirect checks, for two classes, the disagreement
// identity D_ij = (e_i + e_j - 2 T_ij)/m against a direct count of rows
// where two voters predict different classes.
func TestDisagreementsMatchDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	tab := randomTable(rng, 3000, 2, 0.05)
	perm := rng.Perm(tab.Rows)
	prior, rows := perm[:1000], perm[1000:]
	pool, err := BuildPool(tab, prior, PoolConfig{Thresholds: 4}, rand.New(rand.NewPCG(5, 6)))
	if err != nil {
		t.Fatal(err)
	}
	st, err := pool.Count(tab, rows)
	if err != nil {
		t.Fatal(err)
	}
	d := st.Disagreements()
	n := len(pool.Voters)
	for i := range n {
		for j := range n {
			count := 0
			for _, r := range rows {
				if pool.Voters[i].Predict(r) != pool.Voters[j].Predict(r) {
					count++
				}
			}
			if want := float64(count) / float64(len(rows)); math.Abs(d[i*n+j]-want) > 1e-15 {
				t.Fatalf("D[%d,%d] = %v, direct count gives %v", i, j, d[i*n+j], want)
			}
		}
	}
}

func TestMergeMismatch(t *testing.T) {
	a := &Stats{M: 1, Errors: []int64{0}, Joint: []int64{0}}
	b := &Stats{M: 1, Errors: []int64{0, 1}, Joint: []int64{0, 0, 0, 1}}
	if err := a.Merge(b); err == nil {
		t.Fatal("merging stats of 2 voters into stats of 1 gave no error")
	}
}
