package datasets

import (
	"slices"
	"testing"

	"surety/datasets/ucidata"
)

// TestUCIHouseVotes reads golearn's copy of the Congressional Voting
// Records set. Reference counts: UCI Machine Learning Repository,
// "Congressional Voting Records" description (house-votes-84.names):
// 435 instances (267 democrats, 168 republicans), 16 boolean attributes.
// golearn's file codes the votes as 1 and -1 and holds no '?' cells (the
// UCI original uses y, n and '?' for "neither yea nor nay"; the file
// itself does not say how golearn folded the '?' cells), so the reader
// sees 16 numeric columns without missing cells. Its header orders the
// columns v16, v1..v15, party.
func TestUCIHouseVotes(t *testing.T) {
	tab, err := ReadFile(ucidata.Path(t, "house-votes-84.csv"), ReadOptions{Label: "party"})
	if err != nil {
		t.Fatal(err)
	}
	checkConsistent(t, tab)
	if tab.Rows != 435 || len(tab.Columns) != 16 {
		t.Fatalf("rows %d, columns %d; want 435, 16", tab.Rows, len(tab.Columns))
	}
	if !slices.Equal(tab.Classes, []string{"democrat", "republican"}) || !slices.Equal(tab.ClassCounts(), []int{267, 168}) {
		t.Fatalf("classes %q counts %v; want democrat 267, republican 168", tab.Classes, tab.ClassCounts())
	}
	for _, c := range tab.Columns {
		if c.Kind != Numeric || c.Missing != 0 {
			t.Fatalf("column %q: %v with %d missing", c.Name, c.Kind, c.Missing)
		}
		for _, v := range c.Num {
			if v != 1 && v != -1 {
				t.Fatalf("column %q holds %v, want only 1 and -1", c.Name, v)
			}
		}
	}
	if tab.Columns[0].Name != "v16" || tab.Fingerprint.Columns != 17 || tab.Fingerprint.Rows != 435 {
		t.Errorf("first column %q, fingerprint %+v", tab.Columns[0].Name, tab.Fingerprint)
	}
}

// TestUCIIris reads golearn's iris_headers.csv. Reference counts: UCI
// Machine Learning Repository, "Iris" description (iris.names): 150
// instances, 4 numeric attributes, 3 classes of 50 each. The file's header
// has leading spaces (" Sepal width", " Species"); the reader trims names,
// so the label is "Species".
func TestUCIIris(t *testing.T) {
	tab, err := ReadFile(ucidata.Path(t, "iris_headers.csv"), ReadOptions{Label: "Species"})
	if err != nil {
		t.Fatal(err)
	}
	checkConsistent(t, tab)
	if tab.Rows != 150 || len(tab.Columns) != 4 {
		t.Fatalf("rows %d, columns %d; want 150, 4", tab.Rows, len(tab.Columns))
	}
	want := []string{"Sepal length", "Sepal width", "Petal length", "Petal width"}
	for i, c := range tab.Columns {
		if c.Kind != Numeric || c.Name != want[i] || c.Missing != 0 {
			t.Errorf("column %d: %q %v, want numeric %q", i, c.Name, c.Kind, want[i])
		}
	}
	if !slices.Equal(tab.Classes, []string{"Iris-setosa", "Iris-versicolor", "Iris-virginica"}) || !slices.Equal(tab.ClassCounts(), []int{50, 50, 50}) {
		t.Fatalf("classes %q counts %v", tab.Classes, tab.ClassCounts())
	}
	// First row of the UCI file: 5.1,3.5,1.4,0.2,Iris-setosa.
	for i, v := range []float64{5.1, 3.5, 1.4, 0.2} {
		if tab.Columns[i].Num[0] != v {
			t.Errorf("row 1 column %d: %v, want %v", i, tab.Columns[i].Num[0], v)
		}
	}
}
