package trainer

import "testing"

func TestPercent(t *testing.T) {
	cases := []struct {
		name string
		x    float64
		up   bool
		want string
	}{
		{"confidence 95", 1 - 0.05, false, "95%"},
		{"confidence 99.9", 1 - 0.001, false, "99.9%"},
		{"confidence rounds down", 0.9876, false, "98.7%"},
		{"bound rounds up", 0.08312, true, "8.4%"},
		{"exact bound stays", 0.084, true, "8.4%"},
		{"small bound keeps digits", 0.003021, true, "0.303%"},
		{"one", 1, true, "100%"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := Percent(c.x, c.up); got != c.want {
				t.Errorf("Percent(%v, %v) = %s, want %s", c.x, c.up, got, c.want)
			}
		})
	}
}
