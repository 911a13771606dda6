package objective

import (
	"fmt"
	"math"
)

// What a Bound's Value bounds (its Of field).
const (
	// OfGibbsRisk: the Gibbs risk R(Q) = sum_i q_i R(h_i).
	OfGibbsRisk = "gibbs-risk"
	// OfVoteRisk: the error rate R(MV_Q) of the Q-weighted majority vote.
	OfVoteRisk = "vote-risk"
	// OfErrorRate: the true error rate of one fixed classifier.
	OfErrorRate = "error-rate"
	// OfErrorRateLower: a lower confidence limit on the true error rate of
	// one fixed classifier (Value is a lower bound, not an upper one).
	OfErrorRateLower = "error-rate-lower"
	// OfUnlabelledErrorRate: the error rate on the unlabelled rest of a
	// finite population.
	OfUnlabelledErrorRate = "unlabelled-error-rate"
	// OfMeanLoss: the expected value of a loss in [0, 1] of one fixed
	// classifier (a cost scaled by its largest value).
	OfMeanLoss = "mean-loss"
)

// Bound is one bound's value and the arithmetic that made it, so a
// certificate can show it and a reader can redo it.
type Bound struct {
	// Name is the bound's family: kl, pinsker, catoni, lambda,
	// first-order, tandem, c-bound, chebyshev-cantelli, test-set,
	// population.
	Name string `json:"name"`
	// Of says what Value bounds: one of the Of* constants.
	Of string `json:"of"`
	// Value holds with probability at least 1-Delta over the draw of the
	// rows. It is never clamped; a vote bound of 1 or more is vacuous.
	Value float64 `json:"value"`
	// Delta is the whole confidence budget the bound used (the C-bound and
	// Chebyshev-Cantelli spend Delta/2 on each of their two parts).
	Delta float64 `json:"delta"`
	// M is the number of rows the empirical terms were counted on (m
	// certify rows; n fresh rows for the test-set and population bounds).
	M int `json:"m"`
	// KL is KL(Q||P); 0 for the test-set and population bounds.
	KL float64 `json:"kl"`
	// Terms are the inputs and intermediate values, in the order the
	// arithmetic uses them (see each bound's doc comment for the names).
	Terms []Term `json:"terms"`
}

// Term is one named number in a bound's arithmetic.
type Term struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
}

// Term returns the value of the named term and whether it is there.
func (b Bound) Term(name string) (float64, bool) {
	for _, t := range b.Terms {
		if t.Name == name {
			return t.Value, true
		}
	}
	return 0, false
}

// Vacuous reports whether the bound says nothing: a value of 1 or more on
// a rate.
func (b Bound) Vacuous() bool { return b.Value >= 1 }

func checkDelta(delta float64) error {
	if !(delta > 0 && delta < 1) {
		return fmt.Errorf("objective: delta %v is not in (0, 1): %w", delta, ErrRange)
	}
	return nil
}

func checkPAC(rateName string, rate, kl float64, m int, delta float64) error {
	if err := checkDelta(delta); err != nil {
		return err
	}
	if m < 1 {
		return fmt.Errorf("objective: m = %d, want at least 1: %w", m, ErrRange)
	}
	if err := checkRate(rateName, rate); err != nil {
		return err
	}
	if !(kl >= 0) || math.IsInf(kl, 1) {
		return fmt.Errorf("objective: KL %v is negative or not finite: %w", kl, ErrRange)
	}
	return nil
}

// roundingSlack is how far the empirical tandem risk may exceed the Gibbs
// risk before the pair is rejected as inconsistent: t(Q) <= r(Q) holds
// exactly (W^2 <= W for the Q-weight W of the voters that err on a row),
// but the two sums are rounded separately.
const roundingSlack = 1e-12

func checkTandem(gibbs, tandem float64) error {
	if err := checkRate("empirical tandem risk", tandem); err != nil {
		return err
	}
	if tandem > gibbs+roundingSlack {
		return fmt.Errorf("objective: tandem risk %v exceeds Gibbs risk %v, which no vote allows: %w", tandem, gibbs, ErrRange)
	}
	return nil
}

// pacBudget returns the right-hand side (factor*KL + ln(xi(m)/delta))/m of
// the kl bound and ln xi(m); factor is 2 for pairwise (tandem,
// disagreement) quantities, whose posterior is Q^2 with KL(Q^2||P^2) = 2 KL.
func pacBudget(factor, kl float64, m int, delta float64) (budget, logXi float64, err error) {
	lx, err := LogXi(m)
	if err != nil {
		return 0, 0, err
	}
	return (factor*kl + lx - math.Log(delta)) / float64(m), lx, nil
}

// KLBound is the kl bound on the Gibbs risk (Seeger 2002; Maurer 2004):
// with probability at least 1-delta, for all Q at once,
//
//	kl(r(Q) || R(Q)) <= (KL(Q||P) + ln(xi(m)/delta)) / m =: budget,
//
// so R(Q) <= kl^-1_up(r(Q), budget). Value bounds the Gibbs risk. Terms:
// gibbs_risk, log_xi, budget.
func KLBound(gibbs, kl float64, m int, delta float64) (Bound, error) {
	if err := checkPAC("empirical Gibbs risk", gibbs, kl, m, delta); err != nil {
		return Bound{}, fmt.Errorf("kl bound: %w", err)
	}
	e, lx, err := pacBudget(1, kl, m, delta)
	if err != nil {
		return Bound{}, fmt.Errorf("kl bound: %w", err)
	}
	v, err := KLInverseUpper(gibbs, e)
	if err != nil {
		return Bound{}, fmt.Errorf("kl bound: %w", err)
	}
	return Bound{Name: "kl", Of: OfGibbsRisk, Value: v, Delta: delta, M: m, KL: kl,
		Terms: []Term{{"gibbs_risk", gibbs}, {"log_xi", lx}, {"budget", e}}}, nil
}

// PinskerBound is McAllester's form of the bound on the Gibbs risk
// (McAllester 1999, 2003): R(Q) <= r(Q) + sqrt((KL + ln(2 sqrt(m)/delta)) /
// (2m)). It is the kl bound loosened by Pinsker's inequality (and xi(m) <=
// 2 sqrt(m), Maurer 2004 for m >= 8; checked numerically for m < 8), so it
// is never below KLBound. Value bounds the Gibbs risk. Terms: gibbs_risk,
// slack (the square root).
func PinskerBound(gibbs, kl float64, m int, delta float64) (Bound, error) {
	if err := checkPAC("empirical Gibbs risk", gibbs, kl, m, delta); err != nil {
		return Bound{}, fmt.Errorf("pinsker bound: %w", err)
	}
	slack := math.Sqrt((kl + logTwoSqrtM(m) - math.Log(delta)) / (2 * float64(m)))
	return Bound{Name: "pinsker", Of: OfGibbsRisk, Value: gibbs + slack, Delta: delta, M: m, KL: kl,
		Terms: []Term{{"gibbs_risk", gibbs}, {"slack", slack}}}, nil
}

func logTwoSqrtM(m int) float64 { return math.Ln2 + 0.5*math.Log(float64(m)) }

// CatoniBound is Catoni's linear trade-off bound on the Gibbs risk for one
// fixed C > 0 (Catoni 2007; Germain et al. 2009):
//
//	R(Q) <= (1 - exp(-(C r(Q) + (KL + ln(1/delta))/m))) / (1 - exp(-C)).
//
// It holds for the one C chosen before seeing the data; trying several
// values needs a union bound (delta/k each), which is the caller's to
// spend. Value bounds the Gibbs risk and can exceed 1. Terms: gibbs_risk,
// tradeoff (C), exponent (the bracket inside exp).
func CatoniBound(gibbs, kl float64, m int, delta, c float64) (Bound, error) {
	if err := checkPAC("empirical Gibbs risk", gibbs, kl, m, delta); err != nil {
		return Bound{}, fmt.Errorf("catoni bound: %w", err)
	}
	if !(c > 0) || math.IsInf(c, 1) {
		return Bound{}, fmt.Errorf("catoni bound: trade-off C = %v, want a positive number: %w", c, ErrRange)
	}
	x := c*gibbs + (kl-math.Log(delta))/float64(m)
	v := math.Expm1(-x) / math.Expm1(-c)
	return Bound{Name: "catoni", Of: OfGibbsRisk, Value: v, Delta: delta, M: m, KL: kl,
		Terms: []Term{{"gibbs_risk", gibbs}, {"tradeoff", c}, {"exponent", x}}}, nil
}

// LambdaBound is the lambda form of Thiemann, Igel, Wintenberger and Seldin
// (2017): for all lambda in (0, 2) and all Q at once,
//
//	R(Q) <= r(Q)/(1 - lambda/2) + B/(lambda (1 - lambda/2)),
//	B = (KL + ln(2 sqrt(m)/delta)) / m,
//
// evaluated at its minimiser lambda* = 2 / (sqrt(2 r(Q)/B + 1) + 1) (set
// the derivative in lambda to zero; the paper's closed form). Value bounds
// the Gibbs risk and can exceed 1. Terms: gibbs_risk, budget (B), lambda.
func LambdaBound(gibbs, kl float64, m int, delta float64) (Bound, error) {
	if err := checkPAC("empirical Gibbs risk", gibbs, kl, m, delta); err != nil {
		return Bound{}, fmt.Errorf("lambda bound: %w", err)
	}
	b := (kl + logTwoSqrtM(m) - math.Log(delta)) / float64(m)
	l := 2 / (math.Sqrt(2*gibbs/b+1) + 1)
	v := gibbs/(1-l/2) + b/(l*(1-l/2))
	return Bound{Name: "lambda", Of: OfGibbsRisk, Value: v, Delta: delta, M: m, KL: kl,
		Terms: []Term{{"gibbs_risk", gibbs}, {"budget", b}, {"lambda", l}}}, nil
}

// FirstOrderBound bounds the vote's risk by twice the kl bound on the Gibbs
// risk: R(MV_Q) <= 2 R(Q) (Markov's inequality on the Q-weight of the
// erring voters; e.g. Langford & Shawe-Taylor 2002). It holds for any
// number of classes, ties counted as errors. Value bounds the vote's risk,
// lies in [2 r(Q), 2] and is vacuous from 1 up. Terms: those of KLBound,
// then gibbs_upper.
func FirstOrderBound(gibbs, kl float64, m int, delta float64) (Bound, error) {
	b, err := KLBound(gibbs, kl, m, delta)
	if err != nil {
		return Bound{}, fmt.Errorf("first-order bound: %w", err)
	}
	b.Terms = append(b.Terms, Term{"gibbs_upper", b.Value})
	b.Name, b.Of, b.Value = "first-order", OfVoteRisk, 2*b.Value
	return b, nil
}

// TandemBound bounds the vote's risk by R(MV_Q) <= 4 R(Q^2) and certifies
// the tandem risk with the kl bound, KL doubled (Masegosa, Lorenzen, Igel,
// Seldin 2020):
//
//	kl(t(Q) || R(Q^2)) <= (2 KL(Q||P) + ln(xi(m)/delta)) / m.
//
// It holds for any number of classes. Value bounds the vote's risk, lies in
// [4 t(Q), 4] and is vacuous from 1 up. Terms: tandem_risk, log_xi, budget,
// tandem_upper.
func TandemBound(tandem, kl float64, m int, delta float64) (Bound, error) {
	if err := checkPAC("empirical tandem risk", tandem, kl, m, delta); err != nil {
		return Bound{}, fmt.Errorf("tandem bound: %w", err)
	}
	e, lx, err := pacBudget(2, kl, m, delta)
	if err != nil {
		return Bound{}, fmt.Errorf("tandem bound: %w", err)
	}
	t, err := KLInverseUpper(tandem, e)
	if err != nil {
		return Bound{}, fmt.Errorf("tandem bound: %w", err)
	}
	return Bound{Name: "tandem", Of: OfVoteRisk, Value: 4 * t, Delta: delta, M: m, KL: kl,
		Terms: []Term{{"tandem_risk", tandem}, {"log_xi", lx}, {"budget", e}, {"tandem_upper", t}}}, nil
}

// CBound is the certified C-bound for two classes, from the Gibbs and
// tandem risks: the disagreement is d(Q) = 2 (r(Q) - t(Q)), the identity for
// binary voters. See CBoundDisagreement.
func CBound(gibbs, tandem, kl float64, m int, delta float64) (Bound, error) {
	if err := checkRate("empirical Gibbs risk", gibbs); err != nil {
		return Bound{}, fmt.Errorf("c-bound: %w", err)
	}
	if err := checkTandem(gibbs, tandem); err != nil {
		return Bound{}, fmt.Errorf("c-bound: %w", err)
	}
	// Within roundingSlack the difference may come out a hair below 0; a
	// disagreement is never negative, and its lower bound is then 0.
	return CBoundDisagreement(gibbs, math.Max(0, 2*(gibbs-tandem)), kl, m, delta)
}

// CBoundDisagreement is the certified C-bound for two classes (Lacasse et
// al. 2006; Germain et al. 2015, "PAC-Bound 1"): with delta/2 each, an upper
// bound R+ on the Gibbs risk (kl bound) and a lower bound D- on the
// disagreement D(Q) (kl bound with KL doubled, kl^-1_lo), plugged into
//
//	R(MV_Q) <= 1 - (1 - 2 R+)^2 / (1 - 2 D-).
//
// The C-bound rises with R below 1/2 and falls with D, so the plug-in is
// valid while R+ < 1/2; at R+ >= 1/2 it says nothing and this returns an
// error. Value bounds the vote's risk and lies in [0, 1]. Terms:
// gibbs_risk, disagreement, log_xi, gibbs_budget, disagreement_budget,
// gibbs_upper, disagreement_lower.
func CBoundDisagreement(gibbs, disagreement, kl float64, m int, delta float64) (Bound, error) {
	if err := checkPAC("empirical Gibbs risk", gibbs, kl, m, delta); err != nil {
		return Bound{}, fmt.Errorf("c-bound: %w", err)
	}
	if !(disagreement >= 0 && disagreement <= 0.5) {
		return Bound{}, fmt.Errorf("c-bound: disagreement %v is not in [0, 1/2], where two-class disagreements lie: %w", disagreement, ErrRange)
	}
	c, err := cboundOf(gibbs, disagreement, kl, m, delta)
	if err != nil {
		return Bound{}, fmt.Errorf("c-bound: %w", err)
	}
	if c.rUp >= 0.5 {
		return Bound{}, fmt.Errorf("c-bound: the upper bound %.6g on the Gibbs risk is not below 1/2, where the C-bound says nothing", c.rUp)
	}
	return Bound{Name: "c-bound", Of: OfVoteRisk, Value: c.value(), Delta: delta, M: m, KL: kl,
		Terms: []Term{{"gibbs_risk", gibbs}, {"disagreement", disagreement}, {"log_xi", c.logXi},
			{"gibbs_budget", c.e1}, {"disagreement_budget", c.e2},
			{"gibbs_upper", c.rUp}, {"disagreement_lower", c.dLo}}}, nil
}

// cbound holds the parts of the certified C-bound.
type cbound struct{ logXi, e1, e2, rUp, dLo float64 }

// splitBudgets returns the kl budgets of a single quantity (KL) and a
// pairwise one (2 KL), at delta/2 each, and ln xi(m).
func splitBudgets(kl float64, m int, delta float64) (single, pair, logXi float64, err error) {
	if single, logXi, err = pacBudget(1, kl, m, delta/2); err != nil {
		return 0, 0, 0, err
	}
	return single, single + kl/float64(m), logXi, nil
}

func cboundOf(gibbs, disagreement, kl float64, m int, delta float64) (cbound, error) {
	var c cbound
	var err error
	if c.e1, c.e2, c.logXi, err = splitBudgets(kl, m, delta); err != nil {
		return c, err
	}
	if c.rUp, err = KLInverseUpper(gibbs, c.e1); err != nil {
		return c, err
	}
	if c.dLo, err = KLInverseLower(disagreement, c.e2); err != nil {
		return c, err
	}
	return c, nil
}

// value is the C-bound 1 - (1-2R+)^2/(1-2D-), valid for R+ < 1/2. D- <= d
// <= 1/2 and D- < 1/2 whenever the budget is positive, so 1-2D- > 0.
func (c cbound) value() float64 {
	a := 1 - 2*c.rUp
	return 1 - a*a/(1-2*c.dLo)
}

// ChebyshevCantelliBound bounds the vote's risk with the
// Chebyshev-Cantelli inequality of Wu, Masegosa, Lorenzen, Igel and Seldin
// (2021): for every mu in [0, 1/2),
//
//	R(MV_Q) <= (R(Q^2) - 2 mu R(Q) + mu^2) / (1/2 - mu)^2,
//
// with an upper bound T+ on the tandem risk (kl bound, KL doubled) and a
// lower bound R- on the Gibbs risk (kl bound, kl^-1_lo), delta/2 each. The
// right side rises with R(Q^2) and falls with R(Q) (mu >= 0), and both
// bounds hold for all Q at once, so mu may be chosen after seeing them: it
// is set to its minimiser mu* = max(0, (R- - 2 T+)/(1 - 2 R-)) (0 when R- >=
// 1/2). It holds for any number of classes. Value bounds the vote's risk
// and can exceed 1. Terms: gibbs_risk, tandem_risk, log_xi, gibbs_budget,
// tandem_budget, gibbs_lower, tandem_upper, mu.
func ChebyshevCantelliBound(gibbs, tandem, kl float64, m int, delta float64) (Bound, error) {
	if err := checkPAC("empirical Gibbs risk", gibbs, kl, m, delta); err != nil {
		return Bound{}, fmt.Errorf("chebyshev-cantelli bound: %w", err)
	}
	if err := checkTandem(gibbs, tandem); err != nil {
		return Bound{}, fmt.Errorf("chebyshev-cantelli bound: %w", err)
	}
	c, err := chebyshevOf(gibbs, tandem, kl, m, delta)
	if err != nil {
		return Bound{}, fmt.Errorf("chebyshev-cantelli bound: %w", err)
	}
	return Bound{Name: "chebyshev-cantelli", Of: OfVoteRisk, Value: c.value, Delta: delta, M: m, KL: kl,
		Terms: []Term{{"gibbs_risk", gibbs}, {"tandem_risk", tandem}, {"log_xi", c.logXi},
			{"gibbs_budget", c.e1}, {"tandem_budget", c.e2},
			{"gibbs_lower", c.rLo}, {"tandem_upper", c.tUp}, {"mu", c.mu}}}, nil
}

type chebyshev struct{ logXi, e1, e2, rLo, tUp, mu, value float64 }

func chebyshevOf(gibbs, tandem, kl float64, m int, delta float64) (chebyshev, error) {
	var c chebyshev
	var err error
	if c.e1, c.e2, c.logXi, err = splitBudgets(kl, m, delta); err != nil {
		return c, err
	}
	if c.rLo, err = KLInverseLower(gibbs, c.e1); err != nil {
		return c, err
	}
	if c.tUp, err = KLInverseUpper(tandem, c.e2); err != nil {
		return c, err
	}
	// d/dmu of the right side has the sign of mu (1/2 - R) - R/2 + T: a
	// single minimum at (R - 2T)/(1 - 2R) when R < 1/2. For R >= 1/2,
	// T >= R^2 >= R/2 (Cauchy-Schwarz) makes it rise from mu = 0.
	if c.rLo < 0.5 {
		c.mu = math.Max(0, (c.rLo-2*c.tUp)/(1-2*c.rLo))
	}
	// mu* < 1/2 since R- - T+ <= R - T = E[W(1-W)] <= 1/4; equality would
	// need every row's erring weight at exactly 1/2.
	if c.mu >= 0.5 {
		return c, fmt.Errorf("degenerate statistics (Gibbs lower %v, tandem upper %v) put the best mu at 1/2", c.rLo, c.tUp)
	}
	h := 0.5 - c.mu
	c.value = (c.tUp - 2*c.mu*c.rLo + c.mu*c.mu) / (h * h)
	return c, nil
}
