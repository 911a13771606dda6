package voters

import (
	"math/rand/v2"
	"sync"
	"testing"
)

// TestPoolProgress checks PoolConfig.Progress, the hook the command
// line's progress line counts the pool's fits with: every fit is
// reported once with the same total, the last report reaches it, and the
// pool is the one built without the hook (the hook only watches), with
// no hook left in Pool.Config.
func TestPoolProgress(t *testing.T) {
	tab := randomTable(rand.New(rand.NewPCG(5, 6)), 600, 3, 0.1)
	rows := allRows(tab)
	cases := []struct {
		name   string
		linear int
	}{
		{"stumps only", 0},
		{"with linear voters", 4},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			linear := c.linear
			var mu sync.Mutex
			seen := map[int]bool{}
			totals := map[int]bool{}
			cfg := PoolConfig{LinearVoters: &linear, Progress: func(done, total int) {
				mu.Lock()
				defer mu.Unlock()
				if seen[done] {
					t.Errorf("fit %d reported twice", done)
				}
				seen[done], totals[total] = true, true
			}}
			with, err := BuildPool(tab, rows, cfg, rand.New(rand.NewPCG(1, 2)))
			if err != nil {
				t.Fatal(err)
			}
			cfg.Progress = nil
			without, err := BuildPool(tab, rows, cfg, rand.New(rand.NewPCG(1, 2)))
			if err != nil {
				t.Fatal(err)
			}
			if len(totals) != 1 {
				t.Fatalf("totals %v, want one", totals)
			}
			for total := range totals {
				// Each column, each linear voter and the full one (common
				// practice, no source: the hook's documented units).
				if want := len(tab.Columns) + linear + 1; total != want {
					t.Errorf("total %d, want %d", total, want)
				}
				for k := 1; k <= total; k++ {
					if !seen[k] {
						t.Errorf("fit %d of %d never reported", k, total)
					}
				}
			}
			a, _ := MarshalVoters(with.Voters)
			b, _ := MarshalVoters(without.Voters)
			if string(a) != string(b) {
				t.Error("the hook changed the pool")
			}
			if with.Config.Progress != nil {
				t.Error("Pool.Config keeps the hook")
			}
		})
	}
}
