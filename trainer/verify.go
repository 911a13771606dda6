package trainer

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"slices"

	"surety/datasets"
	"surety/voters"
)

// VerifyStep is one comparison of an audit with data: what the model file
// states beside what the data and the stored settings give again.
type VerifyStep struct {
	// Step names what was compared: "fingerprint", "split", "pool",
	// "empirical", "family tandem", "class leak", "weights", ...
	Step       string `json:"step"`
	Stored     string `json:"stored"`
	Recomputed string `json:"recomputed"`
	Match      bool   `json:"match"`
}

// DataAudit is the result of VerifyData.
type DataAudit struct {
	// Ledger is the ledger recomputed from the stored terms alone.
	Ledger *LedgerAudit `json:"ledger"`
	Steps  []VerifyStep `json:"steps"`
	// Match is true when every step matches; FirstDifference otherwise
	// names the first step that does not, with both values.
	Match           bool   `json:"match"`
	FirstDifference string `json:"first_difference,omitempty"`
}

func (a *DataAudit) step(name, stored, got string, ok bool) bool {
	a.Steps = append(a.Steps, VerifyStep{Step: name, Stored: stored, Recomputed: got, Match: ok})
	if !ok && a.FirstDifference == "" {
		a.FirstDifference = fmt.Sprintf("%s: the model states %s, the data give %s", name, stored, got)
	}
	return ok
}

// ConfigOf returns the training configuration m's provenance records: the
// seed, split fraction, pool settings, objective, trade-off, prior, delta,
// family choice, optimiser bound and cost matrix it was trained with.
func ConfigOf(m *Model) Config {
	p := m.Provenance
	c := Config{Objective: p.Objective, Tradeoff: p.Tradeoff, Delta: m.Certificate.Delta,
		PriorFraction: p.PriorFraction, Prior: p.Prior, PriorMix: p.PriorMix, Seed: p.Seed,
		Pool: p.Pool, Family: p.Family, MaxIterations: p.MaxIterations}
	if m.Certificate.Cost != nil {
		mat := m.Certificate.Cost.Matrix
		c.Costs = &mat
	}
	return c
}

// VerifyData audits m against the table t it was trained on, as a
// reviewer with only the CSV file and the model file would: it checks t's
// fingerprint against the one m records, re-derives the split from the
// stored seed, rebuilds the pool on the prior rows, recounts every
// statistic on the certify rows, refits the posterior with the stored
// settings (training is deterministic), recomputes every bound, and
// compares each with the file; it also counts the stored vote's errors on
// the certify rows directly. It stops at the first step that cannot go on
// (another file, another pool); the result's FirstDifference names the
// first mismatch. Read t as training does: with
// datasets.ReadOptions{DeferKinds: true} and m's label. An error means the
// audit could not run at all.
func VerifyData(ctx context.Context, m *Model, t *datasets.Table) (*DataAudit, error) {
	a := &DataAudit{Ledger: AuditLedger(m)}
	ledger := "every entry follows from its terms"
	if a.Ledger.Problem != "" {
		a.step("ledger", ledger, a.Ledger.Problem, false)
		a.FirstDifference = a.Ledger.Problem
	} else {
		a.step("ledger", ledger, ledger, true)
	}
	fp, want := t.Fingerprint, m.Provenance.Data
	if !a.step("fingerprint", fmt.Sprintf("sha256 %s, %d rows, %d columns", short(want.SHA256), want.Rows, want.Columns),
		fmt.Sprintf("sha256 %s, %d rows, %d columns", short(fp.SHA256), fp.Rows, fp.Columns), fp == want) {
		return a.done(), nil
	}
	if !a.step("label", fmt.Sprintf("%q with classes %v", m.Label, m.Classes), fmt.Sprintf("%q with classes %v", t.LabelName, t.Classes),
		t.LabelName == m.Label && slices.Equal(t.Classes, m.Classes)) {
		return a.done(), nil
	}
	cfg := ConfigOf(m)
	p, err := Prepare(ctx, t, cfg)
	if err != nil {
		a.step("pipeline", "a trained model", "an error: "+err.Error(), false)
		return a.done(), nil
	}
	pv := m.Provenance
	if !a.step("split", fmt.Sprintf("%d prior, %d certify rows (seed %d)", pv.PriorRows, pv.CertifyRows, pv.Seed),
		fmt.Sprintf("%d prior, %d certify rows", len(p.priorRows), len(p.certRows)),
		pv.PriorRows == len(p.priorRows) && pv.CertifyRows == len(p.certRows)) {
		return a.done(), nil
	}
	if !a.step("pool size", fmt.Sprint(len(m.Vote.Voters)), fmt.Sprint(len(p.pool.Voters)), len(m.Vote.Voters) == len(p.pool.Voters)) {
		return a.done(), nil
	}
	for i := range m.Vote.Voters {
		sb, err1 := voters.MarshalVoters(m.Vote.Voters[i : i+1])
		gb, err2 := voters.MarshalVoters(p.pool.Voters[i : i+1])
		if err1 != nil || err2 != nil || !bytes.Equal(sb, gb) {
			a.step(fmt.Sprintf("voter %d", i), m.Vote.Voters[i].Describe(m.Classes), p.pool.Voters[i].Describe(m.Classes), false)
			return a.done(), nil
		}
	}
	a.step("pool", fmt.Sprintf("%d voters", len(m.Vote.Voters)), "the same voters, byte for byte", true)
	sc, _ := json.Marshal(m.Columns)
	gc, _ := json.Marshal(p.pool.Schema)
	if !a.step("schema", fmt.Sprintf("%d columns", len(m.Columns)), fmt.Sprintf("%d columns", len(p.pool.Schema)), bytes.Equal(sc, gc)) {
		return a.done(), nil
	}

	s := Setting{Objective: pv.Objective, Tradeoff: pv.Tradeoff, Prior: pv.Prior}
	f, err := p.fit(ctx, s)
	if err != nil {
		a.step("fit", "a fitted posterior", "an error: "+err.Error(), false)
		return a.done(), nil
	}
	got := f.model
	if pv.SweepSelected && pv.SweepSettings > 0 {
		if got, err = p.recertify(f, cfg.Delta/float64(pv.SweepSettings)); err != nil {
			a.step("certify", "a certificate", "an error: "+err.Error(), false)
			return a.done(), nil
		}
		got.Certificate.Delta = cfg.Delta
	}
	a.compare(m, got)
	a.recount(m, p)
	return a.done(), nil
}

func (a *DataAudit) done() *DataAudit {
	a.Match = a.FirstDifference == ""
	for _, s := range a.Steps {
		a.Match = a.Match && s.Match
	}
	return a
}

func num(x float64) string { return fmt.Sprintf("%.10g", x) }

// compare sets the stored model m beside the one the data give.
func (a *DataAudit) compare(m, got *Model) {
	se, ge := m.Empirical, got.Empirical
	for _, e := range []struct {
		name      string
		stored, g float64
	}{
		{"empirical gibbs_risk", se.GibbsRisk, ge.GibbsRisk},
		{"empirical tandem_risk", se.TandemRisk, ge.TandemRisk},
		{"empirical kl", se.KL, ge.KL},
		{"empirical posterior_vote_errors", float64(se.PosteriorVoteErrors), float64(ge.PosteriorVoteErrors)},
		{"empirical vote_error", se.VoteError, ge.VoteError},
	} {
		a.step(e.name, num(e.stored), num(e.g), agrees(e.stored, e.g))
	}
	sc, gc := m.Certificate, got.Certificate
	if !a.step("families", fmt.Sprint(len(sc.Families)), fmt.Sprint(len(gc.Families)), len(sc.Families) == len(gc.Families)) {
		return
	}
	for i, sf := range sc.Families {
		gf := gc.Families[i]
		name := "family " + sf.Name
		switch {
		case sf.Name != gf.Name || sf.Vote != gf.Vote:
			a.step(name, sf.Name+" of the "+sf.Vote+" vote", gf.Name+" of the "+gf.Vote+" vote", false)
		case (sf.Terms == nil) != (gf.Terms == nil):
			a.step(name, fmt.Sprintf("%v (%s)", sf.Value, sf.Reason), fmt.Sprintf("%v (%s)", gf.Value, gf.Reason), false)
		case sf.Terms != nil:
			if d := diffBound(*sf.Terms, *gf.Terms); d != "" {
				a.step(name, num(sf.Value), num(gf.Value)+" ("+d+")", false)
				continue
			}
			fallthrough
		default:
			a.step(name, num(sf.Value), num(gf.Value), agrees(sf.Value, gf.Value) && agrees(sf.Delta, gf.Delta))
		}
	}
	a.step("certificate", fmt.Sprintf("%s from %s (%s vote)", num(sc.RiskBound), sc.Family, sc.Vote),
		fmt.Sprintf("%s from %s (%s vote)", num(gc.RiskBound), gc.Family, gc.Vote),
		agrees(sc.RiskBound, gc.RiskBound) && sc.Family == gc.Family && sc.Vote == gc.Vote && agrees(sc.Delta, gc.Delta))
	if sc.PerClass != nil && gc.PerClass != nil && len(sc.PerClass.Classes) == len(gc.PerClass.Classes) {
		for i, s := range sc.PerClass.Classes {
			g := gc.PerClass.Classes[i]
			a.step("class "+s.Class, fmt.Sprintf("%s (%d errors of %d rows)", num(s.Value), s.Errors, s.Rows),
				fmt.Sprintf("%s (%d errors of %d rows)", num(g.Value), g.Errors, g.Rows),
				s.Class == g.Class && s.Rows == g.Rows && s.Errors == g.Errors && agrees(s.Value, g.Value) && agrees(s.Delta, g.Delta))
		}
	} else {
		a.step("per-class", fmt.Sprint(sc.PerClass != nil), fmt.Sprint(gc.PerClass != nil), false)
	}
	if sc.Cost != nil || gc.Cost != nil {
		if sc.Cost == nil || gc.Cost == nil {
			a.step("cost", fmt.Sprint(sc.Cost != nil), fmt.Sprint(gc.Cost != nil), false)
		} else {
			a.step("cost", fmt.Sprintf("%s (mean %s)", num(sc.Cost.Value), num(sc.Cost.MeanCost)), fmt.Sprintf("%s (mean %s)", num(gc.Cost.Value), num(gc.Cost.MeanCost)),
				agrees(sc.Cost.Value, gc.Cost.Value) && agrees(sc.Cost.MeanCost, gc.Cost.MeanCost))
		}
	}
	var worst float64
	worstAt := 0
	for i, w := range m.Vote.Weights {
		if i < len(got.Vote.Weights) {
			if d := math.Abs(w - got.Vote.Weights[i]); d > worst {
				worst, worstAt = d, i
			}
		}
	}
	a.step("weights", fmt.Sprintf("%d weights", len(m.Vote.Weights)), fmt.Sprintf("largest difference %.3g (voter %d)", worst, worstAt),
		len(m.Vote.Weights) == len(got.Vote.Weights) && worst <= LedgerTolerance)
}

// recount counts the stored vote's errors on the re-derived certify rows
// directly, in all and by class, and compares them with the file.
func (a *DataAudit) recount(m *Model, p *Prepared) {
	s, err := p.score("stored", m.Vote.Weights)
	if err != nil {
		a.step("recount", "the stored vote's errors", "an error: "+err.Error(), false)
		return
	}
	want := m.Empirical.VoteError * float64(m.Empirical.M)
	a.step("recount errors", fmt.Sprintf("%.0f of %d certify rows", want, m.Empirical.M), fmt.Sprintf("%d", s.errs), math.Abs(want-float64(s.errs)) < 0.5)
	if pc := m.Certificate.PerClass; pc != nil && len(pc.Classes) == len(s.classErrs) {
		for c, cb := range pc.Classes {
			a.step("recount class "+cb.Class, fmt.Sprint(cb.Errors), fmt.Sprint(s.classErrs[c]), cb.Errors == s.classErrs[c])
		}
	}
}
