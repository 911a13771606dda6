package voters

import (
	"fmt"
	"math"
	"strconv"

	"surety/datasets"
)

// Voter is one member of a pool: a fixed function from a row to a class.
type Voter interface {
	// Kind names the voter kind, the tag of its JSON form.
	Kind() string
	// Columns returns the names of the columns the voter reads.
	Columns() []string
	// Bind resolves the voter's columns (and category strings) on t; it
	// fails, naming the column, when one is missing or of another kind.
	Bind(t *datasets.Table) error
	// Predict returns the class index (into the pool's classes) the voter
	// gives row of the table it was last bound to, or -1 when unbound.
	Predict(row int) int
	// Describe returns a readable rule, such as "income <= 52300 -> approve".
	Describe(classes []string) string
	// Check reports fields that would make the voter misbehave with the
	// given number of classes: a class out of range, a number that is not
	// finite, weights of the wrong shape.
	Check(classes int) error
}

// Kind tags of the voter kinds of this package.
const (
	KindStump    = "stump"
	KindCategory = "category"
	KindLinear   = "linear"
)

var (
	_ Voter = (*Stump)(nil)
	_ Voter = (*CategoryStump)(nil)
	_ Voter = (*Linear)(nil)
)

// Stump is a threshold rule on a numeric column: Below at or below
// Threshold, Above over it; a missing cell (NaN) goes below when
// MissingBelow is set, above otherwise.
type Stump struct {
	Column       string  `json:"column"`
	Threshold    float64 `json:"threshold"`
	Below        int     `json:"below"`
	Above        int     `json:"above"`
	MissingBelow bool    `json:"missing_below"`

	col []float64
}

// Kind returns KindStump.
func (s *Stump) Kind() string { return KindStump }

// Columns returns the stump's column.
func (s *Stump) Columns() []string { return []string{s.Column} }

// Bind resolves the stump's column on t.
func (s *Stump) Bind(t *datasets.Table) error {
	c, err := lookup(t, s.Column, datasets.Numeric)
	if err != nil {
		return err
	}
	s.col = c.Num
	return nil
}

// Predict returns the stump's class for row of the bound table.
func (s *Stump) Predict(row int) int {
	if s.col == nil {
		return -1
	}
	v := s.col[row]
	switch {
	case math.IsNaN(v):
		if s.MissingBelow {
			return s.Below
		}
		return s.Above
	case v <= s.Threshold:
		return s.Below
	}
	return s.Above
}

// Check reports a class out of range or a threshold that is not finite.
func (s *Stump) Check(classes int) error {
	if err := classIn(s.Below, classes); err != nil {
		return err
	}
	if err := classIn(s.Above, classes); err != nil {
		return err
	}
	return finite("threshold", s.Threshold)
}

// Describe returns the rule, such as "income <= 52300 -> approve, else deny
// (missing: approve)".
func (s *Stump) Describe(classes []string) string {
	miss := s.Above
	if s.MissingBelow {
		miss = s.Below
	}
	return fmt.Sprintf("%s <= %s -> %s, else %s (missing: %s)", s.Column,
		strconv.FormatFloat(s.Threshold, 'g', -1, 64),
		className(classes, s.Below), className(classes, s.Above), className(classes, miss))
}

// CategoryStump is an equality rule on a categorical column: Equal when the
// cell is Level, Other for every other level (including levels the table
// has and the prior rows had not); a missing cell gets Equal when
// MissingEqual is set, Other otherwise.
type CategoryStump struct {
	Column       string `json:"column"`
	Level        string `json:"level"`
	Equal        int    `json:"equal"`
	Other        int    `json:"other"`
	MissingEqual bool   `json:"missing_equal"`

	codes []uint32
	// code is Level's code in the bound table; MissingCode when the table
	// lacks the level, so that no present cell matches.
	code uint32
}

// Kind returns KindCategory.
func (s *CategoryStump) Kind() string { return KindCategory }

// Columns returns the stump's column.
func (s *CategoryStump) Columns() []string { return []string{s.Column} }

// Bind resolves the stump's column and level on t.
func (s *CategoryStump) Bind(t *datasets.Table) error {
	c, err := lookup(t, s.Column, datasets.Categorical)
	if err != nil {
		return err
	}
	s.codes = c.Codes
	s.code = levelCode(c.Levels, s.Level)
	return nil
}

// Predict returns the stump's class for row of the bound table.
func (s *CategoryStump) Predict(row int) int {
	if s.codes == nil {
		return -1
	}
	switch c := s.codes[row]; {
	case c == datasets.MissingCode:
		if s.MissingEqual {
			return s.Equal
		}
		return s.Other
	case c == s.code:
		return s.Equal
	}
	return s.Other
}

// Check reports a class out of range.
func (s *CategoryStump) Check(classes int) error {
	if err := classIn(s.Equal, classes); err != nil {
		return err
	}
	return classIn(s.Other, classes)
}

// Describe returns the rule, such as "region = north -> approve, else deny
// (missing: deny)".
func (s *CategoryStump) Describe(classes []string) string {
	miss := s.Other
	if s.MissingEqual {
		miss = s.Equal
	}
	return fmt.Sprintf("%s = %s -> %s, else %s (missing: %s)", s.Column, strconv.Quote(s.Level),
		className(classes, s.Equal), className(classes, s.Other), className(classes, miss))
}

// lookup returns the named column of t, checking its kind.
func lookup(t *datasets.Table, name string, kind datasets.Kind) (*datasets.Column, error) {
	if t == nil {
		return nil, fmt.Errorf("voters: bind column %q: no table", name)
	}
	i := t.Column(name)
	if i < 0 {
		return nil, fmt.Errorf("voters: bind: column %q is not in %s", name, source(t))
	}
	c := &t.Columns[i]
	if c.Kind != kind {
		return nil, fmt.Errorf("voters: bind: column %q of %s is %s, want %s", name, source(t), c.Kind, kind)
	}
	return c, nil
}

func source(t *datasets.Table) string {
	if t.Source == "" {
		return "the table"
	}
	return t.Source
}

// levelCode returns the code of level in levels, or MissingCode.
func levelCode(levels []string, level string) uint32 {
	for i, l := range levels {
		if l == level {
			return uint32(i)
		}
	}
	return datasets.MissingCode
}

func className(classes []string, c int) string {
	if c >= 0 && c < len(classes) {
		return classes[c]
	}
	return "class " + strconv.Itoa(c)
}
