package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"surety/objective"
)

// The issue's own example line, with every figure.
var boundFull = []string{"bound", "--m", "5000", "--delta", "0.05", "--kl", "3.2", "--gibbs-risk", "0.12",
	"--tandem-risk", "0.05", "--disagreement", "0.11", "--tradeoff", "2", "--errors", "37", "--n", "1000", "--population", "20000"}

func TestBoundGolden(t *testing.T) {
	cases := []struct {
		name   string
		args   []string
		golden string
	}{
		{"every figure", boundFull, "bound-full.txt"},
		{"every figure, json", append(append([]string(nil), boundFull...), "--json"), "bound-full.json"},
		{"gibbs only", []string{"bound", "--m", "5000", "--kl", "3.2", "--gibbs-risk", "0.12"}, "bound-gibbs.txt"},
		{"fresh rows only, json", []string{"bound", "--errors", "0", "--n", "1000", "--json"}, "bound-fresh.json"},
		{"c-bound past its edge", []string{"bound", "--m", "200", "--kl", "5", "--gibbs-risk", "0.45", "--tandem-risk", "0.3"}, "bound-vacuous.txt"},
		{"help", []string{"bound", "--help"}, "bound-help.txt"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			stdout, stderr, code := runCLI(t, c.args...)
			if code != 0 || stderr != "" {
				t.Fatalf("exit %d, stderr %q", code, stderr)
			}
			checkGolden(t, c.golden, stdout)
		})
	}
}

func TestBoundBadUsage(t *testing.T) {
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"delta 1.5", []string{"--delta", "1.5"}, "delta must be in (0, 1), got 1.5"},
		{"m 0", []string{"--m", "0"}, "m must be at least 1, got 0"},
		{"negative KL", []string{"--kl", "-1"}, "KL must be in [0, inf), got -1"},
		{"risk above 1", []string{"--gibbs-risk", "1.2"}, "must be in [0, 1]"},
		{"disagreement above 1/2", []string{"--disagreement", "0.6"}, "must be in [0, 0.5]"},
		{"tradeoff 0", []string{"--tradeoff", "0"}, "must be in (0, inf)"},
		{"not a number", []string{"--m", "many"}, `"many" is not a whole number`},
		{"tandem above gibbs", []string{"--tandem-risk", "0.2"}, "exceeds --gibbs-risk"},
		{"errors above n", []string{"--errors", "20", "--n", "10"}, "--errors 20 exceeds --n 10"},
		{"population not above n", []string{"--errors", "2", "--n", "10", "--population", "10"}, "must exceed --n"},
		{"argument", []string{"extra"}, `unexpected argument "extra"`},
		{"unknown flag", []string{"--mm", "3"}, "unknown flag: --mm"},
	}
	base := []string{"bound", "--m", "100", "--kl", "1", "--gibbs-risk", "0.1"}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, stderr, code := runCLI(t, append(append([]string(nil), base...), c.args...)...)
			if code != 2 {
				t.Errorf("exit %d, want 2", code)
			}
			if !strings.Contains(stderr, c.want) || strings.Count(stderr, "\n") != 1 {
				t.Errorf("stderr %q, want one line with %q", stderr, c.want)
			}
		})
	}
	if _, stderr, code := runCLI(t, "bound"); code != 2 || !strings.Contains(stderr, "nothing to bound") {
		t.Errorf("no figures: exit %d, stderr %q", code, stderr)
	}
}

// The JSON values are the library's, to the last bit, and every key
// documented in /work/notes/bound-json.md is there.
func TestBoundJSONMatchesLibrary(t *testing.T) {
	stdout, _, code := runCLI(t, append(append([]string(nil), boundFull...), "--json")...)
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	var out struct {
		Inputs map[string]float64 `json:"inputs"`
		Bounds map[string]struct {
			Name  string             `json:"name"`
			Of    string             `json:"of"`
			Value float64            `json:"value"`
			Delta float64            `json:"delta"`
			M     int                `json:"m"`
			Terms map[string]float64 `json:"terms"`
		} `json:"bounds"`
		LeftOut map[string]string `json:"left_out"`
	}
	if err := json.Unmarshal([]byte(stdout), &out); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"delta", "m", "kl", "gibbs_risk", "tandem_risk", "disagreement", "tradeoff", "errors", "n", "population"} {
		if _, ok := out.Inputs[k]; !ok {
			t.Errorf("inputs.%s missing", k)
		}
	}
	want := map[string]func() (objective.Bound, error){
		"kl":                 func() (objective.Bound, error) { return objective.KLBound(0.12, 3.2, 5000, 0.05) },
		"pinsker":            func() (objective.Bound, error) { return objective.PinskerBound(0.12, 3.2, 5000, 0.05) },
		"catoni":             func() (objective.Bound, error) { return objective.CatoniBound(0.12, 3.2, 5000, 0.05, 2) },
		"lambda":             func() (objective.Bound, error) { return objective.LambdaBound(0.12, 3.2, 5000, 0.05) },
		"first_order":        func() (objective.Bound, error) { return objective.FirstOrderBound(0.12, 3.2, 5000, 0.05) },
		"tandem":             func() (objective.Bound, error) { return objective.TandemBound(0.05, 3.2, 5000, 0.05) },
		"c_bound":            func() (objective.Bound, error) { return objective.CBoundDisagreement(0.12, 0.11, 3.2, 5000, 0.05) },
		"chebyshev_cantelli": func() (objective.Bound, error) { return objective.ChebyshevCantelliBound(0.12, 0.05, 3.2, 5000, 0.05) },
		"test_set":           func() (objective.Bound, error) { return objective.TestSetBound(37, 1000, 0.05) },
		"population":         func() (objective.Bound, error) { return objective.PopulationBound(37, 1000, 20000, 0.05) },
	}
	if len(out.Bounds) != len(want) || len(out.LeftOut) != 0 {
		t.Fatalf("%d bounds and %d left out, want %d and 0", len(out.Bounds), len(out.LeftOut), len(want))
	}
	for key, f := range want {
		b, err := f()
		if err != nil {
			t.Fatal(err)
		}
		got, ok := out.Bounds[key]
		if !ok {
			t.Errorf("bounds.%s missing", key)
			continue
		}
		if got.Value != b.Value || got.Name != b.Name || got.Of != b.Of || got.Delta != 0.05 || got.M != b.M || len(got.Terms) != len(b.Terms) {
			t.Errorf("bounds.%s = %+v, library %+v", key, got, b)
		}
		if math.IsNaN(got.Value) {
			t.Errorf("bounds.%s is NaN", key)
		}
	}
}
