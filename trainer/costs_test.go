package trainer

import (
	"strings"
	"testing"
)

func TestParseCosts(t *testing.T) {
	cases := []struct {
		name, text string
		want       string // error text, "" for a good file
	}{
		{"good", "# comment\n\ntrue\\decided, a, b\na, 0, 3\nb, 1.5, 0\n", ""},
		{"rows in any order", "x,a,b\nb,1,0\na,0,2\n", ""},
		{"byte order mark", "\ufeffx,a,b\na,0,1\nb,1,0\n", ""},
		{"empty", "", "costs.csv: no header line"},
		{"one class", "x,a\na,0\n", "costs.csv:1: the header names 1 classes"},
		{"duplicate class", "x,a,a\n", `costs.csv:1: column 3: class "a" named twice`},
		{"empty class", "x,a,\n", "costs.csv:1: column 3: empty class name"},
		{"short row", "x,a,b\na,0\n", "costs.csv:2: 2 cells, want 3"},
		{"unknown class", "x,a,b\nc,0,1\n", `costs.csv:2: column 1: "c" is not a class of the header`},
		{"row twice", "x,a,b\na,0,1\na,0,1\n", `costs.csv:3: column 1: class "a" already has its line (line 2)`},
		{"not a number", "x,a,b\na,0,lots\n", `costs.csv:2: column 3 ("b"): "lots" is not a number`},
		{"negative", "x,a,b\na,0,-1\n", `costs.csv:2: column 3 ("b"): cost -1 is not a finite`},
		{"infinite", "x,a,b\na,0,Inf\n", `costs.csv:2: column 3 ("b"): cost Inf is not a finite`},
		{"NaN", "x,a,b\na,NaN,1\n", `costs.csv:2: column 2 ("a"): cost NaN is not a finite`},
		{"missing row", "x,a,b\na,0,1\n", `costs.csv: class "b" has no line of costs`},
		{"all zero", "x,a,b\na,0,0\nb,0,0\n", "every cost is 0"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m, err := ParseCosts(strings.NewReader(c.text), "costs.csv")
			if c.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				if m.Max() <= 0 || len(m.Costs) != len(m.Classes) {
					t.Errorf("matrix %+v", m)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v, want %q", err, c.want)
			}
		})
	}
}

func TestCostsForClasses(t *testing.T) {
	c, err := ParseCosts(strings.NewReader("x,b,a\nb,0,2\na,5,0\n"), "c")
	if err != nil {
		t.Fatal(err)
	}
	got, err := c.forClasses([]string{"a", "b"})
	if err != nil {
		t.Fatal(err)
	}
	// Reordered: the cost of deciding b when the truth is a is 5.
	if got.Costs[0][1] != 5 || got.Costs[1][0] != 2 || got.rowCost(0, -1) != 5 {
		t.Errorf("reordered %+v", got)
	}
	if _, err := c.forClasses([]string{"a", "b", "c"}); err == nil || !strings.Contains(err.Error(), `class "c" is not in the cost matrix`) {
		t.Errorf("missing class: %v", err)
	}
	if _, err := c.forClasses([]string{"a"}); err == nil || !strings.Contains(err.Error(), `class "b" is not a class of the label`) {
		t.Errorf("extra class: %v", err)
	}
}

// FuzzParseCosts: any input gives a matrix or an error, never a panic, and
// a matrix is square with non-negative costs.
func FuzzParseCosts(f *testing.F) {
	for _, s := range []string{"x,a,b\na,0,1\nb,1,0\n", "", "#\n", "x,a,a\n", "x,a,b\na,0\n", "x,a,b\na,1e400,0\n"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		m, err := ParseCosts(strings.NewReader(s), "fuzz")
		if err != nil {
			return
		}
		if len(m.Costs) != len(m.Classes) || !(m.Max() > 0) {
			t.Fatalf("matrix %+v", m)
		}
		for _, row := range m.Costs {
			if len(row) != len(m.Classes) {
				t.Fatalf("row %v", row)
			}
			for _, x := range row {
				if !(x >= 0) {
					t.Fatalf("cost %v", x)
				}
			}
		}
	})
}
