package trainer

import (
	"math"
	"testing"
)

// TestChordSearch checks the line search along a chord on functions whose
// minimiser is known: it doubles from 1 while the value falls, stops short
// of the end of the chord, halves until the value falls, and reports 0
// when no step lowers it (backtracking line search; common practice, no
// source).
func TestChordSearch(t *testing.T) {
	sq := func(m float64) func(float64) float64 {
		return func(a float64) float64 { return (a - m) * (a - m) }
	}
	tests := []struct {
		name   string
		phi    func(float64) float64
		amax   float64
		want   float64
		wantOK bool
	}{
		{"doubles while it falls", sq(3), math.Inf(1), 2, true},
		{"stays within the chord", sq(3), 1.5, 1, true},
		{"short chord, first try inside", sq(3), 0.8, 0.99 * 0.8, true},
		{"halves until it falls", sq(0.1), math.Inf(1), 0.125, true},
		{"nothing lowers it", func(a float64) float64 { return a }, math.Inf(1), 0, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			v0 := tc.phi(0)
			a, v := chordSearch(tc.phi, tc.amax, v0)
			if a != tc.want {
				t.Fatalf("step %v, want %v", a, tc.want)
			}
			if tc.wantOK != (v < v0) || v != tc.phi(a) && tc.wantOK {
				t.Fatalf("value %v at step %v, start %v", v, a, v0)
			}
		})
	}
}
