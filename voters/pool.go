package voters

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sync/atomic"

	"surety/datasets"
)

// PoolConfig sets how BuildPool makes a pool. The zero value means the
// defaults; each field says its own.
type PoolConfig struct {
	// Thresholds is the number of quantile thresholds per numeric column
	// (before deduplication); 0 means 16.
	Thresholds int `json:"thresholds"`
	// MaxLevels is the number of levels, the most frequent among the prior
	// rows, that get stumps in a categorical column; 0 means 32.
	MaxLevels int `json:"max_levels"`
	// LinearVoters is the number of linear voters; nil means 32, a pointer
	// to 0 means none.
	LinearVoters *int `json:"linear_voters"`
	// LinearColumns is the number of columns, drawn at random for each
	// linear voter; 0 means ceil(sqrt(number of usable columns)), and a
	// value over that number means all of them.
	LinearColumns int `json:"linear_columns"`
	// L2 is the ridge strength of the linear voters (see the package doc);
	// 0 means 0.01, scikit-learn's default C = 1 on 100 rows.
	L2 float64 `json:"l2"`
	// MaxVoters caps the pool size, linear voters included; 0 means 2048.
	// When there are more stumps than MaxVoters minus the linear voters,
	// the ones with the fewest prior-row errors are kept (see the package
	// doc). A value below the number of linear voters is an error.
	MaxVoters int `json:"max_voters"`
	// LinearRows is the size of each linear voter's bootstrap sample, at
	// most the number of prior rows; 0 means 20000. It also caps the rows
	// the full linear voter is cross-validated and fitted on
	// (LinearCVConfig.MaxRows).
	LinearRows int `json:"linear_rows"`
	// NoFullLinear leaves out the full linear voter: the logistic
	// regression on every usable column with its strength chosen by
	// cross-validation on the prior rows (FitLinearCV with its default
	// folds and grid). The zero value includes it, as the pool's last
	// voter, never dropped by MaxVoters, when there are at least
	// DefaultFolds prior rows and a column it can read (see FitLinearCV).
	NoFullLinear bool `json:"no_full_linear"`
	// Progress, if not nil, is told as BuildPool goes: done of total fits
	// (each column's stumps, each linear voter, the full one), from any
	// goroutine. Not kept in Pool.Config, not saved.
	Progress func(done, total int) `json:"-"`
}

// DefaultPoolConfig returns every field's default, LinearVoters set. Its
// LinearColumns stays 0: that default depends on the table (Pool.Config
// holds the value a build used).
func DefaultPoolConfig() PoolConfig {
	c, linear, _ := PoolConfig{}.withDefaults()
	c.LinearVoters = &linear
	return c
}

// Defaults of PoolConfig.
const (
	DefaultThresholds   = 16
	DefaultMaxLevels    = 32
	DefaultLinearVoters = 32
	DefaultL2           = 0.01
	DefaultMaxVoters    = 2048
	DefaultLinearRows   = 20000
)

func (c PoolConfig) withDefaults() (PoolConfig, int, error) {
	if c.Thresholds == 0 {
		c.Thresholds = DefaultThresholds
	}
	if c.MaxLevels == 0 {
		c.MaxLevels = DefaultMaxLevels
	}
	if c.L2 == 0 {
		c.L2 = DefaultL2
	}
	if c.MaxVoters == 0 {
		c.MaxVoters = DefaultMaxVoters
	}
	if c.LinearRows == 0 {
		c.LinearRows = DefaultLinearRows
	}
	linear := DefaultLinearVoters
	if c.LinearVoters != nil {
		linear = *c.LinearVoters
	}
	c.LinearVoters = &linear
	switch {
	case c.Thresholds < 0:
		return c, 0, fmt.Errorf("voters: pool config: Thresholds is %d, want >= 0", c.Thresholds)
	case c.MaxLevels < 0:
		return c, 0, fmt.Errorf("voters: pool config: MaxLevels is %d, want >= 0", c.MaxLevels)
	case linear < 0:
		return c, 0, fmt.Errorf("voters: pool config: LinearVoters is %d, want >= 0", linear)
	case c.LinearColumns < 0:
		return c, 0, fmt.Errorf("voters: pool config: LinearColumns is %d, want >= 0", c.LinearColumns)
	case !(c.L2 > 0) || math.IsInf(c.L2, 1):
		return c, 0, fmt.Errorf("voters: pool config: L2 is %v, want a finite value > 0", c.L2)
	case c.MaxVoters < 0:
		return c, 0, fmt.Errorf("voters: pool config: MaxVoters is %d, want >= 0", c.MaxVoters)
	case c.MaxVoters < linear+c.full():
		if c.full() == 1 {
			return c, 0, fmt.Errorf("voters: pool config: MaxVoters is %d, below the %d linear voters (LinearVoters) and the full linear voter (NoFullLinear)", c.MaxVoters, linear)
		}
		return c, 0, fmt.Errorf("voters: pool config: MaxVoters is %d, below the %d linear voters (LinearVoters)", c.MaxVoters, linear)
	case c.LinearRows < 0:
		return c, 0, fmt.Errorf("voters: pool config: LinearRows is %d, want >= 0", c.LinearRows)
	}
	return c, linear, nil
}

// full returns the number of full linear voters the config asks for.
func (c PoolConfig) full() int {
	if c.NoFullLinear {
		return 0
	}
	return 1
}

// ColumnSpec names a column a pool reads and its kind.
type ColumnSpec struct {
	Name string        `json:"name"`
	Kind datasets.Kind `json:"kind"`
	// Missing says the rows the pool was built on had a missing cell in
	// the column, so a missing cell in a file to score is nothing new.
	Missing bool `json:"missing,omitempty"`
}

// Pool is a set of voters built from prior rows, with the class names they
// predict and the columns they need.
type Pool struct {
	Voters  []Voter
	Classes []string
	// Schema lists the columns some voter of the pool reads, in the
	// table's order: the columns a table must have to bind the pool.
	Schema []ColumnSpec
	// Config is the configuration the pool was built with, every default
	// resolved (LinearColumns to the width the linear voters drew).
	Config PoolConfig
	// OutOfBag[i], for a bootstrap linear voter i, is the bit set of the
	// prior rows its bootstrap sample missed: bit j (word j/64, bit j%64)
	// stands for rows[j] of the rows given to BuildPool. Its own
	// predictions there are out of sample, up to the standardisation and
	// one-hot levels, which come from all the prior rows (label-free). nil
	// for the other voters; nil as a whole for a pool not made by
	// BuildPool.
	//
	// Stumps have no out-of-sample rows: their thresholds are quantiles of
	// the prior rows (label-free) and only their pair of classes and the
	// missing-cell side are chosen with the labels, by class counts, so
	// their error on the prior rows is only mildly optimistic.
	OutOfBag [][]uint64
	// OutOfFold[i], for the full linear voter i, holds for each of the rows
	// given to BuildPool, in order, the class predicted for it by a model
	// not fitted on it (LinearCV.OutOfFold). nil for the other voters; nil
	// as a whole for a pool not made by BuildPool.
	OutOfFold [][]int

	bound *datasets.Table
}

// BuildPool builds a pool from the prior rows of t only: stumps on every
// numeric and categorical column, capped by MaxVoters, then the bootstrap
// linear voters, then the full linear voter, as the package doc describes.
// rng draws the linear voters' columns and bootstrap samples, then the
// full voter's folds (and its sample when there are more than LinearRows
// prior rows); without the full voter it draws exactly what it drew before
// the full voter existed. rows must be distinct when the full voter is in.
func BuildPool(t *datasets.Table, rows []int, cfg PoolConfig, rng *rand.Rand) (*Pool, error) {
	cfg, linear, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	if err := checkRows(t, rows); err != nil {
		return nil, fmt.Errorf("voters: build pool: %w", err)
	}
	if len(rows) == 0 {
		return nil, fmt.Errorf("voters: build pool: no prior rows")
	}
	if len(t.Classes) < 2 {
		return nil, fmt.Errorf("voters: build pool: %d classes in %s, want at least 2", len(t.Classes), source(t))
	}
	if linear+cfg.full() > 0 && rng == nil {
		return nil, fmt.Errorf("voters: build pool: linear voters need a random source")
	}
	p := &Pool{Classes: slices.Clone(t.Classes), Config: cfg}
	p.Config.Progress = nil
	var fits atomic.Int64
	step := func() {
		if cfg.Progress != nil {
			cfg.Progress(int(fits.Add(1)), len(t.Columns)+linear+cfg.full())
		}
	}
	for j := range t.Columns {
		if c := &t.Columns[j]; c.Kind != datasets.Numeric && c.Kind != datasets.Categorical {
			return nil, fmt.Errorf("voters: build pool: column %q has unknown kind %d", c.Name, c.Kind)
		}
	}
	// Each column's stumps are found on their own (a sort of the column's
	// prior values is most of the work), over goroutines, then joined in
	// column order, so the pool does not depend on their number.
	perColumn := make([]candidates, len(t.Columns))
	present := make([]bool, len(t.Columns))
	parallelFor(len(t.Columns), func() func(int) {
		var vals []float64 // numericStumps' scratch, kept from column to column
		var keys []uint64
		return func(j int) {
			cs, c := &perColumn[j], &t.Columns[j]
			cs.m, cs.vals, cs.keys = len(rows), vals, keys
			if c.Kind == datasets.Numeric {
				present[j] = cs.numericStumps(t, c, rows, cfg.Thresholds)
			} else {
				present[j] = cs.categoryStumps(t, c, rows, cfg.MaxLevels)
			}
			vals, cs.vals, keys, cs.keys = cs.vals, nil, cs.keys, nil
			step()
		}
	})
	cs := &candidates{m: len(rows)}
	var usable []int
	for j := range perColumn {
		cs.voters = append(cs.voters, perColumn[j].voters...)
		cs.errs = append(cs.errs, perColumn[j].errs...)
		if present[j] {
			usable = append(usable, j)
		}
	}
	p.Voters = cs.best(cfg.MaxVoters - linear - cfg.full())
	p.OutOfBag = make([][]uint64, len(p.Voters), cfg.MaxVoters)
	if linear > 0 && len(usable) > 0 {
		width := cfg.LinearColumns
		if width == 0 {
			width = int(math.Ceil(math.Sqrt(float64(len(usable)))))
		}
		width = min(width, len(usable))
		p.Config.LinearColumns = width
		// The draws come first, in order, from rng; the fits, each on its
		// own draw, then run over goroutines and join in draw order, so the
		// pool does not depend on their number.
		type job struct {
			names  []string
			sample []int
			oob    []uint64
		}
		jobs := make([]job, linear)
		for li := range linear {
			sample := make([]int, min(cfg.LinearRows, len(rows)))
			perm := rng.Perm(len(usable))[:width]
			slices.Sort(perm)
			names := make([]string, width)
			for i, u := range perm {
				names[i] = t.Columns[usable[u]].Name
			}
			oob := make([]uint64, (len(rows)+63)/64)
			for i := range oob {
				oob[i] = ^uint64(0)
			}
			for i := range sample {
				j := rng.IntN(len(rows))
				sample[i] = rows[j]
				oob[j/64] &^= 1 << (j % 64)
			}
			if tail := len(rows) % 64; tail != 0 {
				oob[len(oob)-1] &= 1<<tail - 1
			}
			jobs[li] = job{names, sample, oob}
		}
		// Each column's standardisation (its mean and scale over the prior
		// rows, or its levels), worked out once for all the voters.
		scaled := make(map[string]LinearInput, len(usable))
		perInput := make([][]LinearInput, len(usable))
		parallelFor(len(usable), func() func(int) {
			return func(u int) { perInput[u] = standardise(t, rows, usable[u:u+1]) }
		})
		for _, in := range perInput {
			for _, li := range in {
				scaled[li.Column] = li
			}
		}
		fitted := make([]*Linear, linear)
		errs := make([]error, linear)
		parallelFor(linear, func() func(int) {
			return func(li int) {
				var inputs []LinearInput
				for _, name := range jobs[li].names {
					if in, ok := scaled[name]; ok {
						in.Levels = slices.Clone(in.Levels)
						inputs = append(inputs, in)
					}
				}
				fitted[li], errs[li] = fitLinear(t, inputs, jobs[li].sample, jobs[li].names, cfg.L2)
				step()
			}
		})
		for li, l := range fitted {
			if errs[li] != nil {
				return nil, fmt.Errorf("voters: build pool: %w", errs[li])
			}
			p.Voters = append(p.Voters, l)
			p.OutOfBag = append(p.OutOfBag, jobs[li].oob)
		}
	}
	p.OutOfFold = make([][]int, len(p.Voters), cap(p.OutOfBag))
	if cfg.full() == 1 && len(rows) >= DefaultFolds && len(usableColumns(t, rows)) > 0 {
		cv, err := FitLinearCV(t, rows, rows, LinearCVConfig{MaxRows: cfg.LinearRows}, rng)
		if err != nil {
			return nil, fmt.Errorf("voters: build pool: full linear voter: %w", err)
		}
		p.Voters = append(p.Voters, cv.Voter)
		p.OutOfBag = append(p.OutOfBag, nil)
		p.OutOfFold = append(p.OutOfFold, cv.OutOfFold)
		step()
	}
	if len(p.Voters) == 0 {
		return nil, fmt.Errorf("voters: build pool: no column of %s splits the %d prior rows", source(t), len(rows))
	}
	p.Schema = schemaOf(t, rows, p.Voters)
	p.bound = t
	return p, nil
}

// schemaOf returns the columns of t that some voter of vs reads, in t's
// order, each marked when one of rows has a missing cell in it.
func schemaOf(t *datasets.Table, rows []int, vs []Voter) []ColumnSpec {
	read := make(map[string]bool)
	for _, v := range vs {
		for _, name := range v.Columns() {
			read[name] = true
		}
	}
	var out []ColumnSpec
	for j := range t.Columns {
		if c := &t.Columns[j]; read[c.Name] {
			out = append(out, ColumnSpec{Name: c.Name, Kind: c.Kind, Missing: slices.ContainsFunc(rows, c.IsMissing)})
		}
	}
	return out
}

// candidates collects the stumps of a pool, in pool order, with the number
// of prior rows each gets wrong.
type candidates struct {
	m      int // prior rows
	voters []Voter
	errs   []int
	vals   []float64 // numericStumps' scratch, reused column after column
	keys   []uint64  // and sortFloats'
}

// add appends v, which gets right of the prior rows right.
func (cs *candidates) add(v Voter, right int) {
	cs.voters = append(cs.voters, v)
	cs.errs = append(cs.errs, cs.m-right)
}

// best returns the n candidates with the fewest prior-row errors (ties to
// the earlier one) in pool order; all of them when there are at most n.
func (cs *candidates) best(n int) []Voter {
	if len(cs.voters) <= n {
		return cs.voters
	}
	idx := make([]int, len(cs.voters))
	for i := range idx {
		idx[i] = i
	}
	slices.SortFunc(idx, func(a, b int) int { return cmp.Or(cmp.Compare(cs.errs[a], cs.errs[b]), cmp.Compare(a, b)) })
	idx = idx[:n]
	slices.Sort(idx)
	out := make([]Voter, n)
	for i, k := range idx {
		out[i] = cs.voters[k]
	}
	return out
}

// sideCounts holds the class counts of the prior rows on each side of a
// split and of those with the cell missing.
type sideCounts struct{ low, high, miss []int }

// pairs returns the (low class, high class) pairs of the stumps of one
// split, deduplicated, in order of class then side.
func (s sideCounts) pairs() [][2]int {
	var out [][2]int
	add := func(lo, hi int) {
		if lo < 0 || hi < 0 || slices.Contains(out, [2]int{lo, hi}) {
			return
		}
		out = append(out, [2]int{lo, hi})
	}
	for c := range s.low {
		add(c, mostFrequentOther(s.high, c))
		add(mostFrequentOther(s.low, c), c)
	}
	return out
}

// missingLow reports whether missing cells go to the low side of the stump
// (lo, hi), by the rule of the package doc.
func (s sideCounts) missingLow(lo, hi int) bool {
	if a, b := s.miss[lo], s.miss[hi]; a != b {
		return a > b
	}
	return sum(s.low) >= sum(s.high)
}

// right returns the number of prior rows the stump (lo, hi) gets right,
// missing cells going to the side missingLow gives.
func (s sideCounts) right(lo, hi int, missingLow bool) int {
	n := s.low[lo] + s.high[hi]
	if missingLow {
		return n + s.miss[lo]
	}
	return n + s.miss[hi]
}

// mostFrequentOther returns the class other than c with the largest count,
// ties to the lower index.
func mostFrequentOther(counts []int, c int) int {
	best := -1
	for k, n := range counts {
		if k != c && (best < 0 || n > counts[best]) {
			best = k
		}
	}
	return best
}

func sum(xs []int) int {
	s := 0
	for _, x := range xs {
		s += x
	}
	return s
}

// numericStumps appends the stumps of c; it reports whether c has a
// present value in the prior rows.
func (cs *candidates) numericStumps(t *datasets.Table, c *datasets.Column, rows []int, thresholds int) bool {
	k := len(t.Classes)
	vals := cs.vals[:0]
	miss := make([]int, k)
	for _, r := range rows {
		if v := c.Num[r]; math.IsNaN(v) {
			miss[t.Label[r]]++
		} else {
			vals = append(vals, v)
		}
	}
	cs.vals = vals
	if len(vals) == 0 {
		return false
	}
	// The cuts are quantiles of the values alone, so a plain float sort
	// finds them (no NaN is left); the class counts on either side of each
	// cut then come from one pass that puts each row in its bin.
	cs.keys = sortFloats(vals, cs.keys)
	n := len(vals)
	maxV := vals[n-1]
	var cuts []float64
	for q := 1; q <= thresholds; q++ {
		v := vals[(q*n+thresholds)/(thresholds+1)-1] // the q/(T+1) quantile: index ceil(q n/(T+1)) - 1
		if v >= maxV || math.IsInf(v, 0) || (len(cuts) > 0 && cuts[len(cuts)-1] == v) {
			continue
		}
		cuts = append(cuts, v)
	}
	// bins[b*k+class]: rows with cuts[b-1] < v <= cuts[b]; the last bin
	// holds the values above every cut.
	bins := make([]int, (len(cuts)+1)*k)
	total := make([]int, k)
	for _, r := range rows {
		v := c.Num[r]
		if math.IsNaN(v) {
			continue
		}
		b, _ := slices.BinarySearch(cuts, v)
		bins[b*k+t.Label[r]]++
		total[t.Label[r]]++
	}
	low := make([]int, k)
	for b, cut := range cuts {
		for j := range low {
			low[j] += bins[b*k+j]
		}
		high := make([]int, k)
		for j := range high {
			high[j] = total[j] - low[j]
		}
		s := sideCounts{low: low, high: high, miss: miss}
		for _, pr := range s.pairs() {
			ml := s.missingLow(pr[0], pr[1])
			cs.add(&Stump{Column: c.Name, Threshold: cut, Below: pr[0], Above: pr[1], MissingBelow: ml, col: c.Num},
				s.right(pr[0], pr[1], ml))
		}
	}
	return true
}

// categoryStumps appends the stumps of c; it reports whether c has a
// present value in the prior rows.
func (cs *candidates) categoryStumps(t *datasets.Table, c *datasets.Column, rows []int, maxLevels int) bool {
	k := len(t.Classes)
	counts := make([][]int, len(c.Levels)) // class counts per level
	miss := make([]int, k)
	present := 0
	for _, r := range rows {
		code := c.Codes[r]
		if code == datasets.MissingCode {
			miss[t.Label[r]]++
			continue
		}
		if counts[code] == nil {
			counts[code] = make([]int, k)
		}
		counts[code][t.Label[r]]++
		present++
	}
	var levels []int
	for code, cc := range counts {
		if cc != nil {
			levels = append(levels, code)
		}
	}
	if len(levels) == 0 {
		return false
	}
	slices.SortStableFunc(levels, func(a, b int) int { return cmp.Compare(sum(counts[b]), sum(counts[a])) })
	switch {
	case len(levels) == 1:
		return true
	case len(levels) == 2:
		levels = levels[:1]
	case len(levels) > maxLevels:
		levels = levels[:maxLevels]
	}
	total := make([]int, k)
	for _, cc := range counts {
		for j, n := range cc {
			total[j] += n
		}
	}
	for _, code := range levels {
		rest := make([]int, k)
		for j := range rest {
			rest[j] = total[j] - counts[code][j]
		}
		s := sideCounts{low: counts[code], high: rest, miss: miss}
		for _, pr := range s.pairs() {
			ml := s.missingLow(pr[0], pr[1])
			cs.add(&CategoryStump{Column: c.Name, Level: c.Levels[code], Equal: pr[0], Other: pr[1],
				MissingEqual: ml, codes: c.Codes, code: uint32(code)}, s.right(pr[0], pr[1], ml))
		}
	}
	return true
}

// Bind binds every voter to t, checking first that t has every column of
// the schema with its kind and that its classes are among the pool's.
func (p *Pool) Bind(t *datasets.Table) error {
	if t == nil {
		return fmt.Errorf("voters: bind pool: no table")
	}
	for _, s := range p.Schema {
		if _, err := lookup(t, s.Name, s.Kind); err != nil {
			return err
		}
	}
	if _, err := classMap(p.Classes, t); err != nil {
		return err
	}
	if err := checkVoters(p.Voters, len(p.Classes)); err != nil {
		return err
	}
	if err := bindAll(p.Voters, t); err != nil {
		return err
	}
	p.bound = t
	return nil
}

func bindAll(vs []Voter, t *datasets.Table) error {
	for i, v := range vs {
		if err := v.Bind(t); err != nil {
			return fmt.Errorf("voters: voter %d (%s): %w", i, v.Kind(), err)
		}
	}
	return nil
}

// classMap maps t's class indices to indices into classes; it fails when t
// has a class that classes lacks.
func classMap(classes []string, t *datasets.Table) ([]int, error) {
	m := make([]int, len(t.Classes))
	for i, name := range t.Classes {
		m[i] = slices.Index(classes, name)
		if m[i] < 0 {
			return nil, fmt.Errorf("voters: %s has class %q, which the voters do not know (they know %q)", source(t), name, classes)
		}
	}
	return m, nil
}

// checkRows checks that t has labels and that every row is in range.
func checkRows(t *datasets.Table, rows []int) error {
	if t == nil {
		return fmt.Errorf("no table")
	}
	if len(t.Label) != t.Rows {
		return fmt.Errorf("%s has %d labels for %d rows", source(t), len(t.Label), t.Rows)
	}
	return checkCells(t, rows)
}

// checkCells checks that every column of t has t.Rows cells and that every
// row is in range.
func checkCells(t *datasets.Table, rows []int) error {
	if t == nil {
		return fmt.Errorf("no table")
	}
	for j := range t.Columns {
		if n := t.Columns[j].Len(); n != t.Rows {
			return fmt.Errorf("column %q of %s has %d cells for %d rows", t.Columns[j].Name, source(t), n, t.Rows)
		}
	}
	for _, r := range rows {
		if r < 0 || r >= t.Rows {
			return fmt.Errorf("row %d out of range [0, %d) of %s", r, t.Rows, source(t))
		}
	}
	return nil
}
