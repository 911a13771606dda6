package main

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// The flag values below check their range when the flag is parsed, so a bad
// value is a usage error (exit 2) before any work starts.

// floatRange is a float flag restricted to an interval; open ends are
// excluded.
type floatRange struct {
	v      *float64
	lo, hi float64
	loOpen bool
	hiOpen bool
	set    bool
	what   string
}

func (f *floatRange) String() string {
	if f.v == nil {
		return ""
	}
	return strconv.FormatFloat(*f.v, 'g', -1, 64)
}

func (f *floatRange) Set(s string) error {
	x, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || math.IsNaN(x) {
		return fmt.Errorf("%q is not a number", s)
	}
	if (f.loOpen && x <= f.lo) || (!f.loOpen && x < f.lo) || (f.hiOpen && x >= f.hi) || (!f.hiOpen && x > f.hi) {
		return fmt.Errorf("%s must be in %s, got %s", f.what, f.interval(), s)
	}
	*f.v = x
	f.set = true
	return nil
}

func (f *floatRange) interval() string {
	l, r := "[", "]"
	if f.loOpen {
		l = "("
	}
	if f.hiOpen {
		r = ")"
	}
	return l + fmtBound(f.lo) + ", " + fmtBound(f.hi) + r
}

func fmtBound(x float64) string {
	if math.IsInf(x, 1) {
		return "inf"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

func (f *floatRange) Type() string { return "float" }

// probability is a flag in the open interval (0, 1), such as delta.
func probability(v *float64, what string) *floatRange {
	return &floatRange{v: v, lo: 0, hi: 1, loOpen: true, hiOpen: true, what: what}
}

// positive is a flag in (0, inf).
func positive(v *float64, what string) *floatRange {
	return &floatRange{v: v, lo: 0, hi: math.Inf(1), loOpen: true, hiOpen: true, what: what}
}

// fraction is a flag in the closed interval [lo, hi] within [0, 1], such
// as an empirical error rate.
func fraction(v *float64, lo, hi float64, what string) *floatRange {
	return &floatRange{v: v, lo: lo, hi: hi, what: what}
}

// nonNegative is a flag in [0, inf).
func nonNegative(v *float64, what string) *floatRange {
	return &floatRange{v: v, lo: 0, hi: math.Inf(1), hiOpen: true, what: what}
}

// intRange is an int flag restricted to [lo, hi].
type intRange struct {
	v      *int
	lo, hi int
	what   string
	set    bool
}

func (f *intRange) String() string {
	if f.v == nil {
		return ""
	}
	return strconv.Itoa(*f.v)
}

func (f *intRange) Set(s string) error {
	x, err := strconv.Atoi(strings.TrimSpace(s))
	if err != nil {
		return fmt.Errorf("%q is not a whole number", s)
	}
	if x < f.lo || x > f.hi {
		if f.hi == math.MaxInt {
			return fmt.Errorf("%s must be at least %d, got %d", f.what, f.lo, x)
		}
		return fmt.Errorf("%s must be between %d and %d, got %d", f.what, f.lo, f.hi, x)
	}
	*f.v = x
	f.set = true
	return nil
}

func (f *intRange) Type() string { return "int" }

// enum is a flag that takes one word from a fixed list.
type enum struct {
	v     *string
	words []string
}

func (e *enum) String() string {
	if e.v == nil {
		return ""
	}
	return *e.v
}

func (e *enum) Set(s string) error {
	for _, w := range e.words {
		if s == w {
			*e.v = s
			return nil
		}
	}
	return fmt.Errorf("%q is not one of %s", s, strings.Join(e.words, ", "))
}

func (e *enum) Type() string { return strings.Join(e.words, "|") }

// enumList is a flag that takes a comma-separated list of words from a
// fixed list. The first use replaces the default and a repeated flag adds
// to the list; a word given twice counts once.
type enumList struct {
	v     *[]string
	words []string
	set   bool
}

func (e *enumList) String() string {
	if e.v == nil {
		return ""
	}
	return strings.Join(*e.v, ",")
}

func (e *enumList) Set(s string) error {
	if !e.set {
		*e.v = nil
		e.set = true
	}
	for _, w := range strings.Split(s, ",") {
		w = strings.TrimSpace(w)
		if !slices.Contains(e.words, w) {
			return fmt.Errorf("%q is not one of %s", w, strings.Join(e.words, ", "))
		}
		if !slices.Contains(*e.v, w) {
			*e.v = append(*e.v, w)
		}
	}
	return nil
}

func (e *enumList) Type() string { return strings.Join(e.words, ",") }

// positiveList is a flag that takes a comma-separated list of numbers in
// (0, inf), with enumList's rules for defaults, repeats and duplicates.
type positiveList struct {
	v    *[]float64
	what string
	set  bool
}

func (f *positiveList) String() string {
	if f.v == nil {
		return ""
	}
	s := make([]string, len(*f.v))
	for i, x := range *f.v {
		s[i] = strconv.FormatFloat(x, 'g', -1, 64)
	}
	return strings.Join(s, ",")
}

func (f *positiveList) Set(s string) error {
	if !f.set {
		*f.v = nil
		f.set = true
	}
	for _, w := range strings.Split(s, ",") {
		var x float64
		if err := positive(&x, f.what).Set(w); err != nil {
			return err
		}
		if !slices.Contains(*f.v, x) {
			*f.v = append(*f.v, x)
		}
	}
	return nil
}

func (f *positiveList) Type() string { return "floats" }

// delimiter is a field delimiter flag: , ; | or tab (the word, or a tab
// character); 0 means "detect".
type delimiter rune

func (d *delimiter) String() string {
	switch *d {
	case 0:
		return ""
	case '\t':
		return "tab"
	}
	return string(rune(*d))
}

func (d *delimiter) Set(s string) error {
	switch strings.ToLower(s) {
	case ",", ";", "|":
		*d = delimiter(s[0])
	case "tab", "\t":
		*d = '\t'
	default:
		return fmt.Errorf("--delimiter must be one of , ; | tab, got %q", s)
	}
	return nil
}

func (d *delimiter) Type() string { return "string" }

// upDecimals prints an upper bound at d decimals, rounded up: the one rule
// for bounds (README, "Commands"), so that a printed bound is never below
// the bound it stands for. The slack of 1e-9 keeps a value stored a hair
// above its decimal (0.1 is 0.1000000000000000055...) at that decimal.
func upDecimals(x float64, d int) string {
	s := math.Pow(10, float64(d))
	return strconv.FormatFloat(math.Ceil(x*s-1e-9)/s, 'f', d, 64)
}

// upFigures prints an upper bound with n significant figures, rounded up,
// for a bound of no fixed scale (an expected cost).
func upFigures(x float64, n int) string {
	if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
		return strconv.FormatFloat(x, 'g', n, 64)
	}
	e := math.Floor(math.Log10(math.Abs(x)))
	s := math.Pow(10, float64(n-1)-e)
	return strconv.FormatFloat(math.Ceil(x*s-1e-9)/s, 'g', n, 64)
}
