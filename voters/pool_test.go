package voters

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"surety/datasets"
)

func numCol(name string, vs ...float64) datasets.Column {
	return datasets.Column{Name: name, Kind: datasets.Numeric, Num: vs}
}

func catCol(name string, levels []string, codes ...uint32) datasets.Column {
	return datasets.Column{Name: name, Kind: datasets.Categorical, Levels: levels, Codes: codes}
}

func table(classes []string, label []int, cols ...datasets.Column) *datasets.Table {
	return &datasets.Table{Source: "test", Columns: cols, Classes: classes, Label: label, Rows: len(label)}
}

func allRows(t *datasets.Table) []int {
	rows := make([]int, t.Rows)
	for i := range rows {
		rows[i] = i
	}
	return rows
}

var noLinear = new(int)

func stumpsOf(p *Pool) []*Stump {
	var out []*Stump
	for _, v := range p.Voters {
		if s, ok := v.(*Stump); ok {
			out = append(out, s)
		}
	}
	return out
}

func TestNumericThresholds(t *testing.T) {
	cases := []struct {
		name       string
		values     []float64
		thresholds int
		want       []float64
	}{
		// Values 1..10, T = 4: the k/5 quantiles (k = 1..4) are the
		// values at sorted index ceil(10 k/5) - 1 = 1, 3, 5, 7 (our rule,
		// the lower empirical quantile, see the package doc).
		{name: "ten distinct values", values: []float64{10, 9, 8, 7, 6, 5, 4, 3, 2, 1}, thresholds: 4, want: []float64{2, 4, 6, 8}},
		{name: "repeats deduplicated", values: []float64{1, 1, 1, 1, 1, 1, 2, 2, 3, 3}, thresholds: 4, want: []float64{1, 2}},
		{name: "maximum dropped", values: []float64{0, 0, 5, 5, 5, 5}, thresholds: 2, want: []float64{0}},
		{name: "missing ignored", values: []float64{math.NaN(), 3, math.NaN(), 1, 2}, thresholds: 2, want: []float64{1, 2}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			label := make([]int, len(tc.values))
			for i := range label {
				label[i] = i % 2
			}
			tab := table([]string{"a", "b"}, label, numCol("x", tc.values...))
			p, err := BuildPool(tab, allRows(tab), PoolConfig{Thresholds: tc.thresholds, LinearVoters: noLinear, NoFullLinear: true}, nil)
			if err != nil {
				t.Fatal(err)
			}
			var got []float64
			for _, s := range stumpsOf(p) {
				if !slices.Contains(got, s.Threshold) {
					got = append(got, s.Threshold)
				}
			}
			if !slices.Equal(got, tc.want) {
				t.Fatalf("thresholds %v, want %v", got, tc.want)
			}
			if len(p.Voters) != 2*len(tc.want) {
				t.Fatalf("%d stumps for %d thresholds of a two-class table, want a stump and its complement each", len(p.Voters), len(tc.want))
			}
		})
	}
}

func TestMulticlassStumps(t *testing.T) {
	// x = 1..6; classes 0,0,1,1,2,2. Threshold at 2 (T = 1 gives the 1/2
	// quantile: index ceil(6/2) - 1 = 2, the value 3).
	tab := table([]string{"a", "b", "c"}, []int{0, 0, 1, 1, 2, 2}, numCol("x", 1, 2, 3, 4, 5, 6))
	p, err := BuildPool(tab, allRows(tab), PoolConfig{Thresholds: 1, LinearVoters: noLinear, NoFullLinear: true}, nil)
	if err != nil {
		t.Fatal(err)
	}
	var got [][2]int
	for _, s := range stumpsOf(p) {
		if s.Threshold != 3 {
			t.Fatalf("threshold %v, want 3", s.Threshold)
		}
		got = append(got, [2]int{s.Below, s.Above})
	}
	// Below 3: a, a, b; above: b, c, c. For each class c and side, c on
	// that side and the other side's most frequent class other than c:
	// a: (a, c), (b, a); b: (b, c), (a, b); c: (c, b), (a, c) (a repeat).
	want := [][2]int{{0, 2}, {1, 0}, {1, 2}, {0, 1}, {2, 1}}
	if !slices.Equal(got, want) {
		t.Fatalf("stump classes (below, above) %v, want %v", got, want)
	}
	for c := range 3 {
		if !slices.ContainsFunc(got, func(p [2]int) bool { return p[0] == c }) || !slices.ContainsFunc(got, func(p [2]int) bool { return p[1] == c }) {
			t.Fatalf("class %d lacks a stump on some side: %v", c, got)
		}
	}
}

func TestMissingRouting(t *testing.T) {
	nan := math.NaN()
	cases := []struct {
		name string
		x    []float64
		y    []int
		cut  float64 // the threshold checked
		// wantBelow: whether the stump predicting class 0 below sends
		// missing cells below.
		wantBelow bool
	}{
		{name: "missing rows mostly class 0 go to the class-0 side", x: []float64{1, 1, 2, 2, nan, nan, nan}, y: []int{0, 0, 1, 1, 0, 0, 1}, cut: 1, wantBelow: true},
		{name: "missing rows mostly class 1 go to the class-1 side", x: []float64{1, 1, 2, 2, nan, nan, nan}, y: []int{0, 0, 1, 1, 1, 1, 0}, cut: 1, wantBelow: false},
		{name: "no missing rows: the side with more rows (above)", x: []float64{1, 5, 6, 7}, y: []int{0, 1, 1, 1}, cut: 1, wantBelow: false},
		{name: "no missing rows: the side with more rows (below)", x: []float64{1, 2, 3, 7}, y: []int{0, 1, 1, 1}, cut: 3, wantBelow: true},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			tab := table([]string{"a", "b"}, tc.y, numCol("x", tc.x...))
			p, err := BuildPool(tab, allRows(tab), PoolConfig{Thresholds: 3, LinearVoters: noLinear, NoFullLinear: true}, nil)
			if err != nil {
				t.Fatal(err)
			}
			checked := 0
			for _, s := range stumpsOf(p) {
				if s.Threshold != tc.cut {
					continue
				}
				checked++
				if s.Below == 0 && s.MissingBelow != tc.wantBelow {
					t.Fatalf("%s: MissingBelow = %v, want %v", s.Describe(tab.Classes), s.MissingBelow, tc.wantBelow)
				}
				miss := slices.IndexFunc(tc.x, math.IsNaN)
				if want := map[bool]int{true: s.Below, false: s.Above}[s.MissingBelow]; miss >= 0 && s.Predict(miss) != want {
					t.Fatalf("%s: Predict of a missing cell = %d, want %d", s.Describe(tab.Classes), s.Predict(miss), want)
				}
			}
			if checked != 2 {
				t.Fatalf("%d stumps at threshold %v, want 2", checked, tc.cut)
			}
		})
	}
}

func TestCategoryStumps(t *testing.T) {
	levels := []string{"red", "green", "blue", "pink"}
	// pink appears only in row 6, outside the prior rows 0..5.
	tab := table([]string{"no", "yes"}, []int{0, 0, 1, 1, 1, 0, 1},
		catCol("colour", levels, 0, 0, 1, 1, 2, datasets.MissingCode, 3))
	prior := []int{0, 1, 2, 3, 4, 5}
	p, err := BuildPool(tab, prior, PoolConfig{LinearVoters: noLinear, NoFullLinear: true}, nil)
	if err != nil {
		t.Fatal(err)
	}
	var seen []string
	for _, v := range p.Voters {
		s := v.(*CategoryStump)
		seen = append(seen, s.Level)
		if s.Level == "pink" {
			t.Fatal("a stump on a level seen only outside the prior rows")
		}
		if got := s.Predict(6); got != s.Other {
			t.Fatalf("%s: the unseen level predicts %d, want the rest's class %d", s.Describe(tab.Classes), got, s.Other)
		}
		// The missing prior row (5) is class "no": it goes to the "no" side.
		if miss := s.Predict(5); miss != 0 {
			t.Fatalf("%s: missing predicts %d, want 0 (the missing prior row's class)", s.Describe(tab.Classes), miss)
		}
	}
	for _, l := range []string{"red", "green", "blue"} {
		if !slices.Contains(seen, l) {
			t.Fatalf("no stump for level %q: %v", l, seen)
		}
	}
	if len(p.Voters) != 6 {
		t.Fatalf("%d stumps, want 2 per level of 3 levels", len(p.Voters))
	}
}

func TestTwoLevelColumnOneLevel(t *testing.T) {
	tab := table([]string{"no", "yes"}, []int{0, 1, 1, 0}, catCol("b", []string{"y", "n"}, 0, 1, 1, 0))
	p, err := BuildPool(tab, allRows(tab), PoolConfig{LinearVoters: noLinear, NoFullLinear: true}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Voters) != 2 {
		t.Fatalf("%d stumps on a two-level column, want 2 (one level, both class pairs)", len(p.Voters))
	}
}

func TestBindErrors(t *testing.T) {
	tab := table([]string{"no", "yes"}, []int{0, 1, 1, 0}, numCol("x", 1, 2, 3, 4), catCol("c", []string{"u", "v", "w"}, 0, 1, 2, 0))
	p, err := BuildPool(tab, allRows(tab), PoolConfig{LinearVoters: noLinear, NoFullLinear: true}, nil)
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		t    *datasets.Table
		want string
	}{
		{name: "missing column", t: table([]string{"no", "yes"}, []int{0}, numCol("x", 1)), want: `column "c" is not in test`},
		{name: "kind mismatch", t: table([]string{"no", "yes"}, []int{0}, numCol("x", 1), numCol("c", 1)), want: `column "c" of test is numeric, want categorical`},
		{name: "unknown class", t: table([]string{"maybe"}, []int{0}, numCol("x", 1), catCol("c", []string{"u"}, 0)), want: `class "maybe"`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			err := p.Bind(tc.t)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("Bind error %v, want one containing %q", err, tc.want)
			}
		})
	}
	// A table whose levels come in another order binds by string.
	other := table([]string{"no", "yes"}, []int{0, 0}, numCol("x", 9, 9), catCol("c", []string{"w", "u"}, 0, 1))
	if err := p.Bind(other); err != nil {
		t.Fatal(err)
	}
	for _, v := range p.Voters {
		if s, ok := v.(*CategoryStump); ok && s.Level == "u" {
			if got := s.Predict(1); got != s.Equal {
				t.Fatalf("%s on a row of level u gives %d, want %d", s.Describe(tab.Classes), got, s.Equal)
			}
		}
	}
}

func TestPoolConfigErrors(t *testing.T) {
	tab := table([]string{"no", "yes"}, []int{0, 1}, numCol("x", 1, 2))
	neg := -1
	cases := []struct {
		name string
		cfg  PoolConfig
	}{
		{"negative thresholds", PoolConfig{Thresholds: -1}},
		{"negative linear voters", PoolConfig{LinearVoters: &neg}},
		{"negative L2", PoolConfig{L2: -1}},
		{"NaN L2", PoolConfig{L2: math.NaN()}},
		{"negative linear columns", PoolConfig{LinearColumns: -2}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := BuildPool(tab, []int{0, 1}, tc.cfg, rand.New(rand.NewPCG(1, 1))); err == nil {
				t.Fatal("no error")
			}
		})
	}
	if _, err := BuildPool(tab, []int{0, 5}, PoolConfig{}, rand.New(rand.NewPCG(1, 1))); err == nil {
		t.Fatal("a prior row out of range gave no error")
	}
	if _, err := BuildPool(tab, []int{0, 1}, PoolConfig{}, nil); err == nil {
		t.Fatal("linear voters without a random source gave no error")
	}
}

// TestPoolUsesPriorRowsOnly checks the accounting rule: changing the
// values and labels of non-prior rows changes nothing in the pool.
func TestPoolUsesPriorRowsOnly(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	a := randomTable(rng, 2000, 3, 0.05)
	prior := rng.Perm(a.Rows)[:800]
	b := randomTable(rand.New(rand.NewPCG(23, 24)), 2000, 3, 0.05)
	for _, r := range prior {
		b.Label[r] = a.Label[r]
		for j := range a.Columns {
			if a.Columns[j].Kind == datasets.Numeric {
				b.Columns[j].Num[r] = a.Columns[j].Num[r]
			} else {
				b.Columns[j].Codes[r] = a.Columns[j].Codes[r]
			}
		}
	}
	pa, err := BuildPool(a, prior, PoolConfig{}, rand.New(rand.NewPCG(1, 2)))
	if err != nil {
		t.Fatal(err)
	}
	pb, err := BuildPool(b, prior, PoolConfig{}, rand.New(rand.NewPCG(1, 2)))
	if err != nil {
		t.Fatal(err)
	}
	ja, _ := MarshalVoters(pa.Voters)
	jb, _ := MarshalVoters(pb.Voters)
	if string(ja) != string(jb) {
		t.Fatal("pools differ when only the non-prior rows differ")
	}
}

// TestSchemaMarksMissing: a column's Missing is set by a missing cell among
// the rows the pool is built on, and not by one among the other rows.
func TestSchemaMarksMissing(t *testing.T) {
	tab := table([]string{"a", "b"}, []int{0, 0, 1, 1, 0, 1},
		numCol("x", 1, 2, 3, 4, 1.5, nan()),
		numCol("z", 1, nan(), 3, 4, 2, 3))
	none := 0
	p, err := BuildPool(tab, []int{0, 1, 2, 3, 4}, PoolConfig{LinearVoters: &none, NoFullLinear: true}, nil)
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]bool{}
	for _, c := range p.Schema {
		got[c.Name] = c.Missing
	}
	if want := map[string]bool{"x": false, "z": true}; fmt.Sprint(got) != fmt.Sprint(want) {
		t.Fatalf("Missing by column %v, want %v", got, want)
	}
}
