package trainer

import (
	"math"
	"runtime"
	"sync"

	"surety/datasets"
	"surety/voters"
)

// Boosting settings: the most rounds, the shrinkage of each step, the
// relative fall of the loss below which a round ends the fit, and the
// largest problem (sample rows times voters) whose number of rounds is
// chosen by cross-validation; larger samples overfit less, and take every
// round the loss still falls by boostMinFall.
const (
	boostRounds   = 300
	boostShrink   = 0.5
	boostMinFall  = 1e-6
	boostFolds    = 5
	boostCVBudget = 4_000_000
)

// booster is greedy coordinate descent on the multinomial logistic loss of
// a vote's class scores, F_c(x) = sum_i w_i [h_i(x) = c], with
// non-negative weights: each round takes the voter whose weight's partial
// derivative promises the steepest fall (a voter with weight may also lose
// some) and moves it by boostShrink times the Newton step along it. This
// is boosting with the logistic loss (Friedman, Hastie, Tibshirani 2000,
// Annals of Statistics) over a fixed pool, in the multiclass form of SAMME
// (Zhu, Zou, Rosset, Hastie 2009) with the logistic loss for the
// exponential one.
type booster struct {
	votes [][]uint8 // votes[i][r]: voter i's class on row r
	y     []int
	k     int
	w     []float64
	f, a  []float64 // class scores, and softmax(F) - onehot(y), per row
	p     []float64 // softmax(F), per row
	g     []float64
	cells []cellGroup
	loss  float64
}

func newBooster(votes [][]uint8, y []int, k int, groups [][]int) *booster {
	b := &booster{votes: votes, y: y, k: k, w: make([]float64, len(votes)),
		f: make([]float64, len(y)*k), a: make([]float64, len(y)*k), p: make([]float64, len(y)*k), g: make([]float64, len(votes)),
		cells: makeCells(votes, len(y), k, groups)}
	b.loss = boostSlope(b.f, b.a, b.p, y, k)
	return b
}

// cellGroup is a group of voters and the partition of the rows into the
// cells on which every voter of the group is constant: the rows with the
// same tuple of the group's votes. A voter's partial derivative is then a
// sum over the cells instead of over the rows, and the stumps of one
// column (a few dozen voters, a few dozen cells) cost one pass over the
// rows together, as histogram-based boosting does.
type cellGroup struct {
	voters []int
	cellOf []uint16  // each row's cell; nil: sum the group's voters row by row
	class  [][]uint8 // class[j][c]: voter voters[j]'s class on cell c
	sums   []float64 // scratch: sums[c*k+class] of a over the cell's rows
}

// maxCells is the most cells a group may have; a group with more is
// summed row by row.
const maxCells = 1024

// makeCells partitions the rows for each group of voters. A group whose
// votes make more than maxCells cells, or of at most k voters (its cell
// sums would cost k adds a row), is summed row by row instead.
func makeCells(votes [][]uint8, rows, k int, groups [][]int) []cellGroup {
	var out []cellGroup
	one := func(g []int) bool {
		if len(g) <= k {
			return false
		}
		ids := make(map[string]uint16)
		cellOf := make([]uint16, rows)
		key := make([]byte, len(g))
		for r := range rows {
			for j, i := range g {
				key[j] = votes[i][r]
			}
			id, ok := ids[string(key)]
			if !ok {
				if len(ids) == maxCells {
					return false
				}
				id = uint16(len(ids))
				ids[string(key)] = id
			}
			cellOf[r] = id
		}
		class := make([][]uint8, len(g))
		for j := range g {
			class[j] = make([]uint8, len(ids))
		}
		for key, id := range ids {
			for j := range g {
				class[j][id] = key[j]
			}
		}
		out = append(out, cellGroup{voters: g, cellOf: cellOf, class: class, sums: make([]float64, len(ids)*k)})
		return true
	}
	var byRow []int
	for _, g := range groups {
		if !one(g) {
			byRow = append(byRow, g...)
		}
	}
	// Voters summed row by row go in fours, which boostGrad adds side by
	// side (four independent sums in one pass over the rows).
	for len(byRow) > 0 {
		n := min(4, len(byRow))
		out = append(out, cellGroup{voters: byRow[:n:n]})
		byRow = byRow[n:]
	}
	return out
}

// voterGroups groups the voters that read one column and the same one (the
// stumps of a column); every other voter is a group of its own.
func voterGroups(vs []voters.Voter) [][]int {
	var groups [][]int
	byColumn := make(map[string]int)
	for i, v := range vs {
		cols := v.Columns()
		if len(cols) != 1 {
			groups = append(groups, []int{i})
			continue
		}
		g, ok := byColumn[cols[0]]
		if !ok {
			g = len(groups)
			byColumn[cols[0]] = g
			groups = append(groups, nil)
		}
		groups[g] = append(groups[g], i)
	}
	return groups
}

// round makes one step; it returns the voter and the step, and ok false
// when no step lowers the loss by boostMinFall of it.
func (b *booster) round() (voter int, step float64, ok bool) {
	boostGrad(b.g, b.votes, b.cells, b.a, b.k)
	best, bestSlope := -1, 0.0
	for i, gi := range b.g {
		// A fall along +w_i needs gi < 0; along -w_i, weight to give.
		s := -gi
		if gi > 0 && b.w[i] > 0 {
			s = gi
		}
		if s > bestSlope {
			best, bestSlope = i, s
		}
	}
	if best < 0 || bestSlope <= 1e-12*float64(len(b.y)) {
		return -1, 0, false
	}
	step = boostShrink * boostStep(b.p, b.votes[best], b.y, b.k, -b.w[best]/boostShrink)
	if step == 0 {
		return -1, 0, false
	}
	b.w[best] += step
	h := b.votes[best]
	for r := range b.y {
		b.f[r*b.k+int(h[r])] += step
	}
	next := boostSlope(b.f, b.a, b.p, b.y, b.k)
	fall := b.loss - next
	b.loss = next
	return best, step, fall > boostMinFall*next
}

// weights returns the weights on the simplex (uniform when no round was
// made).
func (b *booster) weights() []float64 {
	w := make([]float64, len(b.w))
	var s float64
	for i, x := range b.w {
		w[i] = math.Max(x, 0)
		s += w[i]
	}
	if !(s > 0) {
		return uniformWeights(len(w))
	}
	for i := range w {
		w[i] /= s
	}
	return w
}

// boostWeights fits the boosted vote's weights on the rows of votes and y:
// the number of rounds is chosen by boostFolds-fold cross-validation on
// them (the round of least mean held-out log-loss; folds stratified and
// seeded) when the problem is within boostCVBudget, and is every round
// that still lowers the loss otherwise.
func boostWeights(votes [][]uint8, y []int, k int, groups [][]int, seed uint64) []float64 {
	rounds := boostRounds
	if len(y)*len(votes) <= boostCVBudget && len(y) >= 2*boostFolds {
		rounds = boostCVRounds(votes, y, k, groups, seed)
	}
	b := newBooster(votes, y, k, groups)
	for range rounds {
		if _, _, ok := b.round(); !ok {
			break
		}
	}
	return b.weights()
}

// boostCVRounds returns the number of rounds with the least held-out
// log-loss summed over the folds.
func boostCVRounds(votes [][]uint8, y []int, k int, groups [][]int, seed uint64) int {
	folds, err := datasets.KFold(y, k, boostFolds, seed)
	if err != nil {
		return boostRounds
	}
	held := make([]float64, boostRounds+1)
	for _, fold := range folds {
		out := make([]bool, len(y))
		for _, r := range fold {
			out[r] = true
		}
		var in []int
		for r := range y {
			if !out[r] {
				in = append(in, r)
			}
		}
		sub := func(rows []int) ([][]uint8, []int) {
			v := make([][]uint8, len(votes))
			for i, col := range votes {
				v[i] = make([]uint8, len(rows))
				for j, r := range rows {
					v[i][j] = col[r]
				}
			}
			ys := make([]int, len(rows))
			for j, r := range rows {
				ys[j] = y[r]
			}
			return v, ys
		}
		tv, ty := sub(in)
		vv, vy := sub(fold)
		b := newBooster(tv, ty, k, groups)
		vf := make([]float64, len(vy)*k)
		va := make([]float64, len(vy)*k)
		held[0] += boostSlope(vf, va, nil, vy, k)
		live := true
		for t := 1; t <= boostRounds; t++ {
			if live {
				i, step, ok := b.round()
				if i >= 0 {
					for j, c := range vv[i] {
						vf[j*k+int(c)] += step
					}
				}
				live = ok
			}
			held[t] += boostSlope(vf, va, nil, vy, k)
		}
	}
	best := 0
	for t, l := range held {
		if l < held[best] {
			best = t
		}
	}
	return best
}

// boostSlope writes softmax(F_r) - onehot(y_r) into a, and softmax(F_r)
// into prob unless it is nil, and returns the loss
// sum_r logsumexp(F_r) - F_{r,y_r}. Rows are shared over goroutines; the
// loss adds each row's term in row order, so its bits do not depend on
// their number.
func boostSlope(f, a, prob []float64, y []int, k int) float64 {
	terms := make([]float64, len(y))
	byRows(len(y), k, func(lo, hi int) {
		for r := lo; r < hi; r++ {
			c := y[r]
			fr, ar := f[r*k:r*k+k], a[r*k:r*k+k]
			mx := fr[0]
			for _, v := range fr {
				mx = math.Max(mx, v)
			}
			var z float64
			for j, v := range fr {
				// exp(0) is 1 exactly: the largest score needs no exp.
				e := 1.0
				if d := v - mx; d != 0 {
					e = math.Exp(d)
				}
				ar[j] = e
				z += e
			}
			for j := range ar {
				ar[j] /= z
			}
			if prob != nil {
				copy(prob[r*k:r*k+k], ar)
			}
			ar[c]--
			terms[r] = mx + math.Log(z) - fr[c]
		}
	})
	var loss float64
	for _, t := range terms {
		loss += t
	}
	return loss
}

// byRows runs part over a split of [0, rows) into contiguous ranges, one
// per goroutine, or inline when the rows (times k classes) are too few to
// share; callers write each row's results to its own place.
func byRows(rows, k int, part func(lo, hi int)) {
	workers := max(1, min(runtime.GOMAXPROCS(0), rows*k/rowShare))
	if workers == 1 {
		part(0, rows)
		return
	}
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() { part(w*rows/workers, (w+1)*rows/workers) })
	}
	wg.Wait()
}

// rowShare is the fewest row-class entries a goroutine of byRows takes.
const rowShare = 4096

// boostGrad writes each voter's partial derivative, sum_r a[r, h_i(r)],
// into g: per group, the sums of a over each cell, then each voter's sum
// over the cells of the entries of its class. Groups are split over
// goroutines; each sum runs in a fixed order, so the result does not
// depend on the number of goroutines.
func boostGrad(g []float64, votes [][]uint8, cells []cellGroup, a []float64, k int) {
	var wg sync.WaitGroup
	workers := max(1, min(runtime.GOMAXPROCS(0), len(cells)))
	for wk := range workers {
		wg.Go(func() {
			for gi := wk; gi < len(cells); gi += workers {
				cg := &cells[gi]
				if cg.cellOf == nil {
					rowSums(g, votes, cg.voters, a, k)
					continue
				}
				cellSums(cg.sums, cg.cellOf, a, k)
				for j, i := range cg.voters {
					var s float64
					for c, cls := range cg.class[j] {
						s += cg.sums[c*k+int(cls)]
					}
					g[i] = s
				}
			}
		})
	}
	wg.Wait()
}

// boostStep returns the step t >= lo along one voter's weight that
// minimises the loss, by Newton's method on the convex loss along it,
// safeguarded by the bracket the derivative's sign gives (where the
// probabilities saturate the curvature is tiny and a bare Newton step
// would fly off). prob holds each row's softmax(F) at the current scores,
// so a row's probability of the voter's class h is P = prob[h] and of the
// other classes R = 1 - P, summed from theirs (1 - P would lose a tiny
// R); a step t moves it to P e^t / (P e^t + R), and one exp per iteration
// serves every row.
func boostStep(prob []float64, h []uint8, y []int, k int, lo float64) float64 {
	t := math.Max(lo, 0)
	below, above := lo, math.Inf(1) // the minimum lies in [below, above]
	p1, p2 := make([]float64, len(y)), make([]float64, len(y))
	for range 60 {
		// A = P e^t, B = R, or A = P, B = R e^-t: whichever keeps the
		// exponent at or below 0, so neither overflows.
		up, down := 1.0, 1.0
		if t > 0 {
			down = math.Exp(-t)
		} else {
			up = math.Exp(t)
		}
		// Each row's p and p z/den, worked out in parallel, then added
		// in row order (the same bits for any number of goroutines).
		byRows(len(y), k, func(lo, hi int) {
			for r := lo; r < hi; r++ {
				hc := int(h[r])
				var pr, rest float64
				for j, v := range prob[r*k : r*k+k] {
					if j == hc {
						pr = v
					} else {
						rest += v
					}
				}
				x, z := pr*up, rest*down
				p1[r], p2[r] = 0, 0
				if den := x + z; den > 0 {
					p := x / den
					p1[r], p2[r] = p, p*(z/den)
				}
			}
		})
		var d1, d2 float64
		for r, c := range y {
			d1 += p1[r]
			d2 += p2[r]
			if int(h[r]) == c {
				d1--
			}
		}
		if d1 < 0 {
			below = t
		} else {
			above = t
		}
		if t == lo && d1 >= 0 {
			return lo
		}
		nt := t - d1/d2
		if !(nt > below && nt < above) {
			switch {
			case !math.IsInf(below, 0) && !math.IsInf(above, 0):
				nt = below + (above-below)/2
			case math.IsInf(above, 1):
				nt = t + math.Max(1, math.Abs(t))
			default:
				nt = math.Max(lo, t-math.Max(1, math.Abs(t)))
			}
		}
		if math.Abs(nt-t) <= 1e-10*math.Max(1, math.Abs(t)) {
			return nt
		}
		t = nt
	}
	return t
}

// rowSums writes sum_r a[r, h_i(r)] into g[i] for each of at most four
// voters vs, the four sums side by side in one pass over the rows, each
// in row order (so the same bits as one voter at a time).
func rowSums(g []float64, votes [][]uint8, vs []int, a []float64, k int) {
	var h [4][]uint8
	for j := range h {
		// A missing voter repeats the first, its sum thrown away.
		h[j] = votes[vs[min(j, len(vs)-1)]]
	}
	h0 := h[0]
	h1, h2, h3 := h[1][:len(h0)], h[2][:len(h0)], h[3][:len(h0)]
	var s0, s1, s2, s3 float64
	for r, c := range h0 {
		ar := a[r*k : r*k+k]
		s0 += ar[c]
		s1 += ar[h1[r]]
		s2 += ar[h2[r]]
		s3 += ar[h3[r]]
	}
	for j, s := range []float64{s0, s1, s2, s3}[:len(vs)] {
		g[vs[j]] = s
	}
}

// cellSums writes into sums[c*k+j] the sum of a[r*k+j] over the rows r of
// cell c, in row order.
func cellSums(sums []float64, cellOf []uint16, a []float64, k int) {
	clear(sums)
	if k == 2 {
		a = a[:2*len(cellOf)]
		for r, c := range cellOf {
			s := sums[2*int(c) : 2*int(c)+2 : 2*int(c)+2]
			s[0] += a[2*r]
			s[1] += a[2*r+1]
		}
		return
	}
	for r, c := range cellOf {
		s := sums[int(c)*k : int(c)*k+k : int(c)*k+k]
		for j, v := range a[r*k : r*k+k] {
			s[j] += v
		}
	}
}
