package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/spf13/pflag"

	"surety/objective"
	"surety/trainer"
)

func init() {
	register("bound", "--m M --kl KL --gibbs-risk R [--tandem-risk T] [--disagreement D] [--tradeoff C] [--errors K --n N [--population P]] [--delta D] [--json]",
		"Print every bound that the given summary figures allow: PAC-Bayesian bounds on the\n"+
			"Gibbs risk and on the majority vote's risk from m, KL(Q||P) and the empirical risks,\n"+
			"and test-set bounds from errors counted on fresh rows. A bound whose figures are\n"+
			"missing is left out with the reason. Each bound holds on its own with probability\n"+
			"at least 1-delta; to quote the smallest of k of them, compute each at delta/k.",
		func() command { return &boundOptions{delta: trainer.DefaultDelta} })
}

// boundOptions is `surety bound`: the bound arithmetic on figures from
// elsewhere.
type boundOptions struct {
	m                          int
	delta, kl, gibbs, tandem   float64
	disagreement, tradeoff     float64
	errors, n, population      int
	asJSON                     bool
	mFlag, errorsFlag, nFlag   *intRange
	popFlag                    *intRange
	klFlag, gibbsFlag, tanFlag *floatRange
	disFlag, tradeoffFlag      *floatRange
}

func (c *boundOptions) AddFlags(fs *pflag.FlagSet) {
	c.mFlag = &intRange{v: &c.m, lo: 1, hi: math.MaxInt, what: "m"}
	c.klFlag = nonNegative(&c.kl, "KL")
	c.gibbsFlag = fraction(&c.gibbs, 0, 1, "the Gibbs risk")
	c.tanFlag = fraction(&c.tandem, 0, 1, "the tandem risk")
	c.disFlag = fraction(&c.disagreement, 0, 0.5, "the disagreement")
	c.tradeoffFlag = positive(&c.tradeoff, "the trade-off C")
	c.errorsFlag = &intRange{v: &c.errors, lo: 0, hi: math.MaxInt, what: "the error count"}
	c.nFlag = &intRange{v: &c.n, lo: 1, hi: math.MaxInt, what: "n"}
	c.popFlag = &intRange{v: &c.population, lo: 2, hi: math.MaxInt, what: "the population"}
	fs.Var(c.mFlag, "m", "number of `rows` the empirical risks were counted on (at least 1)")
	fs.Var(probability(&c.delta, "delta"), "delta", "confidence parameter in (0, 1): each bound fails with probability at most delta")
	fs.Var(c.klFlag, "kl", "KL(Q||P) between the posterior and the prior, in nats (at least 0)")
	fs.Var(c.gibbsFlag, "gibbs-risk", "empirical Gibbs `risk` r(Q) = sum_i q_i r_i, in [0, 1]")
	fs.Var(c.tanFlag, "tandem-risk", "empirical tandem `risk` t(Q) = sum_ij q_i q_j (rate at which voters i and j both err), in [0, r(Q)]")
	fs.Var(c.disFlag, "disagreement", "empirical disagreement d(Q) of a two-class vote, in [0, 1/2] (default: 2 (r(Q) - t(Q)) from the two risks)")
	fs.Var(c.tradeoffFlag, "tradeoff", "the constant `C` > 0 of Catoni's bound, fixed before seeing the data")
	fs.Var(c.errorsFlag, "errors", "`count` of errors on n fresh rows, for the test-set bounds")
	fs.Var(c.nFlag, "n", "number of fresh `rows` the errors were counted on")
	fs.Var(c.popFlag, "population", "number of `rows` in the finite population the n rows were drawn from without replacement; bounds the error rate on the other rows")
	fs.BoolVar(&c.asJSON, "json", false, "print a JSON object instead of text")
}

// boundLine is one bound computed, or left out with a reason.
type boundLine struct {
	key    string // the JSON key: the bound's name with _ for -
	group  string
	bound  objective.Bound
	note   string // how the bound was made, for the text output
	reason string // why it was left out; empty if computed
}

// The groups of the text output, in order.
const (
	groupGibbs = "bounds on the Gibbs risk R(Q)"
	groupVote  = "bounds on the majority vote's risk R(MV_Q)"
	groupFresh = "bounds from fresh rows"
)

func (c *boundOptions) run(_ context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q (every figure is a flag)", args[0])
	}
	if c.tanFlag.set && c.gibbsFlag.set && c.tandem > c.gibbs {
		return usagef("--tandem-risk %v exceeds --gibbs-risk %v, which no vote allows", c.tandem, c.gibbs)
	}
	if c.errorsFlag.set && c.nFlag.set && c.errors > c.n {
		return usagef("--errors %d exceeds --n %d", c.errors, c.n)
	}
	if c.popFlag.set && c.nFlag.set && c.population <= c.n {
		return usagef("--population %d must exceed --n %d", c.population, c.n)
	}
	lines := c.bounds()
	computed := 0
	for _, l := range lines {
		if l.reason == "" {
			computed++
		}
	}
	if computed == 0 {
		return usagef("nothing to bound: give --m, --kl and --gibbs-risk (or --tandem-risk), or --errors and --n")
	}
	if c.asJSON {
		return c.writeJSON(e.stdout, lines)
	}
	return c.writeText(e.stdout, lines)
}

// bounds computes every bound, leaving out those whose figures are missing.
func (c *boundOptions) bounds() []boundLine {
	var lines []boundLine
	add := func(key, group string, need []string, make func() (objective.Bound, string, error)) {
		l := boundLine{key: key, group: group}
		if len(need) > 0 {
			l.reason = "needs " + strings.Join(need, ", ")
		} else if b, note, err := make(); err != nil {
			// The library's message starts with the bound's name, which the
			// left-out list shows already.
			l.reason = strings.TrimPrefix(err.Error(), strings.ReplaceAll(key, "_", "-")+": ")
		} else {
			l.bound, l.note = b, note
		}
		lines = append(lines, l)
	}
	pac := []req{{c.mFlag.set, "--m"}, {c.klFlag.set, "--kl"}}
	hasGibbs := []req{{c.gibbsFlag.set, "--gibbs-risk"}}
	hasTandem := []req{{c.tanFlag.set, "--tandem-risk"}}
	gibbs, tandem, pair := needs(pac, hasGibbs), needs(pac, hasTandem), needs(pac, hasGibbs, hasTandem)
	m, d, kl, r, t := c.m, c.delta, c.kl, c.gibbs, c.tandem

	add("kl", groupGibbs, gibbs, func() (objective.Bound, string, error) {
		b, err := objective.KLBound(r, kl, m, d)
		return b, fmt.Sprintf("Seeger/Maurer: kl(r||R) <= (KL + ln(xi(m)/delta))/m = %.6g", term(b, "budget")), err
	})
	add("pinsker", groupGibbs, gibbs, func() (objective.Bound, string, error) {
		b, err := objective.PinskerBound(r, kl, m, d)
		return b, fmt.Sprintf("McAllester: r + sqrt((KL + ln(2 sqrt(m)/delta))/(2m)) = r + %.6g", term(b, "slack")), err
	})
	add("catoni", groupGibbs, needs(pac, hasGibbs, []req{{c.tradeoffFlag.set, "--tradeoff"}}), func() (objective.Bound, string, error) {
		b, err := objective.CatoniBound(r, kl, m, d, c.tradeoff)
		return b, fmt.Sprintf("Catoni, for the one C = %g fixed in advance: (1 - exp(-(C r + (KL + ln(1/delta))/m)))/(1 - exp(-C))", c.tradeoff), err
	})
	add("lambda", groupGibbs, gibbs, func() (objective.Bound, string, error) {
		b, err := objective.LambdaBound(r, kl, m, d)
		return b, fmt.Sprintf("Thiemann et al.: r/(1 - l/2) + B/(l (1 - l/2)) at the best l = %.6g", term(b, "lambda")), err
	})
	add("first_order", groupVote, gibbs, func() (objective.Bound, string, error) {
		b, err := objective.FirstOrderBound(r, kl, m, d)
		return b, fmt.Sprintf("2 x the kl bound %.6g on R(Q)", term(b, "gibbs_upper")), err
	})
	add("tandem", groupVote, tandem, func() (objective.Bound, string, error) {
		b, err := objective.TandemBound(t, kl, m, d)
		return b, fmt.Sprintf("4 x the kl bound %.6g on the tandem risk, KL doubled", term(b, "tandem_upper")), err
	})
	cNeed := needs(pac, hasGibbs, []req{{c.tanFlag.set || c.disFlag.set, "--tandem-risk or --disagreement"}})
	add("c_bound", groupVote, cNeed, func() (objective.Bound, string, error) {
		var b objective.Bound
		var err error
		from := "d = --disagreement"
		if c.disFlag.set {
			b, err = objective.CBoundDisagreement(r, c.disagreement, kl, m, d)
		} else {
			b, err = objective.CBound(r, t, kl, m, d)
			from = "d = 2 (r - t)"
		}
		return b, fmt.Sprintf("two classes, %s: 1 - (1 - 2 R+)^2/(1 - 2 D-), R+ = %.6g, D- = %.6g, delta/2 each",
			from, term(b, "gibbs_upper"), term(b, "disagreement_lower")), err
	})
	add("chebyshev_cantelli", groupVote, pair, func() (objective.Bound, string, error) {
		b, err := objective.ChebyshevCantelliBound(r, t, kl, m, d)
		return b, fmt.Sprintf("(T+ - 2 mu R- + mu^2)/(1/2 - mu)^2, T+ = %.6g, R- = %.6g, mu = %.6g, delta/2 each",
			term(b, "tandem_upper"), term(b, "gibbs_lower"), term(b, "mu")), err
	})
	hasFresh := []req{{c.errorsFlag.set, "--errors"}, {c.nFlag.set, "--n"}}
	fresh := needs(hasFresh)
	add("test_set", groupFresh, fresh, func() (objective.Bound, string, error) {
		b, err := objective.TestSetBound(c.errors, c.n, d)
		return b, fmt.Sprintf("%s on %s: binomial tail inversion (one-sided Clopper-Pearson)", counted(c.errors, "error", "errors"), counted(c.n, "row", "rows")), err
	})
	add("population", groupFresh, needs(hasFresh, []req{{c.popFlag.set, "--population"}}), func() (objective.Bound, string, error) {
		b, err := objective.PopulationBound(c.errors, c.n, c.population, d)
		return b, fmt.Sprintf("error rate on the %d unlabelled rows: at most %.0f errors (hypergeometric tail inversion)",
			c.population-c.n, term(b, "unlabelled_errors_upper")), err
	})
	return lines
}

// req is one figure a bound needs: whether its flag was given, and its name.
type req struct {
	set  bool
	name string
}

// needs returns the names of the flags in the groups that were not given.
func needs(groups ...[]req) []string {
	var out []string
	for _, g := range groups {
		for _, r := range g {
			if !r.set {
				out = append(out, r.name)
			}
		}
	}
	return out
}

// term returns a bound's named term, NaN if it has none (never printed: a
// bound that failed is left out).
func term(b objective.Bound, name string) float64 {
	if v, ok := b.Term(name); ok {
		return v
	}
	return math.NaN()
}

func (c *boundOptions) writeText(w io.Writer, lines []boundLine) error {
	var sb strings.Builder
	sb.WriteString("inputs: " + strings.Join(c.inputList(), ", ") + "\n")
	width := 0
	for _, l := range lines {
		width = max(width, len(l.bound.Name), len(l.key))
	}
	group := ""
	for _, l := range lines {
		if l.reason != "" {
			continue
		}
		if l.group != group {
			group = l.group
			fmt.Fprintf(&sb, "\n%s\n", group)
		}
		vacuous := ""
		if l.bound.Vacuous() {
			vacuous = " (vacuous)"
		}
		fmt.Fprintf(&sb, "  %-*s  %s%s  %s\n", width, l.bound.Name, upDecimals(l.bound.Value, 6), vacuous, l.note)
	}
	header := false
	for _, l := range lines {
		if l.reason == "" {
			continue
		}
		if !header {
			sb.WriteString("\nleft out\n")
			header = true
		}
		fmt.Fprintf(&sb, "  %-*s  %s\n", width, strings.ReplaceAll(l.key, "_", "-"), l.reason)
	}
	fmt.Fprintf(&sb, "\nEach bound holds on its own with probability at least %g; to quote the smallest of k, compute each at delta/k.\n", 1-c.delta)
	_, err := io.WriteString(w, sb.String())
	return err
}

// inputList echoes the given figures for the text output.
func (c *boundOptions) inputList() []string {
	out := []string{fmt.Sprintf("delta = %g", c.delta)}
	add := func(set bool, f string, v any) {
		if set {
			out = append(out, fmt.Sprintf(f, v))
		}
	}
	add(c.mFlag.set, "m = %d", c.m)
	add(c.klFlag.set, "KL = %g", c.kl)
	add(c.gibbsFlag.set, "gibbs risk = %g", c.gibbs)
	add(c.tanFlag.set, "tandem risk = %g", c.tandem)
	add(c.disFlag.set, "disagreement = %g", c.disagreement)
	add(c.tradeoffFlag.set, "tradeoff C = %g", c.tradeoff)
	add(c.errorsFlag.set, "errors = %d", c.errors)
	add(c.nFlag.set, "n = %d", c.n)
	add(c.popFlag.set, "population = %d", c.population)
	return out
}

// boundJSON is the --json output; its keys are documented in the README.
type boundJSON struct {
	Inputs  boundInputsJSON          `json:"inputs"`
	Bounds  map[string]boundItemJSON `json:"bounds"`
	LeftOut map[string]string        `json:"left_out"`
}

type boundInputsJSON struct {
	Delta        float64  `json:"delta"`
	M            *int     `json:"m,omitempty"`
	KL           *float64 `json:"kl,omitempty"`
	GibbsRisk    *float64 `json:"gibbs_risk,omitempty"`
	TandemRisk   *float64 `json:"tandem_risk,omitempty"`
	Disagreement *float64 `json:"disagreement,omitempty"`
	Tradeoff     *float64 `json:"tradeoff,omitempty"`
	Errors       *int     `json:"errors,omitempty"`
	N            *int     `json:"n,omitempty"`
	Population   *int     `json:"population,omitempty"`
}

type boundItemJSON struct {
	Name  string             `json:"name"`
	Of    string             `json:"of"`
	Value float64            `json:"value"`
	Delta float64            `json:"delta"`
	M     int                `json:"m"`
	KL    *float64           `json:"kl,omitempty"`
	Terms map[string]float64 `json:"terms"`
}

func (c *boundOptions) writeJSON(w io.Writer, lines []boundLine) error {
	out := boundJSON{Inputs: boundInputsJSON{Delta: c.delta}, Bounds: map[string]boundItemJSON{}, LeftOut: map[string]string{}}
	in := &out.Inputs
	setInt := func(set bool, v int, dst **int) {
		if set {
			*dst = &v
		}
	}
	setFloat := func(set bool, v float64, dst **float64) {
		if set {
			*dst = &v
		}
	}
	setInt(c.mFlag.set, c.m, &in.M)
	setFloat(c.klFlag.set, c.kl, &in.KL)
	setFloat(c.gibbsFlag.set, c.gibbs, &in.GibbsRisk)
	setFloat(c.tanFlag.set, c.tandem, &in.TandemRisk)
	setFloat(c.disFlag.set, c.disagreement, &in.Disagreement)
	setFloat(c.tradeoffFlag.set, c.tradeoff, &in.Tradeoff)
	setInt(c.errorsFlag.set, c.errors, &in.Errors)
	setInt(c.nFlag.set, c.n, &in.N)
	setInt(c.popFlag.set, c.population, &in.Population)
	for _, l := range lines {
		if l.reason != "" {
			out.LeftOut[l.key] = l.reason
			continue
		}
		item := boundItemJSON{Name: l.bound.Name, Of: l.bound.Of, Value: l.bound.Value, Delta: l.bound.Delta, M: l.bound.M, Terms: map[string]float64{}}
		if l.group != groupFresh {
			kl := l.bound.KL
			item.KL = &kl
		}
		for _, t := range l.bound.Terms {
			item.Terms[t.Name] = t.Value
		}
		out.Bounds[l.key] = item
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}
