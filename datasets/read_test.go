package datasets

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// fixture returns the path of a file under the module's testdata/datasets.
func fixture(name string) string { return filepath.Join("..", "testdata", "datasets", name) }

func readString(t *testing.T, text string, opts ReadOptions) *Table {
	t.Helper()
	tab, err := Read(strings.NewReader(text), "test.csv", opts)
	if err != nil {
		t.Fatalf("Read: %v", err)
	}
	checkConsistent(t, tab)
	return tab
}

// checkConsistent checks the invariants every successful read must keep.
func checkConsistent(t testing.TB, tab *Table) {
	t.Helper()
	for _, c := range tab.Columns {
		if c.Len() != tab.Rows {
			t.Fatalf("column %q has %d rows, table %d", c.Name, c.Len(), tab.Rows)
		}
		miss := 0
		for i := range c.Len() {
			if c.IsMissing(i) {
				miss++
			} else if c.Kind == Categorical && int(c.Codes[i]) >= len(c.Levels) {
				t.Fatalf("column %q row %d: code %d of %d levels", c.Name, i, c.Codes[i], len(c.Levels))
			} else if c.Kind == Numeric && math.IsInf(c.Num[i], 0) {
				t.Fatalf("column %q row %d: infinite value", c.Name, i)
			}
		}
		if miss != c.Missing {
			t.Fatalf("column %q: %d missing cells, Missing says %d", c.Name, miss, c.Missing)
		}
	}
	if tab.Label != nil {
		if len(tab.Label) != tab.Rows || len(tab.Classes) < 2 || !slices.IsSorted(tab.Classes) {
			t.Fatalf("label: %d labels, %d rows, classes %q", len(tab.Label), tab.Rows, tab.Classes)
		}
		for i, l := range tab.Label {
			if l < 0 || l >= len(tab.Classes) {
				t.Fatalf("row %d: label %d of %d classes", i, l, len(tab.Classes))
			}
		}
	}
}

func TestReadMixedFixture(t *testing.T) {
	for _, name := range []string{"mixed.csv", "mixed.csv.gz"} {
		t.Run(name, func(t *testing.T) {
			var warns []string
			tab, err := ReadFile(fixture(name), ReadOptions{Warn: func(m string) { warns = append(warns, m) }})
			if err != nil {
				t.Fatal(err)
			}
			checkConsistent(t, tab)
			if tab.Rows != 6 || tab.LabelName != "label" || !slices.Equal(tab.Classes, []string{"no", "yes"}) {
				t.Fatalf("rows %d label %q classes %q", tab.Rows, tab.LabelName, tab.Classes)
			}
			if want := []int{1, 0, 1, 0, 1, 0}; !slices.Equal(tab.Label, want) {
				t.Errorf("labels %v, want %v", tab.Label, want)
			}
			if len(tab.Columns) != 3 || !slices.Equal(tab.DroppedColumns, []string{"notes"}) || len(warns) != 1 {
				t.Fatalf("columns %d, dropped %q, warnings %q", len(tab.Columns), tab.DroppedColumns, warns)
			}
			age := tab.Columns[tab.Column("age")]
			if age.Kind != Numeric || age.Missing != 1 || age.Num[0] != 34 || !math.IsNaN(age.Num[3]) {
				t.Errorf("age: %+v", age)
			}
			city := tab.Columns[tab.Column("city")]
			if city.Kind != Categorical || !slices.Equal(city.Levels, []string{"Lyon", "Nice", "Paris, 11e", `Quote "Q"`}) ||
				!slices.Equal(city.Codes, []uint32{0, 2, 0, 1, 3, 0}) {
				t.Errorf("city: %+v", city)
			}
			income := tab.Columns[tab.Column("income")]
			if income.Kind != Numeric || income.Missing != 3 || income.Num[0] != 52000.5 {
				t.Errorf("income: %+v", income)
			}
			raw, err := os.ReadFile(fixture(name))
			if err != nil {
				t.Fatal(err)
			}
			sum := sha256.Sum256(raw)
			want := Fingerprint{SHA256: hex.EncodeToString(sum[:]), Rows: 6, Columns: 5}
			if tab.Fingerprint != want {
				t.Errorf("fingerprint %+v, want %+v", tab.Fingerprint, want)
			}
		})
	}
}

func TestReadSemicolonBOMCRLF(t *testing.T) {
	tab, err := ReadFile(fixture("semicolon_bom_crlf.csv"), ReadOptions{Label: "class"})
	if err != nil {
		t.Fatal(err)
	}
	checkConsistent(t, tab)
	if tab.Columns[0].Name != "height" || tab.Columns[1].Kind != Numeric || tab.Columns[1].Num[1] != 72 || tab.Columns[1].Missing != 1 {
		t.Fatalf("%+v", tab.Columns)
	}
}

func TestReadOptions(t *testing.T) {
	const text = "id,colour,size,label\n1,red,10,a\n2,blue,?,b\n3,red,12,a\n"
	cases := []struct {
		name  string
		text  string
		opts  ReadOptions
		check func(t *testing.T, tab *Table)
	}{
		{"ignore", text, ReadOptions{Ignore: []string{"id"}}, func(t *testing.T, tab *Table) {
			if tab.Column("id") != -1 || len(tab.Columns) != 2 {
				t.Errorf("columns %+v", tab.Columns)
			}
		}},
		{"force categorical keeps text", "zip,label\n02134,a\n10001,b\n", ReadOptions{Categorical: []string{"zip"}}, func(t *testing.T, tab *Table) {
			if c := tab.Columns[0]; c.Kind != Categorical || !slices.Equal(c.Levels, []string{"02134", "10001"}) {
				t.Errorf("zip: %+v", c)
			}
		}},
		{"kinds", text, ReadOptions{Kinds: map[string]Kind{"id": Categorical, "size": Numeric}}, func(t *testing.T, tab *Table) {
			if tab.Columns[0].Kind != Categorical || tab.Columns[2].Kind != Numeric {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"kinds keep an empty column", "x,y,label\n1,,a\n2,,b\n", ReadOptions{Kinds: map[string]Kind{"y": Numeric}}, func(t *testing.T, tab *Table) {
			if tab.Column("y") != 1 || tab.Columns[1].Missing != 2 {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"no label", "x,y\n1,2\n3,4\n", ReadOptions{NoLabel: true}, func(t *testing.T, tab *Table) {
			if tab.Label != nil || tab.Classes != nil || tab.LabelName != "" || len(tab.Columns) != 2 {
				t.Errorf("%+v", tab)
			}
		}},
		{"no label skips the named label", text, ReadOptions{NoLabel: true, Label: "label"}, func(t *testing.T, tab *Table) {
			if tab.Column("label") != -1 || tab.Label != nil {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"no header", "1,x,a\n2,y,b\n", ReadOptions{NoHeader: true, Label: "c3"}, func(t *testing.T, tab *Table) {
			if tab.Rows != 2 || tab.Columns[0].Name != "c1" || tab.Columns[1].Name != "c2" {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"drop missing label", "x,label\n1,a\n2,\n3,b\n4,NA\n", ReadOptions{DropMissingLabel: true}, func(t *testing.T, tab *Table) {
			if tab.Rows != 2 || tab.DroppedRows != 2 || tab.Fingerprint.Rows != 4 || !slices.Equal(tab.Columns[0].Num, []float64{1, 3}) {
				t.Errorf("%+v", tab)
			}
		}},
		{"custom missing tokens", "x,label\n-999,a\n2,b\nNA,a\n", ReadOptions{MissingTokens: []string{"-999"}}, func(t *testing.T, tab *Table) {
			if c := tab.Columns[0]; c.Kind != Categorical || c.Missing != 1 {
				t.Errorf("%+v", c)
			}
		}},
		{"tab delimiter detected", "x\ty\tlabel\n1\t2\ta\n3\t4\tb\n", ReadOptions{}, func(t *testing.T, tab *Table) {
			if len(tab.Columns) != 2 || tab.Columns[1].Num[1] != 4 {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"pipe delimiter detected", "x|y|label\n1|2|a\n3|4|b\n", ReadOptions{}, func(t *testing.T, tab *Table) {
			if len(tab.Columns) != 2 {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"given delimiter", "x;y,label\n1;2,a\n3;4,b\n", ReadOptions{Delimiter: ','}, func(t *testing.T, tab *Table) {
			if len(tab.Columns) != 1 || tab.Columns[0].Kind != Categorical {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"quoted line break", "note,label\n\"two\nlines\",a\nplain,b\n", ReadOptions{}, func(t *testing.T, tab *Table) {
			if tab.Rows != 2 || tab.Columns[0].Levels[1] != "two\nlines" {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"blank lines and no final newline", "x,label\n\n1,a\r\n\r\n2,b", ReadOptions{}, func(t *testing.T, tab *Table) {
			if tab.Rows != 2 || tab.Columns[0].Num[1] != 2 {
				t.Errorf("%+v", tab.Columns)
			}
		}},
		{"mostly words is categorical, numbers canonical", "x,label\nred,a\n1.50,b\nblue,a\n1.5,b\ngreen,a\n", ReadOptions{}, func(t *testing.T, tab *Table) {
			c := tab.Columns[0]
			if c.Kind != Categorical || !slices.Equal(c.Levels, []string{"1.5", "blue", "green", "red"}) || !slices.Equal(c.Codes, []uint32{3, 0, 1, 0, 2}) {
				t.Errorf("%+v", c)
			}
		}},
		{"exponents and signs", "x,label\n1e3,a\n-2.5E-2,b\n+7,a\n0.1,b\n12345678901234567890,a\n", ReadOptions{}, func(t *testing.T, tab *Table) {
			if want := []float64{1000, -0.025, 7, 0.1, 12345678901234567890}; !slices.Equal(tab.Columns[0].Num, want) {
				t.Errorf("%v, want %v", tab.Columns[0].Num, want)
			}
		}},
		{"label with spaces trimmed", "x, label \n1, a \n2,b\n", ReadOptions{}, func(t *testing.T, tab *Table) {
			if !slices.Equal(tab.Classes, []string{"a", "b"}) {
				t.Errorf("%q", tab.Classes)
			}
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			tc.check(t, readString(t, tc.text, tc.opts))
		})
	}
}

func TestReadBadInput(t *testing.T) {
	long := "x,label\n" + strings.Repeat("1", maxRecord+10) + ",a\n1,b\n"
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write([]byte("x,label\n" + strings.Repeat("1,a\n2,b\n", 1000)))
	zw.Close()
	truncated := gz.String()[:gz.Len()/2]
	cases := []struct {
		name    string
		text    string
		opts    ReadOptions
		want    error
		line    int
		column  int
		colName string
		field   string
		msg     string // a part of the message, when set
	}{
		{name: "empty file", text: "", want: ErrEmpty},
		{name: "only blank lines", text: "\n\r\n\n", want: ErrEmpty},
		{name: "header only", text: "x,label\n", want: ErrNoRows},
		{name: "too few fields", text: "x,y,label\n1,2,a\n1,b\n", want: ErrRagged, line: 3, column: 3, colName: "label"},
		{name: "too many fields", text: "x,label\n1,a\n1,2,b\n", want: ErrRagged, line: 3, column: 3},
		{name: "unterminated quote", text: "x,label\n1,a\n\"2,b\n3,a\n", want: ErrQuote, line: 3},
		{name: "text after closing quote", text: "x,label\n\"1\"2,a\n", want: ErrQuote, line: 2, column: 1, colName: "x"},
		{name: "bare quote", text: "x,label\n1\"2,a\n", want: ErrBareQuote, line: 2, column: 1, field: `1"2`},
		{name: "duplicate name", text: "x,x,label\n1,2,a\n", want: ErrDuplicateName, line: 1, column: 2, colName: "x"},
		{name: "duplicate after trimming", text: "x, x,label\n1,2,a\n", want: ErrDuplicateName, line: 1, column: 2},
		{name: "empty name", text: "x,,label\n1,2,a\n", want: ErrEmptyName, line: 1, column: 2},
		{name: "label missing", text: "x,y\n1,2\n", want: ErrNoLabel, line: 1, colName: "label"},
		{name: "named label missing", text: "x,y\n1,2\n", opts: ReadOptions{Label: "z"}, want: ErrNoLabel, line: 1},
		{name: "one class", text: "x,label\n1,a\n2,a\n", want: ErrOneClass, column: 2, colName: "label", field: "a"},
		{name: "missing label", text: "x,label\n1,a\n2,\n", want: ErrMissingLabel, line: 3, column: 2},
		{name: "Inf", text: "x,label\n1,a\nInf,b\n3,a\n", want: ErrNotFinite, line: 3, column: 1, colName: "x", field: "Inf"},
		{name: "1e999", text: "x,label\n1,a\n2,b\n1e999,a\n", want: ErrNotFinite, line: 4, column: 1, field: "1e999"},
		{name: "stray word", text: "x,label\n" + strings.Repeat("1,a\n2,b\n", 10) + "oops,a\n", want: ErrStrayWord, line: 22, column: 1, colName: "x", field: "oops"},
		{name: "word in forced numeric", text: "x,label\nred,a\n2,b\n", opts: ReadOptions{Kinds: map[string]Kind{"x": Numeric}}, want: ErrNotNumber, line: 2, column: 1, field: "red"},
		{name: "NUL byte", text: "x,label\n1,a\n2\x00,b\n", want: ErrNUL, line: 3, column: 1},
		{name: "NUL in header", text: "x,la\x00bel\n1,a\n", want: ErrNUL, line: 1, column: 2},
		{name: "invalid UTF-8", text: "x,label\n1,a\n2,b\xff\n", want: ErrUTF8, line: 3, column: 2},
		{name: "line over 1 MiB", text: long, want: ErrLineTooLong, line: 2},
		{name: "truncated gzip", text: truncated, want: ErrGzip},
		{name: "gzip header only", text: "\x1f\x8b", want: ErrGzip},
		{name: "unknown ignored column", text: "x,label\n1,a\n", opts: ReadOptions{Ignore: []string{"nope"}}, want: ErrUnknownColumn, line: 1},
		{name: "expected columns missing", text: "x,label\n1,a\n2,b\n", opts: ReadOptions{Kinds: map[string]Kind{"x": Numeric, "y": Numeric, "z": Categorical}}, want: ErrUnknownColumn, line: 1, colName: "y", msg: `the file lacks 2 of the columns expected (a model's schema): "y", "z"`},
		{name: "ignore the label", text: "x,label\n1,a\n", opts: ReadOptions{Ignore: []string{"label"}}, want: ErrOptions},
		{name: "conflicting kinds", text: "x,label\n1,a\n", opts: ReadOptions{Categorical: []string{"x"}, Kinds: map[string]Kind{"x": Numeric}}, want: ErrOptions},
		{name: "bad delimiter option", text: "x,label\n1,a\n", opts: ReadOptions{Delimiter: '"'}, want: ErrOptions},
		{name: "no feature columns", text: "x,label\n,a\n,b\n", want: ErrNoColumns},
		{name: "all labels missing", text: "x,label\n1,\n2,NA\n", opts: ReadOptions{DropMissingLabel: true}, want: ErrNoRows},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			tab, err := Read(strings.NewReader(tc.text), "bad.csv", tc.opts)
			if err == nil {
				t.Fatalf("no error; table %+v", tab)
			}
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %T %v is not a *ParseError", err, err)
			}
			if !errors.Is(err, tc.want) {
				t.Fatalf("error %v, want %v", err, tc.want)
			}
			if pe.File != "bad.csv" || !strings.HasPrefix(err.Error(), "datasets: bad.csv") {
				t.Errorf("error %q does not name the file", err)
			}
			if tc.line != 0 && pe.Line != tc.line {
				t.Errorf("line %d, want %d (%v)", pe.Line, tc.line, err)
			}
			if tc.column != 0 && pe.Column != tc.column {
				t.Errorf("column %d, want %d (%v)", pe.Column, tc.column, err)
			}
			if tc.colName != "" && pe.ColumnName != tc.colName {
				t.Errorf("column name %q, want %q (%v)", pe.ColumnName, tc.colName, err)
			}
			if tc.field != "" && pe.Field != tc.field {
				t.Errorf("field %q, want %q (%v)", pe.Field, tc.field, err)
			}
			if tc.msg != "" && !strings.Contains(err.Error(), tc.msg) {
				t.Errorf("message %q, want it to hold %q", err, tc.msg)
			}
		})
	}
}

// TestStrayWordMessage checks the message names both fixes.
func TestStrayWordMessage(t *testing.T) {
	_, err := Read(strings.NewReader("x,label\n"+strings.Repeat("1,a\n2,b\n", 10)+"oops,a\n"), "f.csv", ReadOptions{})
	for _, want := range []string{"f.csv:22", `column 1 "x"`, `"oops"`, "missing tokens", "categorical"} {
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("error %v lacks %q", err, want)
		}
	}
}

// TestReadBlocks reads inputs spanning many blocks, quoted line breaks and
// an error near the end included, and checks them against a plain
// line-by-line expectation.
func TestReadBlocks(t *testing.T) {
	if testing.Short() {
		t.Skip("multi-block input skipped under -short")
	}
	var b strings.Builder
	b.WriteString("n,note,label\n")
	const rows = 60000
	for i := range rows {
		switch i % 7 {
		case 0:
			b.WriteString("1.25,\"a,\nb\",x\n")
		case 3:
			b.WriteString("NA,\"q \"\"x\"\"\",y\n")
		default:
			b.WriteString("7,plain,y\n")
		}
	}
	tab := readString(t, b.String(), ReadOptions{})
	if tab.Rows != rows || tab.Columns[0].Missing != 8571 { // rows i with i%7 == 3
		t.Fatalf("rows %d missing %d", tab.Rows, tab.Columns[0].Missing)
	}
	if got := tab.Columns[1].Levels; !slices.Equal(got, []string{"a,\nb", "plain", `q "x"`}) {
		t.Fatalf("levels %q", got)
	}
	b.WriteString("1,oops,x,extra\n")
	_, err := Read(strings.NewReader(b.String()), "big.csv", ReadOptions{})
	var pe *ParseError
	// Each 0 mod 7 row takes two lines.
	if !errors.As(err, &pe) || !errors.Is(err, ErrRagged) || pe.Line != 2+rows+rows/7+1 {
		t.Fatalf("error %v, want ragged at line %d", err, 2+rows+rows/7+1)
	}
}

func TestReadFileStdinAndMissing(t *testing.T) {
	_, err := ReadFile(filepath.Join(t.TempDir(), "none.csv"), ReadOptions{})
	var pe *ParseError
	if !errors.As(err, &pe) || !errors.Is(err, ErrRead) || !errors.Is(err, os.ErrNotExist) {
		t.Fatalf("error %v", err)
	}
}

func TestRoundTrip(t *testing.T) {
	cases := []struct {
		name string
		text string
		opts ReadOptions
	}{
		{"mixed kinds", "a,b,label,c\n1.5,x y,p,\n,\" lead\",q,2\n-0.1,\"c,d\",p,3\n1e-300,\"he said \"\"hi\"\"\",q,4\n", ReadOptions{}},
		{"forced categorical", "zip,label\n02134,a\n,b\n10001,a\n", ReadOptions{Categorical: []string{"zip"}}},
		{"no label", "x,y\n1,a\n2,b\n", ReadOptions{NoLabel: true}},
		{"mixed column", "x,label\nred,a\n1.50,b\nblue,a\n", ReadOptions{}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			a := readString(t, tc.text, tc.opts)
			var buf bytes.Buffer
			if err := WriteCSV(&buf, a); err != nil {
				t.Fatal(err)
			}
			b := readString(t, buf.String(), tc.opts)
			a.Source, b.Source, a.Fingerprint, b.Fingerprint = "", "", Fingerprint{}, Fingerprint{}
			a.DroppedColumns, b.DroppedColumns = nil, nil
			if !tablesEqual(a, b) {
				t.Fatalf("round trip differs:\n%s\n%+v\n%+v", buf.String(), a, b)
			}
		})
	}
}

func tablesEqual(a, b *Table) bool {
	if a.Rows != b.Rows || a.LabelName != b.LabelName || !slices.Equal(a.Classes, b.Classes) || !slices.Equal(a.Label, b.Label) || len(a.Columns) != len(b.Columns) {
		return false
	}
	for i := range a.Columns {
		x, y := a.Columns[i], b.Columns[i]
		if x.Name != y.Name || x.Kind != y.Kind || x.Missing != y.Missing || !slices.Equal(x.Codes, y.Codes) || !slices.Equal(x.Levels, y.Levels) ||
			!slices.EqualFunc(x.Num, y.Num, func(u, v float64) bool { return u == v || math.IsNaN(u) && math.IsNaN(v) }) {
			return false
		}
	}
	return true
}

func TestSummary(t *testing.T) {
	tab := readString(t, "x,c,label\n3,a,p\nNA,b,q\n-1,a,p\n", ReadOptions{})
	got := tab.Summary()
	if s := got[0]; s.Kind != Numeric || s.Missing != 1 || s.Min != -1 || s.Max != 3 {
		t.Errorf("x: %+v", s)
	}
	if s := got[1]; s.Kind != Categorical || s.Distinct != 2 || !math.IsNaN(s.Min) {
		t.Errorf("c: %+v", s)
	}
	if n := tab.ClassCounts(); !slices.Equal(n, []int{2, 1}) {
		t.Errorf("class counts %v", n)
	}
}

func TestParseNumber(t *testing.T) {
	cases := []struct {
		in   string
		v    float64
		kind cellKind
	}{
		{"0", 0, cellNumber},
		{"-0.0", math.Copysign(0, -1), cellNumber},
		{"5.1", 5.1, cellNumber},
		{".5", 0.5, cellNumber},
		{"5.", 5, cellNumber},
		{"1e22", 1e22, cellNumber},
		{"1e23", 1e23, cellNumber},
		{"0.1234567890123456789", 0.1234567890123456789, cellNumber},
		{"4.9406564584124654e-324", 5e-324, cellNumber},
		{"1e-400", 0, cellNumber},
		{"1e999", math.Inf(1), cellNonFinite},
		{"-inf", math.Inf(-1), cellNonFinite},
		{"nan", 0, cellNonFinite},
		{"12k", 0, cellWord},
		{"e5", 0, cellWord},
		{"1e", 0, cellWord},
		{"-", 0, cellWord},
		{".", 0, cellWord},
		{"1.2.3", 0, cellWord},
		{"1_000", 0, cellWord},
	}
	for _, tc := range cases {
		t.Run(tc.in, func(t *testing.T) {
			v, k := parseNumber([]byte(tc.in))
			if k != tc.kind || (k == cellNumber && (v != tc.v || math.Signbit(v) != math.Signbit(tc.v))) || (k == cellNonFinite && tc.v != 0 && v != tc.v) {
				t.Errorf("parseNumber(%q) = %v, %d; want %v, %d", tc.in, v, k, tc.v, tc.kind)
			}
		})
	}
}

// OneClass lets a label with one class through (fresh rows to check), and
// nothing else: a label with no class at all is still an error.
func TestReadOneClass(t *testing.T) {
	tab, err := Read(strings.NewReader("x,label\n1,a\n2,a\n"), "one.csv", ReadOptions{OneClass: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Classes) != 1 || tab.Classes[0] != "a" || tab.Rows != 2 || tab.Label[1] != 0 {
		t.Errorf("classes %v, %d rows, labels %v", tab.Classes, tab.Rows, tab.Label)
	}
	if _, err := Read(strings.NewReader("x,label\n"), "none.csv", ReadOptions{OneClass: true}); err == nil {
		t.Error("no rows and no class: no error")
	}
}

// Levels are sorted by their text, so reading the same rows in another
// order gives the same level list and every row the same level: nothing
// downstream (ties between levels, one-hot order) sees the row order.
func TestLevelsIgnoreRowOrder(t *testing.T) {
	cases := []struct {
		name string
		rows []string // "x,label" records
		opts ReadOptions
	}{
		{"words", []string{"pear,a", "fig,b", "apple,a", ",b", "fig,a"}, ReadOptions{}},
		{"words and numbers", []string{"red,a", "10,b", "blue,a", "9.0,b", "green,a"}, ReadOptions{}},
		{"forced categorical", []string{"3,a", "1,b", "20,a", "1,b"}, ReadOptions{Categorical: []string{"x"}}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			read := func(rows []string) (*Table, []string) {
				tab, err := Read(strings.NewReader("x,label\n"+strings.Join(rows, "\n")+"\n"), "levels.csv", tc.opts)
				if err != nil {
					t.Fatal(err)
				}
				c := tab.Columns[0]
				cells := make([]string, len(c.Codes))
				for i, code := range c.Codes {
					if code != MissingCode {
						cells[i] = c.Levels[code]
					}
				}
				return tab, cells
			}
			fwd, fwdCells := read(tc.rows)
			rev := slices.Clone(tc.rows)
			slices.Reverse(rev)
			back, backCells := read(rev)
			slices.Reverse(backCells)
			if !slices.IsSorted(fwd.Columns[0].Levels) || !slices.Equal(fwd.Columns[0].Levels, back.Columns[0].Levels) {
				t.Errorf("levels %q read forwards, %q backwards, want both sorted and equal", fwd.Columns[0].Levels, back.Columns[0].Levels)
			}
			if !slices.Equal(fwdCells, backCells) {
				t.Errorf("cells %q forwards, %q backwards", fwdCells, backCells)
			}
		})
	}
}
