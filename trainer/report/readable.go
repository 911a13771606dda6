package report

import (
	"cmp"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"

	"surety/datasets"
	"surety/trainer"
	"surety/voters"
)

// Readable is a model's heaviest voters written for people, with what a
// reader needs to read them: the scale behind each standardised column and
// each column's share of the vote. Both `surety show` and the report print
// it, so that the two say the same.
type Readable struct {
	// Voters are the heaviest voters, heaviest first (Model.TopVoters).
	Voters []ReadableVoter `json:"voters"`
	// Scales holds, once per numeric column, the mean and standard deviation
	// behind z(column) in the linear voters listed, in order of first use.
	Scales []Scale `json:"scales,omitempty"`
	// Importance is every column with a share of the vote, largest first.
	Importance []ColumnShare `json:"importance"`
	// ImportanceRule says how Importance is computed.
	ImportanceRule string `json:"importance_rule"`
	// ClassVotesRule says how the classes a multiclass linear voter votes
	// for were counted; "" when no listed voter has more than two classes.
	ClassVotesRule string `json:"class_votes_rule,omitempty"`
}

// ReadableVoter is one voter in short and in full.
type ReadableVoter struct {
	Weight float64 `json:"weight"`
	Kind   string  `json:"kind"`
	// Short is the voter in a line: a stump's rule as it is, a linear
	// voter's few largest standardised coefficients and "+ k more".
	Short string `json:"short"`
	// Rule is voters.Voter.Describe: every coefficient, rounded to 4 digits.
	Rule string `json:"rule"`
	// Voter is the voter exactly as the model file holds it (every
	// coefficient, mean and scale, at full precision).
	Voter json.RawMessage `json:"voter"`
}

// Scale is the standardisation z = (x - Mean) / SD of a numeric column, as
// computed on the prior rows.
type Scale struct {
	Column string  `json:"column"`
	Mean   float64 `json:"mean"`
	SD     float64 `json:"sd"`
}

// ColumnShare is a column's share of the vote's weight.
type ColumnShare struct {
	Column string  `json:"column"`
	Weight float64 `json:"weight"`
}

// LinearTerms is the number of coefficients a linear voter shows in short.
const LinearTerms = 4

// ImportanceRule is the rule behind Readable.Importance, for footnotes.
const ImportanceRule = "A column's importance is the total vote weight of the voters that read it: a stump's weight goes to its column; a linear voter's weight is shared over its columns in proportion to the sum of the absolute values of its standardised coefficients on the column (over its levels and classes), equally when they are all 0. The importances sum to the vote's total weight (1)."

// classVotesRows is the number of synthetic rows on which the classes of a
// multiclass linear voter are counted.
const classVotesRows = 2000

// ClassVotesRule says how the classes a multiclass linear voter votes for
// are counted: the model file holds no rows, so they come from its weights.
var ClassVotesRule = fmt.Sprintf("The model file holds no data, so the classes a linear voter of more than two classes votes for are counted from its weights alone, on %d synthetic rows (fixed seed): each numeric input drawn at its mean plus a standard normal times its sd, each categorical input at one of its levels with equal chances, inputs independent. Real rows may give other shares.", classVotesRows)

// ReadableOf returns m's top heaviest voters in readable form, with the
// scales they use and the importance of every column.
func ReadableOf(m *trainer.Model, top int) (*Readable, error) {
	r := &Readable{ImportanceRule: ImportanceRule}
	idx := m.TopVoters(top)
	seen := map[Scale]bool{}
	for _, i := range idx {
		v := m.Vote.Voters[i]
		full, err := voters.MarshalVoters([]voters.Voter{v})
		if err != nil {
			return nil, fmt.Errorf("report: voter %d: %w", i, err)
		}
		var raw []json.RawMessage
		if err := json.Unmarshal(full, &raw); err != nil || len(raw) != 1 {
			return nil, fmt.Errorf("report: voter %d: %d voters, %v", i, len(raw), err)
		}
		rv := ReadableVoter{Weight: m.Vote.Weights[i], Kind: v.Kind(), Rule: v.Describe(m.Classes), Voter: raw[0], Short: v.Describe(m.Classes)}
		if l, ok := v.(*voters.Linear); ok {
			rv.Short = ShortLinear(l, m.Classes, LinearTerms)
			if len(l.Weights) > 2 {
				r.ClassVotesRule = ClassVotesRule
			}
			for _, t := range shownTerms(l, LinearTerms) {
				in := &l.Inputs[t.input]
				s := Scale{Column: in.Column, Mean: in.Mean, SD: in.Scale}
				if in.Kind == datasets.Numeric && !seen[s] {
					seen[s] = true
					r.Scales = append(r.Scales, s)
				}
			}
		}
		r.Voters = append(r.Voters, rv)
	}
	r.Importance = Importance(m.Vote)
	return r, nil
}

// Importance returns each column's share of the vote's weight by the rule
// of ImportanceRule, largest first, ties by name; columns of share 0 are
// left out.
func Importance(v *voters.Vote) []ColumnShare {
	share := map[string]float64{}
	for i, vt := range v.Voters {
		w := v.Weights[i]
		if w == 0 {
			continue
		}
		cols := vt.Columns()
		l, ok := vt.(*voters.Linear)
		if !ok {
			for _, c := range cols {
				share[c] += w / float64(len(cols))
			}
			continue
		}
		str := inputStrength(l)
		total := 0.0
		for _, s := range str {
			total += s
		}
		for j, in := range l.Inputs {
			if total > 0 {
				share[in.Column] += w * str[j] / total
			} else {
				share[in.Column] += w / float64(len(l.Inputs))
			}
		}
	}
	out := make([]ColumnShare, 0, len(share))
	for c, w := range share {
		if w > 0 {
			out = append(out, ColumnShare{Column: c, Weight: w})
		}
	}
	slices.SortFunc(out, func(a, b ColumnShare) int {
		if c := cmp.Compare(b.Weight, a.Weight); c != 0 {
			return c
		}
		return strings.Compare(a.Column, b.Column)
	})
	return out
}

// inputStrength returns, for each input of l, the sum of the absolute
// values of its coefficients over its features and the classes.
func inputStrength(l *voters.Linear) []float64 {
	str := make([]float64, len(l.Inputs))
	for _, t := range features(l, absCoef(l)) {
		str[t.input] += t.coef
	}
	return str
}

// absCoef returns the sum over the classes of |weight| of a feature.
func absCoef(l *voters.Linear) func(f int) float64 {
	return func(f int) float64 {
		s := 0.0
		for _, w := range l.Weights {
			s += math.Abs(w[f])
		}
		return s
	}
}

// term is one feature of a linear voter: input's numeric z or one level.
type term struct {
	input int
	level int // -1 for a numeric input
	coef  float64
}

// features returns the features of l with coef set by weight(row of
// Weights) for each feature offset.
func features(l *voters.Linear, coef func(f int) float64) []term {
	var ts []term
	off := 0
	for j := range l.Inputs {
		in := &l.Inputs[j]
		if in.Kind != datasets.Categorical {
			ts = append(ts, term{input: j, level: -1, coef: coef(off)})
			off++
			continue
		}
		for k := range in.Levels {
			ts = append(ts, term{input: j, level: k, coef: coef(off + k)})
		}
		off += len(in.Levels)
	}
	return ts
}

// linearTerms returns l's features, largest |coefficient| first (ties in
// feature order), and the number with a coefficient other than 0. With two
// classes a coefficient is class 1's weight minus class 0's (the score
// whose sign decides); with more, it is the sum of the absolute weights
// over the classes.
func linearTerms(l *voters.Linear) ([]term, int) {
	coef := absCoef(l)
	if len(l.Weights) == 2 {
		coef = func(f int) float64 { return l.Weights[1][f] - l.Weights[0][f] }
	}
	ts := features(l, coef)
	slices.SortStableFunc(ts, func(a, b term) int { return cmp.Compare(math.Abs(b.coef), math.Abs(a.coef)) })
	n := 0
	for _, t := range ts {
		if t.coef != 0 {
			n++
		}
	}
	return ts[:n], n
}

// shownTerms returns the terms ShortLinear shows.
func shownTerms(l *voters.Linear, k int) []term {
	ts, n := linearTerms(l)
	return ts[:min(k, n)]
}

// name writes a feature as z(column) or [column=level].
func (t term) name(l *voters.Linear) string {
	in := &l.Inputs[t.input]
	if t.level < 0 {
		return "z(" + in.Column + ")"
	}
	return "[" + in.Column + "=" + strconv.Quote(in.Levels[t.level]) + "]"
}

// ShortLinear writes l in one line: its k largest standardised
// coefficients, "+ n more" for the rest. A two-class voter reads as a
// score whose sign gives the class; a voter of more classes as the classes
// it votes for most often (ClassVotesRule) and its k strongest features
// (sum of |weight| over the classes).
func ShortLinear(l *voters.Linear, classes []string, k int) string {
	ts, n := linearTerms(l)
	shown := ts[:min(k, n)]
	var b strings.Builder
	if len(l.Weights) == 2 {
		for _, t := range shown {
			if b.Len() > 0 {
				b.WriteByte(' ')
			}
			b.WriteString(signed(t.coef) + " " + t.name(l))
		}
		if n > len(shown) {
			b.WriteString(moreTerms(n - len(shown)))
		}
		if b.Len() > 0 {
			b.WriteString(", ")
		}
		b.WriteString("bias " + signed(l.Bias[1]-l.Bias[0]) + ": > 0 -> " + className(classes, 1) + ", else " + className(classes, 0))
		return b.String()
	}
	fmt.Fprintf(&b, "%d classes; votes ", len(l.Weights))
	votes := classVotes(l)
	order := make([]int, len(votes))
	for c := range order {
		order[c] = c
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(votes[b], votes[a]) })
	const shownClasses = 3
	for i, c := range order[:min(shownClasses, len(order))] {
		if votes[c] == 0 {
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%s %s", className(classes, c), pct(float64(votes[c])/classVotesRows))
	}
	if rest := len(order) - shownClasses; rest > 0 {
		b.WriteString(" + " + more(rest, "class", "classes"))
	}
	b.WriteString(" (synthetic rows); strongest by sum of |coef| over classes:")
	for i, t := range shown {
		if i > 0 {
			b.WriteByte(',')
		}
		fmt.Fprintf(&b, " %s %s", t.name(l), strconv.FormatFloat(t.coef, 'f', 2, 64))
	}
	if n > len(shown) {
		b.WriteString(moreTerms(n - len(shown)))
	}
	if n == 0 {
		b.WriteString(" none (every weight 0)")
	}
	return b.String()
}

// classVotes counts the classes l gives classVotesRows synthetic rows
// (ClassVotesRule), scoring them from its weights as the model file
// describes.
func classVotes(l *voters.Linear) []int {
	rng := rand.New(rand.NewPCG(1, 2))
	votes := make([]int, len(l.Weights))
	scores := make([]float64, len(l.Weights))
	feat := make([]float64, len(l.Weights[0]))
	for range classVotesRows {
		clear(feat)
		off := 0
		for j := range l.Inputs {
			in := &l.Inputs[j]
			if in.Kind != datasets.Categorical {
				feat[off] = rng.NormFloat64()
				off++
				continue
			}
			if len(in.Levels) > 0 {
				feat[off+rng.IntN(len(in.Levels))] = 1
			}
			off += len(in.Levels)
		}
		best, top := 0, math.Inf(-1)
		for c, w := range l.Weights {
			scores[c] = l.Bias[c]
			for f, x := range feat {
				scores[c] += w[f] * x
			}
			if scores[c] > top {
				best, top = c, scores[c]
			}
		}
		votes[best]++
	}
	return votes
}

// moreTerms writes " + k more terms".
func moreTerms(k int) string { return " + " + more(k, "term", "terms") }

// more writes "1 more term", "3 more terms": k with its noun in the
// singular for one.
func more(k int, one, many string) string {
	if k == 1 {
		return "1 more " + one
	}
	return strconv.Itoa(k) + " more " + many
}

// signed writes x with its sign and 2 decimals, "+0.86", "-1.28".
func signed(x float64) string {
	s := strconv.FormatFloat(x, 'f', 2, 64)
	if s == "-0.00" {
		s = "0.00"
	}
	if !strings.HasPrefix(s, "-") {
		s = "+" + s
	}
	return s
}

// pct writes a share as a percentage with no decimals.
func pct(x float64) string { return strconv.FormatFloat(100*x, 'f', 0, 64) + "%" }

func className(classes []string, c int) string {
	if c >= 0 && c < len(classes) {
		return classes[c]
	}
	return "class " + strconv.Itoa(c)
}
