package sqlexport

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"surety/datasets"
	"surety/voters"
)

func TestCheckTableName(t *testing.T) {
	cases := []struct {
		name string
		ok   bool
	}{
		{"loans", true},
		{"_x1", true},
		{"main.loans", true},
		{"group", true}, // a keyword, but quoted in the SELECT
		{"", false},
		{"1abc", false},
		{"a b", false},
		{"a..b", false},
		{"a.", false},
		{`a"b`, false},
		{"rows; DROP TABLE x", false},
		{"é", false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			err := CheckTableName(tc.name)
			if (err == nil) != tc.ok {
				t.Fatalf("CheckTableName(%q) = %v", tc.name, err)
			}
			if err != nil && !errors.Is(err, ErrTableName) {
				t.Fatalf("%v does not wrap ErrTableName", err)
			}
		})
	}
}

// TestQuoting checks the quoting rules of SQL:2003 5.2 (a delimited
// identifier doubles an inner double quote) and 5.3 (a character string
// literal doubles an inner single quote), from memory of the standard's
// text; the engine tests in cmd/surety/internal/exportparity run them.
func TestQuoting(t *testing.T) {
	cases := []struct {
		in, ident, str string
	}{
		{"select", `"select"`, `'select'`},
		{`a"b`, `"a""b"`, `'a"b'`},
		{"it's", `"it's"`, `'it''s'`},
		{"", `""`, `''`},
	}
	for _, tc := range cases {
		t.Run(tc.in, func(t *testing.T) {
			if got := ident(tc.in); got != tc.ident {
				t.Errorf("ident = %s, want %s", got, tc.ident)
			}
			if got := str(tc.in); got != tc.str {
				t.Errorf("str = %s, want %s", got, tc.str)
			}
		})
	}
}

// TestNumRoundTrips checks that every literal reads back as the same
// float64 (strconv's shortest 'e' form, -1 digits, is exact by its
// documentation), and is cast, so that no engine keeps it as DECIMAL.
func TestNumRoundTrips(t *testing.T) {
	cases := []struct {
		name string
		x    float64
	}{
		{"a tenth", 0.1},
		{"a third", 1.0 / 3},
		{"one ulp above 1", math.Nextafter(1, 2)},
		{"largest", math.MaxFloat64},
		{"smallest subnormal", math.SmallestNonzeroFloat64},
		{"negative", -52300.25},
		{"integer", 7},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			lit := num(tc.x)
			inner, ok := strings.CutPrefix(lit, "CAST(")
			inner, ok2 := strings.CutSuffix(inner, " AS DOUBLE PRECISION)")
			if !ok || !ok2 || !strings.Contains(inner, "e") {
				t.Fatalf("num(%v) = %s, want CAST(<E literal> AS DOUBLE PRECISION)", tc.x, lit)
			}
			back, err := strconv.ParseFloat(inner, 64)
			if err != nil || back != tc.x {
				t.Fatalf("%s reads back as %v (%v)", inner, back, err)
			}
		})
	}
	if num(0) != "0" || num(math.Copysign(0, -1)) != "0" {
		t.Fatal("zero is not the integer 0")
	}
}

// alien is a voter kind this package does not know.
type alien struct{ voters.Stump }

func (alien) Kind() string { return "alien" }

func TestWriteRefuses(t *testing.T) {
	schema := []voters.ColumnSpec{{Name: "x", Kind: datasets.Numeric}, {Name: "c", Kind: datasets.Categorical}}
	stump := &voters.Stump{Column: "x", Threshold: 1, Below: 0, Above: 1}
	vote := func(vs ...voters.Voter) *voters.Vote {
		w := make([]float64, len(vs))
		for i := range w {
			w[i] = 1 / float64(len(vs))
		}
		return &voters.Vote{Classes: []string{"a", "b"}, Weights: w, Voters: vs}
	}
	cases := []struct {
		name   string
		v      *voters.Vote
		schema []voters.ColumnSpec
		opts   Options
		msg    string
	}{
		{"no vote", nil, schema, Options{}, "no vote"},
		{"one class", &voters.Vote{Classes: []string{"a"}, Weights: []float64{1}, Voters: []voters.Voter{stump}}, schema, Options{}, "1 classes"},
		{"weights and voters differ", &voters.Vote{Classes: []string{"a", "b"}, Weights: []float64{1, 0}, Voters: []voters.Voter{stump}}, schema, Options{}, "2 weights for 1 voters"},
		{"NaN weight", &voters.Vote{Classes: []string{"a", "b"}, Weights: []float64{math.NaN()}, Voters: []voters.Voter{stump}}, schema, Options{}, "weight 0 is NaN"},
		{"bad table name", vote(stump), schema, Options{Table: "a b"}, "not a table name"},
		{"column not in the schema", vote(&voters.Stump{Column: "y", Below: 0, Above: 1}), schema, Options{}, `column "y" is not in the schema`},
		{"column of another kind", vote(&voters.CategoryStump{Column: "x", Level: "p", Equal: 0, Other: 1}), schema, Options{}, `column "x" is numeric`},
		{"class out of range", vote(&voters.Stump{Column: "x", Below: 0, Above: 2}), schema, Options{}, "out of range"},
		{"unknown voter kind", vote(&alien{*stump}), schema, Options{}, `kind "alien" has no SQL form`},
		{"NUL in a level", vote(&voters.CategoryStump{Column: "c", Level: "p\x00", Equal: 0, Other: 1}), schema, Options{}, "NUL"},
		{"empty column name", vote(stump), append([]voters.ColumnSpec{{Name: "", Kind: datasets.Numeric}}, schema...), Options{}, "column name is empty"},
		{"column twice", vote(stump), append(schema, schema[0]), Options{}, "twice"},
		{"kept column named margin", vote(stump), schema, Options{Keep: []string{"margin"}}, `kept column "margin"`},
		{"kept column named as a weight", vote(stump), schema, Options{Keep: []string{"weight_a"}, ClassWeights: true}, `kept column "weight_a"`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var b bytes.Buffer
			err := Write(&b, tc.v, tc.schema, tc.opts)
			if err == nil || !strings.Contains(err.Error(), tc.msg) {
				t.Fatalf("error %v, want one with %q", err, tc.msg)
			}
			if b.Len() != 0 {
				t.Fatalf("%d bytes written before the error", b.Len())
			}
		})
	}
}

// TestWriteLevels checks that a long sum continues over nested levels
// (each at most MaxTermsPerLevel terms), in order, and that voters of
// weight 0 are left out.
func TestWriteLevels(t *testing.T) {
	schema := []voters.ColumnSpec{{Name: "x", Kind: datasets.Numeric}}
	n := 2*MaxTermsPerLevel + 10
	v := &voters.Vote{Classes: []string{"a", "b"}}
	for i := range n {
		v.Voters = append(v.Voters, &voters.Stump{Column: "x", Threshold: float64(i), Below: 0, Above: 0})
		v.Weights = append(v.Weights, 1)
	}
	v.Voters = append(v.Voters, &voters.Stump{Column: "x", Threshold: 0.5, Below: 1, Above: 1})
	v.Weights = append(v.Weights, 0)
	var b bytes.Buffer
	if err := Write(&b, v, schema, Options{}); err != nil {
		t.Fatal(err)
	}
	sql := b.String()
	// Class a: n terms of weight 1 over three levels; class b: none.
	if got := strings.Count(sql, "t0 + "); got != 2 {
		t.Errorf("t0 continues %d times, want 2", got)
	}
	if got := strings.Count(sql, "FROM ("); got != 5 {
		t.Errorf("%d nested queries, want 5 (read, three sum levels, the difference, output)", got)
	}
	if strings.Contains(sql, "5e-01") {
		t.Error("the weight-0 voter is in the SELECT")
	}
}
