package trainer

import (
	"context"
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"

	"surety/datasets"
	"surety/voters"
)

// kindRows writes 400 rows of "x,y,label": the label is "hi" when y > 0.6
// (10% of labels flipped), x is noise, and y holds the word "unknown" in
// one of every `every` certify rows of seed's split (the certify rows come
// from datasets.RandomSplit, as in Prepare). It returns the text and the
// number of words.
func kindRows(tb testing.TB, seed uint64, every int) (string, int) {
	tb.Helper()
	const n = 400
	_, cert, err := datasets.RandomSplit(n, DefaultPriorFraction, seed)
	if err != nil {
		tb.Fatal(err)
	}
	word := map[int]bool{}
	for i, r := range cert {
		if i%every == 0 {
			word[r] = true
		}
	}
	rng := rand.New(rand.NewPCG(seed, 0xc01d))
	var b strings.Builder
	b.WriteString("x,y,label\n")
	for r := range n {
		y := rng.Float64()
		label := "lo"
		if y > 0.6 {
			label = "hi"
		}
		if rng.Float64() < 0.1 {
			label = map[string]string{"lo": "hi", "hi": "lo"}[label]
		}
		cell := fmt.Sprintf("%.3f", y)
		if word[r] {
			cell = "unknown"
		}
		fmt.Fprintf(&b, "%.3f,%s,%s\n", rng.Float64(), cell, label)
	}
	return b.String(), len(word)
}

// Column kinds come from the prior rows (FIELD-GUIDE.md, rule 7): words in
// certify rows only must not turn a numeric column categorical, which
// would take away its threshold stumps. Half of the certify rows (15% of
// the column at the default fraction 0.7) reads as categorical with the
// plain reader; a twentieth (1.5%) is a stray word the plain reader
// refuses, so it is read with DeferKinds as the command line does.
func TestKindsFromPriorRows(t *testing.T) {
	cases := []struct {
		name  string
		every int
		opts  datasets.ReadOptions
	}{
		{"words in half of the certify rows", 2, datasets.ReadOptions{}},
		{"a stray word in a twentieth, deferred", 20, datasets.ReadOptions{DeferKinds: true}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			text, words := kindRows(t, 3, tc.every)
			tab, err := datasets.Read(strings.NewReader(text), "kinds", tc.opts)
			if err != nil {
				t.Fatal(err)
			}
			var warnings []string
			cfg := Config{Seed: 3, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2)},
				Warn: func(msg string) { warnings = append(warnings, msg) }}
			m, err := Train(context.Background(), tab, cfg)
			if err != nil {
				t.Fatal(err)
			}
			stumps := 0
			for _, v := range m.Vote.Voters {
				if s, ok := v.(*voters.Stump); ok && s.Column == "y" {
					stumps++
				}
			}
			var kind datasets.Kind
			for _, c := range m.Columns {
				if c.Name == "y" {
					kind = c.Kind
				}
			}
			if kind != datasets.Numeric || stumps == 0 {
				t.Errorf("column y is %q with %d threshold stumps, want numeric with some", kind, stumps)
			}
			ch := m.Provenance.KindChanges
			if len(ch) != 1 || ch[0].Column != "y" || ch[0].Missing != words || len(warnings) != 1 {
				t.Errorf("kind changes %+v, warnings %q; want column y with %d cells made missing, one warning", ch, warnings, words)
			}
		})
	}
}
