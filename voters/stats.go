package voters

import (
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"surety/datasets"
)

// Stats holds the sufficient statistics of a pool of n voters on M rows.
type Stats struct {
	// M is the number of rows counted.
	M int
	// Errors[i] is the number of rows voter i gets wrong.
	Errors []int64
	// Joint is the n x n row-major matrix of joint errors: Joint[i*n+j]
	// rows where voters i and j both err; Joint[i*n+i] == Errors[i].
	Joint []int64
	// ClassErrors[i*k+c], k the pool's classes, is the number of rows of
	// class c (the pool's class index) that voter i gets wrong.
	ClassErrors []int64
}

// N returns the number of voters.
func (s *Stats) N() int { return len(s.Errors) }

// Merge adds the statistics of o, counted on rows disjoint from s's, to s.
func (s *Stats) Merge(o *Stats) error {
	if len(o.Errors) != len(s.Errors) || len(o.Joint) != len(s.Joint) || len(o.ClassErrors) != len(s.ClassErrors) {
		return fmt.Errorf("voters: merge stats of %d voters into stats of %d", len(o.Errors), len(s.Errors))
	}
	s.M += o.M
	for i, e := range o.Errors {
		s.Errors[i] += e
	}
	for i, e := range o.Joint {
		s.Joint[i] += e
	}
	for i, e := range o.ClassErrors {
		s.ClassErrors[i] += e
	}
	return nil
}

// Risks returns the empirical risks r_i = Errors[i]/M (NaN when M is 0).
func (s *Stats) Risks() []float64 {
	r := make([]float64, len(s.Errors))
	for i, e := range s.Errors {
		r[i] = float64(e) / float64(s.M)
	}
	return r
}

// JointRisks returns the joint-error rates Joint/M, n x n row-major.
func (s *Stats) JointRisks() []float64 {
	r := make([]float64, len(s.Joint))
	for i, e := range s.Joint {
		r[i] = float64(e) / float64(s.M)
	}
	return r
}

// Disagreements returns the n x n row-major disagreement rates of two-class
// voters, (Errors[i] + Errors[j] - 2 Joint[i*n+j]) / M: with two classes
// two voters disagree exactly where one of them errs. With more classes
// this is the rate of rows where exactly one errs, not a disagreement.
func (s *Stats) Disagreements() []float64 {
	n := len(s.Errors)
	d := make([]float64, len(s.Joint))
	for i := range n {
		for j := range n {
			d[i*n+j] = float64(s.Errors[i]+s.Errors[j]-2*s.Joint[i*n+j]) / float64(s.M)
		}
	}
	return d
}

// countMemory bounds the memory of the goroutines' private counts.
const countMemory = 256 << 20

// Count evaluates the pool on rows of t (binding it to t first when it is
// bound to another table) and counts, in one pass, every voter's errors (in
// all and by class) and every pair's joint errors. The counts do not
// depend on the order of rows nor on GOMAXPROCS.
func (p *Pool) Count(t *datasets.Table, rows []int) (*Stats, error) {
	return p.count(t, rows, nil)
}

// CountKnown is Count on the table and rows of known, taking the classes
// known holds instead of working them out: the same counts.
func (p *Pool) CountKnown(known *Known) (*Stats, error) {
	return p.count(known.t, known.rows, known)
}

func (p *Pool) count(t *datasets.Table, rows []int, known *Known) (*Stats, error) {
	if err := checkRows(t, rows); err != nil {
		return nil, fmt.Errorf("voters: count: %w", err)
	}
	if p.bound != t {
		if err := p.Bind(t); err != nil {
			return nil, fmt.Errorf("voters: count: %w", err)
		}
	}
	labels, err := rowClasses(p.Classes, t)
	if err != nil {
		return nil, fmt.Errorf("voters: count: %w", err)
	}
	pl := newPlan(p.Voters, nil, len(p.Classes), labels)
	if !slices.IsSorted(rows) {
		// The counts ignore row order; sorted rows read the columns in
		// order (and no longer line up with known's classes).
		rows = slices.Clone(rows)
		slices.Sort(rows)
	} else if known != nil {
		pl.useKnown(known)
	}
	return count(pl, len(p.Voters), rows), nil
}

// rowClasses returns the pool class of each row of t.
func rowClasses(classes []string, t *datasets.Table) ([]int, error) {
	m, err := classMap(classes, t)
	if err != nil {
		return nil, err
	}
	out := make([]int, t.Rows)
	for r, c := range t.Label {
		if c < 0 || c >= len(m) {
			return nil, fmt.Errorf("row %d of %s has label %d, want [0, %d)", r, source(t), c, len(m))
		}
		out[r] = m[c]
	}
	return out, nil
}

// count counts on rows, which must be sorted.
func count(pl *plan, n int, rows []int) *Stats {
	slot, comp, nb := pl.bases(n, rows)
	nt := (nb + 3) / 4
	tiles := nt * (nt + 1) / 2
	panels := (len(rows) + panelRows - 1) / panelRows
	workers := max(1, min(runtime.GOMAXPROCS(0), panels, countMemory/max(1, tiles*16*8)))
	accs := make([][]int64, workers)
	// Each base slot's errors among each class's rows: a popcount of its
	// error bits under the class's rows, k words of work per slot and word
	// where the pairs take nb.
	k := pl.k
	caccs := make([][]int64, workers)
	var next atomic.Int64
	var wg sync.WaitGroup
	for wk := range workers {
		wg.Go(func() {
			acc := make([]int64, tiles*16)
			cacc := make([]int64, nb*k)
			s := newScratch(pl.k)
			es := &errSink{s: s, slot: slot, comp: comp, errs: make([]uint64, nt*4*panelWords)}
			for {
				i := int(next.Add(1) - 1)
				if i >= panels {
					break
				}
				pl.load(s, rows[i*panelRows:min(len(rows), (i+1)*panelRows)])
				s.base = i * panelRows
				pl.eval(s, es)
				countTiles(es.errs, nt, s.words(), acc)
				countClasses(es.errs, s.labMask, nb, k, s.words(), cacc)
			}
			accs[wk], caccs[wk] = acc, cacc
		})
	}
	wg.Wait()
	for wk, a := range accs[1:] {
		for i, v := range a {
			accs[0][i] += v
		}
		for i, v := range caccs[wk+1] {
			caccs[0][i] += v
		}
	}
	classRows := make([]int64, k)
	if pl.labels != nil {
		for _, r := range rows {
			classRows[pl.labels[r]]++
		}
	}
	acc := accs[0]
	base := func(a, b int) int64 {
		if a > b {
			a, b = b, a
		}
		I, J := a/4, b/4
		return acc[(I*nt-I*(I-1)/2+J-I)*16+(a%4)*4+b%4]
	}
	m := int64(len(rows))
	st := &Stats{M: len(rows), Errors: make([]int64, n), Joint: make([]int64, n*n), ClassErrors: make([]int64, n*k)}
	for i := range n {
		a := slot[i]
		ea := base(a, a)
		for j := i; j < n; j++ {
			b := slot[j]
			eb, t := base(b, b), base(a, b)
			switch {
			case comp[i] && comp[j]:
				t = m - ea - eb + t
			case comp[i]:
				t = eb - t
			case comp[j]:
				t = ea - t
			}
			st.Joint[i*n+j], st.Joint[j*n+i] = t, t
		}
		st.Errors[i] = st.Joint[i*n+i]
		for c := range k {
			e := caccs[0][slot[i]*k+c]
			if comp[i] {
				e = classRows[c] - e
			}
			st.ClassErrors[i*k+c] = e
		}
	}
	return st
}

// countClasses adds to acc[b*k+c] the rows of class c among the error bits
// of each of the nb base slots, over the panel's nw words.
func countClasses(errs, labMask []uint64, nb, k, nw int, acc []int64) {
	for b := range nb {
		e := errs[b*panelWords : b*panelWords+nw]
		for c := range k {
			lm := labMask[c*panelWords : c*panelWords+nw]
			var sum int
			for w, x := range e {
				sum += bits.OnesCount64(x & lm[w])
			}
			acc[b*k+c] += int64(sum)
		}
	}
}

// bases picks the voters whose error bits a pass computes: with two
// classes a stump whose complement (same split, classes swapped, the same
// class on missing cells or none missing among rows) comes earlier is
// counted through it, halving the bit sets and quartering the pair work.
// Voter i's errors are those of base slot[i], or their complement among
// rows when comp[i]; nb is the number of base slots.
func (p *plan) bases(n int, rows []int) (slot []int, comp []bool, nb int) {
	slot = make([]int, n)
	comp = make([]bool, n)
	for i := range slot {
		slot[i] = -1
	}
	pairUp := func(stumps []sideVoter, missing func() bool) {
		if p.k != 2 {
			return
		}
		for i, a := range stumps {
			if slot[a.vi] >= 0 {
				continue
			}
			for _, b := range stumps[i+1:] {
				if slot[b.vi] < 0 && b.lo == a.hi && b.hi == a.lo && (a.missLo == b.missLo || !missing()) {
					slot[a.vi], slot[b.vi], comp[b.vi] = a.vi, a.vi, true
					break
				}
			}
		}
	}
	for g := range p.nums {
		grp := &p.nums[g]
		missing := onceBool(func() bool {
			return slices.ContainsFunc(rows, func(r int) bool { return math.IsNaN(grp.col[r]) })
		})
		for _, c := range grp.cuts {
			pairUp(c.stumps, missing)
		}
	}
	for g := range p.cats {
		grp := &p.cats[g]
		missing := onceBool(func() bool {
			return slices.ContainsFunc(rows, func(r int) bool { return grp.codes[r] == datasets.MissingCode })
		})
		for _, c := range grp.levels {
			pairUp(c.stumps, missing)
		}
	}
	// Number the base voters in voter order, so that slots follow the
	// pool's order and are the same in every run.
	index := make([]int, n)
	for i := range n {
		if slot[i] < 0 || slot[i] == i {
			index[i] = nb
			nb++
		}
	}
	for i := range n {
		if slot[i] < 0 {
			slot[i] = index[i]
		} else {
			slot[i] = index[slot[i]]
		}
	}
	return slot, comp, nb
}

func onceBool(f func() bool) func() bool {
	var done, v bool
	return func() bool {
		if !done {
			v, done = f(), true
		}
		return v
	}
}

// errSink writes each voter's error bits into errs, panelWords words per
// voter; words past the panel's end stay zero.
type errSink struct {
	s *scratch
	// slot holds each voter's base slot; complements share their base's.
	slot []int
	comp []bool
	errs []uint64
}

func (e *errSink) split(vi int, low []uint64, lo, hi int) {
	if e.comp[vi] {
		return
	}
	out := e.errs[e.slot[vi]*panelWords : e.slot[vi]*panelWords+panelWords]
	lmLo := e.s.labMask[lo*panelWords:]
	lmHi := e.s.labMask[hi*panelWords:]
	for w, l := range low {
		out[w] = e.s.valid[w] &^ (l&lmLo[w] | ^l&lmHi[w])
	}
	clear(out[len(low):])
}

func (e *errSink) classes(vi int, pred []int32) {
	out := e.errs[e.slot[vi]*panelWords : e.slot[vi]*panelWords+panelWords]
	clear(out)
	for i, c := range pred {
		if c != e.s.lab[i] {
			out[i/64] |= 1 << (i % 64)
		}
	}
}

// countTiles adds to acc the joint-error counts of one panel: errs holds
// 4*nt voters' bit sets of panelWords words, of which the first nw are
// used; acc holds 16 counts per tile (I, J), I <= J, in row order.
func countTiles(errs []uint64, nt, nw int, acc []int64) {
	const W = panelWords
	t := 0
	for I := range nt {
		a0 := errs[(4*I+0)*W : (4*I+0)*W+nw]
		a1 := errs[(4*I+1)*W : (4*I+1)*W+nw]
		a2 := errs[(4*I+2)*W : (4*I+2)*W+nw]
		a3 := errs[(4*I+3)*W : (4*I+3)*W+nw]
		for J := I; J < nt; J++ {
			b0 := errs[(4*J+0)*W : (4*J+0)*W+nw]
			b1 := errs[(4*J+1)*W : (4*J+1)*W+nw]
			b2 := errs[(4*J+2)*W : (4*J+2)*W+nw]
			b3 := errs[(4*J+3)*W : (4*J+3)*W+nw]
			var c [16]int
			for w := range a0 {
				x0, x1, x2, x3 := a0[w], a1[w], a2[w], a3[w]
				y0, y1, y2, y3 := b0[w], b1[w], b2[w], b3[w]
				c[0] += bits.OnesCount64(x0 & y0)
				c[1] += bits.OnesCount64(x0 & y1)
				c[2] += bits.OnesCount64(x0 & y2)
				c[3] += bits.OnesCount64(x0 & y3)
				c[4] += bits.OnesCount64(x1 & y0)
				c[5] += bits.OnesCount64(x1 & y1)
				c[6] += bits.OnesCount64(x1 & y2)
				c[7] += bits.OnesCount64(x1 & y3)
				c[8] += bits.OnesCount64(x2 & y0)
				c[9] += bits.OnesCount64(x2 & y1)
				c[10] += bits.OnesCount64(x2 & y2)
				c[11] += bits.OnesCount64(x2 & y3)
				c[12] += bits.OnesCount64(x3 & y0)
				c[13] += bits.OnesCount64(x3 & y1)
				c[14] += bits.OnesCount64(x3 & y2)
				c[15] += bits.OnesCount64(x3 & y3)
			}
			a := acc[t*16 : t*16+16]
			for i, v := range c {
				a[i] += int64(v)
			}
			t++
		}
	}
}
