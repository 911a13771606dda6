package exportparity

import (
	"bytes"
	"context"
	"database/sql"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/datasets/ucidata"
	"surety/trainer"
	"surety/voters"
	"surety/voters/onnxexport"
	"surety/voters/onnxexport/onnxrun"
	"surety/voters/sqlexport"
)

// rowKey is the column the tests add to every table to join the SELECT's
// rows back to the table's.
const rowKey = "row_key"

// Engine is an SQL engine to run the parity tests on.
type Engine struct {
	// Name names the engine in the test log.
	Name string
	// Open opens a fresh, empty database of the engine.
	Open func() (*sql.DB, error)
	// Double is the engine's name for a float64 column type.
	Double string
	// NaN says the engine stores NaN: half the missing numeric cells then
	// go in as NaN, half as NULL. Without it every missing cell is NULL.
	NaN bool
	// ONNX also runs each vote's ONNX export over the same rows with
	// onnxruntime-node (package onnxrun), in a subtest "onnx" beside the
	// SQL check. The runtime does not depend on the SQL engine, so one
	// engine's test sets it (SQLite's, in the main module) and the others
	// leave it off.
	ONNX bool
}

// Run runs every parity test on e: trained models (skipped under -short)
// and the awkward table; with e.ONNX, each vote goes through ONNX too.
func Run(t *testing.T, e Engine) {
	t.Run("trained", func(t *testing.T) { trained(t, e) })
	t.Run("awkward", func(t *testing.T) { awkward(t, e) })
}

// open opens a fresh database of e, closed when the test ends.
func (e Engine) open(t *testing.T) *sql.DB {
	t.Helper()
	db, err := e.Open()
	if err != nil {
		t.Fatalf("%s: %v", e.Name, err)
	}
	db.SetMaxOpenConns(1) // one connection, so that in-memory tables stay
	t.Cleanup(func() { db.Close() })
	return db
}

// quote quotes an identifier for the test's own statements.
func quote(s string) string { return `"` + strings.ReplaceAll(s, `"`, `""`) + `"` }

// load writes the columns of schema of tab into a new table name, plus
// rowKey: missing codes become NULL, NaN becomes NULL (or, in an engine
// that stores NaN, NaN in every other row), infinities stay infinite.
func (e Engine) load(t *testing.T, db *sql.DB, name string, tab *datasets.Table, schema []voters.ColumnSpec) {
	t.Helper()
	cols := []string{quote(rowKey) + " INTEGER"}
	idx := make([]int, len(schema))
	for i, c := range schema {
		idx[i] = tab.Column(c.Name)
		if idx[i] < 0 {
			t.Fatalf("the table lacks column %q", c.Name)
		}
		typ := "TEXT"
		if c.Kind == datasets.Numeric {
			typ = e.Double
		}
		cols = append(cols, quote(c.Name)+" "+typ)
	}
	if _, err := db.Exec("CREATE TABLE " + quote(name) + " (" + strings.Join(cols, ", ") + ")"); err != nil {
		t.Fatal(err)
	}
	tx, err := db.Begin()
	if err != nil {
		t.Fatal(err)
	}
	marks := strings.TrimSuffix(strings.Repeat("?, ", len(schema)+1), ", ")
	ins, err := tx.Prepare("INSERT INTO " + quote(name) + " VALUES (" + marks + ")")
	if err != nil {
		t.Fatal(err)
	}
	args := make([]any, len(schema)+1)
	for r := range tab.Rows {
		args[0] = r
		for i, j := range idx {
			c := &tab.Columns[j]
			args[i+1] = nil
			switch {
			case c.Kind == datasets.Numeric && !math.IsNaN(c.Num[r]):
				args[i+1] = c.Num[r]
			case c.Kind == datasets.Numeric && e.NaN && r%2 == 0:
				args[i+1] = math.NaN()
			case c.Kind == datasets.Categorical && c.Codes[r] != datasets.MissingCode:
				args[i+1] = c.Levels[c.Codes[r]]
			}
		}
		if _, err := ins.Exec(args...); err != nil {
			t.Fatal(err)
		}
	}
	if err := tx.Commit(); err != nil {
		t.Fatal(err)
	}
}

// checkSQL exports v, runs it over table name (holding tab's rows) and
// compares every row with v.Predict: the class exactly and the margin to
// the last bit (the SELECT adds the weights in Predict's order), so within
// 1e-9, the tolerance, too. The class totals it returns must give
// that margin: the winner's total minus the largest other.
func checkSQL(t *testing.T, db *sql.DB, name string, v *voters.Vote, schema []voters.ColumnSpec, tab *datasets.Table) {
	t.Helper()
	var q bytes.Buffer
	err := sqlexport.Write(&q, v, schema, sqlexport.Options{Table: name, Keep: []string{rowKey}, ClassWeights: true})
	if err != nil {
		t.Fatal(err)
	}
	rows := make([]int, tab.Rows)
	for i := range rows {
		rows[i] = i
	}
	wantClass, wantMargin, err := v.Predict(tab, rows)
	if err != nil {
		t.Fatal(err)
	}
	res, err := db.Query(q.String())
	if err != nil {
		t.Fatalf("the engine refuses the SELECT: %v", err)
	}
	defer res.Close()
	k := len(v.Classes)
	seen := make([]bool, tab.Rows)
	bad := 0
	for res.Next() {
		var key int
		var class string
		var margin float64
		totals := make([]float64, k)
		dst := []any{&key, &class, &margin}
		for c := range totals {
			dst = append(dst, &totals[c])
		}
		if err := res.Scan(dst...); err != nil {
			t.Fatal(err)
		}
		if key < 0 || key >= tab.Rows || seen[key] {
			t.Fatalf("row key %d twice or out of range", key)
		}
		seen[key] = true
		want := v.Classes[wantClass[key]]
		best, second := slices.Index(v.Classes, class), math.Inf(-1)
		for c, x := range totals {
			if c != best {
				second = max(second, x)
			}
		}
		if best < 0 || totals[best]-second != margin {
			t.Errorf("row %d: the totals %v do not give class %q and margin %v", key, totals, class, margin)
		}
		if class != want || margin != wantMargin[key] || !(math.Abs(margin-wantMargin[key]) <= 1e-9) {
			bad++
			if bad <= 5 {
				t.Errorf("row %d (%s): SQL says %q margin %v (totals %v), predict %q margin %v",
					key, describeRow(tab, schema, key), class, margin, totals, want, wantMargin[key])
			}
		}
	}
	if err := res.Err(); err != nil {
		t.Fatal(err)
	}
	if i := slices.Index(seen, false); i >= 0 {
		t.Fatalf("the SELECT returned no row for row %d", i)
	}
	if bad > 0 {
		t.Fatalf("%d of %d rows differ", bad, tab.Rows)
	}
	t.Logf("%d rows, %d classes, %d voters: SQL and predict agree on every class and margin (%d bytes of SQL)", tab.Rows, k, len(v.Voters), q.Len())
}

// checkONNX, when e.ONNX is set, exports v with onnxexport.Write, checks
// the file with onnx.checker (full_check), runs every row of tab through
// onnxruntime-node in one batch and compares each row with v.Predict
// (onnxrun.Compare): the class exactly, the margin and the class totals
// within 1e-9 and the margin to the last bit (the graph adds the weights
// in Predict's order). It runs in a subtest, so that a missing runtime
// skips the ONNX check alone (outside CI) and leaves the SQL result.
func (e Engine) checkONNX(t *testing.T, v *voters.Vote, schema []voters.ColumnSpec, tab *datasets.Table) {
	if !e.ONNX {
		return
	}
	t.Run("onnx", func(t *testing.T) {
		var b bytes.Buffer
		if err := onnxexport.Write(&b, v, schema, onnxexport.Options{ProducerVersion: "exportparity"}); err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(t.TempDir(), "vote.onnx")
		if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		onnxrun.Check(t, path)
		rows := make([]int, tab.Rows)
		for i := range rows {
			rows[i] = i
		}
		got := onnxrun.Run(t, path, onnxrun.Batch(t, tab, schema, rows))
		onnxrun.Compare(t, v, tab, rows, got, true)
		t.Logf("%d bytes of ONNX", b.Len())
	})
}

func describeRow(tab *datasets.Table, schema []voters.ColumnSpec, r int) string {
	var parts []string
	for _, c := range schema {
		col := &tab.Columns[tab.Column(c.Name)]
		if col.Kind == datasets.Numeric {
			parts = append(parts, fmt.Sprintf("%s=%v", c.Name, col.Num[r]))
		} else if col.Codes[r] == datasets.MissingCode {
			parts = append(parts, c.Name+"=NULL")
		} else {
			parts = append(parts, fmt.Sprintf("%s=%q", c.Name, col.Levels[col.Codes[r]]))
		}
	}
	return strings.Join(parts, " ")
}

// readFor reads data with the model's schema, as `surety predict` does.
func readFor(t *testing.T, m *trainer.Model, data []byte, name string) *datasets.Table {
	t.Helper()
	tab, err := datasets.Read(bytes.NewReader(data), name, m.ReadOptions())
	if err != nil {
		t.Fatal(err)
	}
	return tab
}

// train trains on data as `surety train` does, with a smaller pool to keep
// the test quick, and returns the model as written to and read back from
// its file (so the test exports what export reads).
func train(t *testing.T, data []byte, name, label string, family string, pool voters.PoolConfig) *trainer.Model {
	t.Helper()
	tab, err := datasets.Read(bytes.NewReader(data), name, datasets.ReadOptions{Label: label, DeferKinds: true})
	if err != nil {
		t.Fatal(err)
	}
	cfg := trainer.DefaultConfig()
	cfg.Seed, cfg.Family, cfg.Pool = 1, family, pool
	m, err := trainer.Train(context.Background(), tab, cfg)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := trainer.EncodeModel(&buf, m); err != nil {
		t.Fatal(err)
	}
	back, err := trainer.DecodeModel(&buf)
	if err != nil {
		t.Fatal(err)
	}
	return back
}

func demoCSV(t *testing.T, rows int, seed uint64) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := demodata.Write(&buf, demodata.Config{Rows: rows}, seed); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func uciCSV(t *testing.T, file string) []byte {
	t.Helper()
	b, err := os.ReadFile(ucidata.Path(t, file))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// smallPool keeps training quick: stumps at 16 thresholds, 4 bootstrap
// linear voters and the full linear voter.
func smallPool() voters.PoolConfig {
	p := voters.DefaultPoolConfig()
	p.LinearVoters = new(4)
	return p
}

// trained exports models that train writes (the certified
// vote, and the tandem posterior for a vote of many stumps) on the demo
// data, golearn's house-votes (categorical, '?' missing) and iris (three
// classes), and runs them on the engine over rows the model did not train on
// (the demo) or all the rows (the UCI sets).
func trained(t *testing.T, e Engine) {
	if testing.Short() {
		t.Skip("trains several models; skipped under -short")
	}
	cases := []struct {
		name, file, label string
		train, predict    func(t *testing.T) []byte
	}{
		{"demo", "pipes.csv", demodata.Label, func(t *testing.T) []byte { return demoCSV(t, 3000, 1) }, func(t *testing.T) []byte { return demoCSV(t, 3000, 2) }},
		{"house-votes", "house-votes-84.csv", "party", func(t *testing.T) []byte { return uciCSV(t, "house-votes-84.csv") }, func(t *testing.T) []byte { return uciCSV(t, "house-votes-84.csv") }},
		{"iris", "iris_headers.csv", "Species", func(t *testing.T) []byte { return uciCSV(t, "iris_headers.csv") }, func(t *testing.T) []byte { return uciCSV(t, "iris_headers.csv") }},
	}
	for _, tc := range cases {
		for _, family := range []string{"", "tandem"} {
			name := tc.name + "/certified"
			if family != "" {
				name = tc.name + "/" + family
			}
			t.Run(name, func(t *testing.T) {
				m := train(t, tc.train(t), tc.file, tc.label, family, smallPool())
				tab := readFor(t, m, tc.predict(t), tc.file)
				db := e.open(t)
				e.load(t, db, "rows", tab, m.Columns)
				checkSQL(t, db, "rows", m.Vote, m.Columns, tab)
				e.checkONNX(t, m.Vote, m.Columns, tab)
			})
		}
	}
}

// awkwardCSV is a training table with a column named as an SQL keyword
// (select), one with a double quote (a"b), a categorical column whose
// level holds a single quote (it's) and missing cells in every column.
func awkwardCSV(rows int) []byte {
	rng := rand.New(rand.NewPCG(7, 8))
	var b bytes.Buffer
	b.WriteString(`select,"a""b",from,order,y` + "\n")
	levels := []string{"p", "q", `"it's"`}
	for range rows {
		x := math.Round(rng.NormFloat64()*100) / 100
		z := math.Round(rng.Float64()*50) / 10
		lv := rng.IntN(3)
		o := rng.IntN(20)
		score := x + 0.3*float64(lv) - 0.1*float64(o%5) + rng.NormFloat64()*0.5
		y := "no"
		if score > 0.2 {
			y = "yes"
		}
		cells := []string{fmt.Sprint(x), fmt.Sprint(z), levels[lv], fmt.Sprint(o)}
		if c := rng.IntN(8); c < len(cells) {
			cells[c] = ""
		}
		b.WriteString(strings.Join(cells, ",") + "," + y + "\n")
	}
	return b.Bytes()
}

// awkwardTable builds rows for the votes vs out of their own cut points:
// every stump threshold and the float64 one ulp either side, 0 and -0,
// +Inf, -Inf and missing in every numeric column; every level, a level no
// voter knows, one with a quote and missing in every categorical column.
// Columns cycle through their values at different strides so that values
// meet in many combinations.
func awkwardTable(schema []voters.ColumnSpec, vs []*voters.Vote) *datasets.Table {
	values := map[string][]float64{}
	levels := map[string][]string{}
	for _, c := range schema {
		values[c.Name] = []float64{0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1), math.NaN()}
		levels[c.Name] = []string{"never seen", "it's", `q"`}
	}
	addLevel := func(col, l string) {
		if !slices.Contains(levels[col], l) {
			levels[col] = append(levels[col], l)
		}
	}
	for _, v := range vs {
		for _, vt := range v.Voters {
			switch s := vt.(type) {
			case *voters.Stump:
				x := s.Threshold
				values[s.Column] = append(values[s.Column], x, math.Nextafter(x, math.Inf(-1)), math.Nextafter(x, math.Inf(1)))
			case *voters.CategoryStump:
				addLevel(s.Column, s.Level)
			case *voters.Linear:
				for _, in := range s.Inputs {
					for _, l := range in.Levels {
						addLevel(in.Column, l)
					}
					if in.Kind == datasets.Numeric {
						values[in.Column] = append(values[in.Column], in.Mean, math.Nextafter(in.Mean, 0))
					}
				}
			}
		}
	}
	n := 0
	for _, c := range schema {
		n = max(n, len(values[c.Name]), len(levels[c.Name])+1)
	}
	n *= 3
	tab := &datasets.Table{Source: "awkward", Rows: n}
	for j, c := range schema {
		col := datasets.Column{Name: c.Name, Kind: c.Kind}
		for r := range n {
			i := r*(2*j+1) + j
			if c.Kind == datasets.Numeric {
				vals := values[c.Name]
				col.Num = append(col.Num, vals[i%len(vals)])
				continue
			}
			ls := levels[c.Name]
			code := uint32(i % (len(ls) + 1))
			if int(code) == len(ls) {
				code = datasets.MissingCode
			}
			col.Codes = append(col.Codes, code)
		}
		if c.Kind == datasets.Categorical {
			col.Levels = levels[c.Name]
		}
		tab.Columns = append(tab.Columns, col)
	}
	return tab
}

// awkward runs a trained vote and hand-made votes built to hit
// the edges (ties between classes, weights whose sum depends on its order,
// linear voters whose scores are NaN or infinite) over the awkward rows,
// in a table named by an SQL keyword.
func awkward(t *testing.T, e Engine) {
	m := train(t, awkwardCSV(800), "awkward.csv", "y", "tandem", smallPool())
	certified := train(t, awkwardCSV(800), "awkward.csv", "y", "", smallPool())
	schema := []voters.ColumnSpec{
		{Name: "select", Kind: datasets.Numeric},
		{Name: `a"b`, Kind: datasets.Numeric},
		{Name: "from", Kind: datasets.Categorical},
		{Name: "order", Kind: datasets.Numeric},
	}
	for _, c := range m.Columns {
		if !slices.ContainsFunc(schema, func(s voters.ColumnSpec) bool { return s.Name == c.Name && s.Kind == c.Kind }) {
			t.Fatalf("the trained model's column %v is not in the test's schema %v", c, schema)
		}
	}
	stump := func(col string, cut float64, below, above int, missBelow bool) *voters.Stump {
		return &voters.Stump{Column: col, Threshold: cut, Below: below, Above: above, MissingBelow: missBelow}
	}
	cat := func(col, level string, equal, other int, missEqual bool) *voters.CategoryStump {
		return &voters.CategoryStump{Column: col, Level: level, Equal: equal, Other: other, MissingEqual: missEqual}
	}
	two := []string{"no", "yes"}
	three := []string{"a", "b", "c"}
	hand := []struct {
		name string
		vote *voters.Vote
	}{
		{"two stumps that disagree: every row a tie", &voters.Vote{Classes: two, Weights: []float64{0.5, 0.5}, Voters: []voters.Voter{
			stump("select", 0.25, 0, 1, false), stump("select", 0.25, 1, 0, true),
		}}},
		{"three classes, equal weights: ties between b and c", &voters.Vote{Classes: three, Weights: []float64{1, 1, 1, 1}, Voters: []voters.Voter{
			stump("select", -1, 1, 2, true), stump(`a"b`, 2.5, 2, 1, false), cat("from", "q", 1, 2, true), cat("from", "it's", 0, 2, false),
		}}},
		{"weights whose sum depends on its order", &voters.Vote{Classes: two, Weights: []float64{0.1, 0.2, 0.6, 0.05}, Voters: []voters.Voter{
			cat("from", "never in the table", 0, 1, false), cat("from", "q", 0, 1, false), cat("from", "also absent", 0, 1, true), stump("order", 3, 0, 1, true),
		}}},
		{"linear voters: zero weights meet infinities (NaN scores), equal scores", &voters.Vote{Classes: three, Weights: []float64{0.4, 0.35, 0.25}, Voters: []voters.Voter{
			&voters.Linear{
				Inputs: []voters.LinearInput{
					{Column: "select", Kind: datasets.Numeric, Mean: 0.5, Scale: 2},
					{Column: "from", Kind: datasets.Categorical, Levels: []string{"p", "it's"}},
					{Column: `a"b`, Kind: datasets.Numeric, Mean: -1, Scale: 0.5},
				},
				Weights: [][]float64{{0, 1, 0, 0.5}, {1, 0, 1, 0}, {1, 0, 1, 0}},
				Bias:    []float64{0, 0.25, 0.25},
			},
			&voters.Linear{
				Inputs:  []voters.LinearInput{{Column: "order", Kind: datasets.Numeric, Mean: 2, Scale: 3}},
				Weights: [][]float64{{0}, {-1}, {0}},
				Bias:    []float64{0, 0, 0},
			},
			stump("order", 2, 2, 0, false),
		}}},
	}
	votes := []*voters.Vote{m.Vote, certified.Vote}
	for _, h := range hand {
		votes = append(votes, h.vote)
	}
	tab := awkwardTable(schema, votes)
	db := e.open(t)
	e.load(t, db, "group", tab, schema)
	t.Run("trained tandem posterior", func(t *testing.T) {
		checkSQL(t, db, "group", m.Vote, m.Columns, tab)
		e.checkONNX(t, m.Vote, m.Columns, tab)
	})
	t.Run("trained certified vote", func(t *testing.T) {
		checkSQL(t, db, "group", certified.Vote, certified.Columns, tab)
		e.checkONNX(t, certified.Vote, certified.Columns, tab)
	})
	for _, h := range hand {
		t.Run(h.name, func(t *testing.T) {
			checkSQL(t, db, "group", h.vote, schema, tab)
			e.checkONNX(t, h.vote, schema, tab)
		})
	}
}
