package datasets

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// scanText writes rows of a labelled file that exercises the reader:
// numbers with missing tokens, categories with quoted commas and quoted
// line breaks, a column of number-like words, CRLF on some lines, labels
// (one in 50 missing when dropLabels is set), and a column of free text.
func scanText(rows int, seed uint64, dropLabels bool) string {
	rng := rand.New(rand.NewPCG(seed, 2))
	cities := []string{"Lyon", `"Paris, 11e"`, "Nice", `"Quote ""Q"""`, `"two` + "\n" + `lines"`, "Brest"}
	notes := []string{"1.50", "1.5", "NA", "x", "007", ""}
	labels := []string{"yes", "no", "maybe"}
	var b strings.Builder
	b.WriteString("id,score,city,note,label,extra\n")
	for i := range rows {
		score := strconv.FormatFloat(rng.NormFloat64()*100, 'f', 1+i%4, 64)
		if rng.IntN(10) == 0 {
			score = []string{"", "NA", "?", " null "}[rng.IntN(4)]
		}
		label := labels[rng.IntN(3)]
		if rng.IntN(50) == 0 && dropLabels {
			label = "?"
		}
		end := "\n"
		if i%5 == 0 {
			end = "\r\n"
		}
		fmt.Fprintf(&b, "%d,%s,%s,%s,%s,free text %d%s", i, score, cities[rng.IntN(len(cities))],
			notes[rng.IntN(len(notes))], label, rng.IntN(1000), end)
	}
	return b.String()
}

// cellText renders row i of column c, "<missing>" when missing, so chunks
// and whole tables compare by value and level name, not by code.
func cellText(c *Column, i int) string {
	switch {
	case c.IsMissing(i):
		return "<missing>"
	case c.Kind == Numeric:
		return strconv.FormatFloat(c.Num[i], 'g', -1, 64)
	}
	return "level " + c.Levels[c.Codes[i]]
}

// checkChunk checks what every chunk must keep: full columns, codes among
// the chunk's own levels, levels sorted and all used, the missing count,
// sorted classes.
func checkChunk(t *testing.T, ch *Table) {
	t.Helper()
	for _, c := range ch.Columns {
		if c.Len() != ch.Rows {
			t.Fatalf("column %q has %d rows, chunk %d", c.Name, c.Len(), ch.Rows)
		}
		miss := 0
		used := make([]bool, len(c.Levels))
		for i := range c.Len() {
			switch {
			case c.IsMissing(i):
				miss++
			case c.Kind == Categorical && int(c.Codes[i]) >= len(c.Levels):
				t.Fatalf("column %q row %d: code %d of %d levels", c.Name, i, c.Codes[i], len(c.Levels))
			case c.Kind == Categorical:
				used[c.Codes[i]] = true
			}
		}
		if c.Kind == Categorical && (!slices.IsSorted(c.Levels) || slices.Contains(used, false)) {
			t.Fatalf("column %q: levels %q not sorted or not all used", c.Name, c.Levels)
		}
		if miss != c.Missing {
			t.Fatalf("column %q: %d missing cells, Missing says %d", c.Name, miss, c.Missing)
		}
	}
	if ch.LabelName != "" && (len(ch.Label) != ch.Rows || !slices.IsSorted(ch.Classes)) {
		t.Fatalf("label: %d labels for %d rows, classes %q", len(ch.Label), ch.Rows, ch.Classes)
	}
}

// kindsOf returns the kinds ReadFile inferred, to force them on both reads.
func kindsOf(t *testing.T, tab *Table) map[string]Kind {
	t.Helper()
	kinds := map[string]Kind{}
	for _, c := range tab.Columns {
		kinds[c.Name] = c.Kind
	}
	return kinds
}

func TestScanMatchesRead(t *testing.T) {
	big := scanText(30000, 1, true) // about 1 MiB: several 512 KiB blocks
	cases := []struct {
		name string
		path string // a fixture; else text
		text string
		opts ReadOptions
		// skip names columns ReadFile keeps and Scan leaves out.
		skip []string
	}{
		{name: "mixed fixture", path: "mixed.csv"},
		{name: "mixed fixture gzip", path: "mixed.csv.gz"},
		{name: "bom semicolon crlf", path: "semicolon_bom_crlf.csv", opts: ReadOptions{Label: "class"}},
		{name: "no label", path: "mixed.csv", opts: ReadOptions{NoLabel: true}},
		{name: "generated, labelled", text: big, opts: ReadOptions{DropMissingLabel: true, Categorical: []string{"note"}}, skip: []string{"id", "extra"}},
		{name: "generated, no label", text: big, opts: ReadOptions{NoLabel: true, Label: "label", Categorical: []string{"note"}}, skip: []string{"id", "extra"}},
	}
	for _, tc := range cases {
		read := func(opts ReadOptions) (*Table, error) {
			if tc.path != "" {
				return ReadFile(fixture(tc.path), opts)
			}
			return Read(strings.NewReader(tc.text), "gen.csv", opts)
		}
		inferred, err := read(tc.opts)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		opts := tc.opts
		opts.Kinds = kindsOf(t, inferred)
		for _, nm := range append(tc.skip, opts.Categorical...) {
			delete(opts.Kinds, nm)
		}
		want, err := read(opts)
		if err != nil {
			t.Fatalf("%s: forced kinds: %v", tc.name, err)
		}
		for _, size := range []int{1, 7, 1 << 20} {
			t.Run(fmt.Sprintf("%s/chunk=%d", tc.name, size), func(t *testing.T) {
				if testing.Short() && tc.path == "" && size == 1 {
					t.Skip("30,000 one-row chunks are skipped under -short")
				}
				rows := 0
				fn := func(ch *Table, first int) error {
					checkChunk(t, ch)
					if first != rows {
						t.Fatalf("chunk starts at row %d, want %d", first, rows)
					}
					if ch.Rows != size && first+ch.Rows != want.Rows {
						t.Fatalf("chunk of %d rows at row %d, not the last, want %d", ch.Rows, first, size)
					}
					if ch.Source != want.Source || ch.LabelName != want.LabelName {
						t.Fatalf("source %q label %q, want %q %q", ch.Source, ch.LabelName, want.Source, want.LabelName)
					}
					var names []string
					for _, c := range want.Columns {
						if !slices.Contains(tc.skip, c.Name) {
							names = append(names, c.Name)
						}
					}
					if len(ch.Columns) != len(names) {
						t.Fatalf("chunk columns %d, want %q", len(ch.Columns), names)
					}
					for j := range ch.Columns {
						c := &ch.Columns[j]
						wc := &want.Columns[want.Column(c.Name)]
						if c.Name != names[j] || c.Kind != wc.Kind {
							t.Fatalf("column %d: %q %v, want %q %v", j, c.Name, c.Kind, names[j], wc.Kind)
						}
						for i := range ch.Rows {
							if got, w := cellText(c, i), cellText(wc, first+i); got != w {
								t.Fatalf("column %q row %d: %s, want %s", c.Name, first+i, got, w)
							}
						}
					}
					for i := range len(ch.Label) {
						if got, w := ch.Classes[ch.Label[i]], want.Classes[want.Label[first+i]]; got != w {
							t.Fatalf("label row %d: %q, want %q", first+i, got, w)
						}
					}
					rows += ch.Rows
					return nil
				}
				var fp Fingerprint
				var err error
				if tc.path != "" {
					fp, err = ScanFile(fixture(tc.path), opts, size, fn)
				} else {
					fp, err = Scan(strings.NewReader(tc.text), "gen.csv", opts, size, fn)
				}
				if err != nil {
					t.Fatal(err)
				}
				if rows != want.Rows || fp != want.Fingerprint {
					t.Errorf("%d rows, fingerprint %+v; want %d, %+v", rows, fp, want.Rows, want.Fingerprint)
				}
			})
		}
	}
}

func TestScanErrorsMatchRead(t *testing.T) {
	good := scanText(30000, 3, false)
	opts := ReadOptions{Kinds: map[string]Kind{"score": Numeric, "city": Categorical, "note": Categorical}}
	cases := []struct {
		name string
		bad  string // appended after the good rows, then more good rows
		want error
	}{
		{"ragged record", "1,2,Lyon,x,yes\n", ErrRagged},
		{"word in a numeric column", "1,12k,Lyon,x,yes,e\n", ErrNotNumber},
		{"infinite number", "1,-Inf,Lyon,x,yes,e\n", ErrNotFinite},
		{"bare quote", "1,2,Ly\"on,x,yes,e\n", ErrBareQuote},
		{"text after a closing quote", "1,2,\"Lyon\"x,x,yes,e\n", ErrQuote},
		{"missing label", "1,2,Lyon,x,NA,e\n", ErrMissingLabel},
		{"NUL byte", "1,2,Ly\x00on,x,yes,e\n", ErrNUL},
		{"invalid UTF-8", "1,2,Ly\xffon,x,yes,e\n", ErrUTF8},
		{"record over 1 MiB", "1,2," + strings.Repeat("a", maxRecord) + ",x,yes,e\n", ErrLineTooLong},
		{"quote never closed", "1,2,\"Lyon,x,yes,e\n", ErrQuote},
	}
	for _, tc := range cases {
		text := good + tc.bad
		if !strings.Contains(tc.name, "never closed") {
			text += scanText(2000, 4, false)[len("id,score,city,note,label,extra\n"):]
		}
		_, rerr := Read(strings.NewReader(text), "bad.csv", opts)
		var want *ParseError
		if !errors.As(rerr, &want) || !errors.Is(rerr, tc.want) {
			t.Fatalf("%s: Read gave %v, want a *ParseError wrapping %v", tc.name, rerr, tc.want)
		}
		for _, size := range []int{1, 7, 1 << 20} {
			t.Run(fmt.Sprintf("%s/chunk=%d", tc.name, size), func(t *testing.T) {
				if testing.Short() && size == 1 {
					t.Skip("30,000 one-row chunks are skipped under -short")
				}
				seen := 0
				_, err := Scan(strings.NewReader(text), "bad.csv", opts, size, func(ch *Table, first int) error {
					seen = first + ch.Rows
					return nil
				})
				var got *ParseError
				if !errors.As(err, &got) || !errors.Is(err, tc.want) {
					t.Fatalf("Scan gave %v, want a *ParseError wrapping %v", err, tc.want)
				}
				g, w := *got, *want
				g.Err, w.Err = nil, nil
				if g != w || got.Error() != want.Error() {
					t.Errorf("Scan: %+v\nRead: %+v", *got, *want)
				}
				// The bad line's chunk is never handed over.
				if seen > 30000 || seen%size != 0 && seen != 0 {
					t.Errorf("fn saw %d rows; the bad line is row %d", seen, 30000)
				}
			})
		}
	}
}

func TestScanReadsForcedColumnsOnly(t *testing.T) {
	// "junk" is 99.9% numbers with one word: Read fails on it (a stray
	// word); Scan leaves it unread.
	var b strings.Builder
	b.WriteString("junk,x,label\n")
	for i := range 2000 {
		junk := strconv.Itoa(i)
		if i == 1500 {
			junk = "oops"
		}
		fmt.Fprintf(&b, "%s,%d,%c\n", junk, i%7, 'a'+byte(i%2))
	}
	text := b.String()
	if _, err := Read(strings.NewReader(text), "junk.csv", ReadOptions{}); !errors.Is(err, ErrStrayWord) {
		t.Fatalf("Read: %v, want the stray word", err)
	}
	cases := []struct {
		name string
		opts ReadOptions
		want []string // column names of each chunk
		err  error
	}{
		{"numeric forced", ReadOptions{Kinds: map[string]Kind{"x": Numeric}}, []string{"x"}, nil},
		{"categorical forced", ReadOptions{Categorical: []string{"x"}}, []string{"x"}, nil},
		{"nothing forced", ReadOptions{}, nil, ErrNoColumns},
		{"nothing forced, no label", ReadOptions{NoLabel: true}, nil, ErrNoColumns},
		{"unknown forced column", ReadOptions{Kinds: map[string]Kind{"y": Numeric}}, nil, ErrUnknownColumn},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			calls := 0
			fp, err := Scan(strings.NewReader(text), "junk.csv", tc.opts, 512, func(ch *Table, first int) error {
				calls++
				var names []string
				for _, c := range ch.Columns {
					names = append(names, c.Name)
				}
				if !slices.Equal(names, tc.want) || ch.LabelName != "label" {
					t.Fatalf("chunk columns %q label %q, want %q label", names, ch.LabelName, tc.want)
				}
				return nil
			})
			if !errors.Is(err, tc.err) {
				t.Fatalf("error %v, want %v", err, tc.err)
			}
			if tc.err == nil && (calls != 4 || fp.Rows != 2000 || fp.Columns != 3) {
				t.Errorf("%d chunks, fingerprint %+v; want 4 chunks, 2000 rows, 3 columns", calls, fp)
			}
		})
	}
}

func TestScanArguments(t *testing.T) {
	const text = "x,label\n1,a\n2,b\n3,a\n"
	opts := ReadOptions{Kinds: map[string]Kind{"x": Numeric}}
	stop := errors.New("enough")
	cases := []struct {
		name  string
		text  string
		opts  ReadOptions
		rows  int
		fn    func(*Table, int) error
		want  error
		calls int
	}{
		{"zero rows per chunk", text, opts, 0, nil, ErrOptions, 0},
		{"fn's error returned as is", text, opts, 1, func(*Table, int) error { return stop }, stop, 1},
		{"fn's error on the last chunk", text, opts, 2, func(_ *Table, first int) error {
			if first == 2 {
				return stop
			}
			return nil
		}, stop, 2},
		{"empty input", "", opts, 1, nil, ErrEmpty, 0},
		{"header only", "x,label\n", opts, 1, nil, ErrNoRows, 0},
		{"every label missing", "x,label\n1,?\n2,NA\n", ReadOptions{Kinds: opts.Kinds, DropMissingLabel: true}, 1, nil, ErrNoRows, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			calls := 0
			_, err := Scan(strings.NewReader(tc.text), "args.csv", tc.opts, tc.rows, func(ch *Table, first int) error {
				calls++
				if tc.fn != nil {
					return tc.fn(ch, first)
				}
				return nil
			})
			if !errors.Is(err, tc.want) || calls != tc.calls {
				t.Errorf("error %v after %d calls; want %v after %d", err, calls, tc.want, tc.calls)
			}
			var pe *ParseError
			if errors.As(err, &pe) == errors.Is(err, stop) {
				t.Errorf("error %T: fn's errors come back as they are, the others as *ParseError", err)
			}
		})
	}
}

func TestScanFileMissing(t *testing.T) {
	_, err := ScanFile(fixture("no-such-file.csv"), ReadOptions{}, 10, func(*Table, int) error { return nil })
	var pe *ParseError
	if !errors.As(err, &pe) || !errors.Is(err, ErrRead) || !strings.Contains(err.Error(), "no-such-file.csv") {
		t.Errorf("error %v, want a *ParseError wrapping ErrRead naming the file", err)
	}
}
