package trainer

import (
	"fmt"

	"surety/voters"
)

// Objective names the bound the posterior is fitted to.
type Objective string

// The objectives. Each is a function of the posterior weights through the
// certify rows' statistics (FIELD-GUIDE.md).
const (
	// Linear is Catoni's trade-off C m r(Q) + KL(Q||P) for a fixed C
	// (Config.Tradeoff); its minimiser is the Gibbs posterior.
	Linear Objective = "linear"
	// CBound is the certified C-bound; binary problems only.
	CBound Objective = "cbound"
	// Tandem is the tandem bound 4 R(Q^2), any number of classes.
	Tandem Objective = "tandem"
	// KL is the first-order bound 2 R(Q) with the kl bound on R(Q).
	KL Objective = "kl"
)

// Objectives lists the objectives in a fixed order.
var Objectives = []Objective{Linear, CBound, Tandem, KL}

// PriorKind says how the prior over the pool is chosen.
type PriorKind string

const (
	// LearnedPrior fits the objective on the prior rows and mixes the result
	// with uniform weight (Config.PriorMix), so every weight stays positive.
	LearnedPrior PriorKind = "learned"
	// UniformPrior puts the same weight on every voter.
	UniformPrior PriorKind = "uniform"
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
	// prior, in (0, 1). Default 0.5. The pool's thresholds and linear voters
	// are learned from those rows, so no fraction of zero is possible.
	PriorFraction float64
	// Prior says how the prior is chosen. Default LearnedPrior.
	Prior PriorKind
	// PriorMix is the uniform share mixed into a learned prior, in (0, 1].
	// Default 0.1.
	PriorMix float64
	// Seed drives the split and the pool's random choices.
	Seed uint64
	// Pool sets the voter pool; its zero value means the voters package's
	// defaults.
	Pool voters.PoolConfig
	// MaxIterations bounds each optimiser run. Default 1000.
	MaxIterations int
	// Progress, if not nil, is told when each stage starts.
	Progress func(stage string)
	// Warn, if not nil, receives warnings: each column whose kind the
	// prior rows changed (see Prepare).
	Warn func(msg string)
}

func (c Config) withDefaults() Config {
	if c.Objective == "" {
		c.Objective = Tandem
	}
	if c.Tradeoff == 0 {
		c.Tradeoff = 1
	}
	if c.Delta == 0 {
		c.Delta = 0.05
	}
	if c.PriorFraction == 0 {
		c.PriorFraction = 0.5
	}
	if c.Prior == "" {
		c.Prior = LearnedPrior
	}
	if c.PriorMix == 0 {
		c.PriorMix = 0.1
	}
	if c.MaxIterations == 0 {
		c.MaxIterations = 1000
	}
	return c
}

func (c Config) validate(classes int) error {
	switch c.Objective {
	case Linear, Tandem, KL:
	case CBound:
		if classes != 2 {
			return fmt.Errorf("trainer: the C-bound objective needs exactly 2 classes, the label has %d (use tandem or kl)", classes)
		}
	default:
		return fmt.Errorf("trainer: unknown objective %q (want linear, cbound, tandem or kl)", c.Objective)
	}
	switch c.Prior {
	case LearnedPrior, UniformPrior:
	default:
		return fmt.Errorf("trainer: unknown prior %q (want learned or uniform)", c.Prior)
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
