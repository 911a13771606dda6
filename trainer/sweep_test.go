package trainer

import (
	"context"
	"math"
	"testing"

	"surety/voters"
)

func TestGrid(t *testing.T) {
	cases := []struct {
		name       string
		objectives []Objective
		tradeoffs  []float64
		priors     []PriorKind
		want       int
	}{
		// The trade-off enters the linear objective only.
		{"linear and tandem", []Objective{Linear, Tandem}, []float64{0.1, 1, 10}, []PriorKind{LearnedPrior}, 4},
		{"two priors", []Objective{Linear, CBound, Tandem}, []float64{0.3, 3}, []PriorKind{LearnedPrior, UniformPrior}, 8},
		{"duplicates dropped", []Objective{Tandem, Tandem}, []float64{1, 1}, []PriorKind{UniformPrior}, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := Grid(c.objectives, c.tradeoffs, c.priors); len(got) != c.want {
				t.Errorf("%d settings %v, want %d", len(got), got, c.want)
			}
		})
	}
}

// A sweep's selection pays a union bound over its K settings: every
// selection certificate is at delta / K, so never below the same setting's
// certificate at delta (bounds are monotone in delta: common practice, no
// source), and the selected model states that certificate.
func TestSweepSelectsHonestly(t *testing.T) {
	tab := demoTable(t, 1200, 21)
	settings := Grid([]Objective{Linear, Tandem, CBound}, []float64{0.3, 3}, []PriorKind{LearnedPrior, UniformPrior})
	res, err := Sweep(context.Background(), tab, Config{Seed: 5, Delta: 0.1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(4)}}, settings)
	if err != nil {
		t.Fatal(err)
	}
	if res.K != len(settings) || len(res.Rows) != res.K || len(res.Models) != res.K {
		t.Fatalf("K %d, %d rows, %d models for %d settings", res.K, len(res.Rows), len(res.Models), len(settings))
	}
	if want := 0.1 / float64(res.K); math.Abs(res.SelectionDelta-want) > 1e-15 {
		t.Errorf("selection delta %v, want %v", res.SelectionDelta, want)
	}
	for i, r := range res.Rows {
		if r.SelectionCertificate < r.Certificate {
			t.Errorf("%s: selection certificate %v below the certificate at delta %v", r.Name, r.SelectionCertificate, r.Certificate)
		}
		if r.SelectionCertificate < res.Rows[res.Selected].SelectionCertificate {
			t.Errorf("%s (%d) beats the selected %d", r.Name, i, res.Selected)
		}
		if r.Certificate != res.Models[i].Certificate.RiskBound {
			t.Errorf("%s: row %v, model %v", r.Name, r.Certificate, res.Models[i].Certificate.RiskBound)
		}
	}
	sel := res.SelectedModel
	if sel.Certificate.RiskBound != res.Rows[res.Selected].SelectionCertificate || sel.Certificate.Delta != 0.1 || sel.Provenance.SweepSettings != res.K {
		t.Errorf("selected model: bound %v delta %v K %d, want %v 0.1 %d",
			sel.Certificate.RiskBound, sel.Certificate.Delta, sel.Provenance.SweepSettings, res.Rows[res.Selected].SelectionCertificate, res.K)
	}
	shares := sel.Certificate.Spent()
	if math.Abs(shares-res.SelectionDelta) > 1e-15 {
		t.Errorf("selected ledger's deltas sum to %v, want delta / K = %v", shares, res.SelectionDelta)
	}
	// The same setting trained alone gives the same model as in the sweep.
	alone, err := Train(context.Background(), tab, Config{Seed: 5, Delta: 0.1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(4)},
		Objective: settings[0].Objective, Tradeoff: settings[0].Tradeoff, Prior: settings[0].Prior})
	if err != nil {
		t.Fatal(err)
	}
	if alone.Certificate.RiskBound != res.Rows[0].Certificate {
		t.Errorf("trained alone %v, in the sweep %v", alone.Certificate.RiskBound, res.Rows[0].Certificate)
	}
}

// TestSweepStatementOneSetting: a sweep of one setting makes no choice,
// and its statement says so without "of 1 settings".
func TestSweepStatementOneSetting(t *testing.T) {
	tab := demoTable(t, 600, 22)
	res, err := Sweep(context.Background(), tab, Config{Seed: 5, Delta: 0.1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2)}}, []Setting{{Objective: Tandem, Tradeoff: 1, Prior: LearnedPrior}})
	if err != nil {
		t.Fatal(err)
	}
	want := "One setting, tandem prior=learned, was fitted; its certificate is " + Percent(res.Rows[0].SelectionCertificate, true) + " at delta = 0.1."
	if res.Statement != want {
		t.Fatalf("statement %q, want %q", res.Statement, want)
	}
}
