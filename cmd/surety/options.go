package main

import (
	"strings"

	"github.com/spf13/pflag"

	"surety/trainer"
	"surety/voters"
)

// The flag groups below are shared by the commands that train. Each one
// starts from trainer.DefaultConfig, so every default has one definition,
// and checks its values at parse time through the pflag.Value types of
// flags.go. Commands compose the groups they need.

// fitFlags choose one setting: the objective, its trade-off and the prior.
type fitFlags struct {
	objective string
	tradeoff  float64
	prior     string
}

func (f *fitFlags) AddFlags(fs *pflag.FlagSet) {
	d := trainer.DefaultConfig()
	f.objective, f.tradeoff, f.prior = string(d.Objective), d.Tradeoff, string(d.Prior)
	fs.Var(&enum{&f.objective, objectiveWords()}, "objective", "bound the weights are fitted to: "+objectiveHelp())
	fs.Var(positive(&f.tradeoff, "--tradeoff"), "tradeoff", "C in the linear objective C m r(Q) + KL(Q||P)")
	fs.Var(&enum{&f.prior, priorWords()}, "prior", "prior over the pool: learned (fitted on the prior rows) or uniform")
}

func (f *fitFlags) apply(c *trainer.Config) {
	c.Objective, c.Tradeoff, c.Prior = trainer.Objective(f.objective), f.tradeoff, trainer.PriorKind(f.prior)
}

// gridFlags choose a sweep's settings: lists of objectives, trade-offs and
// priors.
type gridFlags struct {
	objectives []string
	tradeoffs  []float64
	priors     []string
}

// DefaultSweepTradeoffs are the values of C a sweep tries by default.
var defaultSweepTradeoffs = []float64{0.1, 0.3, 1, 3, 10, 30}

func (g *gridFlags) AddFlags(fs *pflag.FlagSet) {
	g.objectives = []string{string(trainer.Linear), string(trainer.CBound), string(trainer.Tandem)}
	g.tradeoffs = append([]float64(nil), defaultSweepTradeoffs...)
	g.priors = priorWords()
	fs.Var(&enumList{v: &g.objectives, words: objectiveWords()}, "objective",
		"objectives to try, comma-separated (an objective for two classes only is dropped with a warning when the label has more)")
	fs.Var(&positiveList{v: &g.tradeoffs, what: "--tradeoff"}, "tradeoff",
		"values of C to try in the linear objective, comma-separated (the other objectives' bounds do not contain it: they are fitted once, at C = 1)")
	fs.Var(&enumList{v: &g.priors, words: priorWords()}, "prior", "priors to try, comma-separated")
}

// deltaFlag is --delta; what it is the probability of differs by command.
type deltaFlag struct{ delta float64 }

func (d *deltaFlag) AddFlags(fs *pflag.FlagSet, usage string) {
	d.delta = trainer.DefaultDelta
	fs.Var(probability(&d.delta, "--delta"), "delta", usage+", in (0, 1)")
}

// splitFlags set the split into prior and certify rows.
type splitFlags struct {
	fraction float64
	seed     uint64
}

func (s *splitFlags) AddFlags(fs *pflag.FlagSet) {
	d := trainer.DefaultConfig()
	s.fraction, s.seed = d.PriorFraction, d.Seed
	fs.Var(&floatRange{v: &s.fraction, lo: 0, hi: 1, loOpen: true, hiOpen: true, what: "--prior-fraction"}, "prior-fraction",
		"share of rows that build the pool and the prior, in (0, 1); the rest certify")
	fs.Uint64Var(&s.seed, "seed", s.seed, "seed of the split and of the pool's random choices")
}

// poolFlags set the pool of voters.
type poolFlags struct {
	thresholds, linearVoters, maxVoters int
}

func (p *poolFlags) AddFlags(fs *pflag.FlagSet) {
	d := voters.DefaultPoolConfig()
	p.thresholds, p.linearVoters, p.maxVoters = d.Thresholds, *d.LinearVoters, d.MaxVoters
	fs.Var(&intRange{v: &p.thresholds, lo: 1, hi: 1 << 16, what: "--thresholds"}, "thresholds", "stump thresholds per numeric column (quantiles of the prior rows)")
	fs.Var(&intRange{v: &p.linearVoters, lo: 0, hi: 1 << 16, what: "--linear-voters"}, "linear-voters", "number of logistic-regression voters (0 for none)")
	fs.Var(&intRange{v: &p.maxVoters, lo: 1, hi: 1 << 16, what: "--max-voters"}, "max-voters", "largest pool, linear voters included; past it the stumps with the fewest prior-row errors are kept")
}

func (p *poolFlags) config() voters.PoolConfig {
	linear := p.linearVoters
	return voters.PoolConfig{Thresholds: p.thresholds, LinearVoters: &linear, MaxVoters: p.maxVoters}
}

// trainFlags are the groups every training command shares: the split, the
// pool, the certificate's delta and its family.
type trainFlags struct {
	split  splitFlags
	pool   poolFlags
	delta  deltaFlag
	family string
}

// allFamilies is --family's word for "every family that applies".
const allFamilies = "all"

func (t *trainFlags) AddFlags(fs *pflag.FlagSet) {
	t.delta.AddFlags(fs, "probability that the certificate is wrong")
	t.family = allFamilies
	fs.Var(&enum{&t.family, append([]string{allFamilies}, trainer.Families...)}, "family",
		"certificate family, chosen before seeing the data, that gets the whole delta; all: every family that applies at an equal share, the smallest kept")
	t.split.AddFlags(fs)
	t.pool.AddFlags(fs)
}

// config is the trainer configuration of the groups; fit, when not nil,
// sets the setting.
func (t *trainFlags) config(fit *fitFlags) trainer.Config {
	c := trainer.Config{Delta: t.delta.delta, PriorFraction: t.split.fraction, Seed: t.split.seed, Pool: t.pool.config()}
	if t.family != allFamilies {
		c.Family = t.family
	}
	if fit != nil {
		fit.apply(&c)
	}
	return c
}

// outputFlags choose the output's form.
type outputFlags struct{ json bool }

func (o *outputFlags) AddFlags(fs *pflag.FlagSet) {
	fs.BoolVar(&o.json, "json", false, "print one JSON object instead of text")
}

func objectiveWords() []string {
	w := make([]string, len(trainer.Objectives))
	for i, o := range trainer.Objectives {
		w[i] = string(o)
	}
	return w
}

func objectiveHelp() string {
	parts := make([]string, len(trainer.Objectives))
	for i, o := range trainer.Objectives {
		parts[i] = string(o) + " (" + o.Doc() + ")"
	}
	return strings.Join(parts, ", ")
}

func priorWords() []string {
	w := make([]string, len(trainer.Priors))
	for i, p := range trainer.Priors {
		w[i] = string(p)
	}
	return w
}
