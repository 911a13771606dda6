package objective

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

func TestBinaryKL(t *testing.T) {
	inf := math.Inf(1)
	cases := []struct {
		name    string
		q, p    float64
		want    float64
		wantNaN bool
	}{
		// kl(q||p) = q ln(q/p) + (1-q) ln((1-q)/(1-p)) (FIELD-GUIDE.md), by hand.
		{"equal", 0.3, 0.3, 0, false},
		{"0.1 vs 0.2", 0.1, 0.2, 0.1*math.Log(0.5) + 0.9*math.Log(0.9/0.8), false},
		{"0 vs 1/2", 0, 0.5, math.Ln2, false},
		{"1 vs 1/2", 1, 0.5, math.Ln2, false},
		// 0 ln 0 = 0 at both ends.
		{"0 vs 0", 0, 0, 0, false},
		{"1 vs 1", 1, 1, 0, false},
		// +Inf where p reaches an edge that q does not.
		{"inside vs 0", 0.5, 0, inf, false},
		{"inside vs 1", 0.5, 1, inf, false},
		{"0 vs 1", 0, 1, inf, false},
		{"q above 1", 1.5, 0.5, 0, true},
		{"p below 0", 0.5, -0.1, 0, true},
		{"NaN", math.NaN(), 0.5, 0, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := BinaryKL(c.q, c.p)
			if c.wantNaN {
				if !math.IsNaN(got) {
					t.Fatalf("got %v, want NaN", got)
				}
				return
			}
			if got != c.want && math.Abs(got-c.want) > 1e-15 {
				t.Fatalf("got %.17g, want %.17g", got, c.want)
			}
		})
	}
}

func TestKLInverseClosedForms(t *testing.T) {
	cases := []struct {
		name string
		got  func() (float64, error)
		want float64
	}{
		// kl(0||p) = -ln(1-p), so kl^-1_up(0, e) = 1 - exp(-e) (FIELD-GUIDE.md).
		{"upper q=0 e=0.3", func() (float64, error) { return KLInverseUpper(0, 0.3) }, 1 - math.Exp(-0.3)},
		{"upper q=0 e=1e-9", func() (float64, error) { return KLInverseUpper(0, 1e-9) }, -math.Expm1(-1e-9)},
		// kl(1||p) = -ln p, so kl^-1_lo(1, e) = exp(-e) (the same algebra, mirrored).
		{"lower q=1 e=0.3", func() (float64, error) { return KLInverseLower(1, 0.3) }, math.Exp(-0.3)},
		{"upper q=1", func() (float64, error) { return KLInverseUpper(1, 0.3) }, 1},
		{"lower q=0", func() (float64, error) { return KLInverseLower(0, 0.3) }, 0},
		{"upper e=0", func() (float64, error) { return KLInverseUpper(0.2, 0) }, 0.2},
		{"lower e=0", func() (float64, error) { return KLInverseLower(0.2, 0) }, 0.2},
		{"upper e huge", func() (float64, error) { return KLInverseUpper(0.2, 1e6) }, 1},
		{"lower e huge", func() (float64, error) { return KLInverseLower(0.2, 1e6) }, 0},
		{"upper e=Inf", func() (float64, error) { return KLInverseUpper(0.2, math.Inf(1)) }, 1},
		{"lower e=Inf", func() (float64, error) { return KLInverseLower(0.2, math.Inf(1)) }, 0},
		// kl(1/2||p) = -ln(2 sqrt(p(1-p))): the upper root of e = ln 2 - ln(2 sqrt(p(1-p)))... at
		// e = ln(5/4), 4p(1-p) = 16/25 gives p = 4/5 (by hand).
		{"upper q=1/2 e=ln(5/4)", func() (float64, error) { return KLInverseUpper(0.5, math.Log(1.25)) }, 0.8},
		{"lower q=1/2 e=ln(5/4)", func() (float64, error) { return KLInverseLower(0.5, math.Log(1.25)) }, 0.2},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := c.got()
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-c.want) > 1e-12 {
				t.Fatalf("got %.17g, want %.17g", got, c.want)
			}
		})
	}
}

func TestKLInverseErrors(t *testing.T) {
	cases := []struct {
		name string
		q, e float64
	}{
		{"q below 0", -0.1, 0.1},
		{"q above 1", 1.1, 0.1},
		{"q NaN", math.NaN(), 0.1},
		{"e negative", 0.5, -1e-3},
		{"e NaN", 0.5, math.NaN()},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if _, err := KLInverseUpper(c.q, c.e); !errors.Is(err, ErrRange) {
				t.Errorf("upper: got %v, want ErrRange", err)
			}
			if _, err := KLInverseLower(c.q, c.e); !errors.Is(err, ErrRange) {
				t.Errorf("lower: got %v, want ErrRange", err)
			}
		})
	}
}

// Randomised, seeded: the inverses bracket q, solve kl(q||p) = e to 1e-12
// in p, are monotone in e, and are never on the optimistic side of the
// root by more than rounding (definition of kl^-1; common practice, no
// source).
func TestKLInverseProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	const tol = 1e-12
	for range 50000 {
		q := rng.Float64()
		switch rng.IntN(4) {
		case 0:
			q = math.Pow(10, -12*rng.Float64()) // rates near 0
		case 1:
			q = 1 - math.Pow(10, -12*rng.Float64()) // rates near 1
		}
		e := math.Pow(10, -9+10*rng.Float64())
		up, err := KLInverseUpper(q, e)
		if err != nil {
			t.Fatal(err)
		}
		lo, err := KLInverseLower(q, e)
		if err != nil {
			t.Fatal(err)
		}
		if !(lo <= q && q <= up && up <= 1 && lo >= 0) {
			t.Fatalf("q=%v e=%v: lower %v, upper %v do not bracket q within [0, 1]", q, e, lo, up)
		}
		if up < 1-tol && !(BinaryKL(q, up-tol) <= e && BinaryKL(q, up+tol) > e) {
			t.Fatalf("q=%v e=%v: upper %v is not within %v of the root (kl %v)", q, e, up, tol, BinaryKL(q, up))
		}
		if lo > tol && !(BinaryKL(q, lo+tol) <= e && BinaryKL(q, lo-tol) > e) {
			t.Fatalf("q=%v e=%v: lower %v is not within %v of the root (kl %v)", q, e, lo, tol, BinaryKL(q, lo))
		}
		up2, _ := KLInverseUpper(q, 2*e)
		lo2, _ := KLInverseLower(q, 2*e)
		if up2 < up || lo2 > lo {
			t.Fatalf("q=%v e=%v: not monotone in e", q, e)
		}
	}
}

// The implicit-function slopes of kl^-1 against central differences of
// the inverses themselves (the formulas are in FIELD-GUIDE.md).
func TestKLInverseSlopes(t *testing.T) {
	cases := []struct {
		name string
		q, e float64
	}{
		{"mid", 0.3, 0.05},
		{"small rate", 0.01, 0.002},
		{"large budget", 0.6, 0.8},
		{"tiny budget", 0.2, 1e-5},
	}
	const h = 1e-7
	for _, c := range cases {
		for _, dir := range []struct {
			name string
			inv  func(q, e float64) (float64, error)
		}{{"upper", KLInverseUpper}, {"lower", KLInverseLower}} {
			t.Run(c.name+"/"+dir.name, func(t *testing.T) {
				f := func(q, e float64) float64 { v, _ := dir.inv(q, e); return v }
				p := f(c.q, c.e)
				dq, de := klInverseSlopes(c.q, c.e, p)
				wq := (f(c.q+h, c.e) - f(c.q-h, c.e)) / (2 * h)
				we := (f(c.q, c.e+h*c.e) - f(c.q, c.e-h*c.e)) / (2 * h * c.e)
				if math.Abs(dq-wq) > 1e-5*math.Max(1, math.Abs(wq)) || math.Abs(de-we) > 1e-5*math.Max(1, math.Abs(we)) {
					t.Fatalf("slopes (%v, %v), differences (%v, %v)", dq, de, wq, we)
				}
			})
		}
	}
}

// FuzzKLInverse: any pair of floats gives either an ErrRange error or
// inverses in [0, 1] that bracket q; the iteration caps mean no input can
// make them loop.
func FuzzKLInverse(f *testing.F) {
	for _, s := range [][2]float64{{0, 0}, {1, 1}, {0.5, 1e-300}, {1e-300, 700}, {1 - 1e-16, 1e-3}, {0.3, math.Inf(1)}} {
		f.Add(s[0], s[1])
	}
	f.Fuzz(func(t *testing.T, q, e float64) {
		up, errUp := KLInverseUpper(q, e)
		lo, errLo := KLInverseLower(q, e)
		valid := q >= 0 && q <= 1 && e >= 0
		if !valid {
			if !errors.Is(errUp, ErrRange) || !errors.Is(errLo, ErrRange) {
				t.Fatalf("q=%v e=%v: errors %v, %v, want ErrRange", q, e, errUp, errLo)
			}
			return
		}
		if errUp != nil || errLo != nil {
			t.Fatalf("q=%v e=%v: %v, %v", q, e, errUp, errLo)
		}
		if !(lo >= 0 && lo <= q && q <= up && up <= 1) {
			t.Fatalf("q=%v e=%v: lower %v, upper %v", q, e, lo, up)
		}
	})
}
