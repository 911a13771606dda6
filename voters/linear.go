package voters

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/optimize"

	"surety/datasets"
)

// Linear is a logistic-regression voter: the class of largest score
// Bias[c] + Weights[c]·x (ties to the lower class index), where x holds the
// features of Inputs in order. For two classes row 0 of Weights and Bias is
// zero (one score vector, as in binary logistic regression).
type Linear struct {
	Inputs  []LinearInput `json:"inputs"`
	Weights [][]float64   `json:"weights"`
	Bias    []float64     `json:"bias"`

	bound []boundInput
	// zeroFirst: two classes and class 0's row all zero, as FitLinear
	// makes it; its score is then 0 without working it out (a term
	// 0*(v-Mean)/Scale is 0 or, for an infinite v, NaN, and then class
	// 1's score is infinite or NaN too, which Predict resolves the same
	// way against 0 as against NaN).
	zeroFirst bool
}

// LinearInput is one column of a Linear voter and how it becomes features.
type LinearInput struct {
	Column string        `json:"column"`
	Kind   datasets.Kind `json:"kind"`
	// Mean and Scale standardise a numeric column into one feature
	// (x-Mean)/Scale; a missing cell gives 0.
	Mean  float64 `json:"mean,omitempty"`
	Scale float64 `json:"scale,omitempty"`
	// Levels of a categorical column give one 0/1 feature each; a missing
	// cell or a level not listed gives all zeros.
	Levels []string `json:"levels,omitempty"`
}

type boundInput struct {
	num   []float64
	codes []uint32
	// feature maps a table code to the offset of its one-hot feature, -1
	// for levels the voter has not seen.
	feature []int
}

func (in *LinearInput) width() int {
	if in.Kind == datasets.Categorical {
		return len(in.Levels)
	}
	return 1
}

// Kind returns KindLinear.
func (l *Linear) Kind() string { return KindLinear }

// Columns returns the input columns in order.
func (l *Linear) Columns() []string {
	names := make([]string, len(l.Inputs))
	for i := range l.Inputs {
		names[i] = l.Inputs[i].Column
	}
	return names
}

// Bind resolves the inputs on t.
func (l *Linear) Bind(t *datasets.Table) error {
	bound := make([]boundInput, len(l.Inputs))
	for i := range l.Inputs {
		in := &l.Inputs[i]
		c, err := lookup(t, in.Column, in.Kind)
		if err != nil {
			return err
		}
		if in.Kind == datasets.Numeric {
			bound[i].num = c.Num
			continue
		}
		bound[i].codes = c.Codes
		bound[i].feature = make([]int, len(c.Levels))
		for code, level := range c.Levels {
			bound[i].feature[code] = -1
			for f, l := range in.Levels {
				if l == level {
					bound[i].feature[code] = f
				}
			}
		}
	}
	l.bound = bound
	l.zeroFirst = len(l.Weights) == 2 && len(l.Bias) == 2 && l.Bias[0] == 0 && !slices.ContainsFunc(l.Weights[0], func(w float64) bool { return w != 0 })
	return nil
}

// Predict returns the voter's class for row of the bound table.
func (l *Linear) Predict(row int) int {
	if l.bound == nil {
		return -1
	}
	best, bestScore := 0, math.Inf(-1)
	for c := range l.Weights {
		s := 0.0
		if c > 0 || !l.zeroFirst {
			s = l.score(c, row)
		}
		if s > bestScore {
			best, bestScore = c, s
		}
	}
	return best
}

// score returns class c's score for row of the bound table.
func (l *Linear) score(c, row int) float64 {
	w := l.Weights[c]
	s := l.Bias[c]
	off := 0
	for i := range l.Inputs {
		in, b := &l.Inputs[i], &l.bound[i]
		if b.num != nil {
			if v := b.num[row]; !math.IsNaN(v) {
				s += w[off] * (v - in.Mean) / in.Scale
			}
			off++
			continue
		}
		if code := b.codes[row]; code != datasets.MissingCode && int(code) < len(b.feature) {
			if f := b.feature[code]; f >= 0 {
				s += w[off+f]
			}
		}
		off += len(in.Levels)
	}
	return s
}

// Check reports inputs of unknown kind, scales and weights that are not
// finite, and weight rows that do not match the inputs and classes.
func (l *Linear) Check(classes int) error {
	d := 0
	for i := range l.Inputs {
		in := &l.Inputs[i]
		switch in.Kind {
		case datasets.Numeric:
			if !(in.Scale > 0) || math.IsInf(in.Scale, 1) {
				return fmt.Errorf("scale of %q is %v, want a finite value > 0", in.Column, in.Scale)
			}
		case datasets.Categorical:
		default:
			return fmt.Errorf("linear input %q: unknown kind %d", in.Column, in.Kind)
		}
		if err := finite("mean of "+in.Column, in.Mean); err != nil {
			return err
		}
		d += in.width()
	}
	if len(l.Weights) != classes || len(l.Bias) != classes {
		return fmt.Errorf("%d weight rows and %d biases for %d classes", len(l.Weights), len(l.Bias), classes)
	}
	for c, w := range l.Weights {
		if len(w) != d {
			return fmt.Errorf("class %d has %d weights for %d features", c, len(w), d)
		}
		for _, x := range w {
			if err := finite("a weight", x); err != nil {
				return err
			}
		}
		if err := finite("a bias", l.Bias[c]); err != nil {
			return err
		}
	}
	return nil
}

// Describe returns the scores as a formula in the standardised inputs,
// z(col) for a numeric column and [col=level] for a one-hot feature.
func (l *Linear) Describe(classes []string) string {
	terms := func(c int) string {
		var b strings.Builder
		off := 0
		add := func(w float64, name string) {
			if b.Len() > 0 {
				b.WriteString(" + ")
			}
			fmt.Fprintf(&b, "%.4g*%s", w, name)
		}
		for i := range l.Inputs {
			in := &l.Inputs[i]
			if in.Kind == datasets.Numeric {
				add(l.Weights[c][off], "z("+in.Column+")")
				off++
				continue
			}
			for _, level := range in.Levels {
				add(l.Weights[c][off], "["+in.Column+"="+strconv.Quote(level)+"]")
				off++
			}
		}
		if b.Len() > 0 {
			b.WriteString(" + ")
		}
		fmt.Fprintf(&b, "%.4g", l.Bias[c])
		return b.String()
	}
	if len(l.Weights) == 2 {
		return fmt.Sprintf("%s > 0 -> %s, else %s", terms(1), className(classes, 1), className(classes, 0))
	}
	parts := make([]string, len(l.Weights))
	for c := range l.Weights {
		parts[c] = className(classes, c) + ": " + terms(c)
	}
	return "largest score -> its class; " + strings.Join(parts, "; ")
}

// standardise returns the inputs of columns with the scaling of the prior
// rows: mean and standard deviation of a numeric column, the levels present
// of a categorical one. A column without a present value is left out.
func standardise(t *datasets.Table, prior []int, columns []int) []LinearInput {
	var inputs []LinearInput
	for _, j := range columns {
		c := &t.Columns[j]
		if c.Kind == datasets.Numeric {
			var n, sum float64
			for _, r := range prior {
				if v := c.Num[r]; !math.IsNaN(v) {
					n++
					sum += v
				}
			}
			if n == 0 {
				continue
			}
			mean := sum / n
			var ss float64
			for _, r := range prior {
				if v := c.Num[r]; !math.IsNaN(v) {
					ss += (v - mean) * (v - mean)
				}
			}
			scale := math.Sqrt(ss / n)
			if scale == 0 {
				scale = 1
			}
			inputs = append(inputs, LinearInput{Column: c.Name, Kind: c.Kind, Mean: mean, Scale: scale})
			continue
		}
		seen := make([]bool, len(c.Levels))
		for _, r := range prior {
			if code := c.Codes[r]; code != datasets.MissingCode {
				seen[code] = true
			}
		}
		var levels []string
		for code, ok := range seen {
			if ok {
				levels = append(levels, c.Levels[code])
			}
		}
		if len(levels) > 0 {
			inputs = append(inputs, LinearInput{Column: c.Name, Kind: c.Kind, Levels: levels})
		}
	}
	return inputs
}

// The fit stops when the gradient's largest entry is under gradTol; a stop
// for another reason is accepted when it is under acceptTol.
const (
	gradTol   = 1e-8
	acceptTol = 1e-5
)

// FitLinear fits a Linear voter on the named columns of t: standardisation
// from scale rows, the fit on rows (repeats allowed, as in a bootstrap
// sample), L2 as in the package doc. Classes are t.Classes.
func FitLinear(t *datasets.Table, scale, rows []int, columns []string, l2 float64) (*Linear, error) {
	if err := checkRows(t, scale); err != nil {
		return nil, fmt.Errorf("voters: fit linear: scale rows: %w", err)
	}
	if err := checkRows(t, rows); err != nil {
		return nil, fmt.Errorf("voters: fit linear: %w", err)
	}
	if !(l2 > 0) || math.IsInf(l2, 1) {
		return nil, fmt.Errorf("voters: fit linear: L2 is %v, want a finite value > 0", l2)
	}
	idx := make([]int, len(columns))
	for i, name := range columns {
		if idx[i] = t.Column(name); idx[i] < 0 {
			return nil, fmt.Errorf("voters: fit linear: column %q is not in %s", name, source(t))
		}
	}
	return fitLinear(t, standardise(t, scale, idx), rows, columns, l2)
}

// fitLinear is FitLinear with the inputs' standardisation given (each
// column's is its own, so a caller fitting many voters on the same scale
// rows works out each column's once).
func fitLinear(t *datasets.Table, inputs []LinearInput, rows []int, columns []string, l2 float64) (*Linear, error) {
	k := len(t.Classes)
	if k < 2 {
		return nil, fmt.Errorf("voters: fit linear: %d classes in %s, want at least 2", k, source(t))
	}
	l := &Linear{Inputs: inputs}
	if err := l.Bind(t); err != nil {
		return nil, fmt.Errorf("voters: fit linear: %w", err)
	}
	d := 0
	for i := range l.Inputs {
		d += l.Inputs[i].width()
	}
	x := l.design(rows, d)
	first := 0 // first class with a free score
	if k == 2 {
		first = 1
	}
	free := k - first
	stride := d + 1 // weights then intercept, per free class
	n := float64(len(rows))
	scores := make([]float64, k)
	// The labels in the order of the design's rows: a bootstrap sample
	// reads the table's labels out of order, once per row and evaluation.
	ys := make([]int, len(rows))
	for r, row := range rows {
		ys[r] = t.Label[row]
	}
	// loss returns the objective and writes its gradient into grad.
	loss := func(p, grad []float64) float64 {
		for i := range grad {
			grad[i] = 0
		}
		var f float64
		for r, y := range ys {
			xr := x[r*d : (r+1)*d]
			if k == 2 {
				// Two classes: class 0's score is 0, so the log-sum-exp is
				// softplus(s) = max(s, 0) + log1p(e^-|s|) and class 1's
				// probability the logistic function of s, from one exp.
				w := p[:stride]
				s := w[d]
				for j, v := range xr {
					s += w[j] * v
				}
				e := math.Exp(-math.Abs(s))
				f += math.Max(s, 0) + math.Log1p(e)
				p1 := 1 / (1 + e)
				if s < 0 {
					p1 = e / (1 + e)
				}
				if y == 1 {
					f -= s
					p1--
				}
				for j, v := range xr {
					grad[j] += p1 * v
				}
				grad[d] += p1
				continue
			}
			mx := 0.0
			for c := range scores {
				scores[c] = 0
				if c >= first {
					w := p[(c-first)*stride:]
					s := w[d]
					for j, v := range xr {
						s += w[j] * v
					}
					scores[c] = s
				}
				if c == 0 || scores[c] > mx {
					mx = scores[c]
				}
			}
			lz := logSumExp(scores, mx)
			f += lz - scores[y]
			for c := first; c < k; c++ {
				g := math.Exp(scores[c] - lz)
				if c == y {
					g--
				}
				gw := grad[(c-first)*stride:]
				for j, v := range xr {
					gw[j] += g * v
				}
				gw[d] += g
			}
		}
		f /= n
		for i := range grad {
			grad[i] /= n
		}
		for c := 0; c < free; c++ {
			for j := 0; j < d; j++ {
				w := p[c*stride+j]
				f += l2 / 2 * w * w
				grad[c*stride+j] += l2 * w
			}
		}
		return f
	}
	memo := pointMemo{compute: loss}
	settings := &optimize.Settings{GradientThreshold: gradTol, MajorIterations: 2000}
	res, err := optimize.Minimize(memo.problem(), make([]float64, free*stride), settings, &optimize.LBFGS{})
	if err != nil {
		// The line search can fail where rounding stops all progress: next
		// to the optimum, which is what a small gradient shows.
		if res == nil || res.X == nil {
			return nil, fmt.Errorf("voters: fit linear on %v: %w", columns, err)
		}
		g := make([]float64, len(res.X))
		memo.eval(res.X, g)
		if norm := floats.Norm(g, math.Inf(1)); !(norm <= acceptTol) {
			return nil, fmt.Errorf("voters: fit linear on %v: gradient %.3g at the stop: %w", columns, norm, err)
		}
	}
	l.Weights = make([][]float64, k)
	l.Bias = make([]float64, k)
	for c := range l.Weights {
		l.Weights[c] = make([]float64, d)
		if c >= first {
			copy(l.Weights[c], res.X[(c-first)*stride:(c-first)*stride+d])
			l.Bias[c] = res.X[(c-first)*stride+d]
		}
	}
	return l, nil
}

// design returns the features of rows, row-major with d per row, from the
// bound table.
func (l *Linear) design(rows []int, d int) []float64 {
	x := make([]float64, len(rows)*d)
	for r, row := range rows {
		xr := x[r*d : (r+1)*d]
		off := 0
		for i := range l.Inputs {
			in, b := &l.Inputs[i], &l.bound[i]
			if b.num != nil {
				if v := b.num[row]; !math.IsNaN(v) {
					xr[off] = (v - in.Mean) / in.Scale
				}
				off++
				continue
			}
			if code := b.codes[row]; code != datasets.MissingCode {
				if f := b.feature[code]; f >= 0 {
					xr[off+f] = 1
				}
			}
			off += len(in.Levels)
		}
	}
	return x
}
