package datasets_test

import (
	"fmt"
	"os"
	"strings"

	"surety/datasets"
)

func ExampleRead() {
	const text = "age,city,label\n34,Lyon,yes\nNA,Nice,no\n51,Lyon,yes\n"
	t, err := datasets.Read(strings.NewReader(text), "people.csv", datasets.ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(t.Rows, "rows, classes", t.Classes, "labels", t.Label)
	for _, s := range t.Summary() {
		fmt.Printf("%s: %s, %d missing\n", s.Name, s.Kind, s.Missing)
	}
	// Output:
	// 3 rows, classes [no yes] labels [1 0 1]
	// age: numeric, 1 missing
	// city: categorical, 0 missing
}

func ExampleParseError() {
	text := "income,label\n" + strings.Repeat("52000,yes\n", 20) + "12k,no\n"
	_, err := datasets.Read(strings.NewReader(text), "loans.csv", datasets.ReadOptions{})
	fmt.Println(err)
	// Output:
	// datasets: loans.csv:22: column 1 "income": "12k": word in a numeric column: 95.2% of the column's 21 non-missing cells are numbers, this one is not; add "12k" to the missing tokens, or force the column categorical
}

func ExampleStratifiedSplit() {
	labels := []int{0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1}
	prior, rest, err := datasets.StratifiedSplit(labels, 2, 0.5, 1)
	fmt.Println(prior, rest, err)
	// Output:
	// [0 2 3 5 6 7] [1 4 8 9 10 11] <nil>
}

func ExampleWriteCSV() {
	t, err := datasets.Read(strings.NewReader("x,c,label\n1.5,\"a,b\",p\n,z,q\n"), "in.csv", datasets.ReadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := datasets.WriteCSV(os.Stdout, t); err != nil {
		fmt.Println(err)
	}
	// Output:
	// x,c,label
	// 1.5,"a,b",p
	// ,z,q
}
