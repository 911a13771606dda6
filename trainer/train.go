package trainer

import (
	"context"
	"fmt"
	"math/rand/v2"
	"slices"

	"surety/datasets"
	"surety/objective"
	"surety/voters"
)

// MinPartRows is the fewest rows the prior part and the certify part may
// each hold; below it the pool is meaningless or the certificate vacuous.
const MinPartRows = 10

// Train runs the whole pipeline on t: split, pool, prior, statistics,
// posterior, certificate. The table must have a label. It is Prepare
// followed by Fit with cfg's setting.
func Train(ctx context.Context, t *datasets.Table, cfg Config) (*Model, error) {
	p, err := Prepare(ctx, t, cfg)
	if err != nil {
		return nil, err
	}
	return p.Fit(ctx, cfg.Setting())
}

// Setting is the part of a Config that may change between fits of one
// prepared table: the objective, its trade-off and the prior.
type Setting struct {
	Objective Objective `json:"objective"`
	// Tradeoff is C of the Linear objective; the others ignore it except
	// as a starting point (Config.Tradeoff).
	Tradeoff float64   `json:"tradeoff"`
	Prior    PriorKind `json:"prior"`
}

// Setting returns c's setting, defaults filled in.
func (c Config) Setting() Setting {
	c = c.withDefaults()
	return Setting{Objective: c.Objective, Tradeoff: c.Tradeoff, Prior: c.Prior}
}

// String names the setting as tables and file names show it:
// "linear C=0.3 prior=learned", "tandem prior=uniform".
func (s Setting) String() string {
	if s.Objective == Linear {
		return fmt.Sprintf("%s C=%g prior=%s", s.Objective, s.Tradeoff, s.Prior)
	}
	return fmt.Sprintf("%s prior=%s", s.Objective, s.Prior)
}

// Prepared is a table split, its pool built and its statistics counted:
// everything of the pipeline that does not depend on the objective or the
// prior, done once for any number of fits (a sweep fits many).
//
// A Prepared is not safe for concurrent use.
type Prepared struct {
	cfg                 Config
	t                   *datasets.Table
	priorRows, certRows []int
	pool                *voters.Pool
	kindChanges         []datasets.KindChange
	priorRates          rates
	certRates           rates
	// certKnown holds the linear voters' classes on the certify rows.
	certKnown *voters.Known
	// holdFits keeps the prior-rows fits by objective and trade-off: the
	// prior kind does not enter them, so a sweep over priors reuses them.
	holdFits map[Setting][]float64
	// fixed holds the held-out votes that do not depend on the setting
	// (the boosted vote, the full linear voter alone), fixed on the prior
	// rows, with their certify-row errors and margins.
	fixed []shipVote
	// certClassRows counts the certify rows of each class; classErrs
	// holds each voter's errors among each class's certify rows.
	certClassRows []int
	classErrs     [][]int64
	// costs is Config.Costs in the order of the table's classes, or nil.
	costs *CostMatrix
}

// Prepare splits t (datasets.RandomSplit: a uniform random subset of the
// rows, blind to labels and features), decides the kinds of t's inferred
// columns from the prior rows (datasets.Table.InferKindsFrom; each change
// goes to cfg.Warn and the model's provenance), builds the pool on the
// prior rows and counts the statistics of both parts. Read t with
// datasets.ReadOptions.DeferKinds so that a stray word in the certify rows
// does not fail the read; t itself is not changed. cfg's Seed, PriorFraction, Pool, Delta,
// PriorMix, MaxIterations and Progress hold for every later Fit; its
// setting is checked here so that bad settings fail before the work.
func Prepare(ctx context.Context, t *datasets.Table, cfg Config) (*Prepared, error) {
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
	p := &Prepared{cfg: cfg, t: t}
	p.stage("split")
	var err error
	// A uniform random subset, blind to labels and features: the certify
	// rows must be a fair sample (FIELD-GUIDE.md, rule 7), which a split
	// stratified by label with per-class rounding is not.
	p.priorRows, p.certRows, err = datasets.RandomSplit(t.Rows, cfg.PriorFraction, cfg.Seed)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	if len(p.priorRows) < MinPartRows || len(p.certRows) < MinPartRows {
		return nil, fmt.Errorf("trainer: %s: too few rows: %d rows split into %d prior and %d certify rows, and each part needs at least %d",
			t.Source, t.Rows, len(p.priorRows), len(p.certRows), MinPartRows)
	}
	// Column kinds, like every other part of the pool, come from the prior
	// rows: the split needs only the row count, so it comes first.
	var kinds datasets.KindReport
	if t, kinds, err = t.InferKindsFrom(p.priorRows); err != nil {
		return nil, fmt.Errorf("trainer: column kinds from the prior rows: %w", err)
	}
	p.t, p.kindChanges = t, kinds.Changes
	if cfg.Warn != nil {
		for _, w := range kinds.Warnings() {
			cfg.Warn("trainer: " + w)
		}
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	if cfg.Costs != nil {
		if p.costs, err = cfg.Costs.forClasses(t.Classes); err != nil {
			return nil, err
		}
	}
	p.certClassRows = make([]int, len(t.Classes))
	for _, r := range p.certRows {
		p.certClassRows[t.Label[r]]++
	}

	p.stage("pool")
	rng := rand.New(rand.NewPCG(cfg.Seed, 0x9001))
	p.pool, err = voters.BuildPool(t, p.priorRows, cfg.Pool, rng)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	if len(p.pool.Voters) == 0 {
		return nil, fmt.Errorf("trainer: %s: the pool is empty: no feature column yields a voter on the prior rows", t.Source)
	}

	p.stage("statistics")
	sample := p.priorSample(rng)
	votes, err := p.honestVotes(sample)
	if err != nil {
		return nil, err
	}
	y := make([]int, len(sample))
	for r, row := range sample {
		y[r] = t.Label[row]
	}
	p.priorRates = honestRates(votes, y, p.oobMasks(sample))
	// The linear voters' classes on the certify rows, worked out once for
	// the counts and every vote scored on them.
	if p.certKnown, err = p.pool.Remember(t, p.certRows); err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	certStats, err := p.pool.CountKnown(p.certKnown)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	// Each voter's errors among each class's certify rows, for the
	// per-class certificates, come from the same pass (the pool's classes
	// are the table's, in its order).
	k := len(t.Classes)
	p.classErrs = make([][]int64, k)
	for c := range k {
		p.classErrs[c] = make([]int64, len(p.pool.Voters))
		for i := range p.pool.Voters {
			p.classErrs[c][i] = certStats.ClassErrors[i*k+c]
		}
	}
	p.certRates = ratesOf(certStats)
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	p.stage("boost")
	var fixed []shipVote
	for i, oof := range p.pool.OutOfFold {
		if oof != nil {
			q := make([]float64, len(p.pool.Voters))
			q[i] = 1
			fixed = append(fixed, shipVote{vote: VoteLogistic, q: q})
		}
	}
	fixed = append(fixed, shipVote{vote: VoteBoosted, q: boostWeights(votes, y, len(t.Classes), voterGroups(p.pool.Voters), cfg.Seed)})
	for _, v := range fixed {
		if v, err = p.score(v.vote, v.q); err != nil {
			return nil, err
		}
		p.fixed = append(p.fixed, v)
	}
	return p, nil
}

// The prior rows the prior-row statistics and the boosted vote are
// computed on: all of them up to sampleRows, else a seeded sample of that
// many, fewer still for a large pool so that the votes (one byte per voter
// and row) stay within sampleVotes. The pool is fixed by then; a sample of
// thousands of rows pins each voter's error rate to a point or so.
const (
	sampleRows  = 10000
	sampleVotes = 10_000_000
	minSample   = 2000
)

// priorSample returns the prior rows the prior-row fits see, sorted.
func (p *Prepared) priorSample(rng *rand.Rand) []int {
	size := min(len(p.priorRows), sampleRows, max(minSample, sampleVotes/len(p.pool.Voters)))
	if size == len(p.priorRows) {
		return p.priorRows
	}
	rows := slices.Clone(p.priorRows)
	rng.Shuffle(len(rows), func(i, j int) { rows[i], rows[j] = rows[j], rows[i] })
	rows = rows[:size]
	slices.Sort(rows)
	return rows
}

// honestVotes returns every voter's class on the sample rows, a voter
// fitted by cross-validation giving its out-of-fold classes (Pool.OutOfFold
// follows the prior rows' order), so that no voter is scored on rows it
// was fitted on; bootstrap voters are masked to their out-of-bag rows by
// oobMasks.
func (p *Prepared) honestVotes(sample []int) ([][]uint8, error) {
	votes, err := p.pool.Votes(p.t, sample)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	pos := p.priorPositions()
	for i, oof := range p.pool.OutOfFold {
		if oof == nil {
			continue
		}
		for r, row := range sample {
			votes[i][r] = uint8(oof[pos[row]])
		}
	}
	return votes, nil
}

// priorPositions maps a prior row to its index among the prior rows.
func (p *Prepared) priorPositions() map[int]int {
	pos := make(map[int]int, len(p.priorRows))
	for j, r := range p.priorRows {
		pos[r] = j
	}
	return pos
}

// oobMasks returns, for each bootstrap voter, the bit set over the sample
// rows of those its bootstrap sample missed; nil for the other voters,
// which are scored on every row.
func (p *Prepared) oobMasks(sample []int) [][]uint64 {
	masks := make([][]uint64, len(p.pool.Voters))
	pos := p.priorPositions()
	for i, oob := range p.pool.OutOfBag {
		if oob == nil {
			continue
		}
		m := make([]uint64, (len(sample)+63)/64)
		for r, row := range sample {
			if j := pos[row]; oob[j/64]&(1<<(j%64)) != 0 {
				m[r/64] |= 1 << (r % 64)
			}
		}
		masks[i] = m
	}
	return masks
}

func (p *Prepared) stage(s string) {
	if p.cfg.Progress != nil {
		p.cfg.Progress(s)
	}
}

// PoolSize is the number of voters in the pool.
func (p *Prepared) PoolSize() int { return len(p.pool.Voters) }

// Fit fits the posterior of setting s and certifies it at the prepared
// delta.
func (p *Prepared) Fit(ctx context.Context, s Setting) (*Model, error) {
	f, err := p.fit(ctx, s)
	if err != nil {
		return nil, err
	}
	return f.model, nil
}

// shipVote is a vote a family may ship, with its errors, signed margins,
// errors by true class and (with a cost matrix) summed cost on the certify
// rows.
type shipVote struct {
	vote      string
	q         []float64
	errs      int
	margins   []float64
	classErrs []int
	costSum   float64
}

// fitted is a Fit's model and what recertifying it at another delta needs:
// every vote a family may ship (the posterior first) and the posterior's
// empirical terms.
type fitted struct {
	model *Model
	emp   Empirical // of the posterior
	votes []shipVote
}

// held lists the held-out votes, those fixed before the certify rows were
// read, for certify.
func (f *fitted) held() []heldOut {
	var h []heldOut
	for _, v := range f.votes[1:] {
		h = append(h, heldOut{family: holdOutFamily[v.vote], vote: v.vote, errs: v.errs})
	}
	return h
}

func (p *Prepared) fit(ctx context.Context, s Setting) (*fitted, error) {
	cfg := p.cfg
	cfg.Objective, cfg.Tradeoff, cfg.Prior = s.Objective, s.Tradeoff, s.Prior
	cfg = cfg.withDefaults()
	if err := cfg.validate(len(p.t.Classes)); err != nil {
		return nil, err
	}
	t, pool, n := p.t, p.pool, len(p.pool.Voters)

	p.stage("optimise")
	uniform := uniformWeights(n)
	// The prior-rows fit: the objective on the prior rows' statistics with a
	// uniform prior. It is the hold-out family's vote, and (mixed with
	// uniform weight) the learned prior. Nothing here sees a certify row.
	key := Setting{Objective: cfg.Objective, Tradeoff: cfg.Tradeoff}
	holdQ, ok := p.holdFits[key]
	if ok {
		holdQ = slices.Clone(holdQ) // each model owns its weights
	} else {
		var err error
		if holdQ, _, err = fit(cfg, p.priorRates, uniform); err != nil {
			return nil, fmt.Errorf("trainer: fitting on the prior rows: %w", err)
		}
		if p.holdFits == nil {
			p.holdFits = map[Setting][]float64{}
		}
		p.holdFits[key] = holdQ
	}
	prior := uniform
	if cfg.Prior == LearnedPrior {
		prior = make([]float64, n)
		for i := range prior {
			prior[i] = (1-cfg.PriorMix)*holdQ[i] + cfg.PriorMix/float64(n)
		}
	}
	q, opt, err := fit(cfg, p.certRates, prior)
	if err != nil {
		return nil, fmt.Errorf("trainer: fitting on the certify rows: %w", err)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	p.stage("certify")
	post, err := p.score(VotePosterior, q)
	if err != nil {
		return nil, err
	}
	hold, err := p.score(VotePriorRows, holdQ)
	if err != nil {
		return nil, err
	}
	// On a tie the first family listed ships: the full linear voter alone,
	// then the boosted vote, then the objective's fit (an order fixed in
	// advance, simplest first).
	f := &fitted{votes: append(append([]shipVote{post}, p.fixed...), hold)}
	f.emp = empirical(p.certRates, q, prior, post.errs, len(t.Classes) == 2)
	cert, err := certify(cfg.Delta, f.emp, f.held(), len(t.Classes), cfg.Family, p.extraLines())
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	f.model = &Model{
		Format:      ModelFormat,
		ToolVersion: Version,
		Label:       t.LabelName,
		Classes:     append([]string(nil), t.Classes...),
		Columns:     slices.Clone(pool.Schema),
		Vote:        &voters.Vote{Voters: pool.Voters, Classes: pool.Classes},
		Provenance: Provenance{
			Data:          t.Fingerprint,
			Source:        t.Source,
			Seed:          cfg.Seed,
			Rows:          t.Rows,
			PriorRows:     len(p.priorRows),
			CertifyRows:   len(p.certRows),
			PoolSize:      n,
			Objective:     cfg.Objective,
			Tradeoff:      cfg.Tradeoff,
			Prior:         cfg.Prior,
			PriorMix:      cfg.PriorMix,
			PriorFraction: cfg.PriorFraction,
			Pool:          pool.Config,
			Optimizer:     opt,
			KindChanges:   p.kindChanges,
			Family:        cfg.Family,
			MaxIterations: cfg.MaxIterations,
		},
	}
	if err := f.ship(p, cert); err != nil {
		return nil, err
	}
	return f, nil
}

// extraLines is the number of ledger lines besides the families: the
// per-class certificates, and the cost certificate when there are costs.
func (p *Prepared) extraLines() int {
	if p.costs != nil {
		return 2
	}
	return 1
}

// ship sets the model's certificate and the vote its family certifies,
// with that vote's empirical error and margins, and the per-class and cost
// certificates of that vote at the ledger's share.
func (f *fitted) ship(p *Prepared, cert Certificate) error {
	m := f.model
	v := f.votes[0]
	for _, c := range f.votes {
		if c.vote == cert.Vote {
			v = c
		}
	}
	share := cert.Families[0].Delta
	cc, err := p.classCertificates(share, cert.Families, v, f.emp.KL)
	if err != nil {
		return err
	}
	cert.PerClass = cc
	if p.costs != nil {
		cert.Cost = p.costCertificate(share, cert.Families, v, cert.RiskBound)
	}
	m.Certificate = cert
	m.Empirical = f.emp
	m.Empirical.VoteError = float64(v.errs) / float64(f.emp.M)
	m.Vote = &voters.Vote{Voters: m.Vote.Voters, Weights: slices.Clone(v.q), Classes: m.Vote.Classes}
	m.Empirical.Margins = marginHistogram(v.margins)
	return nil
}

// score predicts the certify rows with weights w and returns the vote
// with each row's margin, negated where the vote is wrong (a tie, margin
// 0, is wrong), its errors, in all and by true class, and its summed cost
// when there is a cost matrix.
func (p *Prepared) score(vote string, w []float64) (shipVote, error) {
	s := shipVote{vote: vote, q: w, classErrs: make([]int, len(p.t.Classes))}
	v := &voters.Vote{Voters: p.pool.Voters, Weights: w, Classes: p.pool.Classes}
	cls, margins, err := v.PredictKnown(p.certKnown)
	if err != nil {
		return s, fmt.Errorf("trainer: %w", err)
	}
	for i, r := range p.certRows {
		y := p.t.Label[r]
		wrong := margins[i] == 0 || cls[i] != y
		if wrong {
			s.errs++
			s.classErrs[y]++
			margins[i] = -margins[i]
		}
		if p.costs != nil {
			j := cls[i]
			if margins[i] == 0 {
				j = -1
			}
			s.costSum += p.costs.rowCost(y, j)
		}
	}
	s.margins = margins
	return s, nil
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

// fit minimises the configured objective on r with the given prior.
func fit(cfg Config, r rates, prior []float64) ([]float64, OptimizerResult, error) {
	spec, ok := specOf(cfg.Objective)
	if !ok {
		return nil, OptimizerResult{}, cfg.Objective.check(0)
	}
	prob, err := spec.problem(r, prior, cfg)
	if err != nil {
		return nil, OptimizerResult{}, err
	}
	starts := []startPoint{{"prior", prior}, {"uniform", uniformWeights(len(prior))}}
	// Gibbs posteriors over a grid of temperatures around the configured
	// trade-off: cheap, closed-form, and often close to a bound's optimum.
	for _, f := range []float64{1, 0.1, 0.3, 3, 10} {
		c := cfg.Tradeoff * f
		q, err := objective.GibbsPosterior(r.risks, prior, r.m, c)
		if err != nil {
			return nil, OptimizerResult{}, err
		}
		starts = append(starts, startPoint{fmt.Sprintf("gibbs(C=%g)", c), q})
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
