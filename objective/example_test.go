package objective_test

import (
	"fmt"

	"surety/objective"
)

func ExampleKLInverseUpper() {
	// The largest true rate p consistent with an observed rate of 10% at a
	// kl budget of 0.01: kl(0.1||0.147676) = 0.0100 (by hand).
	p, err := objective.KLInverseUpper(0.1, 0.01)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.6f\n", p)
	// Output: 0.147676
}

func ExampleFirstOrderBound() {
	b, err := objective.FirstOrderBound(0.12, 3.2, 5000, 0.05)
	if err != nil {
		fmt.Println(err)
		return
	}
	upper, _ := b.Term("gibbs_upper")
	fmt.Printf("%s bounds the %s: %.4f = 2 x %.4f\n", b.Name, b.Of, b.Value, upper)
	// Output: first-order bounds the vote-risk: 0.2846 = 2 x 0.1423
}

func ExampleTestSetBound() {
	// No errors on 1000 fresh rows: close to the rule of three, 3/n.
	b, err := objective.TestSetBound(0, 1000, 0.05)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.5f\n", b.Value)
	// Output: 0.00299
}

func ExampleTestSetLowerBound() {
	// 5 errors on 100 fresh rows: the error rate is at least 1.99% with
	// probability 95% (and at most 10.3% by TestSetBound, each one-sided).
	lo, err := objective.TestSetLowerBound(5, 100, 0.05)
	if err != nil {
		fmt.Println(err)
		return
	}
	up, _ := objective.TestSetBound(5, 100, 0.05)
	fmt.Printf("[%.4f, %.4f]\n", lo.Value, up.Value)
	// Output: [0.0199, 0.1023]
}

func ExampleGibbsPosterior() {
	risks := []float64{0.1, 0.2, 0.4}
	prior := []float64{1.0 / 3, 1.0 / 3, 1.0 / 3}
	q, err := objective.GibbsPosterior(risks, prior, 20, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f %.4f %.4f\n", q[0], q[1], q[2])
	// Output: 0.8789 0.1189 0.0022
}
