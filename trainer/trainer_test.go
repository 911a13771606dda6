package trainer

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/objective"
	"surety/voters"
)

// demoTable reads rows of demo data through the real reader.
func demoTable(tb testing.TB, rows int, seed uint64) *datasets.Table {
	tb.Helper()
	var buf bytes.Buffer
	if err := demodata.Write(&buf, demodata.Config{Rows: rows}, seed); err != nil {
		tb.Fatal(err)
	}
	t, err := datasets.Read(&buf, "demo", datasets.ReadOptions{Label: demodata.Label})
	if err != nil {
		tb.Fatal(err)
	}
	return t
}

// The linear trade-off C m r(Q) + KL(Q||P) is minimised by the Gibbs
// posterior q_i ∝ p_i exp(-C m r_i) (Catoni 2007, IMS lecture notes): the
// optimiser, started away from it, must find it to 1e-6 in total variation.
func TestOptimiserFindsGibbsPosterior(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	cases := []struct {
		name string
		n, m int
		c    float64
	}{
		{"few voters", 5, 200, 1},
		{"many voters", 300, 1000, 0.5},
		{"strong trade-off", 40, 500, 5},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			risks := make([]float64, tc.n)
			prior := make([]float64, tc.n)
			var s float64
			for i := range risks {
				risks[i] = 0.2 + 0.3*rng.Float64()
				prior[i] = 0.5 + rng.Float64()
				s += prior[i]
			}
			for i := range prior {
				prior[i] /= s
			}
			uniform := make([]float64, tc.n)
			for i := range uniform {
				uniform[i] = 1 / float64(tc.n)
			}
			prob, err := objective.LinearObjective(risks, prior, tc.m, tc.c)
			if err != nil {
				t.Fatal(err)
			}
			q, res, err := minimizeSimplex(prob, []startPoint{{"uniform", uniform}}, 5000)
			if err != nil {
				t.Fatal(err)
			}
			want, err := objective.GibbsPosterior(risks, prior, tc.m, tc.c)
			if err != nil {
				t.Fatal(err)
			}
			var tv float64
			for i := range q {
				tv += math.Abs(q[i]-want[i]) / 2
			}
			if tv > 1e-6 {
				t.Errorf("total variation to the Gibbs posterior %.3g after %d iterations (%s)", tv, res.Iterations, res.Status)
			}
		})
	}
}

// The final objective value never exceeds its value at the uniform posterior
// or at the Gibbs posterior (common practice, no source: a descent method
// started at the best of them).
func TestFitNeverWorseThanStarts(t *testing.T) {
	tab := demoTable(t, 2000, 5)
	for _, obj := range Objectives {
		t.Run(string(obj), func(t *testing.T) {
			cfg := Config{Objective: obj, Seed: 1}.withDefaults()
			rows := make([]int, tab.Rows)
			for i := range rows {
				rows[i] = i
			}
			pool, err := voters.BuildPool(tab, rows[:1000], voters.PoolConfig{}, rand.New(rand.NewPCG(1, 1)))
			if err != nil {
				t.Fatal(err)
			}
			st, err := pool.Count(tab, rows[1000:])
			if err != nil {
				t.Fatal(err)
			}
			n := len(pool.Voters)
			uniform := make([]float64, n)
			for i := range uniform {
				uniform[i] = 1 / float64(n)
			}
			q, res, err := fit(cfg, ratesOf(st), uniform)
			if err != nil {
				t.Fatal(err)
			}
			spec, _ := specOf(obj)
			prob, err := spec.problem(ratesOf(st), uniform, cfg)
			if err != nil {
				t.Fatal(err)
			}
			final := prob.Func(q)
			if !res.Converged {
				t.Errorf("did not converge: %s", res.Summary())
			}
			if math.Abs(final-res.Value) > 1e-12*math.Max(1, math.Abs(final)) {
				t.Errorf("reported value %v, recomputed %v", res.Value, final)
			}
			gibbs, err := objective.GibbsPosterior(st.Risks(), uniform, st.M, cfg.Tradeoff)
			if err != nil {
				t.Fatal(err)
			}
			for _, start := range [][]float64{uniform, gibbs} {
				if v := prob.Func(start); final > v {
					t.Errorf("final value %v exceeds a start's %v", final, v)
				}
			}
		})
	}
}

func TestTrainIsDeterministic(t *testing.T) {
	tab := demoTable(t, 1500, 9)
	var files [][]byte
	for _, procs := range []int{1, 2} {
		old := runtime.GOMAXPROCS(procs)
		m, err := Train(context.Background(), tab, Config{Seed: 4})
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(t.TempDir(), "m.json")
		if err := WriteModel(path, m); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, b)
	}
	if !bytes.Equal(files[0], files[1]) {
		t.Fatal("model files differ between GOMAXPROCS 1 and 2")
	}
	m, err := DecodeModel(bytes.NewReader(files[0]))
	if err != nil {
		t.Fatalf("reading back: %v", err)
	}
	again, _ := json.MarshalIndent(m, "", "  ")
	if !bytes.Equal(append(again, '\n'), files[0]) {
		t.Error("a model read back does not write the same bytes")
	}
}

func TestDecodeModelRejects(t *testing.T) {
	tab := demoTable(t, 800, 2)
	m, err := Train(context.Background(), tab, Config{Seed: 1, Pool: voters.PoolConfig{}})
	if err != nil {
		t.Fatal(err)
	}
	good, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	edit := func(f func(map[string]any)) []byte {
		var v map[string]any
		json.Unmarshal(good, &v)
		f(v)
		b, _ := json.Marshal(v)
		return b
	}
	cases := []struct {
		name string
		file []byte
	}{
		{"wrong format", edit(func(v map[string]any) { v["surety_model_format"] = 99 })},
		{"format 1", edit(func(v map[string]any) { v["surety_model_format"] = 1 })},
		{"no vote", edit(func(v map[string]any) { delete(v, "vote") })},
		{"unknown column kind", edit(func(v map[string]any) {
			v["columns"].([]any)[0].(map[string]any)["kind"] = "text"
		})},
		{"weights off the simplex", edit(func(v map[string]any) {
			w := v["vote"].(map[string]any)["weights"].([]any)
			w[0] = w[0].(float64) + 0.5
		})},
		{"negative weight", edit(func(v map[string]any) {
			w := v["vote"].(map[string]any)["weights"].([]any)
			w[0], w[1] = -0.25, w[1].(float64)+w[0].(float64)+0.25
		})},
		{"voter on an unknown column", edit(func(v map[string]any) {
			v["columns"] = v["columns"].([]any)[1:]
		})},
		{"negative margin count", edit(func(v map[string]any) {
			c := v["empirical"].(map[string]any)["margins"].(map[string]any)["counts"].([]any)
			c[0] = -5
		})},
		{"margin bins upside down", edit(func(v map[string]any) {
			v["empirical"].(map[string]any)["margins"].(map[string]any)["lo"] = 2
		})},
		{"not json", []byte("{")},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if _, err := DecodeModel(bytes.NewReader(c.file)); err == nil {
				t.Error("accepted")
			}
		})
	}
}

// The promise of the product: over repeated draws of the data, the
// certificate at delta = 0.1 is below the true error in at most a delta
// share of runs, and so is any certificate of the ledger (overall, each
// class's error rate, the expected cost for a cost matrix of our own). With 300 runs, the count of failures is binomial with
// p <= 0.1; allowing 0.1 + 3 standard deviations (3 sqrt(0.1*0.9/300) =
// 0.052, common practice, no source) makes a false alarm rare. The true
// error is measured on 50,000 fresh rows from the same generator, whose own
// noise (standard deviation under 0.0023) is far inside the margin.
func TestCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: 300 train-and-certify runs")
	}
	t.Parallel()
	const runs, rows, freshRows, delta = 300, 800, 50000, 0.1
	var buf bytes.Buffer
	if err := demodata.Write(&buf, demodata.Config{Rows: freshRows}, 999999); err != nil {
		t.Fatal(err)
	}
	fresh, err := datasets.Read(&buf, "fresh", datasets.ReadOptions{Label: demodata.Label})
	if err != nil {
		t.Fatal(err)
	}
	// A cost matrix of our own: a missed leak costs 20, a false alarm 1.
	costs := &CostMatrix{Classes: []string{"leak", "sound"}, Costs: [][]float64{{0, 20}, {1, 0}}}
	fails, classFails, costFails, anyFails := 0, 0, 0, 0
	for r := range runs {
		tab := demoTable(t, rows, uint64(r))
		m, err := Train(context.Background(), tab, Config{Seed: uint64(r), Delta: delta, Costs: costs, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(4)}})
		if err != nil {
			t.Fatal(err)
		}
		truth, err := trueRates(m, fresh, costs)
		if err != nil {
			t.Fatal(err)
		}
		wrong := false
		if truth.errorRate > m.Certificate.RiskBound {
			fails++
			wrong = true
		}
		for c, cb := range m.Certificate.PerClass.Classes {
			if truth.classRates[c] > cb.Value {
				classFails++
				wrong = true
				break
			}
		}
		if truth.cost > m.Certificate.Cost.Value {
			costFails++
			wrong = true
		}
		if wrong {
			anyFails++
		}
		// Empirical vote error <= 2 x empirical Gibbs risk on every run
		// (Markov's inequality, pointwise; e.g. Langford & Shawe-Taylor 2002).
		e := m.Empirical
		if float64(e.PosteriorVoteErrors)/float64(e.M) > 2*e.GibbsRisk+1e-12 {
			t.Errorf("run %d: vote error %v above twice the Gibbs risk %v", r, float64(e.PosteriorVoteErrors)/float64(e.M), e.GibbsRisk)
		}
	}
	limit := delta + 3*math.Sqrt(delta*(1-delta)/runs)
	if rate := float64(fails) / runs; rate > limit {
		t.Errorf("certificate below the true error in %d of %d runs (%.3f > %.3f)", fails, runs, rate, limit)
	}
	// Every certificate of the ledger holds at once with probability at
	// least 1 - delta (the shares sum to delta), so the runs where any of
	// them (overall, either class, cost) is below its true value obey the
	// same limit.
	if rate := float64(anyFails) / runs; rate > limit {
		t.Errorf("some certificate below its true value in %d of %d runs (%.3f > %.3f)", anyFails, runs, rate, limit)
	}
	t.Logf("certificate below the true error in %d of %d runs; a per-class bound below its class's true error in %d; the cost bound below the true cost in %d; any of them in %d",
		fails, runs, classFails, costFails, anyFails)
}

// truth is a model's true error rate, per-class error rates and mean cost,
// measured on fresh rows.
type truth struct {
	errorRate  float64
	classRates []float64
	cost       float64
}

// trueRates counts m's errors (ties are errors), by class, and its mean
// cost for costs (in the model's class order) on the fresh table.
func trueRates(m *Model, fresh *datasets.Table, costs *CostMatrix) (truth, error) {
	c, err := costs.forClasses(m.Classes)
	if err != nil {
		return truth{}, err
	}
	if !slices.Equal(fresh.Classes, m.Classes) {
		return truth{}, fmt.Errorf("fresh classes %v, model classes %v", fresh.Classes, m.Classes)
	}
	cls, margins, err := m.Predict(fresh)
	if err != nil {
		return truth{}, err
	}
	k := len(m.Classes)
	rows, errs := make([]int, k), make([]int, k)
	var wrong int
	var cost float64
	for r, y := range fresh.Label {
		// fresh's classes are the model's (both sorted, both classes seen).
		rows[y]++
		j := cls[r]
		if margins[r] == 0 {
			j = -1
		}
		if j != y {
			errs[y]++
			wrong++
		}
		cost += c.rowCost(y, j)
	}
	tr := truth{errorRate: float64(wrong) / float64(fresh.Rows), cost: cost / float64(fresh.Rows), classRates: make([]float64, k)}
	for i := range k {
		tr.classRates[i] = float64(errs[i]) / float64(max(rows[i], 1))
	}
	return tr, nil
}

func intp(v int) *int { return &v }

// A family fixed in advance gets the whole delta; an unknown one is
// refused before any work.
func TestFamilyFixedInAdvance(t *testing.T) {
	tab := demoTable(t, 800, 2)
	cases := []struct {
		name, family string
		lines        int
	}{
		{"all", "", 7},
		{"hold-out", FamilyHoldOut, 1},
		{"boosted", FamilyBoosted, 1},
		{"logistic", FamilyLogistic, 1},
		{"tandem", FamilyTandem, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m, err := Train(context.Background(), tab, Config{Seed: 1, Family: c.family, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(2)}})
			if err != nil {
				t.Fatal(err)
			}
			cert := m.Certificate
			if len(cert.Families) != c.lines {
				t.Fatalf("%d ledger lines, want %d", len(cert.Families), c.lines)
			}
			// The family and the per-class line share delta.
			sum := cert.Spent()
			if math.Abs(sum-cert.Delta) > 1e-15 || (c.family != "" && cert.Family != c.family) {
				t.Errorf("shares sum to %v of %v; family %s", sum, cert.Delta, cert.Family)
			}
		})
	}
	if _, err := Train(context.Background(), tab, Config{Family: "best"}); err == nil || !strings.Contains(err.Error(), "unknown certificate family") {
		t.Errorf("unknown family: %v", err)
	}
}
