package trainer

import "testing"

func TestModelFileName(t *testing.T) {
	cases := []struct {
		name string
		s    Setting
		want string
	}{
		{"linear", Setting{Objective: Linear, Tradeoff: 0.3, Prior: LearnedPrior}, "linear-C0.3-learned.json"},
		{"tiny trade-off", Setting{Objective: Linear, Tradeoff: 1e-5, Prior: UniformPrior}, "linear-C1e-05-uniform.json"},
		{"tandem ignores the trade-off", Setting{Objective: Tandem, Tradeoff: 1, Prior: UniformPrior}, "tandem-uniform.json"},
		{"unsafe characters", Setting{Objective: "a/b c", Prior: "../x"}, "a_b_c-.._x.json"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if got := ModelFileName(c.s); got != c.want {
				t.Errorf("%q, want %q", got, c.want)
			}
		})
	}
}
