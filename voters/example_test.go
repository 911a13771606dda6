package voters_test

import (
	"fmt"
	"math/rand/v2"

	"surety/datasets"
	"surety/voters"
)

// loans is a small table: income (numeric), region (categorical), and
// whether the loan was repaid.
func loans() *datasets.Table {
	return &datasets.Table{
		Source: "loans",
		Columns: []datasets.Column{
			{Name: "income", Kind: datasets.Numeric, Num: []float64{20, 35, 41, 52, 60, 75, 80, 90}},
			{Name: "region", Kind: datasets.Categorical, Levels: []string{"north", "south"},
				Codes: []uint32{0, 1, 0, 1, 0, 1, 0, datasets.MissingCode}},
		},
		Classes: []string{"default", "repaid"},
		Label:   []int{0, 0, 0, 1, 1, 1, 1, 1},
		Rows:    8,
	}
}

func ExampleBuildPool() {
	t := loans()
	// Region is "north" on every prior row: it splits nothing and gets no
	// stump.
	prior, certify := []int{0, 2, 4, 6}, []int{1, 3, 5, 7}
	none := 0
	pool, err := voters.BuildPool(t, prior, voters.PoolConfig{Thresholds: 2, LinearVoters: &none, NoFullLinear: true}, rand.New(rand.NewPCG(1, 2)))
	if err != nil {
		fmt.Println(err)
		return
	}
	stats, err := pool.Count(t, certify)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, v := range pool.Voters {
		fmt.Printf("%s: %d of %d wrong\n", v.Describe(pool.Classes), stats.Errors[i], stats.M)
	}
	// Output:
	// income <= 41 -> default, else repaid (missing: default): 0 of 4 wrong
	// income <= 41 -> repaid, else default (missing: repaid): 4 of 4 wrong
	// income <= 60 -> default, else repaid (missing: default): 1 of 4 wrong
	// income <= 60 -> repaid, else default (missing: repaid): 3 of 4 wrong
}

func ExampleBuildPool_maxVoters() {
	t := loans()
	prior := []int{0, 2, 4, 6}
	none := 0
	// Four stumps split the prior rows; a cap of 2 keeps the two with the
	// fewest prior-row errors. Region splits nothing and no voter reads it,
	// so the schema leaves it out.
	pool, err := voters.BuildPool(t, prior, voters.PoolConfig{Thresholds: 2, LinearVoters: &none, NoFullLinear: true, MaxVoters: 2}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, v := range pool.Voters {
		fmt.Println(v.Describe(pool.Classes))
	}
	for _, c := range pool.Schema {
		fmt.Printf("reads %s (%s), missing cells in the prior rows: %v\n", c.Name, c.Kind, c.Missing)
	}
	// Output:
	// income <= 41 -> default, else repaid (missing: default)
	// income <= 60 -> default, else repaid (missing: default)
	// reads income (numeric), missing cells in the prior rows: false
}

func ExampleVote_Predict() {
	t := loans()
	vote := &voters.Vote{
		Voters: []voters.Voter{
			&voters.Stump{Column: "income", Threshold: 45, Below: 0, Above: 1},
			&voters.CategoryStump{Column: "region", Level: "south", Equal: 1, Other: 0},
		},
		Weights: []float64{0.7, 0.3},
		Classes: t.Classes,
	}
	classes, margins, err := vote.Predict(t, []int{0, 1, 4})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i := range classes {
		fmt.Printf("%s by %.1f\n", t.Classes[classes[i]], margins[i])
	}
	errs, _ := vote.Errors(t, []int{0, 1, 2, 3, 4, 5, 6, 7})
	fmt.Println("errors:", errs)
	// Output:
	// default by 1.0
	// default by 0.4
	// repaid by 0.4
	// errors: 0
}

func ExamplePool_Remember() {
	t := loans()
	prior, certify := []int{0, 2, 4, 6}, []int{1, 3, 5, 7}
	one := 1
	pool, err := voters.BuildPool(t, prior, voters.PoolConfig{Thresholds: 2, LinearVoters: &one, NoFullLinear: true}, rand.New(rand.NewPCG(1, 2)))
	if err != nil {
		fmt.Println(err)
		return
	}
	// The linear voter's classes on the certify rows, worked out once for
	// the counts and for every vote predicted there.
	known, err := pool.Remember(t, certify)
	if err != nil {
		fmt.Println(err)
		return
	}
	stats, err := pool.CountKnown(known)
	if err != nil {
		fmt.Println(err)
		return
	}
	uniform := make([]float64, len(pool.Voters))
	for i := range uniform {
		uniform[i] = 1
	}
	vote := &voters.Vote{Voters: pool.Voters, Weights: uniform, Classes: pool.Classes}
	classes, _, err := vote.PredictKnown(known)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("voters:", len(pool.Voters), "certify rows:", stats.M)
	fmt.Println("classes:", classes)
	// Output:
	// voters: 5 certify rows: 4
	// classes: [0 1 1 1]
}

func ExampleMarshalVoters() {
	data, err := voters.MarshalVoters([]voters.Voter{&voters.Stump{Column: "income", Threshold: 45, Below: 0, Above: 1}})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(string(data))
	back, _ := voters.UnmarshalVoters(data)
	fmt.Println(back[0].Describe([]string{"default", "repaid"}))
	// Output:
	// [{"kind":"stump","column":"income","threshold":45,"below":0,"above":1,"missing_below":false}]
	// income <= 45 -> default, else repaid (missing: repaid)
}
