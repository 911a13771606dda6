package datasets_test

import (
	"fmt"
	"strings"

	"surety/datasets"
)

func ExampleScan() {
	const text = "id,age,city\n1,34,Lyon\n2,NA,Nice\n3,51,Lyon\n4,28,Brest\n5,40,Nice\n"
	// Only the columns of a fixed kind are read: "id" is skipped.
	opts := datasets.ReadOptions{NoLabel: true, Kinds: map[string]datasets.Kind{"age": datasets.Numeric, "city": datasets.Categorical}}
	fp, err := datasets.Scan(strings.NewReader(text), "people.csv", opts, 2, func(chunk *datasets.Table, firstRow int) error {
		age, city := chunk.Columns[0], chunk.Columns[1]
		fmt.Printf("rows %d-%d: ages %v, city levels %q\n", firstRow, firstRow+chunk.Rows-1, age.Num, city.Levels)
		return nil
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(fp.Rows, "rows,", fp.Columns, "columns in the file")
	// Output:
	// rows 0-1: ages [34 NaN], city levels ["Lyon" "Nice"]
	// rows 2-3: ages [51 28], city levels ["Brest" "Lyon"]
	// rows 4-4: ages [40], city levels ["Nice"]
	// 5 rows, 3 columns in the file
}
