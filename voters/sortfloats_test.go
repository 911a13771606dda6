package voters

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestSortFloats checks the radix sort against the standard library's
// comparison sort (slices.Sort), value for value, on awkward inputs.
func TestSortFloats(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	gen := func(n int, f func() float64) []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = f()
		}
		return v
	}
	cases := []struct {
		name string
		vals []float64
	}{
		{"empty", nil},
		{"short, below the radix cut-over", gen(100, rng.NormFloat64)},
		{"normal", gen(5000, rng.NormFloat64)},
		{"all equal", gen(3000, func() float64 { return 2.5 })},
		{"few levels", gen(4000, func() float64 { return float64(rng.IntN(5) - 2) })},
		{"signed zeros and infinities", gen(2000, func() float64 {
			return []float64{0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1), -1e-300, 1e-300, math.MaxFloat64, -math.MaxFloat64, math.SmallestNonzeroFloat64}[rng.IntN(9)]
		})},
		{"wide range", gen(6000, func() float64 { return math.Ldexp(rng.Float64()-0.5, rng.IntN(2000)-1000) })},
	}
	var keys []uint64
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			want := slices.Clone(tc.vals)
			slices.Sort(want)
			got := slices.Clone(tc.vals)
			keys = sortFloats(got, keys)
			if !slices.IsSorted(got) {
				t.Fatalf("not sorted")
			}
			for i := range want {
				if got[i] != want[i] {
					t.Fatalf("at %d: got %v, want %v", i, got[i], want[i])
				}
			}
		})
	}
}
