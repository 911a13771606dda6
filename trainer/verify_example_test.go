package trainer_test

import (
	"context"
	"fmt"
	"log"
	"strings"

	"surety/trainer"
)

// A reviewer with the training file and the model file redoes the whole
// certificate: split, pool, statistics, every bound.
func ExampleVerifyData() {
	tab := demo(1000, 1)
	m, err := trainer.Train(context.Background(), tab, trainer.Config{Seed: 1, Pool: small})
	if err != nil {
		log.Fatal(err)
	}
	a, err := trainer.VerifyData(context.Background(), m, tab)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println("match:", a.Match)

	// The same model checked against other rows: the fingerprint differs.
	a, err = trainer.VerifyData(context.Background(), m, demo(1000, 2))
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println("match:", a.Match, "at", a.FirstDifference[:strings.Index(a.FirstDifference, ":")])
	// Output:
	// match: true
	// match: false at fingerprint
}

// Without data, the ledger is recomputed from the terms the model stores.
func ExampleAuditLedger() {
	m, err := trainer.Train(context.Background(), demo(1000, 1), trainer.Config{Seed: 1, Pool: small})
	if err != nil {
		log.Fatal(err)
	}
	a := trainer.AuditLedger(m)
	for _, l := range a.Lines[len(a.Lines)-4:] {
		fmt.Printf("%-12s %.4f %.4f %v\n", l.Entry, l.Stored, l.Recomputed, l.Match)
	}
	// Output:
	// certificate  0.0904 0.0904 true
	// class leak   0.0767 0.0767 true
	// class sound  0.2591 0.2591 true
	// delta        0.0500 0.0500 true
}

// A cost matrix: rows are the true class, columns the decision.
func ExampleParseCosts() {
	c, err := trainer.ParseCosts(strings.NewReader("true\\decided, leak, sound\nleak, 0, 20\nsound, 1, 0\n"), "costs.csv")
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(c.Classes, c.Costs, "largest", c.Max())
	_, err = trainer.ParseCosts(strings.NewReader("x, leak, sound\nleak, 0, -2\n"), "costs.csv")
	fmt.Println(err)
	// Output:
	// [leak sound] [[0 20] [1 0]] largest 20
	// trainer: costs: costs.csv:2: column 3 ("sound"): cost -2 is not a finite non-negative number
}
