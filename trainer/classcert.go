package trainer

import (
	"math"

	"surety/objective"
)

// ClassCertificates bounds, for each class, the shipped vote's error rate
// among the rows of that class (for two classes, the miss rate of each).
//
// How delta is spent: the per-class certificates take one line of the
// ledger, at the same share as each family (the ledger's L lines each get
// delta / L, so everything in the certificate holds at once with
// probability at least 1 - delta). That share is split equally over the K
// classes (a union bound over classes) and, within a class, over the
// CandidateVotes votes the certificate could have shipped: which vote ships
// is decided on the certify rows, so the bound must hold for each of them
// (a union bound over the candidates). Each class's bound is then computed
// at Delta / (K CandidateVotes). A vote fixed before the certify rows (a
// hold-out family's) gets the binomial test-set bound on its errors among
// the class's certify rows (Langford 2005); the posterior, which depends on
// the certify rows, gets the first-order bound 2 kl^-1_up(r_c(Q), (KL +
// ln(xi(m_c)/delta))/m_c) on the class's rows, which holds for every
// posterior at once (Seeger 2002; Maurer 2004), given the class's row count
// m_c.
type ClassCertificates struct {
	// Delta is the ledger share of all the per-class certificates.
	Delta float64 `json:"delta"`
	// CandidateVotes is the number of votes the ledger's families certify.
	CandidateVotes int          `json:"candidate_votes"`
	Classes        []ClassBound `json:"classes"`
}

// ClassBound is one class's certificate.
type ClassBound struct {
	Class string `json:"class"`
	// Rows is the number of certify rows of the class, Errors the shipped
	// vote's errors among them (ties are errors).
	Rows   int `json:"rows"`
	Errors int `json:"errors"`
	// Value bounds the shipped vote's error rate among new rows of this
	// class; 1 (trivially true) when Reason says why there is no bound.
	Value float64 `json:"value"`
	// Delta is the class's part of the share, ClassCertificates.Delta / K.
	Delta  float64          `json:"delta"`
	Reason string           `json:"reason,omitempty"`
	Terms  *objective.Bound `json:"terms,omitempty"`
}

// CostCertificate bounds the expected cost per row of the shipped vote's
// decisions for a cost matrix given before training. The cost, divided by
// the largest entry c_max, is a loss in [0, 1]; for a vote fixed before the
// certify rows its mean there gives the kl form of the test-set bound
// (objective.MeanLossBound; Langford 2005), at Delta / CandidateVotes (the
// union over the votes that could have shipped). The cost never exceeds
// c_max times an error, so c_max times the error certificate also bounds
// it, at no extra delta; Value is the smaller of the two. For the posterior
// only the second applies.
type CostCertificate struct {
	// Delta is the cost certificate's line of the ledger, one share.
	Delta          float64    `json:"delta"`
	CandidateVotes int        `json:"candidate_votes"`
	Matrix         CostMatrix `json:"matrix"`
	MaxCost        float64    `json:"max_cost"`
	// Rows is m; MeanCost the shipped vote's mean cost on the certify rows.
	Rows     int     `json:"rows"`
	MeanCost float64 `json:"mean_cost"`
	// Value bounds the expected cost per row on new rows.
	Value float64 `json:"value"`
	// ViaErrorBound is MaxCost times the certificate's risk bound.
	ViaErrorBound float64 `json:"via_error_bound"`
	Reason        string  `json:"reason,omitempty"`
	// Terms is the kl bound on the scaled mean cost (Value of Terms times
	// MaxCost), when the shipped vote was fixed before the certify rows.
	Terms *objective.Bound `json:"terms,omitempty"`
}

// candidateVotes counts the distinct votes the families of a ledger
// certify: the votes the certificate could have shipped.
func candidateVotes(fams []Family) int {
	seen := map[string]bool{}
	for _, f := range fams {
		seen[f.Vote] = true
	}
	return len(seen)
}

// classCertificates computes the per-class certificates of the shipped
// vote v at the ledger share given; for the posterior, p.classErrs holds
// each voter's errors among class c's certify rows.
func (p *Prepared) classCertificates(share float64, fams []Family, v shipVote, kl float64) (*ClassCertificates, error) {
	k := len(p.t.Classes)
	cc := &ClassCertificates{Delta: share, CandidateVotes: candidateVotes(fams)}
	d := share / float64(k) / float64(cc.CandidateVotes)
	for c, name := range p.t.Classes {
		line := ClassBound{Class: name, Rows: p.certClassRows[c], Errors: v.classErrs[c], Delta: share / float64(k), Value: 1}
		var b objective.Bound
		var err error
		switch {
		case line.Rows == 0:
			line.Reason = "no certify row of this class"
		case v.vote == VotePosterior:
			errs := p.classErrs[c]
			var g float64
			for i, q := range v.q {
				g += q * float64(errs[i])
			}
			g = math.Min(1, g/float64(line.Rows))
			b, err = objective.FirstOrderBound(g, kl, line.Rows, d)
		default:
			b, err = objective.TestSetBound(line.Errors, line.Rows, d)
		}
		if line.Rows > 0 {
			if err != nil {
				line.Reason = err.Error()
			} else {
				line.Terms, line.Value = &b, b.Value
			}
		}
		cc.Classes = append(cc.Classes, line)
	}
	return cc, nil
}

// costCertificate computes the cost certificate of the shipped vote v at
// the ledger share given, riskBound being the error certificate's value.
func (p *Prepared) costCertificate(share float64, fams []Family, v shipVote, riskBound float64) *CostCertificate {
	c := p.costs
	cmax := c.Max()
	m := len(p.certRows)
	cc := &CostCertificate{Delta: share, CandidateVotes: candidateVotes(fams), Matrix: *c, MaxCost: cmax,
		Rows: m, MeanCost: v.costSum / float64(m), ViaErrorBound: cmax * riskBound}
	cc.Value = cc.ViaErrorBound
	if v.vote == VotePosterior {
		cc.Reason = "the posterior depends on the certify rows, so only the error certificate bounds its cost"
		return cc
	}
	b, err := objective.MeanLossBound(math.Min(1, cc.MeanCost/cmax), m, share/float64(cc.CandidateVotes))
	if err != nil {
		cc.Reason = err.Error()
		return cc
	}
	cc.Terms = &b
	cc.Value = math.Min(cc.Value, cmax*b.Value)
	return cc
}
