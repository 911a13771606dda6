package trainer

import (
	"fmt"
	"slices"
	"strings"

	"surety/voters"
)

// PriorKind says how the prior over the pool is chosen.
type PriorKind string

const (
	// LearnedPrior fits the objective on the prior rows and mixes the result
	// with uniform weight (Config.PriorMix), so every weight stays positive.
	LearnedPrior PriorKind = "learned"
	// UniformPrior puts the same weight on every voter.
	UniformPrior PriorKind = "uniform"
)

// The defaults of Config, in one place: the zero value of each field means
// its default, and the command line's flags start from DefaultConfig.
const (
	DefaultObjective     = Tandem
	DefaultTradeoff      = 1.0
	DefaultDelta         = 0.05
	DefaultPriorFraction = 0.7
	DefaultPrior         = LearnedPrior
	DefaultPriorMix      = 0.1
	DefaultMaxIterations = 1000
	// DefaultSeed is the command line's seed; a Config's zero Seed is seed
	// 0, an ordinary seed.
	DefaultSeed uint64 = 1
)

// Config holds the settings of Train. The zero value means the defaults
// given beside each field.
type Config struct {
	// Objective is the bound the posterior is fitted to. Default Tandem.
	Objective Objective
	// Tradeoff is C in the Linear objective. Default 1. Ignored by the
	// other objectives, except as one of the Gibbs posteriors tried as a
	// starting point.
	Tradeoff float64
	// Delta is the probability that the certificate is wrong. Default 0.05.
	Delta float64
	// PriorFraction is the share of rows used to build the pool and the
	// prior, in (0, 1). Default 0.7 (see the README for the measured trade-off). The pool's thresholds and linear voters
	// are learned from those rows, so no fraction of zero is possible.
	PriorFraction float64
	// Prior says how the prior is chosen. Default LearnedPrior.
	Prior PriorKind
	// PriorMix is the uniform share mixed into a learned prior, in (0, 1].
	// Default 0.1.
	PriorMix float64
	// Seed drives the split and the pool's random choices (0 is seed 0).
	Seed uint64
	// Pool sets the voter pool; its zero value means the voters package's
	// defaults.
	Pool voters.PoolConfig
	// Family, when not "", is the one certificate family computed, chosen
	// before seeing the data: it gets the whole delta instead of a share.
	// Default "": every family that applies, the smallest kept.
	Family string
	// MaxIterations bounds each optimiser run. Default 1000.
	MaxIterations int
	// Costs, if not nil, is a cost matrix over the label's classes (every
	// class, in any order): the certificate then also bounds the shipped
	// vote's expected cost (CostCertificate). Default nil: no cost bound.
	Costs *CostMatrix
	// Progress, if not nil, is told when each stage starts.
	Progress func(stage string)
	// Warn, if not nil, receives warnings: each column whose kind the
	// prior rows changed (see Prepare).
	Warn func(msg string)
}

// DefaultConfig returns the defaults of every field, the pool's resolved
// too, and Seed DefaultSeed: the settings the command line starts from.
func DefaultConfig() Config {
	c := Config{Seed: DefaultSeed}.withDefaults()
	c.Pool = voters.DefaultPoolConfig()
	return c
}

func (c Config) withDefaults() Config {
	if c.Objective == "" {
		c.Objective = DefaultObjective
	}
	if c.Tradeoff == 0 {
		c.Tradeoff = DefaultTradeoff
	}
	if c.Delta == 0 {
		c.Delta = DefaultDelta
	}
	if c.PriorFraction == 0 {
		c.PriorFraction = DefaultPriorFraction
	}
	if c.Prior == "" {
		c.Prior = DefaultPrior
	}
	if c.PriorMix == 0 {
		c.PriorMix = DefaultPriorMix
	}
	if c.MaxIterations == 0 {
		c.MaxIterations = DefaultMaxIterations
	}
	return c
}

// Priors lists the prior kinds in a fixed order.
var Priors = []PriorKind{LearnedPrior, UniformPrior}

func (c Config) validate(classes int) error {
	if err := c.Objective.check(classes); err != nil {
		return err
	}
	switch c.Prior {
	case LearnedPrior, UniformPrior:
	default:
		return fmt.Errorf("trainer: unknown prior %q (want learned or uniform)", c.Prior)
	}
	if c.Family != "" && !slices.Contains(Families, c.Family) {
		return fmt.Errorf("trainer: unknown certificate family %q (want one of %s)", c.Family, strings.Join(Families, ", "))
	}
	if !(c.Delta > 0 && c.Delta < 1) {
		return fmt.Errorf("trainer: delta must be in (0, 1), got %g", c.Delta)
	}
	if !(c.PriorFraction > 0 && c.PriorFraction < 1) {
		return fmt.Errorf("trainer: prior fraction must be in (0, 1), got %g: the pool and the prior are built on the prior rows, so some are needed, and the certificate needs the rest", c.PriorFraction)
	}
	if !(c.Tradeoff > 0) {
		return fmt.Errorf("trainer: trade-off must be positive, got %g", c.Tradeoff)
	}
	if !(c.PriorMix > 0 && c.PriorMix <= 1) {
		return fmt.Errorf("trainer: prior mix must be in (0, 1], got %g", c.PriorMix)
	}
	return nil
}
