package trainer

import (
	"fmt"
	"strings"

	"surety/objective"
)

// Objective names the bound the posterior is fitted to.
type Objective string

// The objectives. Each is a function of the posterior weights through the
// statistics of the rows it is fitted on (FIELD-GUIDE.md).
const (
	// Linear is Catoni's trade-off C m r(Q) + KL(Q||P) for a fixed C
	// (Config.Tradeoff); its minimiser is the Gibbs posterior.
	Linear Objective = "linear"
	// CBound is the certified C-bound; binary problems only.
	CBound Objective = "cbound"
	// Tandem is the tandem bound 4 R(Q^2), any number of classes.
	Tandem Objective = "tandem"
	// ChebyshevCantelli is the Chebyshev-Cantelli bound with mu optimised,
	// any number of classes.
	ChebyshevCantelli Objective = "chebyshev-cantelli"
	// KL is the first-order bound 2 R(Q) with the kl bound on R(Q).
	KL Objective = "kl"
)

// objectiveSpec is one objective: its name, what it minimises (for help
// text), whether it needs two classes, and its Problem on a part's rates.
// Adding an objective is one entry in objectiveTable plus its code in
// package objective.
type objectiveSpec struct {
	name       Objective
	doc        string
	binaryOnly bool
	problem    func(r rates, prior []float64, c Config) (objective.Problem, error)
}

var objectiveTable = []objectiveSpec{
	{Linear, "Catoni's trade-off C m r(Q) + KL(Q||P) for --tradeoff C", false,
		func(r rates, prior []float64, c Config) (objective.Problem, error) {
			return objective.LinearObjective(r.risks, prior, r.m, c.Tradeoff)
		}},
	{CBound, "the certified C-bound (two classes only)", true,
		func(r rates, prior []float64, c Config) (objective.Problem, error) {
			return objective.CBoundObjective(r.risks, r.joint, prior, r.m, c.Delta)
		}},
	{Tandem, "the tandem bound 4 R(Q^2) (any number of classes)", false,
		func(r rates, prior []float64, c Config) (objective.Problem, error) {
			return objective.TandemObjective(r.joint, prior, r.m, c.Delta)
		}},
	{ChebyshevCantelli, "the Chebyshev-Cantelli bound, mu optimised (any number of classes)", false,
		func(r rates, prior []float64, c Config) (objective.Problem, error) {
			return objective.ChebyshevCantelliObjective(r.risks, r.joint, prior, r.m, c.Delta)
		}},
	{KL, "the first-order bound 2 R(Q)", false,
		func(r rates, prior []float64, c Config) (objective.Problem, error) {
			return objective.KLObjective(r.risks, prior, r.m, c.Delta)
		}},
}

// Objectives lists the objectives in a fixed order.
var Objectives = func() []Objective {
	out := make([]Objective, len(objectiveTable))
	for i, s := range objectiveTable {
		out[i] = s.name
	}
	return out
}()

func specOf(o Objective) (objectiveSpec, bool) {
	for _, s := range objectiveTable {
		if s.name == o {
			return s, true
		}
	}
	return objectiveSpec{}, false
}

// Doc says in a few words what o minimises; "" for an unknown objective.
func (o Objective) Doc() string {
	s, _ := specOf(o)
	return s.doc
}

// BinaryOnly says whether o needs a label with exactly two classes.
func (o Objective) BinaryOnly() bool {
	s, _ := specOf(o)
	return s.binaryOnly
}

// check says whether o is known and applies to a label of the given number
// of classes.
func (o Objective) check(classes int) error {
	s, ok := specOf(o)
	if !ok {
		words := make([]string, len(Objectives))
		for i, w := range Objectives {
			words[i] = string(w)
		}
		return fmt.Errorf("trainer: unknown objective %q (want %s)", o, strings.Join(words, ", "))
	}
	if s.binaryOnly && classes != 2 {
		return fmt.Errorf("trainer: the %s objective needs exactly 2 classes, the label has %d (use tandem or kl)", o, classes)
	}
	return nil
}

// ObjectivesFor splits objs into those that apply to a label with the
// given number of classes and those that do not (the C-bound needs two),
// keeping their order. A sweep fits the first and reports the second.
func ObjectivesFor(objs []Objective, classes int) (apply, dropped []Objective) {
	for _, o := range objs {
		if s, ok := specOf(o); ok && s.binaryOnly && classes != 2 {
			dropped = append(dropped, o)
			continue
		}
		apply = append(apply, o)
	}
	return apply, dropped
}
