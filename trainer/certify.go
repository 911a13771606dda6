package trainer

import (
	"fmt"
	"math"
	"slices"

	"surety/objective"
)

// The certificate families, in the order they are computed and listed.
const (
	FamilyFirstOrder = "first-order"
	FamilyTandem     = "tandem"
	FamilyCBound     = "c-bound"
	FamilyChebyshev  = "chebyshev-cantelli"
	FamilyHoldOut    = "hold-out"
	FamilyBoosted    = "hold-out-boosted"
	FamilyLogistic   = "hold-out-logistic"
)

// Families lists the certificate families in the order they are computed
// and listed; the C-bound applies to two classes only.
var Families = []string{FamilyFirstOrder, FamilyTandem, FamilyCBound, FamilyChebyshev, FamilyLogistic, FamilyBoosted, FamilyHoldOut}

// The votes a family may certify.
const (
	// VotePosterior is the posterior fitted on the certify rows.
	VotePosterior = "posterior"
	// VotePriorRows is the vote fitted on the prior rows alone, by the
	// configured objective.
	VotePriorRows = "prior-rows"
	// VoteBoosted is the vote weighted on the prior rows by boosting: the
	// multinomial logistic loss of the vote, by coordinate descent.
	VoteBoosted = "boosted"
	// VoteLogistic is the full linear voter alone: the logistic regression
	// on every column, its strength chosen by cross-validation on the
	// prior rows.
	VoteLogistic = "logistic"
)

// holdOutFamily names the family that certifies a held-out vote.
var holdOutFamily = map[string]string{VotePriorRows: FamilyHoldOut, VoteBoosted: FamilyBoosted, VoteLogistic: FamilyLogistic}

// heldOut is a vote fixed before the certify rows were read, certified by
// the test-set bound on its errors there.
type heldOut struct {
	family, vote string
	errs         int
}

// Certificate is the risk certificate of the shipped vote and the ledger of
// every family computed to get it.
type Certificate struct {
	// RiskBound is the bound on the shipped vote's error rate: with
	// probability at least 1-Delta over the draw of the rows, the vote's
	// error rate on new rows from the same source is at most RiskBound.
	RiskBound float64 `json:"risk_bound"`
	Delta     float64 `json:"delta"`
	// Family names the family whose bound is RiskBound.
	Family string `json:"family"`
	// Vote says which vote that family certifies (and so was shipped).
	Vote string `json:"vote"`
	// CertifyRows is m, the number of rows every bound was computed on.
	CertifyRows int `json:"certify_rows"`
	// Families is the ledger's families: each line of the ledger (the
	// families, the per-class certificates, the cost certificate) gets
	// Delta divided by their number, since the smallest family is picked
	// after seeing them all and all the certificates hold at once.
	Families []Family `json:"families"`
	// PerClass bounds the shipped vote's error rate within each class.
	PerClass *ClassCertificates `json:"per_class"`
	// Cost, with a cost matrix (Config.Costs), bounds the shipped vote's
	// expected cost per row.
	Cost *CostCertificate `json:"cost,omitempty"`
}

// Spent sums the delta shares of every line of the ledger: the families,
// the per-class certificates and the cost certificate. All the
// certificates hold at once with probability at least 1 - Spent().
func (c Certificate) Spent() float64 {
	var s float64
	for _, f := range c.Families {
		s += f.Delta
	}
	if c.PerClass != nil {
		s += c.PerClass.Delta
	}
	if c.Cost != nil {
		s += c.Cost.Delta
	}
	return s
}

// Family is one line of the ledger.
type Family struct {
	Name string `json:"name"`
	// Value bounds the error rate of Vote. A family that gives no bound
	// here has Value 1, which is trivially true, and says why in Reason.
	Value float64 `json:"value"`
	// Delta is this family's share of the certificate's delta.
	Delta  float64 `json:"delta"`
	Vote   string  `json:"vote"`
	Reason string  `json:"reason,omitempty"`
	// Terms is the arithmetic that made Value, to be redone by a reader.
	Terms *objective.Bound `json:"terms,omitempty"`
}

// Empirical holds the certify rows' empirical terms of the posterior.
type Empirical struct {
	// M is the number of certify rows.
	M int `json:"certify_rows"`
	// VoteError is the shipped vote's error rate on the certify rows, ties
	// counted as errors.
	VoteError float64 `json:"vote_error"`
	// PosteriorVoteErrors counts the posterior vote's errors there.
	PosteriorVoteErrors int `json:"posterior_vote_errors"`
	// GibbsRisk is r(Q), TandemRisk is t(Q), KL is KL(Q||P).
	GibbsRisk  float64 `json:"gibbs_risk"`
	TandemRisk float64 `json:"tandem_risk"`
	// Disagreement is 2 (r(Q) - t(Q)); binary problems only.
	Disagreement *float64 `json:"disagreement,omitempty"`
	KL           float64  `json:"kl"`
	// Margins counts the shipped vote's margins on the certify rows: the
	// winning class's weight minus the runner-up's, negated where the vote
	// is wrong (for two classes, the true class's weight minus the other's).
	Margins *Histogram `json:"margins,omitempty"`
}

// Histogram counts values in equal bins over [Lo, Hi]: bin i holds
// [Lo + i w, Lo + (i+1) w), the last bin holds Hi too.
type Histogram struct {
	Lo     float64 `json:"lo"`
	Hi     float64 `json:"hi"`
	Counts []int   `json:"counts"`
}

// MarginBins is the number of bins of Empirical.Margins over [-1, 1].
const MarginBins = 40

// marginHistogram bins signed margins in [-1, 1]. The side of zero comes
// from the sign first, so a wrong vote's margin goes below zero however
// small it is (-0 for a tie, or -1e-17, which 1 + x would round to 1).
func marginHistogram(ms []float64) *Histogram {
	h := &Histogram{Lo: -1, Hi: 1, Counts: make([]int, MarginBins)}
	half := MarginBins / 2
	w := (h.Hi - h.Lo) / MarginBins
	for _, x := range ms {
		var i int
		if x < 0 || math.Signbit(x) {
			i = half - 1 - min(half-1, int(math.Floor(-x/w)))
		} else {
			i = half + min(half-1, int(math.Floor(x/w)))
		}
		h.Counts[i]++
	}
	return h
}

func empirical(r rates, q, prior []float64, voteErrs int, binary bool) Empirical {
	e := Empirical{
		M:                   r.m,
		VoteError:           float64(voteErrs) / float64(r.m),
		PosteriorVoteErrors: voteErrs,
		GibbsRisk:           objective.GibbsRisk(q, r.risks),
		TandemRisk:          objective.TandemRisk(q, r.joint),
		KL:                  objective.Divergence(q, prior),
	}
	if binary {
		d := 2 * (e.GibbsRisk - e.TandemRisk)
		e.Disagreement = &d
	}
	return e
}

// certify computes every family that applies (only the one named, when
// only is not "") and picks the smallest. The ledger has a line for each
// family and extra lines for the certificates added by ship (per class,
// cost); each line gets an equal share of delta.
func certify(delta float64, e Empirical, held []heldOut, classes int, only string, extra int) (Certificate, error) {
	type family struct {
		name, vote string
		bound      func(d float64) (objective.Bound, error)
	}
	fams := []family{
		{FamilyFirstOrder, VotePosterior, func(d float64) (objective.Bound, error) {
			return objective.FirstOrderBound(e.GibbsRisk, e.KL, e.M, d)
		}},
		{FamilyTandem, VotePosterior, func(d float64) (objective.Bound, error) {
			return objective.TandemBound(e.TandemRisk, e.KL, e.M, d)
		}},
	}
	if classes == 2 {
		fams = append(fams, family{FamilyCBound, VotePosterior, func(d float64) (objective.Bound, error) {
			return objective.CBound(e.GibbsRisk, e.TandemRisk, e.KL, e.M, d)
		}})
	}
	fams = append(fams, family{FamilyChebyshev, VotePosterior, func(d float64) (objective.Bound, error) {
		return objective.ChebyshevCantelliBound(e.GibbsRisk, e.TandemRisk, e.KL, e.M, d)
	}})
	for _, h := range held {
		fams = append(fams, family{h.family, h.vote, func(d float64) (objective.Bound, error) {
			return objective.TestSetBound(h.errs, e.M, d)
		}})
	}
	if only != "" {
		fams = slices.DeleteFunc(fams, func(f family) bool { return f.name != only })
		if len(fams) == 0 {
			return Certificate{}, fmt.Errorf("family %q does not apply here", only)
		}
	}
	share := delta / float64(len(fams)+extra)
	c := Certificate{Delta: delta, CertifyRows: e.M, RiskBound: math.Inf(1)}
	for _, f := range fams {
		line := Family{Name: f.name, Delta: share, Vote: f.vote, Value: 1}
		b, err := f.bound(share)
		if err != nil {
			line.Reason = err.Error()
		} else {
			line.Terms = &b
			line.Value = b.Value
		}
		c.Families = append(c.Families, line)
		if line.Value < c.RiskBound {
			c.RiskBound, c.Family, c.Vote = line.Value, line.Name, line.Vote
		}
	}
	if c.Family == "" {
		return c, fmt.Errorf("no family gave a bound")
	}
	return c, nil
}
