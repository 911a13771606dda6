package objective

import (
	"errors"
	"math"
	"testing"
)

func TestLogXiSmall(t *testing.T) {
	// By hand from the definition (Maurer 2004): xi(1) = 1 + 1, xi(2) = 1 +
	// 2 (1/2)(1/2) + 1, xi(3) = 2 + 2 * 3 (1/3)(2/3)^2.
	for _, c := range []struct {
		m    int
		want float64
	}{{1, 2}, {2, 2.5}, {3, 2 + 24.0/27}} {
		got, err := LogXi(c.m)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(math.Exp(got)-c.want) > 1e-14 {
			t.Errorf("xi(%d) = %.17g, want %.17g", c.m, math.Exp(got), c.want)
		}
	}
	if _, err := LogXi(0); !errors.Is(err, ErrRange) {
		t.Errorf("LogXi(0): got %v, want ErrRange", err)
	}
}

// sqrt(m) <= xi(m) <= 2 sqrt(m) for m >= 8 (Maurer 2004). The upper side
// also holds for m = 1..7, checked here: the Pinsker and lambda bounds use
// 2 sqrt(m) in place of xi(m) for every m.
func TestLogXiMaurerRange(t *testing.T) {
	for m := 1; m <= 3000; m++ {
		lx, err := LogXi(m)
		if err != nil {
			t.Fatal(err)
		}
		if lx > logTwoSqrtM(m)+1e-15 {
			t.Fatalf("xi(%d) = %v > 2 sqrt(m)", m, math.Exp(lx))
		}
		if m >= 8 && lx < 0.5*math.Log(float64(m)) {
			t.Fatalf("xi(%d) = %v < sqrt(m)", m, math.Exp(lx))
		}
	}
}

// At m = 10^7 the sum must neither overflow nor drift: xi(m) = sqrt(pi
// m/2) + 2/3 + O(1/sqrt(m)) (from memory; it matches the mpmath table at
// m = 10^5 to 4e-4, and the O term shrinks like 1/sqrt(m)).
func TestLogXiLarge(t *testing.T) {
	if testing.Short() {
		t.Skip("sums 5e6 terms")
	}
	const m = 10_000_000
	lx, err := LogXi(m)
	if err != nil {
		t.Fatal(err)
	}
	want := math.Sqrt(math.Pi*m/2) + 2.0/3
	if got := math.Exp(lx); math.Abs(got-want) > 1e-3 {
		t.Fatalf("xi(1e7) = %.10g, asymptotic %.10g", got, want)
	}
	// Above MaxExactXi the documented fallback, Maurer's 2 sqrt(m).
	big, _ := LogXi(MaxExactXi + 1)
	if big != logTwoSqrtM(MaxExactXi+1) {
		t.Fatalf("LogXi above MaxExactXi = %v, want ln(2 sqrt(m))", big)
	}
}
