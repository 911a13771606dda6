package objective

import (
	"errors"
	"math"
	"math/big"
	"testing"

	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"
)

func TestTestSetBoundZeroErrors(t *testing.T) {
	// k = 0: (1-p)^n = delta, so p = 1 - delta^(1/n) (FIELD-GUIDE.md).
	for _, n := range []int{1, 10, 1000, 100000} {
		for _, delta := range []float64{0.05, 0.001} {
			b, err := TestSetBound(0, n, delta)
			if err != nil {
				t.Fatal(err)
			}
			if want := 1 - math.Pow(delta, 1/float64(n)); math.Abs(b.Value-want) > 1e-12 {
				t.Errorf("n=%d delta=%v: %v, want %v", n, delta, b.Value, want)
			}
		}
	}
	// The rule of three: 3/n at delta = 0.05 (Hanley & Lippman-Hand 1983,
	// JAMA), within 1% at n = 1000.
	b, _ := TestSetBound(0, 1000, 0.05)
	if math.Abs(b.Value-0.003)/0.003 > 0.01 {
		t.Errorf("n=1000: %v is not within 1%% of 3/n", b.Value)
	}
}

// Cross-checks against gonum: the inverse regularised incomplete beta
// (Clopper & Pearson 1934's identity) and the binomial CDF at the bound
// (Langford 2005's definition).
func TestTestSetBoundGonum(t *testing.T) {
	for _, c := range []struct {
		k, n  int
		delta float64
	}{
		{0, 50, 0.05}, {3, 50, 0.05}, {37, 1000, 0.05}, {37, 1000, 0.001}, {500, 1000, 0.01}, {999, 1000, 0.05}, {12, 100000, 0.05},
	} {
		b, err := TestSetBound(c.k, c.n, c.delta)
		if err != nil {
			t.Fatal(err)
		}
		want := mathext.InvRegIncBeta(float64(c.k+1), float64(c.n-c.k), 1-c.delta)
		if math.Abs(b.Value-want) > 1e-10 {
			t.Errorf("%+v: %.15g, InvRegIncBeta %.15g", c, b.Value, want)
		}
		if cdf := (distuv.Binomial{N: float64(c.n), P: b.Value}).CDF(float64(c.k)); math.Abs(cdf-c.delta) > 1e-9 {
			t.Errorf("%+v: binomial CDF at the bound %v, want delta %v", c, cdf, c.delta)
		}
	}
	if b, _ := TestSetBound(7, 7, 0.05); b.Value != 1 {
		t.Errorf("all wrong: %v, want 1", b.Value)
	}
}

func TestFreshBoundErrors(t *testing.T) {
	for _, c := range []struct {
		name           string
		k, n, pop      int
		delta          float64
		populationOnly bool
	}{
		{"delta 0", 1, 10, 100, 0, false},
		{"delta 1", 1, 10, 100, 1, false},
		{"n 0", 0, 0, 100, 0.05, false},
		{"errors negative", -1, 10, 100, 0.05, false},
		{"errors above n", 11, 10, 100, 0.05, false},
		{"population not above n", 1, 10, 10, 0.05, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			if !c.populationOnly {
				if _, err := TestSetBound(c.k, c.n, c.delta); !errors.Is(err, ErrRange) {
					t.Errorf("test-set: got %v, want ErrRange", err)
				}
			}
			if _, err := PopulationBound(c.k, c.n, c.pop, c.delta); !errors.Is(err, ErrRange) {
				t.Errorf("population: got %v, want ErrRange", err)
			}
		})
	}
}

// hypergeomCDF against exact rational arithmetic (math/big) on every
// small case: P(X <= k) = sum_j C(K,j) C(N-K,n-j) / C(N,n).
func TestHypergeomCDFExact(t *testing.T) {
	for _, pop := range []int{1, 7, 30} {
		for marked := 0; marked <= pop; marked++ {
			for n := 0; n <= pop; n++ {
				for k := 0; k <= n; k++ {
					num := new(big.Int)
					for j := 0; j <= k; j++ {
						if j > marked || n-j > pop-marked {
							continue
						}
						num.Add(num, new(big.Int).Mul(new(big.Int).Binomial(int64(marked), int64(j)), new(big.Int).Binomial(int64(pop-marked), int64(n-j))))
					}
					want, _ := new(big.Rat).SetFrac(num, new(big.Int).Binomial(int64(pop), int64(n))).Float64()
					if got := hypergeomCDF(k, pop, marked, n); math.Abs(got-want) > 1e-12 {
						t.Fatalf("N=%d K=%d n=%d k=%d: %v, exact %v", pop, marked, n, k, got, want)
					}
				}
			}
		}
	}
}

// The finite-population bound never claims more errors than unlabelled
// rows, and for a population much larger than the sample it approaches the
// binomial bound (sampling without replacement tends to sampling with it;
// common practice, no source). It is not monotone in N: with few unlabelled
// rows the integer count dominates the rate.
func TestPopulationBoundProperties(t *testing.T) {
	const k, n = 37, 1000
	var last float64
	for _, pop := range []int{1001, 1500, 3000, 20000, 1000000} {
		b, err := PopulationBound(k, n, pop, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		last = b.Value
		if rest, _ := b.Term("unlabelled_errors_upper"); rest > float64(pop-n) {
			t.Errorf("population %d: %v errors on %d rows", pop, rest, pop-n)
		}
	}
	// A large population behaves like the binomial bound.
	bin, _ := TestSetBound(k, n, 0.05)
	if math.Abs(last-bin.Value) > 2e-3 {
		t.Errorf("population 1e6: %v, binomial %v", last, bin.Value)
	}
}

// scipy.stats.beta.ppf(delta, k, n-k+1), scipy 1.10.1 (Debian
// python3-scipy): the one-sided Clopper-Pearson lower limit.
func TestTestSetLowerBoundScipy(t *testing.T) {
	for _, c := range []struct {
		name  string
		k, n  int
		delta float64
		want  float64
	}{
		{"one of ten", 1, 10, 0.05, 0.005116196891823702},
		{"five of hundred", 5, 100, 0.05, 0.019905563662171832},
		{"half", 50, 100, 0.05, 0.41362171463091163},
		{"small delta", 12, 200, 0.01, 0.027528605197769337},
		{"nearly all", 99, 100, 0.1, 0.961660502504613},
		{"all", 100, 100, 0.05, 0.9704869503929601}, // delta^(1/n) in closed form
		{"rare", 3, 1000, 0.05, 0.0008181753982218001},
		{"none", 0, 100, 0.05, 0},
	} {
		t.Run(c.name, func(t *testing.T) {
			b, err := TestSetLowerBound(c.k, c.n, c.delta)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(b.Value-c.want) > 1e-12 || b.Value > c.want+1e-15 {
				t.Errorf("%.17g, scipy %.17g", b.Value, c.want)
			}
			up, _ := TestSetBound(c.k, c.n, c.delta)
			if rate := float64(c.k) / float64(c.n); b.Value > rate || up.Value < rate {
				t.Errorf("limits [%v, %v] do not hold the rate %v", b.Value, up.Value, rate)
			}
		})
	}
	if _, err := TestSetLowerBound(5, 4, 0.05); !errors.Is(err, ErrRange) {
		t.Errorf("5 errors on 4 rows: %v, want ErrRange", err)
	}
}

func TestMeanLossBound(t *testing.T) {
	cases := []struct {
		name  string
		mean  float64
		n     int
		delta float64
	}{
		{"no loss", 0, 100, 0.05},
		{"small loss", 0.03, 500, 0.01},
		{"half", 0.5, 40, 0.1},
		{"all lost", 1, 10, 0.05},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b, err := MeanLossBound(c.mean, c.n, c.delta)
			if err != nil {
				t.Fatal(err)
			}
			if b.Value < c.mean {
				t.Errorf("bound %v below the mean %v", b.Value, c.mean)
			}
			if c.mean == 0 {
				// kl^-1_up(0, e) = 1 - exp(-e) (FIELD-GUIDE.md), and with
				// e = ln(1/delta)/n this is 1 - delta^(1/n), the exact
				// binomial bound for no errors (Langford 2005).
				want := 1 - math.Pow(c.delta, 1/float64(c.n))
				if math.Abs(b.Value-want) > 1e-12 {
					t.Errorf("no loss: got %v, want 1 - delta^(1/n) = %v", b.Value, want)
				}
			}
			// For 0/1 losses the binomial inversion is the tighter of the
			// two (Chernoff's bound dominates the exact tail; Langford 2005).
			k := int(math.Round(c.mean * float64(c.n)))
			ts, err := TestSetBound(k, c.n, c.delta)
			if err != nil {
				t.Fatal(err)
			}
			if b.Value < ts.Value-1e-12 {
				t.Errorf("kl form %v below the binomial bound %v", b.Value, ts.Value)
			}
		})
	}
	for _, bad := range []struct {
		name  string
		mean  float64
		n     int
		delta float64
	}{{"negative mean", -0.1, 10, 0.05}, {"mean over 1", 1.5, 10, 0.05}, {"no rows", 0.1, 0, 0.05}, {"delta 1", 0.1, 10, 1}} {
		t.Run(bad.name, func(t *testing.T) {
			if _, err := MeanLossBound(bad.mean, bad.n, bad.delta); err == nil {
				t.Error("no error")
			}
		})
	}
}
