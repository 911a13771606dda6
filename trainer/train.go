package trainer

import (
	"context"
	"fmt"
	"math/rand/v2"

	"surety/datasets"
	"surety/objective"
	"surety/voters"
)

// MinPartRows is the fewest rows the prior part and the certify part may
// each hold; below it the pool is meaningless or the certificate vacuous.
const MinPartRows = 10

// Train runs the whole pipeline on t: split, pool, prior, statistics,
// posterior, certificate. The table must have a label.
func Train(ctx context.Context, t *datasets.Table, cfg Config) (*Model, error) {
	cfg = cfg.withDefaults()
	if t.Label == nil {
		return nil, fmt.Errorf("trainer: %s: the table has no label column", t.Source)
	}
	if err := cfg.validate(len(t.Classes)); err != nil {
		return nil, err
	}
	if len(t.Columns) == 0 {
		return nil, fmt.Errorf("trainer: %s: no usable feature column", t.Source)
	}
	stage := func(s string) {
		if cfg.Progress != nil {
			cfg.Progress(s)
		}
	}

	stage("split")
	priorRows, certRows, err := datasets.StratifiedSplit(t.Label, len(t.Classes), cfg.PriorFraction, cfg.Seed)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	if len(priorRows) < MinPartRows || len(certRows) < MinPartRows {
		return nil, fmt.Errorf("trainer: %s: too few rows: %d rows split into %d prior and %d certify rows, and each part needs at least %d",
			t.Source, t.Rows, len(priorRows), len(certRows), MinPartRows)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	stage("pool")
	rng := rand.New(rand.NewPCG(cfg.Seed, 0x9001))
	pool, err := voters.BuildPool(t, priorRows, cfg.Pool, rng)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	n := len(pool.Voters)
	if n == 0 {
		return nil, fmt.Errorf("trainer: %s: the pool is empty: no feature column yields a voter on the prior rows", t.Source)
	}

	stage("statistics")
	priorStats, err := pool.Count(t, priorRows)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	certStats, err := pool.Count(t, certRows)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	stage("optimise")
	uniform := uniformWeights(n)
	// The prior-rows fit: the objective on the prior rows' statistics with a
	// uniform prior. It is the hold-out family's vote, and (mixed with
	// uniform weight) the learned prior. Nothing here sees a certify row.
	holdQ, _, err := fit(cfg, ratesOf(priorStats), uniform)
	if err != nil {
		return nil, fmt.Errorf("trainer: fitting on the prior rows: %w", err)
	}
	prior := uniform
	if cfg.Prior == LearnedPrior {
		prior = make([]float64, n)
		for i := range prior {
			prior[i] = (1-cfg.PriorMix)*holdQ[i] + cfg.PriorMix/float64(n)
		}
	}
	certRates := ratesOf(certStats)
	q, opt, err := fit(cfg, certRates, prior)
	if err != nil {
		return nil, fmt.Errorf("trainer: fitting on the certify rows: %w", err)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	stage("certify")
	post := &voters.Vote{Voters: pool.Voters, Weights: q, Classes: pool.Classes}
	hold := &voters.Vote{Voters: pool.Voters, Weights: holdQ, Classes: pool.Classes}
	postErrs, err := post.Errors(t, certRows)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	holdErrs, err := hold.Errors(t, certRows)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	emp := empirical(certRates, q, prior, postErrs, len(t.Classes) == 2)
	cert, err := certify(cfg.Delta, emp, holdErrs, len(t.Classes))
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	shipped := q
	if cert.Family == FamilyHoldOut {
		shipped = holdQ
		emp.VoteError = float64(holdErrs) / float64(emp.M)
	}

	m := &Model{
		Format:      ModelFormat,
		ToolVersion: Version,
		Label:       t.LabelName,
		Classes:     append([]string(nil), t.Classes...),
		Columns:     schemaOf(pool),
		Vote:        &voters.Vote{Voters: pool.Voters, Weights: shipped, Classes: pool.Classes},
		Certificate: cert,
		Empirical:   emp,
		Provenance: Provenance{
			Data:          t.Fingerprint,
			Source:        t.Source,
			Seed:          cfg.Seed,
			Rows:          t.Rows,
			PriorRows:     len(priorRows),
			CertifyRows:   len(certRows),
			PoolSize:      n,
			Objective:     cfg.Objective,
			Tradeoff:      cfg.Tradeoff,
			Prior:         cfg.Prior,
			PriorMix:      cfg.PriorMix,
			PriorFraction: cfg.PriorFraction,
			Pool:          cfg.Pool,
			Optimizer:     opt,
		},
	}
	return m, nil
}

// rates are a Stats' counts divided by its row count, as the objectives
// take them; made once per Stats, since the joint rates are n x n.
type rates struct {
	m            int
	risks, joint []float64
}

func ratesOf(s *voters.Stats) rates {
	return rates{m: s.M, risks: s.Risks(), joint: s.JointRisks()}
}

// problemFor returns the configured objective on r with the given prior.
func problemFor(cfg Config, r rates, prior []float64) objective.Problem {
	switch cfg.Objective {
	case Linear:
		return objective.LinearObjective(r.risks, prior, r.m, cfg.Tradeoff)
	case KL:
		return objective.KLObjective(r.risks, prior, r.m, cfg.Delta)
	case CBound:
		return objective.CBoundObjective(r.risks, r.joint, prior, r.m, cfg.Delta)
	default:
		return objective.TandemObjective(r.joint, prior, r.m, cfg.Delta)
	}
}

// fit minimises the configured objective on r with the given prior.
func fit(cfg Config, r rates, prior []float64) ([]float64, OptimizerResult, error) {
	starts := []startPoint{{"prior", prior}, {"uniform", uniformWeights(len(prior))}}
	// Gibbs posteriors over a grid of temperatures around the configured
	// trade-off: cheap, closed-form, and often close to a bound's optimum.
	for _, f := range []float64{1, 0.1, 0.3, 3, 10} {
		c := cfg.Tradeoff * f
		starts = append(starts, startPoint{fmt.Sprintf("gibbs(C=%g)", c), objective.GibbsPosterior(r.risks, prior, r.m, c)})
	}
	prob := problemFor(cfg, r, prior)
	if prob.Err != nil {
		return nil, OptimizerResult{}, prob.Err
	}
	return minimizeSimplex(prob, starts, cfg.MaxIterations)
}

func uniformWeights(n int) []float64 {
	w := make([]float64, n)
	for i := range w {
		w[i] = 1 / float64(n)
	}
	return w
}
