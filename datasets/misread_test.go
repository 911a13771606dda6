package datasets

import (
	"errors"
	"slices"
	"strings"
	"testing"
)

// The misreads a new user trips on: each read below used to succeed
// quietly with the wrong table.

func TestDecimalComma(t *testing.T) {
	tests := []struct {
		name    string
		opts    ReadOptions
		wantErr error
		line    int
	}{
		// Line 2 is the first data row; its first cell is "1,32".
		{name: "stops and says why", opts: ReadOptions{}, wantErr: ErrDecimalComma, line: 2},
		{name: "stops under deferred kinds too", opts: ReadOptions{DeferKinds: true}, wantErr: ErrDecimalComma, line: 2},
		{name: "forced numeric", opts: ReadOptions{Kinds: map[string]Kind{"length": Numeric}}, wantErr: ErrDecimalComma, line: 2},
		{name: "read as numbers", opts: ReadOptions{DecimalComma: true}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tab, err := ReadFile(fixture("decimal_comma.csv"), tc.opts)
			if tc.wantErr != nil {
				var pe *ParseError
				if !errors.Is(err, tc.wantErr) || !errors.As(err, &pe) {
					t.Fatalf("err %v, want %v", err, tc.wantErr)
				}
				if pe.Line != tc.line || pe.ColumnName != "length" || pe.Field != "1,32" {
					t.Errorf("error at line %d column %q cell %q: %v", pe.Line, pe.ColumnName, pe.Field, err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			checkConsistent(t, tab)
			kinds := []Kind{}
			for _, c := range tab.Columns {
				kinds = append(kinds, c.Kind)
			}
			if !slices.Equal(kinds, []Kind{Numeric, Numeric, Categorical}) {
				t.Fatalf("kinds %v", kinds)
			}
			// The fixture's first row: 1,32;0,6 (testdata/README.md).
			if tab.Columns[0].Num[0] != 1.32 || tab.Columns[1].Num[0] != 0.6 {
				t.Errorf("first row %v %v, want 1.32 0.6", tab.Columns[0].Num[0], tab.Columns[1].Num[0])
			}
		})
	}
}

func TestDecimalCommaPattern(t *testing.T) {
	tests := []struct {
		cell string
		want bool
	}{
		{"1,5", true}, {"-0,25", true}, {"+12,0", true},
		{"1,", false}, {",5", false}, {"1,5,6", false}, {"1.5", false},
		{"1,5e3", false}, {"a,b", false}, {"", false}, {"-", false},
	}
	for _, tc := range tests {
		t.Run(tc.cell, func(t *testing.T) {
			if got := decimalComma([]byte(tc.cell)); got != tc.want {
				t.Errorf("decimalComma(%q) = %v", tc.cell, got)
			}
		})
	}
}

func TestMaxClasses(t *testing.T) {
	// 40 rows of 40 distinct class names: a tenth of the rows is 4, the
	// floor 10.
	var words strings.Builder
	words.WriteString("x,label\n")
	for i := range 40 {
		words.WriteString("1,w" + string(rune('A'+i%26)) + string(rune('a'+i/26)) + "\n")
	}
	tests := []struct {
		name    string
		file    string
		text    string
		opts    ReadOptions
		wantErr bool
	}{
		{name: "numeric label with 40 values", file: "quantity_label.csv", opts: ReadOptions{Label: "target"}, wantErr: true},
		{name: "numeric label, cap raised", file: "quantity_label.csv", opts: ReadOptions{Label: "target", MaxClasses: 40}},
		{name: "numeric label, no cap", file: "quantity_label.csv", opts: ReadOptions{Label: "target", MaxClasses: -1}},
		{name: "numeric label, cap below", file: "quantity_label.csv", opts: ReadOptions{Label: "target", MaxClasses: 39}, wantErr: true},
		{name: "numeric label with 5 values", file: "quantity_label.csv", opts: ReadOptions{Label: "dose"}},
		{name: "fresh rows are not capped", file: "quantity_label.csv", opts: ReadOptions{Label: "target", OneClass: true}},
		{name: "word label, one class a row", text: words.String(), wantErr: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var err error
			if tc.file != "" {
				_, err = ReadFile(fixture(tc.file), tc.opts)
			} else {
				_, err = Read(strings.NewReader(tc.text), "words.csv", tc.opts)
			}
			if got := errors.Is(err, ErrTooManyClasses); got != tc.wantErr {
				t.Fatalf("err %v, want too many classes: %v", err, tc.wantErr)
			}
			if tc.wantErr && !strings.Contains(err.Error(), "column") {
				t.Errorf("the error names no column: %v", err)
			}
		})
	}
}

func TestRareClassWarning(t *testing.T) {
	var warns []string
	tab, err := ReadFile(fixture("stray_class.csv"), ReadOptions{Warn: func(m string) { warns = append(warns, m) }})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(tab.Classes, []string{"no", "unknown", "yes"}) || !slices.Equal(tab.ClassCounts(), []int{20, 1, 19}) {
		t.Fatalf("classes %q counts %v", tab.Classes, tab.ClassCounts())
	}
	if len(warns) != 1 || !strings.Contains(warns[0], `class "unknown" has only 1 row`) {
		t.Errorf("warnings %q", warns)
	}
}

func TestErrorExcerpt(t *testing.T) {
	tests := []struct {
		name, field, want string
	}{
		{name: "short text", field: "twelve", want: "twelve"},
		{name: "long text", field: strings.Repeat("a", 70), want: strings.Repeat("a", 60) + "..."},
		// A cut inside a two-byte character backs up to its start.
		{name: "cut at a character", field: strings.Repeat("a", 59) + "é" + "bbb", want: strings.Repeat("a", 59) + "..."},
		{name: "binary", field: "\x7fELF\x02\x01\x01\x00\x00\x00\x00\x00\x00\x00\x00\x00\x03\x00", want: "\x7fELF\x02\x01\x01\x00\x00\x00\x00\x00..."},
		{name: "invalid UTF-8", field: "\xff\xfe" + strings.Repeat("x", 20), want: "\xff\xfe" + strings.Repeat("x", 10) + "..."},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := excerpt(tc.field); got != tc.want {
				t.Errorf("excerpt = %q, want %q", got, tc.want)
			}
		})
	}
}
