package datasets

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
)

// ReadOptions sets how a file is read. The zero value reads a headed CSV
// file whose delimiter is detected, with the default missing tokens and the
// label in a column named "label".
type ReadOptions struct {
	// NoHeader says the first record is data; the columns are named c1..cN.
	NoHeader bool
	// Delimiter separates fields. 0 detects it among , ; tab | from the
	// first line (the most frequent outside quotes; ',' when none occurs).
	Delimiter rune
	// MissingTokens are the cell texts read as missing, compared exactly
	// (case matters) after trimming. nil means DefaultMissingTokens; an
	// empty non-nil slice means no cell is missing, not even an empty one.
	MissingTokens []string
	// Label names the label column. "" means a column named "label"; when
	// there is none the error lists the columns. With NoLabel, a column of
	// this name is skipped when present, so one schema reads labelled and
	// unlabelled files alike.
	Label string
	// NoLabel reads feature columns only (for prediction on unlabelled
	// rows): Table.Classes and Table.Label are nil.
	NoLabel bool
	// OneClass accepts a label with a single class, as fresh rows checked
	// against a model may hold (a batch of one class only); without it
	// such a label is an error (ErrOneClass), since nothing can be
	// trained on it.
	OneClass bool
	// Categorical forces these columns categorical: cells are kept as text.
	Categorical []string
	// Ignore skips these columns.
	Ignore []string
	// Kinds forces the kind of these columns, as when fresh rows are read
	// with a model's schema. A word in a column forced Numeric is a
	// *ParseError (ErrNotNumber). Columns with a forced kind are kept even
	// when every cell is missing.
	Kinds map[string]Kind
	// DeferKinds reads an inferred column holding a word or a non-finite
	// number as categorical (numbers as their shortest round-trip text),
	// whatever its share of numbers, instead of failing on a stray word:
	// its kind is left for Table.InferKindsFrom to decide on the rows a
	// caller may look at (a trainer's prior rows), so that the other rows
	// shape no kind. Without it, a column whose non-missing cells are over
	// 90% numbers but not all is an error (ErrStrayWord, ErrNotFinite).
	DeferKinds bool
	// DecimalComma reads cells written with a decimal comma ("1,5",
	// "-0,25") as numbers. Without it, an inferred column whose only
	// non-numbers are such cells is an error (ErrDecimalComma) rather than
	// a silently categorical column, and so is such a cell in a column
	// forced numeric.
	DecimalComma bool
	// MaxClasses caps the number of classes of the label. 0 means the
	// default rule: at most max(10, Rows/10) classes, and at most 10 when
	// every class name is a number (a numeric label with many values is
	// more likely a quantity to predict than a set of classes). A negative
	// value means no cap. More classes is an error (ErrTooManyClasses).
	// The cap does not apply with OneClass (fresh rows checked against a
	// model, whose classes are the model's).
	MaxClasses int
	// DropMissingLabel drops rows whose label is missing instead of failing;
	// Table.DroppedRows counts them.
	DropMissingLabel bool
	// Warn receives warnings (dropped empty columns, dropped rows); nil
	// discards them.
	Warn func(msg string)
}

// DefaultMissingTokens are the cell texts read as missing by default.
var DefaultMissingTokens = []string{"", "NA", "N/A", "NaN", "null", "?"}

// strayShare is the share of numeric cells above which a column with words
// in it is taken for a numeric column with stray words (an error), not a
// categorical one.
const strayShare = 0.9

// ReadFile reads a CSV file (gzip detected by its magic bytes); path "-"
// reads standard input.
func ReadFile(path string, opts ReadOptions) (*Table, error) {
	if path == "-" {
		return Read(os.Stdin, "-", opts)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &ParseError{File: path, Err: fmt.Errorf("%w: %w", ErrRead, err)}
	}
	defer f.Close()
	return Read(f, path, opts)
}

// Read reads CSV text (gzip detected by its magic bytes) from r in one
// streaming pass; name is used in errors and as Table.Source.
//
// Parsing runs on GOMAXPROCS workers: one goroutine reads, hashes and cuts
// the input into blocks of whole records, the workers parse blocks, and
// the calling goroutine merges them in input order, so the result does not
// depend on scheduling. At most a few blocks of text are held at a time.
//
// Names in the header and unquoted cells are trimmed of surrounding spaces
// (and tabs, unless tab is the delimiter); quoted cells are kept as they
// are. Blank lines are skipped. Every error is a *ParseError.
func Read(r io.Reader, name string, opts ReadOptions) (*Table, error) {
	t, perr := read(r, name, opts)
	if perr != nil {
		return nil, perr
	}
	return t, nil
}

func read(r io.Reader, name string, opts ReadOptions) (*Table, *ParseError) {
	size := sizeOf(r) // before the first read: a Len shrinks as it is read
	var m *merger
	c, err := parseInOrder(r, name, opts,
		func(c *chunker, p *plan) *ParseError { m = newMerger(p, size, c.gz); return nil },
		func(res *result) error { m.merge(res); return nil })
	if err != nil {
		var perr *ParseError
		errors.As(err, &perr) // every error but each's is one, and each returns none
		return nil, perr
	}
	t, perr := m.finish(opts)
	if perr != nil {
		return nil, perr
	}
	t.Source = name
	t.Fingerprint = Fingerprint{SHA256: c.digest, Rows: m.rows + m.dropped, Columns: len(m.p.names)}
	return t, nil
}

func checkDelim(file string, d rune) (byte, *ParseError) {
	if d == 0 {
		return 0, nil
	}
	if d >= 0x80 || d == '"' || d == '\r' || d == '\n' || d == ' ' {
		return 0, &ParseError{File: file, Err: fmt.Errorf("%w: delimiter %q: want one ASCII byte other than quote, space or line break", ErrOptions, d)}
	}
	return byte(d), nil
}

// sizeOf returns the input's size when it is known up front, else -1.
func sizeOf(r io.Reader) int64 {
	switch v := r.(type) {
	case interface{ Stat() (fs.FileInfo, error) }:
		if st, err := v.Stat(); err == nil && st.Mode().IsRegular() {
			return st.Size()
		}
	case interface{ Len() int }:
		return int64(v.Len())
	}
	return -1
}

// newPlan reads the header from the first block and resolves the options
// against it. It returns the first block with the header removed.
func newPlan(file string, delim byte, first chunk, opts ReadOptions) (*plan, chunk, *ParseError) {
	p := &plan{file: file, delim: delim, trimTb: delim != '\t', label: -1, drop: opts.DropMissingLabel, comma: opts.DecimalComma}
	tokens := opts.MissingTokens
	if tokens == nil {
		tokens = DefaultMissingTokens
	}
	p.miss = newMissingSet(tokens)

	buf := first.buf
	pos, line := 0, first.line
	for pos < len(buf) && (buf[pos] == '\n' || buf[pos] == '\r' && pos+1 < len(buf) && buf[pos+1] == '\n') {
		if buf[pos] == '\r' {
			pos++
		}
		pos, line = pos+1, line+1
	}
	if pos == len(buf) {
		return nil, first, &ParseError{File: file, Err: ErrEmpty}
	}
	// Split a copy: a headed file's first record is not data, and a
	// headless one's is parsed again by a worker.
	hbuf := slices.Clone(buf[pos:min(len(buf), pos+maxRecord+2)])
	var rec record
	next, lines, perr := rec.split(hbuf, 0, line, delim, file)
	if perr != nil {
		return nil, first, perr
	}
	if bad, why := firstBad(hbuf[:next]); why != nil {
		return nil, first, &ParseError{File: file, Line: line + strings.Count(string(buf[pos:pos+bad]), "\n"), Column: rec.fieldAt(bad) + 1, Err: why}
	}
	n := len(rec.start)
	p.names = make([]string, n)
	for f := range n {
		if opts.NoHeader {
			p.names[f] = "c" + strconv.Itoa(f+1)
			continue
		}
		p.names[f] = strings.Trim(string(hbuf[rec.start[f]:rec.end[f]]), " \t")
	}
	if !opts.NoHeader {
		first.buf = buf[pos+next:]
		first.line = line + lines
		seen := make(map[string]int, n)
		for f, nm := range p.names {
			if nm == "" {
				return nil, first, &ParseError{File: file, Line: line, Column: f + 1, Err: ErrEmptyName}
			}
			if g, dup := seen[nm]; dup {
				return nil, first, &ParseError{File: file, Line: line, Column: f + 1, ColumnName: nm,
					Err: fmt.Errorf("%w: also column %d", ErrDuplicateName, g+1)}
			}
			seen[nm] = f
		}
	}
	if perr := p.resolve(opts, line); perr != nil {
		return nil, first, perr
	}
	return p, first, nil
}

// resolve sets each field's mode from the options.
func (p *plan) resolve(opts ReadOptions, line int) *ParseError {
	index := make(map[string]int, len(p.names))
	for f, nm := range p.names {
		index[nm] = f
	}
	fail := func(nm string, err error) *ParseError {
		e := &ParseError{File: p.file, Line: line, ColumnName: nm, Err: err}
		if f, ok := index[nm]; ok {
			e.Column = f + 1
		}
		return e
	}
	p.modes = make([]mode, len(p.names))
	for f := range p.modes {
		p.modes[f] = modeInfer
	}
	find := func(nm, what string) (int, *ParseError) {
		f, ok := index[nm]
		if !ok {
			return 0, fail(nm, fmt.Errorf("%w (it is one of %s; the file's columns: %s)", ErrUnknownColumn, what, strings.Join(p.names, ", ")))
		}
		return f, nil
	}
	switch {
	case opts.NoLabel:
		if f, ok := index[opts.Label]; ok && opts.Label != "" {
			p.modes[f] = modeSkip
		}
	default:
		nm := opts.Label
		if nm == "" {
			nm = "label"
		}
		f, ok := index[nm]
		if !ok {
			return fail(nm, fmt.Errorf("%w: no column %q; name the label column (columns: %s)", ErrNoLabel, nm, strings.Join(p.names, ", ")))
		}
		p.label = f
		p.modes[f] = modeLabel
	}
	for _, nm := range opts.Ignore {
		f, perr := find(nm, "the columns to ignore")
		if perr != nil {
			return perr
		}
		if p.modes[f] == modeLabel {
			return fail(nm, fmt.Errorf("%w: the label column cannot be ignored", ErrOptions))
		}
		p.modes[f] = modeSkip
	}
	force := func(nm string, m mode, what string) *ParseError {
		f, perr := find(nm, what)
		if perr != nil {
			return perr
		}
		switch p.modes[f] {
		case modeLabel:
			return fail(nm, fmt.Errorf("%w: the label column's kind cannot be forced", ErrOptions))
		case modeSkip:
			return fail(nm, fmt.Errorf("%w: the column is ignored and its kind forced", ErrOptions))
		case modeInfer:
			p.modes[f] = m
		default:
			if p.modes[f] != m {
				return fail(nm, fmt.Errorf("%w: the column is forced both numeric and categorical", ErrOptions))
			}
		}
		return nil
	}
	for _, nm := range opts.Categorical {
		if perr := force(nm, modeCat, "the columns to read as categories"); perr != nil {
			return perr
		}
	}
	names := make([]string, 0, len(opts.Kinds))
	for nm := range opts.Kinds {
		names = append(names, nm)
	}
	slices.Sort(names)
	// A file made for a model usually lacks several of its columns at once:
	// name them all, not only the first.
	var lacking []string
	for _, nm := range names {
		if _, ok := index[nm]; !ok {
			lacking = append(lacking, strconv.Quote(nm))
		}
	}
	if len(lacking) > 1 {
		return fail(names[slices.IndexFunc(names, func(nm string) bool { _, ok := index[nm]; return !ok })],
			fmt.Errorf("%w: the file lacks %d of the columns expected (a model's schema): %s (the file's columns: %s)",
				ErrUnknownColumn, len(lacking), strings.Join(lacking, ", "), strings.Join(p.names, ", ")))
	}
	for _, nm := range names {
		var m mode
		switch opts.Kinds[nm] {
		case Numeric:
			m = modeNum
		case Categorical:
			m = modeCat
		default:
			return fail(nm, fmt.Errorf("%w: unknown kind %d in Kinds", ErrOptions, opts.Kinds[nm]))
		}
		if perr := force(nm, m, "the columns expected (a model's schema)"); perr != nil {
			return perr
		}
	}
	p.slot = make([]int, len(p.modes))
	for f, m := range p.modes {
		p.slot[f] = -1
		if m != modeSkip {
			p.slot[f] = p.nslots
			p.nslots++
		}
	}
	return nil
}

// colState gathers one column over the blocks, in input order.
type colState struct {
	field                              int
	mode                               mode
	nums                               []float64
	codes                              []uint32
	dict                               map[string]uint32
	levels                             []string
	numbers, words, nonfinite, missing int
	firstWord, firstNonFinite          cellRef
	commaWords                         int
	firstComma                         cellRef
}

type merger struct {
	p       *plan
	cols    []colState
	rows    int
	size    int64
	gz      bool
	remap   []uint32
	dropped int
}

func newMerger(p *plan, size int64, gz bool) *merger {
	m := &merger{p: p, size: size, gz: gz, cols: make([]colState, p.nslots)}
	for f, s := range p.slot {
		if s >= 0 {
			m.cols[s] = colState{field: f, mode: p.modes[f], dict: map[string]uint32{}}
		}
	}
	return m
}

// estimate guesses the final row count from the share of the input read,
// so the columns are allocated about once instead of grown by doubling
// (which would leave as much garbage as the table itself).
func (m *merger) estimate(need int, res *result) int {
	off := res.srcOff
	margin := 1.03
	if m.gz {
		off, margin = res.rawOff, 1.10
	}
	if m.size <= 0 || off <= 0 {
		return 2 * need
	}
	est := float64(need) * float64(m.size) / float64(off) * margin
	if est > float64(math.MaxInt32) || est < float64(need) {
		return max(need, 2*need)
	}
	return int(est) + 16
}

func growTo[T any](s []T, add, est int) []T {
	if len(s)+add <= cap(s) {
		return s
	}
	ns := make([]T, len(s), max(len(s)+add, est))
	copy(ns, s)
	return ns
}

func (m *merger) merge(res *result) {
	need := m.rows + res.rows
	est := -1
	for s := range m.cols {
		c, part := &m.cols[s], &res.cols[s]
		if c.mode == modeInfer || c.mode == modeNum {
			if len(c.nums)+res.rows > cap(c.nums) && est < 0 {
				est = m.estimate(need, res)
			}
			c.nums = append(growTo(c.nums, res.rows, est), part.nums...)
		}
		words := c.mode == modeCat || c.mode == modeLabel || part.hasWords
		if words || c.codes != nil {
			if c.codes == nil {
				c.codes = make([]uint32, m.rows, max(need, 2*m.rows))
				for i := range c.codes {
					c.codes[i] = MissingCode
				}
			}
			if len(c.codes)+res.rows > cap(c.codes) && est < 0 {
				est = m.estimate(need, res)
			}
			c.codes = growTo(c.codes, res.rows, est)
			if !words {
				for range res.rows {
					c.codes = append(c.codes, MissingCode)
				}
			} else {
				m.remap = m.remap[:0]
				for _, lv := range part.levels {
					g, ok := c.dict[lv]
					if !ok {
						g = uint32(len(c.levels))
						c.dict[lv] = g
						c.levels = append(c.levels, lv)
					}
					m.remap = append(m.remap, g)
				}
				for _, l := range part.codes {
					if l != MissingCode {
						l = m.remap[l]
					}
					c.codes = append(c.codes, l)
				}
			}
		}
		c.numbers += part.numbers
		c.words += part.words
		c.nonfinite += part.nonfinite
		c.missing += part.missing
		if c.firstWord.line == 0 {
			c.firstWord = part.firstWord
		}
		if c.firstNonFinite.line == 0 {
			c.firstNonFinite = part.firstNonFinite
		}
		c.commaWords += part.commaWords
		if c.firstComma.line == 0 {
			c.firstComma = part.firstComma
		}
	}
	m.rows = need
	m.dropped += res.dropped
}

func (m *merger) warn(opts ReadOptions, format string, args ...any) {
	if opts.Warn != nil {
		opts.Warn(fmt.Sprintf("datasets: %s: ", m.p.file) + fmt.Sprintf(format, args...))
	}
}

func (m *merger) finish(opts ReadOptions) (*Table, *ParseError) {
	p := m.p
	if m.dropped > 0 {
		m.warn(opts, "dropped %d rows whose label is missing", m.dropped)
	}
	if m.rows == 0 {
		err := ErrNoRows
		if m.dropped > 0 {
			err = fmt.Errorf("%w: all %d rows have a missing label", ErrNoRows, m.dropped)
		}
		return nil, &ParseError{File: p.file, Err: err}
	}
	t := &Table{Rows: m.rows, DroppedRows: m.dropped}
	for s := range m.cols {
		c := &m.cols[s]
		name := p.names[c.field]
		colErr := func(ref cellRef, err error) *ParseError {
			return &ParseError{File: p.file, Line: ref.line, Column: c.field + 1, ColumnName: name, Field: ref.text, Err: err}
		}
		switch c.mode {
		case modeLabel:
			if perr := m.label(t, c, name, opts); perr != nil {
				return nil, perr
			}
			continue
		case modeInfer:
			if c.numbers+c.words+c.nonfinite == 0 {
				m.warn(opts, "column %q dropped: every cell is missing", name)
				t.DroppedColumns = append(t.DroppedColumns, name)
				continue
			}
			if c.words+c.nonfinite == 0 {
				t.Columns = append(t.Columns, Column{Name: name, Kind: Numeric, Num: c.nums, Missing: c.missing, Inferred: true})
				continue
			}
			if c.commaWords == c.words && c.nonfinite == 0 {
				return nil, colErr(c.firstComma, fmt.Errorf(
					"%w: every one of the column's %d non-numbers looks like a number with a decimal comma; read the file with the decimal-comma option, or force the column categorical if the comma separates thousands or the cells are codes",
					ErrDecimalComma, c.words))
			}
			nonMissing := c.numbers + c.words + c.nonfinite
			share := float64(c.numbers+c.nonfinite) / float64(nonMissing)
			if share > strayShare && !opts.DeferKinds {
				if c.nonfinite > 0 && (c.words == 0 || c.firstNonFinite.line <= c.firstWord.line) {
					return nil, colErr(c.firstNonFinite, fmt.Errorf("%w: the column is numeric; if the cell means missing, add it to the missing tokens", ErrNotFinite))
				}
				return nil, colErr(c.firstWord, fmt.Errorf(
					"%w: %.1f%% of the column's %d non-missing cells are numbers, this one is not; add %q to the missing tokens, or force the column categorical",
					ErrStrayWord, 100*share, nonMissing, c.firstWord.text))
			}
			t.Columns = append(t.Columns, m.mixed(c, name))
		case modeNum:
			t.Columns = append(t.Columns, Column{Name: name, Kind: Numeric, Num: c.nums, Missing: c.missing})
		case modeCat:
			sortLevels(c.levels, c.codes)
			t.Columns = append(t.Columns, Column{Name: name, Kind: Categorical, Codes: c.codes, Levels: c.levels, Missing: c.missing})
		}
		c.nums, c.codes = nil, nil
	}
	if len(t.Columns) == 0 {
		return nil, &ParseError{File: p.file, Err: fmt.Errorf("%w (columns: %s)", ErrNoColumns, strings.Join(p.names, ", "))}
	}
	return t, nil
}

// label sorts the class names and turns the codes into class indices; a
// single class is an error unless opts.OneClass, and so are more classes
// than opts.MaxClasses allows. A rare class of fewer than fewRows rows is
// warned about: one stray label value quietly adds a class.
func (m *merger) label(t *Table, c *colState, name string, opts ReadOptions) *ParseError {
	oneClass := opts.OneClass
	if len(c.levels) < 2 && !(oneClass && len(c.levels) == 1) {
		e := &ParseError{File: m.p.file, Column: c.field + 1, ColumnName: name, Err: ErrOneClass}
		if len(c.levels) == 1 {
			e.Field = c.levels[0]
		}
		return e
	}
	t.LabelName = name
	t.Classes = slices.Clone(c.levels)
	slices.Sort(t.Classes)
	idx := make([]int, len(c.levels))
	for i, lv := range c.levels {
		idx[i], _ = slices.BinarySearch(t.Classes, lv)
	}
	t.Label = make([]int, len(c.codes))
	for i, code := range c.codes {
		t.Label[i] = idx[code]
	}
	if oneClass {
		return nil
	}
	if limit, why := classCap(opts.MaxClasses, m.rows, t.Classes); limit >= 0 && len(t.Classes) > limit {
		return &ParseError{File: m.p.file, Column: c.field + 1, ColumnName: name,
			Err: fmt.Errorf("%w: %d classes, more than %d (%s); is it a quantity rather than a class? Raise the cap on classes if it is meant", ErrTooManyClasses, len(t.Classes), limit, why)}
	}
	for k, n := range t.ClassCounts() {
		if n < fewRows && n*20 < m.rows {
			m.warn(opts, "label %q: class %q has only %s; a stray label value? (add it to the missing tokens and drop rows with a missing label if so)", name, t.Classes[k], plural(n, "row"))
		}
	}
	return nil
}

// fewRows is the class size under which a class is warned about, when it
// is also under 5% of the rows (a tiny file's small classes are no
// surprise): fewer rows than this cannot show much of a class (common
// practice, no source).
const fewRows = 5

// classCap returns the cap on the number of classes and why, -1 for none.
// The default rule (set 0) is a judgement call, common practice, no
// source: a tenth of the rows, at least 10, and 10 for a label whose
// class names are all numbers (digits 0..9 pass; a measured quantity with
// hundreds of values does not).
func classCap(set, rows int, classes []string) (int, string) {
	switch {
	case set < 0:
		return -1, ""
	case set > 0:
		return set, "the cap set"
	}
	numeric := true
	for _, c := range classes {
		if _, k := parseNumber([]byte(c)); k != cellNumber {
			numeric = false
			break
		}
	}
	if numeric {
		return 10, "the default cap for a label whose values are all numbers"
	}
	return max(rows/10, 10), "the default cap: a tenth of the rows, at least 10"
}

func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}

// mixed builds a categorical column from an inferred column holding both
// numbers and words. Numbers become levels in their shortest round-trip
// form ("1.50" and "1.5" are one level), and the levels are sorted by
// their text.
func (m *merger) mixed(c *colState, name string) Column {
	col := Column{Name: name, Kind: Categorical, Codes: make([]uint32, len(c.nums)), Missing: c.missing, Inferred: true}
	dict := map[string]uint32{}
	wordCode := make([]uint32, len(c.levels))
	for i := range wordCode {
		wordCode[i] = MissingCode
	}
	code := func(s string) uint32 {
		g, ok := dict[s]
		if !ok {
			g = uint32(len(col.Levels))
			dict[s] = g
			col.Levels = append(col.Levels, s)
		}
		return g
	}
	for i, v := range c.nums {
		switch w := c.codes[i]; {
		case w != MissingCode:
			if wordCode[w] == MissingCode {
				wordCode[w] = code(c.levels[w])
			}
			col.Codes[i] = wordCode[w]
		case math.IsNaN(v):
			col.Codes[i] = MissingCode
		default:
			col.Codes[i] = code(strconv.FormatFloat(v, 'g', -1, 64))
		}
	}
	sortLevels(col.Levels, col.Codes)
	return col
}

// sortLevels sorts levels by their text (byte order) and recodes codes to
// match. Codes in order of first appearance would let the order of rows,
// certify rows included, decide ties between levels and the order of
// one-hot inputs; sorted, they depend on the set of levels alone.
func sortLevels(levels []string, codes []uint32) {
	if slices.IsSorted(levels) {
		return
	}
	order := make([]uint32, len(levels)) // order[new code] = old code
	for i := range order {
		order[i] = uint32(i)
	}
	slices.SortFunc(order, func(a, b uint32) int { return strings.Compare(levels[a], levels[b]) })
	recode := make([]uint32, len(levels))
	sorted := make([]string, len(levels))
	for nw, old := range order {
		recode[old] = uint32(nw)
		sorted[nw] = levels[old]
	}
	copy(levels, sorted)
	for i, c := range codes {
		if c != MissingCode {
			codes[i] = recode[c]
		}
	}
}
