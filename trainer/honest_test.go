package trainer

import (
	"math/rand/v2"
	"testing"
)

// TestHonestRates checks the bit-set counts against the definitions
// counted row by row (Thiemann et al. 2017, ALT, section 3: each voter's
// error rate on its out-of-bag rows, each pair's joint error rate on the
// rows out of bag for both, m the smallest count), with the pairs shared
// over goroutines.
func TestHonestRates(t *testing.T) {
	tests := []struct {
		name      string
		voters    int
		rows, k   int
		maskShare float64 // share of voters with an out-of-bag mask
	}{
		{"no masks", 40, 300, 2, 0},
		{"some masked", 90, 300, 3, 0.3},
		{"all masked", 70, 513, 2, 1},
	}
	defer func(s int) { pairShare = s }(pairShare)
	pairShare = 64 // several goroutines even on these small pools
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(3, uint64(tc.voters)))
			y := make([]int, tc.rows)
			for r := range y {
				y[r] = rng.IntN(tc.k)
			}
			votes := make([][]uint8, tc.voters)
			masks := make([][]uint64, tc.voters)
			in := make([][]bool, tc.voters)
			for i := range votes {
				votes[i] = make([]uint8, tc.rows)
				in[i] = make([]bool, tc.rows)
				masked := rng.Float64() < tc.maskShare
				if masked {
					masks[i] = make([]uint64, (tc.rows+63)/64)
				}
				for r := range votes[i] {
					votes[i][r] = uint8(y[r])
					if rng.Float64() < 0.3 {
						votes[i][r] = uint8(rng.IntN(tc.k))
					}
					in[i][r] = !masked || rng.Float64() < 0.37
					if masked && in[i][r] {
						masks[i][r/64] |= 1 << (r % 64)
					}
				}
			}
			got := honestRates(votes, y, masks)
			wantM := tc.rows
			for i := range votes {
				var errs, n int
				for r := range y {
					if in[i][r] {
						n++
						if int(votes[i][r]) != y[r] {
							errs++
						}
					}
				}
				wantM = min(wantM, n)
				if w := float64(errs) / float64(n); got.risks[i] != w {
					t.Fatalf("risk %d: %v, want %v", i, got.risks[i], w)
				}
			}
			for i := range votes {
				for j := range votes {
					var both, n int
					for r := range y {
						if in[i][r] && in[j][r] {
							n++
							if int(votes[i][r]) != y[r] && int(votes[j][r]) != y[r] {
								both++
							}
						}
					}
					if masks[i] != nil || masks[j] != nil {
						wantM = min(wantM, max(n, 1))
					}
					w := got.risks[i] * got.risks[j]
					if n > 0 {
						w = float64(both) / float64(n)
					}
					if g := got.joint[i*len(votes)+j]; g != w {
						t.Fatalf("joint %d,%d: %v, want %v", i, j, g, w)
					}
				}
			}
			if got.m != max(wantM, 1) {
				t.Fatalf("m %d, want %d", got.m, max(wantM, 1))
			}
		})
	}
}
