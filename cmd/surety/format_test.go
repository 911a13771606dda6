package main

import (
	"math"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestUpperBoundFormats checks the one rule for printed bounds (README,
// "Commands"): rounded up, never below the value. The expected strings
// are worked by hand from the decimal expansions (from memory: 0.1 is
// stored as 0.1000000000000000055511151231257827, 2/3 as 0.66666...).
func TestUpperBoundFormats(t *testing.T) {
	for _, c := range []struct {
		name string
		got  string
		want string
	}{
		{"a value between decimals goes up", upDecimals(0.2478951, 6), "0.247896"},
		{"an exact decimal stays", upDecimals(0.1, 6), "0.100000"},
		{"two thirds at four decimals", upDecimals(2.0/3, 4), "0.6667"},
		{"one third at four decimals goes up, not to nearest", upDecimals(1.0/3, 4), "0.3334"},
		{"above 1 keeps its decimals", upDecimals(1.9861661, 6), "1.986167"},
		{"four figures of a cost", upFigures(12.34501, 4), "12.35"},
		{"a small cost", upFigures(0.000123401, 4), "0.0001235"},
		{"an exact cost stays", upFigures(2.5, 4), "2.5"},
		{"up to the next power of ten", upFigures(9.99951, 4), "10"},
		{"zero", upFigures(0, 4), "0"},
		{"no bound", upFigures(math.Inf(1), 4), "+Inf"},
	} {
		t.Run(c.name, func(t *testing.T) {
			if c.got != c.want {
				t.Errorf("got %s, want %s", c.got, c.want)
			}
		})
	}
}

// TestSingularCounts runs a sweep of one setting with a test file, then
// check on its selected model: no count of one takes a plural noun ("1
// settings", "all 1 settings"; issue 13, item 6). The sweep's closing
// sentence is the trainer's (SweepResult.Statement) and is left out here.
func TestSingularCounts(t *testing.T) {
	dir := t.TempDir()
	train := filepath.Join("..", "..", "testdata", "bench", "iris_train.csv")
	test := filepath.Join("..", "..", "testdata", "bench", "iris_test.csv")
	plural := regexp.MustCompile(`(^|[^0-9.,])1 (settings|rows|voters|plots|errors|model files|lines|families)\b|all 1 `)
	steps := []struct {
		name string
		args []string
	}{
		{"sweep", []string{"sweep", "--data", train, "--label", "label", "--objective", "tandem", "--prior", "learned",
			"--test", test, "--out-dir", dir}},
		{"check", []string{"check", "--model", filepath.Join(dir, "selected.json"), "--data", test}},
	}
	for _, s := range steps {
		t.Run(s.name, func(t *testing.T) {
			out, errs, code := runSurety(t, "", s.args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			for _, line := range strings.Split(out, "\n") {
				if strings.HasPrefix(line, "Of 1 settings") {
					continue
				}
				if plural.MatchString(line) {
					t.Errorf("a plural noun for one: %q", line)
				}
			}
		})
	}
}
