package trainer

import (
	"fmt"
	"math"
	"strconv"
)

// Cautions are the limits of every certificate, to be shown wherever one is.
var Cautions = []string{
	"The certificate assumes the rows are independent draws from the same distribution that future data will come from. It says nothing under drift, selection bias or leakage between rows.",
	"With probability up to delta the certificate is wrong, and nothing in the output shows when.",
	"It bounds the error rate, not the cost of an error, nor fairness across groups.",
	"In credit, medicine, safety or any regulated use, it supports and does not replace validation by qualified people and the rules of the place where the model is used.",
}

// Sentence states the certificate in one plain sentence. The bound is
// rounded up and the confidence down, so the sentence never claims more
// than the numbers.
func (c Certificate) Sentence() string {
	conf := Percent(1-c.Delta, false)
	if !(c.RiskBound < 1) {
		return fmt.Sprintf("No useful certificate: at confidence %s the smallest bound on this vote's error rate is %s, which says nothing (more certify rows or a better pool may help).", conf, Percent(c.RiskBound, true))
	}
	return fmt.Sprintf("With probability at least %s over the draw of these rows, the error rate of this vote on new rows from the same source is at most %s.", conf, Percent(c.RiskBound, true))
}

// Percent formats a rate in [0, 1] as a percentage with up to one decimal
// (three for rates under 1%), rounding up when up is set and down otherwise.
func Percent(x float64, up bool) string {
	digits := 1
	if x < 0.01 {
		digits = 3
	}
	scale := math.Pow(10, float64(digits))
	v := x * 100 * scale
	// A hair of slack so that 0.95 (stored as 0.9499999...) is 95%, not 94.9%.
	if up {
		v = math.Ceil(v - 1e-9)
	} else {
		v = math.Floor(v + 1e-9)
	}
	return strconv.FormatFloat(v/scale, 'f', -1, 64) + "%"
}

// FormatFigure prints a figure (a risk, a weight, a KL divergence) at four
// decimals, rounded to nearest, without the sign of a value that rounds to
// zero: a KL of -1e-17 from rounding reads 0.0000, not -0.0000. Bounds go
// through FormatBound, which rounds up.
func FormatFigure(x float64) string {
	s := strconv.FormatFloat(x, 'f', 4, 64)
	if s == "-0.0000" {
		return "0.0000"
	}
	return s
}

// FormatBound prints an upper bound at four decimals, rounded up, so a
// table never shows less than the bound it stands for; a bound of 1 or
// more says nothing about an error rate, and prints as "no bound (>= 1)".
func FormatBound(x float64) string {
	if x >= 1 {
		return "no bound (>= 1)"
	}
	return strconv.FormatFloat(math.Ceil(x*1e4)/1e4, 'f', 4, 64)
}
