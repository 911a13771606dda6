package datasets

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"
)

func TestInferKindsFrom(t *testing.T) {
	// The kinds come from rows (rows 0..3 when nil), not from the others.
	twelve := []int{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11}
	cases := []struct {
		name     string
		rows     []int
		text     string // x column then label, one row a line
		opts     ReadOptions
		wantKind Kind
		wantNum  []float64 // when numeric; NaN where missing
		change   *KindChange
		wantErr  error
	}{
		{"words only in the other rows", nil, "1,a\n2,b\n1.50,a\nNA,b\n3,a\nunknown,b\nn/a,a\nunknown,b\n", ReadOptions{},
			Numeric, []float64{1, 2, 1.5, math.NaN(), 3, math.NaN(), math.NaN(), math.NaN()},
			&KindChange{Column: "x", Missing: 3, Texts: []string{"n/a", "unknown"}}, nil},
		{"a stray word deferred", nil, "1,a\n2,b\n3,a\n4,b\n5,a\n6,b\n7,a\n8,b\n9,a\n10,b\n11,a\nx,b\n", ReadOptions{DeferKinds: true},
			Numeric, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, math.NaN()},
			&KindChange{Column: "x", Missing: 1, Texts: []string{"x"}}, nil},
		{"words in the rows stay categorical", nil, "red,a\n1,b\nblue,a\n2,b\n3,a\n4,b\n", ReadOptions{}, Categorical, nil, nil, nil},
		{"forced categorical stays", nil, "1,a\n2,b\n3,a\n4,b\nfoo,a\nbar,b\n", ReadOptions{Categorical: []string{"x"}}, Categorical, nil, nil, nil},
		{"numeric stays numeric", nil, "1,a\n2,b\n3,a\n4,b\n5,a\n", ReadOptions{}, Numeric, []float64{1, 2, 3, 4, 5}, nil, nil},
		{"nothing present in the rows", nil, "NA,a\nNA,b\nNA,a\nNA,b\nred,a\n1,b\n", ReadOptions{}, Categorical, nil, nil, nil},
		{"stray word in the rows", twelve, "1,a\n2,b\nred,a\n4,b\n5,a\n6,b\n7,a\n8,b\n9,a\n10,b\n11,a\n12,b\n", ReadOptions{DeferKinds: true}, 0, nil, nil, ErrStrayWord},
		{"non-finite number in the rows", twelve, "1,a\ninf,b\n3,a\n4,b\n5,a\n6,b\n7,a\n8,b\n9,a\n10,b\n11,a\n12,b\n", ReadOptions{DeferKinds: true}, 0, nil, nil, ErrNotFinite},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			tab, err := Read(strings.NewReader("x,label\n"+tc.text), "kinds.csv", tc.opts)
			if err != nil {
				t.Fatal(err)
			}
			before := tab.Columns[0]
			rows := tc.rows
			if rows == nil {
				rows = []int{0, 1, 2, 3}
			}
			got, rep, err := tab.InferKindsFrom(rows)
			if tc.wantErr != nil {
				if !errors.Is(err, tc.wantErr) {
					t.Fatalf("error %v, want %v", err, tc.wantErr)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if tab.Columns[0].Kind != before.Kind {
				t.Error("the input table changed")
			}
			c := got.Columns[0]
			if c.Kind != tc.wantKind {
				t.Fatalf("kind %v, want %v", c.Kind, tc.wantKind)
			}
			if tc.wantNum != nil {
				eq := func(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
				miss := 0
				for _, v := range tc.wantNum {
					if math.IsNaN(v) {
						miss++
					}
				}
				if !slices.EqualFunc(c.Num, tc.wantNum, eq) || c.Missing != miss {
					t.Errorf("values %v (%d missing), want %v (%d)", c.Num, c.Missing, tc.wantNum, miss)
				}
			}
			switch {
			case tc.change == nil && len(rep.Changes) != 0:
				t.Errorf("changes %+v, want none", rep.Changes)
			case tc.change != nil && (len(rep.Changes) != 1 || rep.Changes[0].Column != tc.change.Column ||
				rep.Changes[0].Missing != tc.change.Missing || !slices.Equal(rep.Changes[0].Texts, tc.change.Texts)):
				t.Errorf("changes %+v, want %+v", rep.Changes, *tc.change)
			}
		})
	}
}

// Without DeferKinds a stray word still fails the read, as before.
func TestStrayWordFailsWithoutDeferKinds(t *testing.T) {
	text := "x,label\n1,a\n2,b\n3,a\n4,b\n5,a\n6,b\n7,a\n8,b\n9,a\n10,b\n11,a\nx,b\n"
	if _, err := Read(strings.NewReader(text), "stray.csv", ReadOptions{}); !errors.Is(err, ErrStrayWord) {
		t.Errorf("error %v, want ErrStrayWord", err)
	}
}
