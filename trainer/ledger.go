package trainer

import (
	"fmt"
	"math"
	"slices"
)

// AuditLine is one entry of a model's ledger beside its recomputation.
type AuditLine struct {
	// Entry names the line: "family tandem", "class leak", "cost",
	// "certificate", "delta".
	Entry      string  `json:"entry"`
	Stored     float64 `json:"stored"`
	Recomputed float64 `json:"recomputed"`
	Match      bool    `json:"match"`
	// Problem says what disagrees, when Match is false.
	Problem string `json:"problem,omitempty"`
}

// LedgerAudit is a model's ledger recomputed from its stored terms alone.
type LedgerAudit struct {
	Lines []AuditLine `json:"lines"`
	// Problem is the first disagreement, "" when every line matches.
	Problem string `json:"problem,omitempty"`
}

// AuditLedger recomputes every entry of m's ledger from its stored terms
// (m, KL, the empirical terms and its delta share) with package
// objective's bound functions, and checks that the certificate is what the
// ledger says: the smallest family value, its family and vote, shares that
// sum to the stated delta (delta / K for a sweep's selection), the
// per-class and cost certificates at their shares. Numbers agree when
// within LedgerTolerance. It needs no data.
func AuditLedger(m *Model) *LedgerAudit {
	a := &LedgerAudit{}
	add := func(entry string, stored, got float64, problem string) {
		l := AuditLine{Entry: entry, Stored: stored, Recomputed: got, Match: problem == ""}
		if problem != "" {
			l.Problem = entry + ": " + problem
			if a.Problem == "" {
				a.Problem = l.Problem
			}
		}
		a.Lines = append(a.Lines, l)
	}
	c := m.Certificate
	if len(c.Families) == 0 || !(c.Delta > 0 && c.Delta < 1) {
		add("certificate", c.RiskBound, math.NaN(), fmt.Sprintf("missing or empty (delta %v, %d ledger families): the file holds no certificate to trust", c.Delta, len(c.Families)))
		return a
	}
	k := 1
	if m.Provenance.SweepSelected && m.Provenance.SweepSettings > 0 {
		k = m.Provenance.SweepSettings
	}
	// Format 3 always has a per-class line; a missing one is reported below.
	lines := len(c.Families) + 1
	if c.Cost != nil {
		lines++
	}
	share := c.Delta / float64(k) / float64(lines)
	em := m.Empirical
	if c.CertifyRows != em.M || c.CertifyRows != m.Provenance.CertifyRows {
		add("certificate", float64(c.CertifyRows), float64(m.Provenance.CertifyRows),
			fmt.Sprintf("certify_rows %d disagrees with the empirical terms' %d or the provenance's %d", c.CertifyRows, em.M, m.Provenance.CertifyRows))
	}

	best := -1
	for i, f := range c.Families {
		entry := "family " + f.Name
		if !agrees(f.Delta, share) {
			add(entry, f.Delta, share, fmt.Sprintf("delta share %v, but delta %g over %d ledger lines gives %v", f.Delta, c.Delta/float64(k), lines, share))
			continue
		}
		if best < 0 || f.Value < c.Families[best].Value {
			best = i
		}
		if f.Terms == nil {
			prob := ""
			if f.Value != 1 || f.Reason == "" {
				prob = fmt.Sprintf("value %v without terms: a family with no bound has value 1 and a reason", f.Value)
			}
			add(entry, f.Value, 1, prob)
			continue
		}
		got, err := RecomputeBound(*f.Terms)
		if err != nil {
			add(entry, f.Value, math.NaN(), "cannot be recomputed: "+err.Error())
			continue
		}
		prob := diffBound(*f.Terms, got)
		switch {
		case prob != "":
		case !agrees(f.Value, got.Value):
			prob = fmt.Sprintf("value %v, but its terms give %v", f.Value, got.Value)
		case !agrees(f.Terms.Delta, f.Delta):
			prob = fmt.Sprintf("terms at delta %v, but the share is %v", f.Terms.Delta, f.Delta)
		case f.Terms.M != c.CertifyRows:
			prob = fmt.Sprintf("m %d, but the certificate has %d certify rows", f.Terms.M, c.CertifyRows)
		default:
			prob = checkAgainstEmpirical(f, m)
		}
		add(entry, f.Value, got.Value, prob)
	}
	if best >= 0 {
		b := c.Families[best]
		prob := ""
		switch {
		case !agrees(c.RiskBound, b.Value):
			prob = fmt.Sprintf("risk_bound %v is not its ledger's smallest value %v (family %s)", c.RiskBound, b.Value, b.Name)
		case c.Family != b.Name || c.Vote != b.Vote:
			prob = fmt.Sprintf("names family %q and vote %q, but the ledger's smallest is %q certifying %q", c.Family, c.Vote, b.Name, b.Vote)
		}
		add("certificate", c.RiskBound, b.Value, prob)
	}
	v := candidateVotes(c.Families)
	if pc := c.PerClass; pc == nil {
		add("per-class", math.NaN(), math.NaN(), "missing: the file holds no per-class certificates")
	} else {
		auditClasses(m, pc, share, v, add)
	}
	if cc := c.Cost; cc != nil {
		auditCost(m, cc, share, v, add)
	}
	if a.Problem == "" {
		total := share * float64(lines) * float64(k)
		add("delta", c.Delta, total, "")
	}
	return a
}

// checkAgainstEmpirical checks that a family's terms are the model's
// empirical terms: the PAC-Bayesian families' Gibbs and tandem risks and
// KL, and the shipped hold-out family's error count.
func checkAgainstEmpirical(f Family, m *Model) string {
	em := m.Empirical
	b := f.Terms
	if f.Vote == VotePosterior {
		if !agrees(b.KL, em.KL) {
			return fmt.Sprintf("KL %v, but the empirical KL is %v", b.KL, em.KL)
		}
		if g, ok := b.Term("gibbs_risk"); ok && !agrees(g, em.GibbsRisk) {
			return fmt.Sprintf("Gibbs risk %v, but the empirical one is %v", g, em.GibbsRisk)
		}
		if t, ok := b.Term("tandem_risk"); ok && !agrees(t, em.TandemRisk) {
			return fmt.Sprintf("tandem risk %v, but the empirical one is %v", t, em.TandemRisk)
		}
		return ""
	}
	if f.Name == m.Certificate.Family {
		if r, ok := b.Term("error_rate"); ok && !agrees(r, em.VoteError) {
			return fmt.Sprintf("error rate %v, but the shipped vote's empirical error is %v", r, em.VoteError)
		}
	}
	return ""
}

func auditClasses(m *Model, pc *ClassCertificates, share float64, v int, add func(string, float64, float64, string)) {
	c := m.Certificate
	if !agrees(pc.Delta, share) {
		add("per-class", pc.Delta, share, fmt.Sprintf("delta share %v, but each ledger line gets %v", pc.Delta, share))
		return
	}
	if pc.CandidateVotes != v {
		add("per-class", float64(pc.CandidateVotes), float64(v), fmt.Sprintf("split over %d candidate votes, but the ledger's families certify %d", pc.CandidateVotes, v))
		return
	}
	names := make([]string, len(pc.Classes))
	rows := 0
	for i, cb := range pc.Classes {
		names[i] = cb.Class
		rows += cb.Rows
	}
	if !slices.Equal(names, m.Classes) {
		add("per-class", math.NaN(), math.NaN(), fmt.Sprintf("classes %v are not the model's %v", names, m.Classes))
		return
	}
	if rows != c.CertifyRows {
		add("per-class", float64(rows), float64(c.CertifyRows), fmt.Sprintf("the classes hold %d certify rows, the certificate %d", rows, c.CertifyRows))
		return
	}
	k := float64(len(pc.Classes))
	for _, cb := range pc.Classes {
		entry := "class " + cb.Class
		if !agrees(cb.Delta, share/k) {
			add(entry, cb.Delta, share/k, fmt.Sprintf("delta %v, but the share %v over %g classes gives %v", cb.Delta, share, k, share/k))
			continue
		}
		if cb.Errors < 0 || cb.Errors > cb.Rows {
			add(entry, float64(cb.Errors), math.NaN(), fmt.Sprintf("%d errors on %d rows", cb.Errors, cb.Rows))
			continue
		}
		if cb.Terms == nil {
			prob := ""
			if cb.Value != 1 || cb.Reason == "" {
				prob = fmt.Sprintf("value %v without terms: a class with no bound has value 1 and a reason", cb.Value)
			}
			add(entry, cb.Value, 1, prob)
			continue
		}
		got, err := RecomputeBound(*cb.Terms)
		if err != nil {
			add(entry, cb.Value, math.NaN(), "cannot be recomputed: "+err.Error())
			continue
		}
		prob := diffBound(*cb.Terms, got)
		want := "test-set"
		if c.Vote == VotePosterior {
			want = "first-order"
		}
		switch {
		case prob != "":
		case !agrees(cb.Value, got.Value):
			prob = fmt.Sprintf("value %v, but its terms give %v", cb.Value, got.Value)
		case !agrees(cb.Terms.Delta, cb.Delta/float64(v)):
			prob = fmt.Sprintf("terms at delta %v, but %v over %d candidate votes gives %v", cb.Terms.Delta, cb.Delta, v, cb.Delta/float64(v))
		case cb.Terms.M != cb.Rows:
			prob = fmt.Sprintf("m %d, but the class has %d certify rows", cb.Terms.M, cb.Rows)
		case cb.Terms.Name != want:
			prob = fmt.Sprintf("a %s bound, but the shipped %s vote takes the %s bound", cb.Terms.Name, c.Vote, want)
		case want == "first-order" && !agrees(cb.Terms.KL, m.Empirical.KL):
			prob = fmt.Sprintf("KL %v, but the empirical KL is %v", cb.Terms.KL, m.Empirical.KL)
		case want == "test-set":
			if e, _ := cb.Terms.Term("errors"); e != float64(cb.Errors) {
				prob = fmt.Sprintf("%v errors in its terms, %d stated", e, cb.Errors)
			}
		}
		add(entry, cb.Value, got.Value, prob)
	}
}

func auditCost(m *Model, cc *CostCertificate, share float64, v int, add func(string, float64, float64, string)) {
	c := m.Certificate
	prob := ""
	var got float64 = math.NaN()
	switch {
	case !agrees(cc.Delta, share):
		prob = fmt.Sprintf("delta share %v, but each ledger line gets %v", cc.Delta, share)
	case cc.CandidateVotes != v:
		prob = fmt.Sprintf("split over %d candidate votes, but the ledger's families certify %d", cc.CandidateVotes, v)
	case !slices.Equal(cc.Matrix.Classes, m.Classes) || len(cc.Matrix.Costs) != len(m.Classes):
		prob = fmt.Sprintf("the cost matrix's classes %v are not the model's %v", cc.Matrix.Classes, m.Classes)
	case !agrees(cc.MaxCost, cc.Matrix.Max()):
		prob = fmt.Sprintf("max_cost %v, but the matrix's largest cost is %v", cc.MaxCost, cc.Matrix.Max())
	case cc.Rows != c.CertifyRows:
		prob = fmt.Sprintf("%d rows, but the certificate has %d certify rows", cc.Rows, c.CertifyRows)
	case !agrees(cc.ViaErrorBound, cc.MaxCost*c.RiskBound):
		prob = fmt.Sprintf("via_error_bound %v, but max_cost times the risk bound is %v", cc.ViaErrorBound, cc.MaxCost*c.RiskBound)
	}
	if prob == "" {
		got = cc.ViaErrorBound
		if cc.Terms != nil {
			b, err := RecomputeBound(*cc.Terms)
			switch {
			case err != nil:
				prob = "cannot be recomputed: " + err.Error()
			case c.Vote == VotePosterior:
				prob = "a kl bound on the cost of the posterior, which depends on the certify rows"
			default:
				prob = diffBound(*cc.Terms, b)
				mean, _ := cc.Terms.Term("mean")
				switch {
				case prob != "":
				case !agrees(cc.Terms.Delta, share/float64(v)):
					prob = fmt.Sprintf("terms at delta %v, but the share over %d candidate votes gives %v", cc.Terms.Delta, v, share/float64(v))
				case !agrees(mean, math.Min(1, cc.MeanCost/cc.MaxCost)):
					prob = fmt.Sprintf("scaled mean %v, but mean_cost / max_cost is %v", mean, cc.MeanCost/cc.MaxCost)
				}
				got = math.Min(got, cc.MaxCost*b.Value)
			}
		}
		if prob == "" && !agrees(cc.Value, got) {
			prob = fmt.Sprintf("value %v, but its terms give %v", cc.Value, got)
		}
	}
	add("cost", cc.Value, got, prob)
}

// CheckLedger returns an error naming the first disagreement AuditLedger
// finds, or nil.
func (m *Model) CheckLedger() error {
	if a := AuditLedger(m); a.Problem != "" {
		return fmt.Errorf("the ledger disagrees: %s", a.Problem)
	}
	return nil
}
