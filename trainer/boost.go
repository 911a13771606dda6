package trainer

import (
	"math"
	"runtime"
	"sync"
)

// Boosting settings: the most rounds, and the relative fall of the loss
// below which a round ends the fit.
const (
	boostRounds  = 300
	boostMinFall = 1e-6
)

// boostWeights fits non-negative weights of a vote of hard voters by
// greedy coordinate descent on the multinomial logistic loss of the vote's
// class scores, F_c(x) = sum_i w_i [h_i(x) = c]: each round takes the voter
// whose weight's partial derivative promises the steepest fall (a voter
// with weight may also lose some) and sets its step by Newton's method on
// the loss along it. This is boosting with the logistic loss (Friedman,
// Hastie, Tibshirani 2000, Annals of Statistics) over a fixed pool, in the
// multiclass form of SAMME (Zhu, Zou, Rosset, Hastie 2009) with the
// logistic loss for the exponential one. votes[i][r] is voter i's class
// on row r and y[r] the row's class. The weights come back on the simplex
// (uniform when no round lowered the loss).
func boostWeights(votes [][]uint8, y []int, k int) []float64 {
	n, m := len(votes), len(y)
	w := make([]float64, n)
	f := make([]float64, m*k) // class scores per row
	a := make([]float64, m*k) // softmax(F) - onehot(y): the loss's slope in F
	g := make([]float64, n)
	loss := boostSlope(f, a, y, k)
	for range boostRounds {
		boostGrad(g, votes, a, k)
		best, bestSlope := -1, 0.0
		for i, gi := range g {
			// A fall along +w_i needs gi < 0; along -w_i, weight to give.
			s := -gi
			if gi > 0 && w[i] > 0 {
				s = gi
			}
			if s > bestSlope {
				best, bestSlope = i, s
			}
		}
		if best < 0 || bestSlope <= 1e-12*float64(m) {
			break
		}
		step := boostStep(f, votes[best], y, k, -w[best])
		if step == 0 {
			break
		}
		w[best] += step
		h := votes[best]
		for r := range m {
			f[r*k+int(h[r])] += step
		}
		next := boostSlope(f, a, y, k)
		fall := loss - next
		loss = next
		if fall <= boostMinFall*loss {
			break
		}
	}
	var s float64
	for i := range w {
		w[i] = math.Max(w[i], 0)
		s += w[i]
	}
	if !(s > 0) {
		return uniformWeights(n)
	}
	for i := range w {
		w[i] /= s
	}
	return w
}

// boostSlope writes softmax(F_r) - onehot(y_r) into a and returns the loss
// sum_r logsumexp(F_r) - F_{r,y_r}.
func boostSlope(f, a []float64, y []int, k int) float64 {
	var loss float64
	for r, c := range y {
		fr, ar := f[r*k:r*k+k], a[r*k:r*k+k]
		mx := fr[0]
		for _, v := range fr {
			mx = math.Max(mx, v)
		}
		var z float64
		for j, v := range fr {
			ar[j] = math.Exp(v - mx)
			z += ar[j]
		}
		for j := range ar {
			ar[j] /= z
		}
		ar[c]--
		loss += mx + math.Log(z) - fr[c]
	}
	return loss
}

// boostGrad writes each voter's partial derivative, sum_r a[r, h_i(r)],
// into g; voters are split over goroutines, each sum in row order.
func boostGrad(g []float64, votes [][]uint8, a []float64, k int) {
	var wg sync.WaitGroup
	workers := max(1, min(runtime.GOMAXPROCS(0), len(votes)))
	for wk := range workers {
		wg.Go(func() {
			for i := wk; i < len(votes); i += workers {
				var s float64
				for r, c := range votes[i] {
					s += a[r*k+int(c)]
				}
				g[i] = s
			}
		})
	}
	wg.Wait()
}

// boostStep returns the step t >= lo along one voter's weight that
// minimises the loss, by Newton's method on the convex loss along it.
func boostStep(f []float64, h []uint8, y []int, k int, lo float64) float64 {
	t := 0.0
	for range 20 {
		var d1, d2 float64
		for r, c := range y {
			fr := f[r*k : r*k+k]
			hc := int(h[r])
			mx := math.Inf(-1)
			for j, v := range fr {
				if j == hc {
					v += t
				}
				mx = math.Max(mx, v)
			}
			var z float64
			for j, v := range fr {
				if j == hc {
					v += t
				}
				z += math.Exp(v - mx)
			}
			p := math.Exp(fr[hc]+t-mx) / z
			d1 += p
			if hc == c {
				d1--
			}
			d2 += p * (1 - p)
		}
		if !(d2 > 0) {
			break
		}
		nt := math.Max(lo, t-d1/d2)
		if math.Abs(nt-t) <= 1e-10*math.Max(1, math.Abs(t)) {
			t = nt
			break
		}
		t = nt
	}
	return t
}
