package datasets

import (
	"bytes"
	"fmt"
	"math"
	"strconv"
	"unicode/utf8"
)

// mode says what the reader does with one field of each record.
type mode uint8

const (
	modeSkip  mode = iota // ignored column
	modeInfer             // kind decided after the last row
	modeNum               // forced numeric: a word is an error
	modeCat               // forced categorical: text kept as is
	modeLabel             // the label column
)

// plan is what every parse worker needs to know about the columns.
type plan struct {
	file   string
	delim  byte
	trimTb bool // trim tabs as well as spaces (the delimiter is not a tab)
	names  []string
	modes  []mode
	slot   []int // field -> index into result.cols, -1 when skipped
	nslots int
	label  int // field index of the label, -1 when none
	drop   bool
	miss   missingSet
	comma  bool // read numbers with a decimal comma ("1,5")
}

// missingSet holds the missing tokens; first filters on the first byte so
// numbers skip the comparisons.
type missingSet struct {
	empty  bool
	first  [256]bool
	tokens []string
}

func newMissingSet(tokens []string) missingSet {
	var m missingSet
	for _, t := range tokens {
		if t == "" {
			m.empty = true
			continue
		}
		m.first[t[0]] = true
		m.tokens = append(m.tokens, t)
	}
	return m
}

func (m *missingSet) has(b []byte) bool {
	if len(b) == 0 {
		return m.empty
	}
	if !m.first[b[0]] {
		return false
	}
	for _, t := range m.tokens {
		if string(b) == t {
			return true
		}
	}
	return false
}

// cellRef remembers where a notable cell was, for an error raised later.
type cellRef struct {
	line int
	text string
}

// part is one column's share of a parsed block.
type part struct {
	nums  []float64 // modeInfer, modeNum: value, NaN when missing or a word
	codes []uint32  // words: local code, MissingCode otherwise
	// hasWords says codes is in use (always for modeCat and modeLabel).
	hasWords                           bool
	dict                               map[string]uint32
	levels                             []string
	numbers, words, nonfinite, missing int
	firstWord, firstNonFinite          cellRef
	// commaWords counts the words that read as numbers with a decimal
	// comma ("1,5"); firstComma is the first of them.
	commaWords int
	firstComma cellRef
}

func (p *part) reset() {
	p.nums, p.codes = p.nums[:0], p.codes[:0]
	p.hasWords = false
	clear(p.dict)
	p.levels = p.levels[:0]
	p.numbers, p.words, p.nonfinite, p.missing = 0, 0, 0, 0
	p.firstWord, p.firstNonFinite = cellRef{}, cellRef{}
	p.commaWords, p.firstComma = 0, cellRef{}
}

func (p *part) code(b []byte) uint32 {
	if c, ok := p.dict[string(b)]; ok {
		return c
	}
	if p.dict == nil {
		p.dict = make(map[string]uint32)
	}
	s := string(b)
	c := uint32(len(p.levels))
	p.dict[s] = c
	p.levels = append(p.levels, s)
	return c
}

// result is a parsed block.
type result struct {
	seq            int
	rows, dropped  int
	cols           []part
	srcOff, rawOff int64
	err            *ParseError
}

// record holds one split record: field bounds in the block (content
// unquoted in place), and for a record with quotes in it, where each field
// began, its line, and whether it was quoted. A simple record (no quote in
// it, on one line) keeps only the bounds.
type record struct {
	start, end, raw, lines []int
	quoted                 []bool
	simple                 bool
	line                   int
}

func (r *record) reset(line int) {
	r.start, r.end, r.raw, r.lines, r.quoted = r.start[:0], r.end[:0], r.raw[:0], r.lines[:0], r.quoted[:0]
	r.line = line
}

func (r *record) add(raw, start, end, line int, quoted bool) {
	r.raw = append(r.raw, raw)
	r.start = append(r.start, start)
	r.end = append(r.end, end)
	r.lines = append(r.lines, line)
	r.quoted = append(r.quoted, quoted)
}

func (r *record) rawAt(f int) int {
	if r.simple {
		return r.start[f]
	}
	return r.raw[f]
}

func (r *record) lineAt(f int) int {
	if r.simple {
		return r.line
	}
	return r.lines[f]
}

// fieldAt returns the field whose text begins at or before offset off.
func (r *record) fieldAt(off int) int {
	f := 0
	for f+1 < len(r.start) && r.rawAt(f+1) <= off {
		f++
	}
	return f
}

// split splits the record starting at buf[pos] (not a blank line). It
// returns the offset after the record and the number of line breaks in
// it, its own included.
func (r *record) split(buf []byte, pos, line int, delim byte, file string) (next, lines int, perr *ParseError) {
	r.reset(line)
	n := len(buf)
	le := bytes.IndexByte(buf[pos:], '\n') // end of the current physical line
	if le < 0 {
		le = n
	} else {
		le += pos
	}
	if r.simple = bytes.IndexByte(buf[pos:le], '"') < 0; r.simple {
		s := pos
		for {
			e := bytes.IndexByte(buf[s:le], delim)
			if e < 0 {
				break
			}
			r.start = append(r.start, s)
			r.end = append(r.end, s+e)
			s += e + 1
		}
		fe := le
		if fe > s && buf[fe-1] == '\r' {
			fe--
		}
		r.start = append(r.start, s)
		r.end = append(r.end, fe)
		if le == n {
			return n, 0, nil
		}
		return le + 1, 1, nil
	}
	i := pos
	for {
		if i < n && buf[i] == '"' {
			raw, fline := i, line+lines
			w, j := i, i+1
			for {
				k := bytes.IndexByte(buf[j:], '"')
				if k < 0 {
					return 0, 0, &ParseError{File: file, Line: fline, Column: len(r.start) + 1,
						Err: fmt.Errorf("%w: a quoted field opened here is never closed", ErrQuote)}
				}
				seg := buf[j : j+k]
				lines += bytes.Count(seg, []byte{'\n'})
				w += copy(buf[w:], seg)
				j += k + 1
				if j < n && buf[j] == '"' {
					buf[w] = '"'
					w++
					j++
					continue
				}
				break
			}
			r.add(raw, i, w, fline, true)
			switch {
			case j == n:
				return n, lines, nil
			case buf[j] == delim:
				i = j + 1
				continue
			case buf[j] == '\n':
				return j + 1, lines + 1, nil
			case buf[j] == '\r' && (j+1 == n || buf[j+1] == '\n'):
				if j+1 == n {
					return n, lines, nil
				}
				return j + 2, lines + 1, nil
			}
			return 0, 0, &ParseError{File: file, Line: line + lines, Column: len(r.start),
				Field: string(buf[i:w]), Err: fmt.Errorf("%w: text after the closing quote", ErrQuote)}
		}
		if le < i {
			le = bytes.IndexByte(buf[i:], '\n')
			if le < 0 {
				le = n
			} else {
				le += i
			}
		}
		e := bytes.IndexByte(buf[i:le], delim)
		last := e < 0
		if last {
			e = le
		} else {
			e += i
		}
		fe := e
		if last && fe > i && buf[fe-1] == '\r' {
			fe--
		}
		if q := bytes.IndexByte(buf[i:fe], '"'); q >= 0 {
			return 0, 0, &ParseError{File: file, Line: line + lines, Column: len(r.start) + 1,
				Field: string(buf[i:fe]), Err: ErrBareQuote}
		}
		r.add(i, i, fe, line+lines, false)
		if !last {
			i = e + 1
			continue
		}
		if le == n {
			return n, lines, nil
		}
		return le + 1, lines + 1, nil
	}
}

// firstBad returns the offset of the first NUL byte or invalid UTF-8
// sequence in buf, or len(buf) when there is none.
func firstBad(buf []byte) (int, error) {
	bad, why := len(buf), error(nil)
	if i := bytes.IndexByte(buf, 0); i >= 0 {
		bad, why = i, ErrNUL
	}
	if utf8.Valid(buf[:bad]) {
		return bad, why
	}
	for i := 0; i < bad; {
		r, size := utf8.DecodeRune(buf[i:])
		if r == utf8.RuneError && size == 1 {
			return i, ErrUTF8
		}
		i += size
	}
	return bad, why
}

// parseBlock parses one block of whole records into res.
func (p *plan) parseBlock(ch chunk, res *result, rec *record) {
	res.seq, res.srcOff, res.rawOff = ch.seq, ch.srcOff, ch.rawOff
	res.rows, res.dropped, res.err = 0, 0, nil
	if len(res.cols) != p.nslots {
		res.cols = make([]part, p.nslots)
	}
	for i := range res.cols {
		res.cols[i].reset()
	}
	if ch.err != nil {
		res.err = ch.err
		return
	}
	buf := ch.buf
	bad, why := firstBad(buf)
	badLine := 0
	if bad < len(buf) {
		badLine = ch.line + bytes.Count(buf[:bad], []byte{'\n'})
	}
	pos, line := 0, ch.line
	for pos < len(buf) {
		if buf[pos] == '\n' {
			pos, line = pos+1, line+1
			continue
		}
		if buf[pos] == '\r' && pos+1 < len(buf) && buf[pos+1] == '\n' {
			pos, line = pos+2, line+1
			continue
		}
		next, lines, err := rec.split(buf, pos, line, p.delim, p.file)
		if bad < len(buf) && ((err == nil && bad < next) || (err != nil && badLine <= err.Line)) {
			// The split moves quoted text but never the start of a field.
			res.err = p.fieldErr(badLine, rec.fieldAt(bad), "", why)
			return
		}
		if err != nil {
			p.name(err)
			res.err = err
			return
		}
		if next-pos > maxRecord {
			res.err = &ParseError{File: p.file, Line: line, Err: ErrLineTooLong}
			return
		}
		if len(rec.start) != len(p.modes) {
			res.err = &ParseError{File: p.file, Line: line, Column: min(len(rec.start), len(p.modes)) + 1,
				Err: fmt.Errorf("%w: the record has %d, the header %d", ErrRagged, len(rec.start), len(p.modes))}
			p.name(res.err)
			return
		}
		if res.err = p.cells(buf, rec, res); res.err != nil {
			return
		}
		pos, line = next, line+lines
	}
}

func (p *plan) name(e *ParseError) {
	if e.Column > 0 && e.Column <= len(p.names) {
		e.ColumnName = p.names[e.Column-1]
	}
}

func (p *plan) fieldErr(line, f int, field string, err error) *ParseError {
	e := &ParseError{File: p.file, Line: line, Column: f + 1, Field: field, Err: err}
	p.name(e)
	return e
}

// cell returns field f of the record, trimmed of surrounding blanks unless
// it was quoted.
func (p *plan) cell(buf []byte, rec *record, f int) []byte {
	b := buf[rec.start[f]:rec.end[f]]
	if !rec.simple && rec.quoted[f] {
		return b
	}
	for len(b) > 0 && (b[0] == ' ' || (p.trimTb && b[0] == '\t')) {
		b = b[1:]
	}
	for len(b) > 0 && (b[len(b)-1] == ' ' || (p.trimTb && b[len(b)-1] == '\t')) {
		b = b[:len(b)-1]
	}
	return b
}

func (p *plan) cells(buf []byte, rec *record, res *result) *ParseError {
	if p.label >= 0 {
		if lab := p.cell(buf, rec, p.label); p.miss.has(lab) {
			if p.drop {
				res.dropped++
				return nil
			}
			return p.fieldErr(rec.lineAt(p.label), p.label, string(lab),
				fmt.Errorf("%w (set the option to drop such rows, or fill the label)", ErrMissingLabel))
		}
	}
	res.rows++
	for f, m := range p.modes {
		if m == modeSkip {
			continue
		}
		c := &res.cols[p.slot[f]]
		b := p.cell(buf, rec, f)
		if p.miss.has(b) {
			c.missing++
			switch m {
			case modeInfer, modeNum:
				c.nums = append(c.nums, math.NaN())
				if c.hasWords {
					c.codes = append(c.codes, MissingCode)
				}
			default:
				c.codes = append(c.codes, MissingCode)
			}
			continue
		}
		if m == modeCat || m == modeLabel {
			c.codes = append(c.codes, c.code(b))
			c.words++
			continue
		}
		v, k := parseNumber(b)
		comma := k == cellWord && decimalComma(b)
		if comma && p.comma {
			v, k = parseNumber(bytes.Replace(b, []byte{','}, []byte{'.'}, 1))
			comma = false
		}
		if k == cellNumber {
			c.numbers++
			c.nums = append(c.nums, v)
			if c.hasWords {
				c.codes = append(c.codes, MissingCode)
			}
			continue
		}
		if m == modeNum {
			err := ErrNotNumber
			if k == cellNonFinite {
				err = ErrNotFinite
			}
			if comma {
				err = ErrDecimalComma
			}
			return p.fieldErr(rec.lineAt(f), f, string(b), err)
		}
		if !c.hasWords {
			c.hasWords = true
			for range c.nums {
				c.codes = append(c.codes, MissingCode)
			}
		}
		c.nums = append(c.nums, math.NaN())
		c.codes = append(c.codes, c.code(b))
		if k == cellNonFinite {
			c.nonfinite++
			if c.firstNonFinite.line == 0 {
				c.firstNonFinite = cellRef{rec.lineAt(f), string(b)}
			}
		} else {
			c.words++
			if c.firstWord.line == 0 {
				c.firstWord = cellRef{rec.lineAt(f), string(b)}
			}
			if comma {
				c.commaWords++
				if c.firstComma.line == 0 {
					c.firstComma = cellRef{rec.lineAt(f), string(b)}
				}
			}
		}
	}
	return nil
}

type cellKind uint8

const (
	cellNumber cellKind = iota
	cellNonFinite
	cellWord
)

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseNumber classifies a cell. Plain decimals with at most 15 digits and a small exponent take Clinger's exact fast path (an exact
// integer times or over an exact power of ten, rounded once); everything
// else goes to strconv.ParseFloat, so the value is always the correctly
// rounded one. Hex floats and underscores are words; inf, infinity and
// nan (any case, signed) are non-finite numbers.
func parseNumber(b []byte) (float64, cellKind) {
	i, n := 0, len(b)
	neg := false
	if i < n && (b[i] == '+' || b[i] == '-') {
		neg = b[i] == '-'
		i++
	}
	if i == n {
		return 0, cellWord
	}
	if c := b[i]; !(c >= '0' && c <= '9') && c != '.' {
		if c == 'i' || c == 'I' || c == 'n' || c == 'N' {
			return parseSlow(b)
		}
		return 0, cellWord
	}
	var mant uint64
	start := i
	for i < n && b[i]-'0' < 10 {
		mant = mant*10 + uint64(b[i]-'0')
		i++
	}
	digits := i - start
	frac := 0
	if i < n && b[i] == '.' {
		i++
		fs := i
		for i < n && b[i]-'0' < 10 {
			mant = mant*10 + uint64(b[i]-'0')
			i++
		}
		frac = i - fs
		digits += frac
	}
	// Up to 15 digits the mantissa is below 2^53, so exact in a float64.
	if digits == 0 || digits > 15 {
		return parseSlow(b)
	}
	exp := 0
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		eneg := false
		if i < n && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		start := i
		for ; i < n && b[i] >= '0' && b[i] <= '9'; i++ {
			if exp < 10000 {
				exp = exp*10 + int(b[i]-'0')
			}
		}
		if i == start {
			return parseSlow(b)
		}
		if eneg {
			exp = -exp
		}
	}
	if i != n {
		return parseSlow(b)
	}
	e10 := exp - frac
	var v float64
	switch {
	case mant == 0:
		v = 0
	case e10 >= 0 && e10 < len(pow10):
		v = float64(mant) * pow10[e10]
	case e10 < 0 && -e10 < len(pow10):
		v = float64(mant) / pow10[-e10]
	default:
		return parseSlow(b)
	}
	if neg {
		v = -v
	}
	return v, cellNumber
}

// decimalComma reports whether a cell reads as a number written with a
// decimal comma: an optional sign, digits, one comma, digits ("-1,5").
// Such cells are what a spreadsheet in many European locales writes.
func decimalComma(b []byte) bool {
	i := 0
	if i < len(b) && (b[i] == '+' || b[i] == '-') {
		i++
	}
	intDigits := 0
	for i < len(b) && b[i]-'0' < 10 {
		i, intDigits = i+1, intDigits+1
	}
	if intDigits == 0 || i == len(b) || b[i] != ',' {
		return false
	}
	i++
	fracDigits := 0
	for i < len(b) && b[i]-'0' < 10 {
		i, fracDigits = i+1, fracDigits+1
	}
	return fracDigits > 0 && i == len(b)
}

func parseSlow(b []byte) (float64, cellKind) {
	// strconv also takes hex floats and digit-separating underscores; a
	// data file means neither.
	if bytes.ContainsAny(b, "_xX") {
		return 0, cellWord
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil && !math.IsInf(v, 0) {
		return 0, cellWord
	}
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return v, cellNonFinite
	}
	return v, cellNumber
}
