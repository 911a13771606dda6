package sqlexport_test

import (
	"log"
	"os"

	"surety/datasets"
	"surety/voters"
	"surety/voters/sqlexport"
)

// A vote of one stump on income and one category stump on region, read
// from a table named loans; the id column comes back with each row.
func ExampleWrite() {
	v := &voters.Vote{
		Classes: []string{"deny", "approve"},
		Weights: []float64{0.75, 0.25},
		Voters: []voters.Voter{
			&voters.Stump{Column: "income", Threshold: 52300, Below: 0, Above: 1},
			&voters.CategoryStump{Column: "region", Level: "north", Equal: 1, Other: 0, MissingEqual: true},
		},
	}
	schema := []voters.ColumnSpec{{Name: "income", Kind: datasets.Numeric}, {Name: "region", Kind: datasets.Categorical}}
	err := sqlexport.Write(os.Stdout, v, schema, sqlexport.Options{Table: "loans", Keep: []string{"id"},
		Provenance: sqlexport.Provenance{Delta: 0.05}})
	if err != nil {
		log.Fatal(err)
	}
	// Output:
	// -- A weighted majority vote trained by Surety, as one SQL:2003 SELECT.
	// -- Delta: 0.05
	// -- Reads table "loans", columns:
	// --   "income" numeric
	// --   "region" categorical
	// -- Missing values are NULL (or NaN in a numeric column). Categories compare as exact text.
	// -- Returns "class" (the predicted class), "margin" (its total weight minus the runner-up's; 0 is a tie, which goes to the first class listed).
	// -- Classes, in order: 'deny', 'approve'
	// SELECT
	//   k0 AS "id",
	//   CASE WHEN d >= 0 THEN 'deny' ELSE 'approve' END AS "class",
	//   CASE WHEN d >= 0 THEN d ELSE -d END AS "margin"
	// FROM (
	//   SELECT
	//     k0,
	//     t0,
	//     t1,
	//     t0 - t1 AS d
	//   FROM (
	//     SELECT
	//       x0,
	//       x1,
	//       k0,
	//       0 + CASE WHEN x0 <= CAST(5.23e+04 AS DOUBLE PRECISION) THEN CAST(7.5e-01 AS DOUBLE PRECISION) ELSE 0 END + CASE WHEN x1 <> 'north' THEN CAST(2.5e-01 AS DOUBLE PRECISION) ELSE 0 END AS t0,
	//       0 + CASE WHEN x0 <= CAST(5.23e+04 AS DOUBLE PRECISION) THEN 0 ELSE CAST(7.5e-01 AS DOUBLE PRECISION) END + CASE WHEN x1 <> 'north' THEN 0 ELSE CAST(2.5e-01 AS DOUBLE PRECISION) END AS t1
	//     FROM (
	//       SELECT
	//         CAST("income" AS DOUBLE PRECISION) AS x0,
	//         "region" AS x1,
	//         "id" AS k0
	//       FROM "loans"
	//     ) AS q1
	//   ) AS q2
	// ) AS q3
	// ;
}
