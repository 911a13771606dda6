package voters

import (
	"math"
	"slices"

	"surety/datasets"
)

// Rows are evaluated in panels of panelWords 64-row words.
const (
	panelWords = 64
	panelRows  = panelWords * 64
)

// plan groups bound voters by the column they read, so that a panel
// gathers each column once and computes each threshold's sides once.
type plan struct {
	k      int
	labels []int // pool class of each table row
	nums   []numGroup
	cats   []catGroup
	rest   []restVoter
}

type numGroup struct {
	col  []float64
	cuts []numCut
}

type numCut struct {
	cut    float64
	stumps []sideVoter
}

type catGroup struct {
	codes  []uint32
	levels []catLevel
}

type catLevel struct {
	level  string
	code   uint32
	stumps []sideVoter
}

// sideVoter is a stump of a group: voter vi predicts lo on the "at or
// below" (or "equals") side, hi on the other; missLo sends missing cells to
// the low side.
type sideVoter struct {
	vi, lo, hi int
	missLo     bool
}

type restVoter struct {
	vi int
	v  Voter
	// known, when set, holds the voter's class on each row of the rows
	// the plan evaluates, in their order (see Known).
	known []uint8
}

// newPlan groups the voters vs (bound to t), keeping those with keep[i]
// (all when keep is nil). labels maps each table row to its pool class.
func newPlan(vs []Voter, keep []bool, k int, labels []int) *plan {
	p := &plan{k: k, labels: labels}
	numAt := map[*float64]int{}
	catAt := map[*uint32]int{}
	for vi, v := range vs {
		if keep != nil && !keep[vi] {
			continue
		}
		switch s := v.(type) {
		case *Stump:
			if len(s.col) == 0 {
				break
			}
			g, ok := numAt[&s.col[0]]
			if !ok {
				g = len(p.nums)
				numAt[&s.col[0]] = g
				p.nums = append(p.nums, numGroup{col: s.col})
			}
			grp := &p.nums[g]
			c := slices.IndexFunc(grp.cuts, func(c numCut) bool { return c.cut == s.Threshold })
			if c < 0 {
				c = len(grp.cuts)
				// A cut of -0 would put +0 above it in aboveBits (the
				// sign of -0 - 0), where Stump.Predict has it at or
				// below; +0 gives both zeros the side Predict gives.
				cut := s.Threshold
				if cut == 0 {
					cut = 0
				}
				grp.cuts = append(grp.cuts, numCut{cut: cut})
			}
			grp.cuts[c].stumps = append(grp.cuts[c].stumps, sideVoter{vi, s.Below, s.Above, s.MissingBelow})
			continue
		case *CategoryStump:
			if len(s.codes) == 0 {
				break
			}
			g, ok := catAt[&s.codes[0]]
			if !ok {
				g = len(p.cats)
				catAt[&s.codes[0]] = g
				p.cats = append(p.cats, catGroup{codes: s.codes})
			}
			grp := &p.cats[g]
			// Grouped by the level's text, not its code: every level the
			// table lacks has the code MissingCode, and grouping those
			// together would make the order of the sums (so the last bits
			// of the totals, and the side of a tie) depend on which
			// levels the table holds.
			c := slices.IndexFunc(grp.levels, func(c catLevel) bool { return c.level == s.Level })
			if c < 0 {
				c = len(grp.levels)
				grp.levels = append(grp.levels, catLevel{level: s.Level, code: s.code})
			}
			grp.levels[c].stumps = append(grp.levels[c].stumps, sideVoter{vi, s.Equal, s.Other, s.MissingEqual})
			continue
		}
		p.rest = append(p.rest, restVoter{vi: vi, v: v})
	}
	return p
}

// useKnown makes the rest voters whose classes known holds take them
// from it; the plan must then evaluate known's rows, in their order.
func (p *plan) useKnown(known *Known) {
	for i, rv := range p.rest {
		p.rest[i].known = known.classes[rv.v]
	}
}

// sink receives the evaluation of one panel: a split voter as the bit set
// of rows on its low side, any other voter as the class of each row.
type sink interface {
	split(vi int, low []uint64, lo, hi int)
	classes(vi int, pred []int32)
}

// scratch is one goroutine's panel buffers.
type scratch struct {
	rows []int
	// base is the position of the panel's first row among the rows being
	// evaluated, where a rest voter's known classes start.
	base int
	lab  []int32
	// labMask holds panelWords words per class: the rows of that class.
	labMask []uint64
	valid   []uint64
	num     []float64
	codes   []uint32
	miss    []uint64
	side    []uint64
	low     []uint64
	pred    []int32
}

func newScratch(k int) *scratch {
	return &scratch{labMask: make([]uint64, k*panelWords),
		lab: make([]int32, panelRows), valid: make([]uint64, panelWords),
		num: make([]float64, panelRows), codes: make([]uint32, panelRows),
		miss: make([]uint64, panelWords), side: make([]uint64, panelWords),
		low: make([]uint64, panelWords), pred: make([]int32, panelRows),
	}
}

// words returns the number of 64-row words of the current panel.
func (s *scratch) words() int { return (len(s.rows) + 63) / 64 }

// load makes rows (at most panelRows of them) the current panel.
func (p *plan) load(s *scratch, rows []int) {
	s.rows = rows
	nw := s.words()
	clear(s.labMask)
	for i, r := range rows {
		if p.labels == nil {
			break
		}
		c := p.labels[r]
		s.lab[i] = int32(c)
		s.labMask[c*panelWords+i/64] |= 1 << (i % 64)
	}
	for w := range nw {
		s.valid[w] = ^uint64(0)
	}
	if tail := len(rows) % 64; tail != 0 {
		s.valid[nw-1] = 1<<tail - 1
	}
}

// eval evaluates every voter of the plan on the current panel into out.
func (p *plan) eval(s *scratch, out sink) {
	nw := s.words()
	valid := s.valid[:nw]
	for g := range p.nums {
		grp := &p.nums[g]
		vals := s.num[:len(s.rows)]
		for i, r := range s.rows {
			vals[i] = grp.col[r]
		}
		for w := range nw {
			s.miss[w] = nanBits(s.num[w*64:w*64+64]) & valid[w]
		}
		for c := range grp.cuts {
			cut := &grp.cuts[c]
			for w := range nw {
				s.side[w] = ^aboveBits(s.num[w*64:w*64+64], cut.cut) &^ s.miss[w] & valid[w]
			}
			p.emit(s, cut.stumps, out)
		}
	}
	for g := range p.cats {
		grp := &p.cats[g]
		codes := s.codes[:len(s.rows)]
		for i, r := range s.rows {
			codes[i] = grp.codes[r]
		}
		for w := range nw {
			s.miss[w] = equalBits(s.codes[w*64:w*64+64], datasets.MissingCode) & valid[w]
		}
		for c := range grp.levels {
			lv := &grp.levels[c]
			for w := range nw {
				s.side[w] = equalBits(s.codes[w*64:w*64+64], lv.code) &^ s.miss[w] & valid[w]
			}
			p.emit(s, lv.stumps, out)
		}
	}
	pred := s.pred[:len(s.rows)]
	for _, rv := range p.rest {
		if rv.known != nil {
			for i, c := range rv.known[s.base : s.base+len(pred)] {
				pred[i] = int32(c)
			}
			out.classes(rv.vi, pred)
			continue
		}
		for i, r := range s.rows {
			pred[i] = int32(rv.v.Predict(r))
		}
		out.classes(rv.vi, pred)
	}
}

// emit passes the split voters of one side set to out, adding the missing
// cells to the low side of those that send them there.
func (p *plan) emit(s *scratch, stumps []sideVoter, out sink) {
	nw := s.words()
	for _, sv := range stumps {
		low := s.side[:nw]
		if sv.missLo {
			low = s.low[:nw]
			for w := range low {
				low[w] = s.side[w] | s.miss[w]
			}
		}
		out.split(sv.vi, low, sv.lo, sv.hi)
	}
}

// aboveBits returns the bits of the 64 values over cut: the sign of
// cut - v, without branches. NaN bits are meaningless.
func aboveBits(v []float64, cut float64) uint64 {
	v = v[:64]
	var b uint64
	for i := range 64 {
		b |= (math.Float64bits(cut-v[i]) >> 63) << i
	}
	return b
}

// nanBits returns the bits of the NaN values among 64.
func nanBits(v []float64) uint64 {
	v = v[:64]
	const exp = 0x7FF0000000000000
	var b uint64
	for i := range 64 {
		abs := math.Float64bits(v[i]) &^ (1 << 63)
		b |= ((exp - abs) >> 63) << i
	}
	return b
}

// equalBits returns the bits of the 64 codes equal to code.
func equalBits(codes []uint32, code uint32) uint64 {
	codes = codes[:64]
	var b uint64
	for i := range 64 {
		d := uint64(codes[i] ^ code) // 0 when equal
		b |= ((d - 1) >> 63) << i
	}
	return b
}
