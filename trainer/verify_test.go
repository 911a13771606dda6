package trainer

import (
	"bytes"
	"context"
	"strings"
	"testing"

	"surety/datasets"
	"surety/voters"
)

// reread writes m to a model file's bytes and reads it back, as a reviewer
// receives it.
func reread(t *testing.T, m *Model) *Model {
	t.Helper()
	var buf bytes.Buffer
	if err := EncodeModel(&buf, m); err != nil {
		t.Fatal(err)
	}
	back, err := DecodeModel(&buf)
	if err != nil {
		t.Fatal(err)
	}
	return back
}

// VerifyData reproduces every kind of certificate the suite's models hold
// from the training table and the model file alone: the default families,
// one family fixed in advance (the posterior then ships, and its per-class
// bounds are PAC-Bayesian), a cost matrix, a sweep's selected and
// unselected models, and a many-class label with classes that have no
// certify row.
func TestVerifyDataReproduces(t *testing.T) {
	ctx := context.Background()
	small := voters.PoolConfig{Thresholds: 4, LinearVoters: intp(2)}
	two := demoTable(t, 700, 5)
	tail := longTailTable(t, 500, 6)
	costs := &CostMatrix{Classes: []string{"leak", "sound"}, Costs: [][]float64{{0, 20}, {1, 0}}}
	train := func(tab *datasets.Table, cfg Config) *Model {
		m, err := Train(ctx, tab, cfg)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	sweep, err := Sweep(ctx, two, Config{Seed: 4, Delta: 0.1, Pool: small},
		[]Setting{{Objective: Linear, Tradeoff: 1, Prior: LearnedPrior}, {Objective: Tandem, Tradeoff: 1, Prior: UniformPrior}})
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		tab  *datasets.Table
		m    *Model
	}{
		{"default", two, train(two, Config{Seed: 1, Pool: small})},
		{"tandem family fixed", two, train(two, Config{Seed: 2, Family: FamilyTandem, Pool: small})},
		{"costs", two, train(two, Config{Seed: 3, Costs: costs, Pool: small})},
		{"linear objective, uniform prior", two, train(two, Config{Seed: 3, Objective: Linear, Tradeoff: 3, Prior: UniformPrior, Pool: small})},
		{"sweep selected", two, sweep.SelectedModel},
		{"sweep setting", two, sweep.Models[1]},
		// Without the full linear voter, whose cross-validation over 64
		// classes would take most of this test's time.
		{"long tail", tail, train(tail, Config{Seed: 7, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(2), NoFullLinear: true}})},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m := reread(t, c.m)
			a, err := VerifyData(ctx, m, c.tab)
			if err != nil {
				t.Fatal(err)
			}
			if !a.Match {
				t.Fatalf("no match: %s", a.FirstDifference)
			}
			if c.name == "tandem family fixed" && m.Certificate.PerClass.Classes[0].Terms.Name != "first-order" {
				t.Errorf("the posterior's per-class bound is %s", m.Certificate.PerClass.Classes[0].Terms.Name)
			}
		})
	}
}

// VerifyData catches a model trained on another file, one trained with
// another seed than it states, and a forged fingerprint.
func TestVerifyDataCatches(t *testing.T) {
	ctx := context.Background()
	small := voters.PoolConfig{Thresholds: 4, LinearVoters: intp(2)}
	a := demoTable(t, 700, 5)
	b := demoTable(t, 700, 6)
	train := func(tab *datasets.Table, seed uint64) *Model {
		m, err := Train(ctx, tab, Config{Seed: seed, Pool: small})
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	otherSeed := train(a, 9)
	otherSeed.Provenance.Seed = 1 // a forger who also recomputes the hash
	forged := train(b, 1)
	forged.Provenance.Data = a.Fingerprint
	cases := []struct {
		name string
		m    *Model
		want string // the step named first
	}{
		{"another file", train(b, 1), "fingerprint"},
		{"another seed", otherSeed, "voter"},
		{"forged fingerprint", forged, "voter"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			res, err := VerifyData(ctx, reread(t, c.m), a)
			if err != nil {
				t.Fatal(err)
			}
			if res.Match {
				t.Fatal("matched")
			}
			if !strings.HasPrefix(res.FirstDifference, c.want) {
				t.Errorf("first difference %q, want one at %q", res.FirstDifference, c.want)
			}
		})
	}
}
