package objective

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

// gibbsBounds are the bounds of one empirical Gibbs risk.
var gibbsBounds = []struct {
	name  string
	bound func(r, kl float64, m int, delta float64) (Bound, error)
}{
	{"kl", KLBound},
	{"pinsker", PinskerBound},
	{"catoni", func(r, kl float64, m int, delta float64) (Bound, error) { return CatoniBound(r, kl, m, delta, 2) }},
	{"lambda", LambdaBound},
	{"first-order", FirstOrderBound},
}

// pairBounds are the bounds of a Gibbs and a tandem risk.
var pairBounds = []struct {
	name  string
	bound func(r, t, kl float64, m int, delta float64) (Bound, error)
}{
	{"tandem", func(_, t, kl float64, m int, delta float64) (Bound, error) { return TandemBound(t, kl, m, delta) }},
	{"c-bound", CBound},
	{"chebyshev-cantelli", ChebyshevCantelliBound},
}

func TestBoundErrors(t *testing.T) {
	cases := []struct {
		name         string
		r, t, kl     float64
		m            int
		delta        float64
		skipTandemOK bool
	}{
		{"delta 0", 0.1, 0.05, 1, 100, 0, false},
		{"delta 1", 0.1, 0.05, 1, 100, 1, false},
		{"delta 1.5", 0.1, 0.05, 1, 100, 1.5, false},
		{"delta NaN", 0.1, 0.05, 1, 100, math.NaN(), false},
		{"m 0", 0.1, 0.05, 1, 0, 0.05, false},
		{"m negative", 0.1, 0.05, 1, -3, 0.05, false},
		{"risk negative", -0.1, 0.05, 1, 100, 0.05, true},
		{"risk above 1", 1.1, 0.05, 1, 100, 0.05, true},
		{"risk NaN", math.NaN(), 0.05, 1, 100, 0.05, true},
		{"KL negative", 0.1, 0.05, -1, 100, 0.05, false},
		{"KL infinite", 0.1, 0.05, math.Inf(1), 100, 0.05, false},
		{"KL NaN", 0.1, 0.05, math.NaN(), 100, 0.05, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			for _, b := range gibbsBounds {
				if _, err := b.bound(c.r, c.kl, c.m, c.delta); !errors.Is(err, ErrRange) {
					t.Errorf("%s: got %v, want ErrRange", b.name, err)
				}
			}
			for _, b := range pairBounds {
				if c.skipTandemOK && b.name == "tandem" {
					continue // the tandem bound reads no Gibbs risk
				}
				if _, err := b.bound(c.r, c.t, c.kl, c.m, c.delta); !errors.Is(err, ErrRange) {
					t.Errorf("%s: got %v, want ErrRange", b.name, err)
				}
			}
		})
	}
	// A tandem risk above the Gibbs risk, which no vote has.
	for _, b := range pairBounds[1:] {
		if _, err := b.bound(0.1, 0.2, 1, 100, 0.05); !errors.Is(err, ErrRange) {
			t.Errorf("%s with t > r: got %v, want ErrRange", b.name, err)
		}
	}
	if _, err := CatoniBound(0.1, 1, 100, 0.05, 0); !errors.Is(err, ErrRange) {
		t.Errorf("catoni with C = 0: got %v, want ErrRange", err)
	}
	if _, err := CBoundDisagreement(0.1, 0.6, 1, 100, 0.05); !errors.Is(err, ErrRange) {
		t.Errorf("c-bound with disagreement 0.6: got %v, want ErrRange", err)
	}
	// The C-bound says nothing once the upper Gibbs bound reaches 1/2.
	if _, err := CBound(0.45, 0.3, 5, 200, 0.05); err == nil {
		t.Errorf("c-bound with an upper Gibbs bound above 1/2: no error")
	}
}

// Randomised, seeded properties (FIELD-GUIDE.md; common practice, no
// source for the checks themselves): every bound is at least its
// empirical counterpart, rises with KL, does not rise with m or delta; the
// Pinsker form is never below the kl bound; the kl-based values stay in
// their ranges without clamping: kl in [r, 1], first order in [2r, 2],
// tandem in [4t, 4], C-bound at most 1.
func TestBoundProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for range 3000 {
		r := 0.45 * rng.Float64()
		tr := r * r * (1 + rng.Float64()*(1/math.Max(r, 1e-9)-1)) // r^2 <= t <= r
		tr = math.Min(tr, r)
		kl := 20 * rng.Float64()
		m := 10 + rng.IntN(20000)
		delta := 0.001 + 0.5*rng.Float64()
		eval := func(kl float64, m int, delta float64) map[string]Bound {
			out := map[string]Bound{}
			for _, b := range gibbsBounds {
				v, err := b.bound(r, kl, m, delta)
				if err != nil {
					t.Fatalf("%s(r=%v, kl=%v, m=%d, delta=%v): %v", b.name, r, kl, m, delta, err)
				}
				out[b.name] = v
			}
			for _, b := range pairBounds {
				v, err := b.bound(r, tr, kl, m, delta)
				if err != nil {
					continue // the C-bound past R+ = 1/2
				}
				out[b.name] = v
			}
			return out
		}
		base := eval(kl, m, delta)
		d := 2 * (r - tr)
		empirical := map[string]float64{
			"kl": r, "pinsker": r, "catoni": r, "lambda": r, "first-order": 2 * r, "tandem": 4 * tr,
			"c-bound":            1 - (1-2*r)*(1-2*r)/(1-2*d),
			"chebyshev-cantelli": ccEmpirical(r, tr),
		}
		for name, b := range base {
			if b.Value < empirical[name]-1e-12 {
				t.Fatalf("%s = %v below its empirical term %v (r=%v t=%v)", name, b.Value, empirical[name], r, tr)
			}
		}
		if base["pinsker"].Value < base["kl"].Value {
			t.Fatalf("pinsker %v below kl %v", base["pinsker"].Value, base["kl"].Value)
		}
		if v := base["kl"].Value; v > 1 {
			t.Fatalf("kl bound %v above 1", v)
		}
		if v := base["first-order"].Value; v > 2 {
			t.Fatalf("first-order %v above 2", v)
		}
		if v := base["tandem"].Value; v > 4 {
			t.Fatalf("tandem %v above 4", v)
		}
		if b, ok := base["c-bound"]; ok && b.Value > 1 {
			t.Fatalf("c-bound %v above 1", b.Value)
		}
		for what, other := range map[string]map[string]Bound{
			"more KL":       eval(kl*1.5+0.1, m, delta),
			"smaller m":     eval(kl, m/2+1, delta),
			"smaller delta": eval(kl, m, delta/3),
		} {
			for name, b := range base {
				o, ok := other[name]
				if !ok {
					continue
				}
				if o.Value < b.Value-1e-12 {
					t.Fatalf("%s: %s fell from %v to %v (r=%v t=%v kl=%v m=%d delta=%v)", what, name, b.Value, o.Value, r, tr, kl, m, delta)
				}
			}
		}
	}
}

// ccEmpirical is the Chebyshev-Cantelli bound at the empirical figures,
// minimised over mu on a fine grid.
func ccEmpirical(r, t float64) float64 {
	best := math.Inf(1)
	for i := 0; i < 5000; i++ {
		mu := 0.5 * float64(i) / 5000
		best = math.Min(best, (t-2*mu*r+mu*mu)/((0.5-mu)*(0.5-mu)))
	}
	return best
}

// The closed-form lambda* of Thiemann et al. (2017) and the closed-form
// mu* are the minima over a fine grid.
func TestLambdaAndMuOptimal(t *testing.T) {
	for _, c := range []struct {
		r, t, kl float64
		m        int
	}{{0.1, 0.02, 2, 1000}, {0.3, 0.15, 0.1, 500}, {0.02, 0.001, 30, 10000}} {
		b, err := LambdaBound(c.r, c.kl, c.m, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		budget, _ := b.Term("budget")
		for i := 1; i < 20000; i++ {
			l := 2 * float64(i) / 20000
			if v := c.r/(1-l/2) + budget/(l*(1-l/2)); v < b.Value-1e-12 {
				t.Fatalf("lambda %v gives %v below the closed form's %v", l, v, b.Value)
			}
		}
		cc, err := ChebyshevCantelliBound(c.r, c.t, c.kl, c.m, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		rLo, _ := cc.Term("gibbs_lower")
		tUp, _ := cc.Term("tandem_upper")
		if v := ccEmpirical(rLo, tUp); v < cc.Value-1e-12 {
			t.Fatalf("grid mu gives %v below the closed form's %v", v, cc.Value)
		}
	}
}

// The terms let a reader redo the arithmetic.
func TestBoundTermsRedoTheArithmetic(t *testing.T) {
	b, err := CBound(0.12, 0.05, 3.2, 5000, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	term := func(n string) float64 {
		v, ok := b.Term(n)
		if !ok {
			t.Fatalf("no term %q", n)
		}
		return v
	}
	lx, _ := LogXi(5000)
	if e1 := (3.2 + lx - math.Log(0.025)) / 5000; math.Abs(term("gibbs_budget")-e1) > 1e-15 {
		t.Errorf("gibbs_budget %v, want %v", term("gibbs_budget"), e1)
	}
	a := 1 - 2*term("gibbs_upper")
	if v := 1 - a*a/(1-2*term("disagreement_lower")); v != b.Value {
		t.Errorf("value %v, redone %v", b.Value, v)
	}
	if b.Of != OfVoteRisk || b.Delta != 0.05 || b.M != 5000 || b.KL != 3.2 {
		t.Errorf("header %+v", b)
	}
}
