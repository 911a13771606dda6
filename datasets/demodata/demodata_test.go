package demodata

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func TestWriteIsDeterministic(t *testing.T) {
	var a, b bytes.Buffer
	if err := Write(&a, Config{Rows: 500}, 7); err != nil {
		t.Fatal(err)
	}
	if err := Write(&b, Config{Rows: 500}, 7); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Fatal("same seed gave different bytes")
	}
	if got := strings.Count(a.String(), "\n"); got != 501 {
		t.Fatalf("got %d lines, want 501", got)
	}
}

// The noise rate is the label flip probability, so the true rule's observed
// error on many rows must match it within a binomial margin (4 standard
// deviations; common practice, no source).
func TestNoiseIsTheBayesError(t *testing.T) {
	cases := []struct {
		name  string
		noise float64
	}{
		{"default", 0},
		{"none", -1},
		{"fifteen percent", 0.15},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			cfg := Config{Noise: c.noise}
			rng := rand.New(rand.NewPCG(1, 2))
			const n = 100000
			wrong, leaks := 0, 0
			for range n {
				s := cfg.Next(rng)
				if s.Leaked != TrueRule(s) {
					wrong++
				}
				if s.Leak {
					leaks++
				}
			}
			p := cfg.BayesError()
			sd := math.Sqrt(p * (1 - p) / n)
			if got := float64(wrong) / n; math.Abs(got-p) > 4*sd+1e-12 {
				t.Errorf("flip rate %.4f, want %.4f", got, p)
			}
			// Both classes must be common enough to make the demo a real task.
			if share := float64(leaks) / n; share < 0.25 || share > 0.75 {
				t.Errorf("leak share %.3f is too unbalanced", share)
			}
		})
	}
}

func ExampleWrite() {
	var b bytes.Buffer
	if err := Write(&b, Config{Rows: 3}, 1); err != nil {
		fmt.Println(err)
		return
	}
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	fmt.Println(lines[0])
	fmt.Println(len(lines)-1, "rows")
	// Output:
	// age_years,pressure_bar,diameter_mm,material,soil,past_repairs,depth_m,leaked
	// 3 rows
}
