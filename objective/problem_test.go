package objective

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
)

// simStats simulates n binary voters on m rows, each erring on a row with
// its own rate and a shared row difficulty, and returns their error rates,
// the joint-error matrix, a random prior and a random posterior in the
// interior of the simplex.
func simStats(rng *rand.Rand, n, m int, base float64) (risks, joint, prior, q []float64) {
	rates := make([]float64, n)
	for i := range rates {
		rates[i] = base * (0.5 + rng.Float64())
	}
	errs := make([][]bool, m)
	for r := range errs {
		hard := rng.Float64() < 0.3
		errs[r] = make([]bool, n)
		for i := range n {
			p := rates[i]
			if hard {
				p = math.Min(1, 2*p)
			}
			errs[r][i] = rng.Float64() < p
		}
	}
	risks = make([]float64, n)
	joint = make([]float64, n*n)
	for _, row := range errs {
		for i, ei := range row {
			if !ei {
				continue
			}
			risks[i]++
			for j, ej := range row {
				if ej {
					joint[i*n+j]++
				}
			}
		}
	}
	for i := range risks {
		risks[i] /= float64(m)
	}
	for i := range joint {
		joint[i] /= float64(m)
	}
	return risks, joint, simplexPoint(rng, n), simplexPoint(rng, n)
}

func simplexPoint(rng *rand.Rand, n int) []float64 {
	x := make([]float64, n)
	var s float64
	for i := range x {
		x[i] = 0.2 + rng.Float64()
		s += x[i]
	}
	for i := range x {
		x[i] /= s
	}
	return x
}

// checkGradient compares grad with gonum's central finite differences of f
// at x.
func checkGradient(t *testing.T, name string, f func([]float64) float64, grad func(g, x []float64), x []float64, tol float64) {
	t.Helper()
	got := make([]float64, len(x))
	grad(got, x)
	want := fd.Gradient(nil, f, x, &fd.Settings{Formula: fd.Central, Step: 1e-6})
	for i := range got {
		if d := math.Abs(got[i] - want[i]); !(d <= tol*math.Max(1, math.Abs(want[i]))) {
			t.Errorf("%s: d/dq_%d = %.10g, central differences %.10g", name, i, got[i], want[i])
		}
	}
}

func TestGradients(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	const n, m = 7, 400
	for _, base := range []float64{0.05, 0.2, 0.4} {
		risks, joint, prior, q := simStats(rng, n, m, base)
		probs := []struct {
			name string
			f    func([]float64) float64
			g    func(g, x []float64)
		}{
			{"Divergence", func(x []float64) float64 { return Divergence(x, prior) }, func(g, x []float64) { DivergenceGrad(g, x, prior) }},
			{"GibbsRisk", func(x []float64) float64 { return GibbsRisk(x, risks) }, func(g, x []float64) { GibbsRiskGrad(g, x, risks) }},
			{"TandemRisk", func(x []float64) float64 { return TandemRisk(x, joint) }, func(g, x []float64) { TandemRiskGrad(g, x, joint) }},
		}
		for _, p := range []struct {
			name string
			prob Problem
		}{
			{"LinearObjective", must(t)(LinearObjective(risks, prior, m, 1.5))},
			{"KLObjective", must(t)(KLObjective(risks, prior, m, 0.05))},
			{"TandemObjective", must(t)(TandemObjective(joint, prior, m, 0.05))},
			{"CBoundObjective", must(t)(CBoundObjective(risks, joint, prior, m, 0.05))},
			{"ChebyshevCantelliObjective", must(t)(ChebyshevCantelliObjective(risks, joint, prior, m, 0.05))},
		} {
			probs = append(probs, struct {
				name string
				f    func([]float64) float64
				g    func(g, x []float64)
			}{p.name, p.prob.Func, p.prob.Grad})
		}
		for _, p := range probs {
			checkGradient(t, p.name, p.f, p.g, q, 1e-6)
		}
	}
}

// Past R+ = 1/2 the C-bound objective is its documented mirror-image
// surrogate: above 1, with a gradient that matches finite differences, and
// continuous at the edge.
func TestCBoundObjectiveSurrogate(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	const n, m = 5, 300
	risks, joint, prior, q := simStats(rng, n, m, 0.5)
	prob := must(t)(CBoundObjective(risks, joint, prior, m, 0.05))
	if _, err := CBound(GibbsRisk(q, risks), TandemRisk(q, joint), Divergence(q, prior), m, 0.05); err == nil {
		t.Fatalf("want statistics past the C-bound's edge; r(Q) = %v", GibbsRisk(q, risks))
	}
	if v := prob.Func(q); !(v > 1) {
		t.Fatalf("surrogate %v, want above 1", v)
	}
	checkGradient(t, "surrogate", prob.Func, prob.Grad, q, 1e-6)
	// Continuity at the edge: 1 on both sides of R+ = 1/2.
	surface := func(r float64) float64 {
		tr := r * 0.6
		return cboundEdge(t, r, tr, m)
	}
	lo, hi := 0.2, 0.5
	for range 60 {
		mid := (lo + hi) / 2
		c, err := cboundOf(mid, 2*(mid-mid*0.6), 0.5, m, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		if c.rUp < 0.5 {
			lo = mid
		} else {
			hi = mid
		}
	}
	if a, b := surface(lo), surface(hi); math.Abs(a-1) > 1e-6 || math.Abs(b-1) > 1e-6 {
		t.Fatalf("at the edge: %v below, %v above, want both 1", a, b)
	}
}

// cboundEdge evaluates CBoundObjective at two voters of risk r each, on
// equal weights, with t(Q) = tr and KL(Q||P) = 0.5.
func cboundEdge(t *testing.T, r, tr float64, m int) float64 {
	t.Helper()
	p0 := 0.5 * math.Exp(-0.5) // KL((1/2, 1/2) || (p0, p0)) = 0.5
	x := 2*tr - r              // t(Q) = (2r + 2x)/4 at equal weights
	prob := must(t)(CBoundObjective([]float64{r, r}, []float64{r, x, x, r}, []float64{p0, p0}, m, 0.05))
	return prob.Func([]float64{0.5, 0.5})
}

// Each objective's value at q is the bound function's value at q's
// figures: the trainer optimises exactly what it later certifies.
func TestObjectivesMatchBounds(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	const n, m = 6, 500
	risks, joint, prior, q := simStats(rng, n, m, 0.1)
	r, tr, kl := GibbsRisk(q, risks), TandemRisk(q, joint), Divergence(q, prior)
	for _, c := range []struct {
		name  string
		prob  Problem
		bound func() (Bound, error)
	}{
		{"first order", must(t)(KLObjective(risks, prior, m, 0.05)), func() (Bound, error) { return FirstOrderBound(r, kl, m, 0.05) }},
		{"tandem", must(t)(TandemObjective(joint, prior, m, 0.05)), func() (Bound, error) { return TandemBound(tr, kl, m, 0.05) }},
		{"c-bound", must(t)(CBoundObjective(risks, joint, prior, m, 0.05)), func() (Bound, error) { return CBound(r, tr, kl, m, 0.05) }},
		{"chebyshev-cantelli", must(t)(ChebyshevCantelliObjective(risks, joint, prior, m, 0.05)), func() (Bound, error) { return ChebyshevCantelliBound(r, tr, kl, m, 0.05) }},
	} {
		b, err := c.bound()
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if v := c.prob.Func(q); math.Abs(v-b.Value) > 1e-13 {
			t.Errorf("%s: objective %v, bound %v", c.name, v, b.Value)
		}
	}
}

// The Gibbs posterior minimises C m r(Q) + KL(Q||P) on the simplex (Catoni
// 2007): the gradient there is the same in every coordinate, so its part
// along the simplex vanishes; and no nearby point on the simplex is lower.
func TestGibbsPosteriorMinimises(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for _, c := range []struct {
		name string
		n, m int
		c    float64
	}{{"small", 5, 100, 0.5}, {"large C m", 40, 20000, 3}} {
		t.Run(c.name, func(t *testing.T) {
			risks, _, prior, _ := simStats(rng, c.n, 50, 0.2)
			q, err := GibbsPosterior(risks, prior, c.m, c.c)
			if err != nil {
				t.Fatal(err)
			}
			prob := must(t)(LinearObjective(risks, prior, c.m, c.c))
			g := make([]float64, c.n)
			prob.Grad(g, q)
			// Only where q_i did not underflow: at q_i = 0 the entry is
			// DivergenceGrad's finite stand-in for -Inf.
			var mean, live float64
			for i, v := range g {
				if q[i] > 0 {
					mean += v
					live++
				}
			}
			mean /= live
			for i, v := range g {
				if q[i] > 0 && math.Abs(v-mean) > 1e-9*math.Max(1, math.Abs(mean)) {
					t.Fatalf("gradient %d is %v, mean %v: not stationary on the simplex", i, v, mean)
				}
			}
			f0 := prob.Func(q)
			for range 200 {
				i, j := rng.IntN(c.n), rng.IntN(c.n)
				step := 1e-4 * q[i]
				x := append([]float64(nil), q...)
				x[i] -= step
				x[j] += step
				if f := prob.Func(x); f < f0-1e-12 {
					t.Fatalf("moving weight lowers the objective: %v < %v", f, f0)
				}
			}
		})
	}
	if q, err := GibbsPosterior([]float64{0.1}, []float64{0.5, 0.5}, 10, 1); !errors.Is(err, ErrRange) || q != nil {
		t.Errorf("mismatched lengths: got %v, %v, want ErrRange", q, err)
	}
}

func TestProblemErrors(t *testing.T) {
	risks, prior := []float64{0.1, 0.2}, []float64{0.5, 0.5}
	joint := []float64{0.1, 0.05, 0.05, 0.2}
	for _, c := range []struct {
		name string
		make func() (Problem, error)
	}{
		{"m 0", func() (Problem, error) { return KLObjective(risks, prior, 0, 0.05) }},
		{"delta 1", func() (Problem, error) { return TandemObjective(joint, prior, 100, 1) }},
		{"prior weight 0", func() (Problem, error) { return CBoundObjective(risks, joint, []float64{1, 0}, 100, 0.05) }},
		{"risk above 1", func() (Problem, error) { return LinearObjective([]float64{1.2, 0.1}, prior, 100, 1) }},
		{"C 0", func() (Problem, error) { return LinearObjective(risks, prior, 100, 0) }},
		{"joint too short", func() (Problem, error) { return ChebyshevCantelliObjective(risks, joint[:3], prior, 100, 0.05) }},
		{"risks too short", func() (Problem, error) { return KLObjective(risks[:1], prior, 100, 0.05) }},
	} {
		t.Run(c.name, func(t *testing.T) {
			p, err := c.make()
			if !errors.Is(err, ErrRange) {
				t.Fatalf("err = %v, want ErrRange", err)
			}
			if p.Func != nil || p.Grad != nil {
				t.Errorf("got a Problem with an error")
			}
		})
	}
}

// TandemRisk reads only the upper triangle; it must equal the plain
// double sum on a symmetric matrix.
func TestTandemRiskNaive(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	_, joint, _, q := simStats(rng, 30, 200, 0.2)
	var want float64
	for i := range q {
		for j := range q {
			want += q[i] * q[j] * joint[i*30+j]
		}
	}
	if got := TandemRisk(q, joint); math.Abs(got-want) > 1e-15 {
		t.Fatalf("%v, naive %v", got, want)
	}
	if !math.IsNaN(TandemRisk(q, joint[:10])) {
		t.Fatalf("short matrix: want NaN")
	}
}

// must returns a function that fails t on a constructor's error and
// returns its Problem otherwise.
func must(t *testing.T) func(Problem, error) Problem {
	return func(p Problem, err error) Problem {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
}

// TestSegment checks the line cut of each objective that reads the joint
// matrix against Func at the point itself: x(alpha) = q + alpha (c - q)
// is a point of the simplex and J x(alpha) = (1 - alpha) J q + alpha J c
// (linearity of the product; common practice, no source), so the two
// agree to rounding; and after Move, Func and Grad at the point agree
// with a fresh problem's. The objectives without a joint matrix have no
// Segment.
func TestSegment(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	const n, m = 9, 500
	risks, joint, prior, q := simStats(rng, n, m, 0.2)
	c := simplexPoint(rng, n)
	tests := []struct {
		name    string
		make    func() (Problem, error)
		segment bool
	}{
		{"linear", func() (Problem, error) { return LinearObjective(risks, prior, m, 1.5) }, false},
		{"first order", func() (Problem, error) { return KLObjective(risks, prior, m, 0.05) }, false},
		{"tandem", func() (Problem, error) { return TandemObjective(joint, prior, m, 0.05) }, true},
		{"c-bound", func() (Problem, error) { return CBoundObjective(risks, joint, prior, m, 0.05) }, true},
		{"chebyshev-cantelli", func() (Problem, error) { return ChebyshevCantelliObjective(risks, joint, prior, m, 0.05) }, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			prob, fresh := must(t)(tc.make()), must(t)(tc.make())
			if (prob.Segment != nil) != tc.segment {
				t.Fatalf("Segment set %v, want %v", prob.Segment != nil, tc.segment)
			}
			if !tc.segment {
				return
			}
			prob.Func(q)
			seg := prob.Segment(q, c)
			x := make([]float64, n)
			for _, a := range []float64{0, 0.25, 0.5, 1} {
				for i := range x {
					x[i] = q[i] + a*(c[i]-q[i])
				}
				if got, want := seg.Value(a), fresh.Func(x); math.Abs(got-want) > 1e-12*math.Max(1, math.Abs(want)) {
					t.Errorf("Value(%v) = %v, Func there %v", a, got, want)
				}
			}
			seg.Move(x, 0.5)
			g, want := make([]float64, n), make([]float64, n)
			prob.Grad(g, x)
			fresh.Grad(want, x)
			for i := range g {
				if math.Abs(g[i]-want[i]) > 1e-12*math.Max(1, math.Abs(want[i])) {
					t.Errorf("after Move, gradient %d = %v, a fresh problem's %v", i, g[i], want[i])
				}
			}
		})
	}
}
