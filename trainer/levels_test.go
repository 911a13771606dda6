package trainer

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"surety/datasets"
	"surety/voters"
)

// levelRows writes 200 rows with a two-level column whose levels first
// appear in the certify rows c0 < c1 of seed's split ("b" at c0, "a" at
// c1; the column is missing before c1 elsewhere), the same count of each
// level in the prior rows, and a label that follows the level with 20%
// noise. It returns the CSV lines (header first) and c0, c1.
func levelRows(tb testing.TB, seed uint64) ([]string, int, int) {
	tb.Helper()
	const n = 200
	prior, cert, err := datasets.RandomSplit(n, 0.5, seed)
	if err != nil {
		tb.Fatal(err)
	}
	c0, c1 := cert[0], cert[1]
	inPrior := make([]bool, n)
	for _, r := range prior {
		inPrior[r] = true
	}
	rng := rand.New(rand.NewPCG(seed, 0x1e7e1))
	lines := []string{"x,color,label"}
	k := 0 // prior rows given a level so far
	for r := range n {
		color := ""
		switch {
		case r == c0:
			color = "b"
		case r == c1:
			color = "a"
		case r < c1:
		case inPrior[r]:
			color = []string{"a", "b"}[k%2]
			k++
		default:
			color = []string{"a", "b"}[rng.IntN(2)]
		}
		label := "no"
		if color == "a" {
			label = "yes"
		}
		if rng.Float64() < 0.2 {
			label = map[string]string{"no": "yes", "yes": "no"}[label]
		}
		lines = append(lines, fmt.Sprintf("%.3f,%s,%s", rng.Float64(), color, label))
	}
	if k%2 != 0 {
		tb.Fatalf("seed %d: %d prior rows with a level, want an even count", seed, k)
	}
	return lines, c0, c1
}

// Category codes must not depend on the order of rows: swapping the two
// certify rows in which the levels first appear leaves the prior rows and
// the certify rows as they were (as sets), so the pool, the weights and the
// certificate must not move. With codes in order of first appearance the
// tie between two levels of equal prior count went to the other level.
func TestLevelOrderIgnoresRowOrder(t *testing.T) {
	cases := []struct {
		name string
		seed uint64
	}{
		{"seed 1", 1},
		{"seed 2", 2},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			lines, c0, c1 := levelRows(t, tc.seed)
			swapped := slices.Clone(lines)
			swapped[1+c0], swapped[1+c1] = swapped[1+c1], swapped[1+c0]
			var models [][]byte
			for _, ls := range [][]string{lines, swapped} {
				tab, err := datasets.Read(strings.NewReader(strings.Join(ls, "\n")+"\n"), "levels", datasets.ReadOptions{})
				if err != nil {
					t.Fatal(err)
				}
				m, err := Train(context.Background(), tab, Config{Seed: tc.seed, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(2)}})
				if err != nil {
					t.Fatal(err)
				}
				m.Provenance.Data = datasets.Fingerprint{} // the bytes differ, the rows do not
				b, err := json.Marshal(m)
				if err != nil {
					t.Fatal(err)
				}
				models = append(models, b)
			}
			if !bytes.Equal(models[0], models[1]) {
				t.Errorf("swapping rows %d and %d (both certify rows) changed the model:\n%s\n%s", c0+1, c1+1, models[0], models[1])
			}
		})
	}
}
