package sqlexport

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"surety/datasets"
	"surety/voters"
)

// DefaultTable is the input table's name when Options.Table is empty.
const DefaultTable = "input_rows"

// MaxTermsPerLevel is the most terms one sum adds in one query level; a
// longer sum goes on in the next level out. SQLite's default limit on an
// expression's depth is 1,000 (SQLITE_MAX_EXPR_DEPTH, sqlite.org/limits.html);
// a term adds about 5 to the depth of a sum.
const MaxTermsPerLevel = 900

// Output column names. A class's total weight is named WeightPrefix plus
// the class name.
const (
	ClassColumn  = "class"
	MarginColumn = "margin"
	WeightPrefix = "weight_"
)

// ErrTableName is wrapped by the error for a table name that is not an
// identifier.
var ErrTableName = errors.New("not a table name")

// Options sets Write. The zero value reads DefaultTable and returns the
// class and the margin only.
type Options struct {
	// Table is the input table: one identifier of letters, digits and
	// underscores not starting with a digit, or several joined by dots
	// (schema.table). Each part is quoted, so case is kept. "" means
	// DefaultTable.
	Table string
	// Keep names input columns passed through to the output ahead of the
	// class (a row key, to join the predictions back). They are not read
	// otherwise, so they may hold anything.
	Keep []string
	// ClassWeights adds one column per class, WeightPrefix plus the class
	// name: the total weight of the voters that chose it.
	ClassWeights bool
	// Provenance is written in the header comment.
	Provenance Provenance
}

// Provenance is what the header comment says about the vote.
type Provenance struct {
	// Statement is the certificate in one sentence; "" leaves the line out.
	Statement string
	// Delta is the certificate's delta; 0 leaves the line out.
	Delta float64
	// Data is the fingerprint of the training data; a zero value leaves the
	// line out.
	Data datasets.Fingerprint
	// ModelSHA256 is the hex SHA-256 of the model file's bytes; "" leaves
	// the line out.
	ModelSHA256 string
	// Label is the label column's name in the training data, for the
	// reader; "" leaves it out.
	Label string
}

// CheckTableName reports whether name can be Options.Table.
func CheckTableName(name string) error {
	if name == "" {
		return fmt.Errorf("sqlexport: %w: the name is empty", ErrTableName)
	}
	for _, part := range strings.Split(name, ".") {
		if part == "" {
			return fmt.Errorf("sqlexport: %q is %w: an empty part between dots", name, ErrTableName)
		}
		for i, r := range part {
			letter := r == '_' || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z')
			digit := r >= '0' && r <= '9'
			if !letter && !(digit && i > 0) {
				return fmt.Errorf("sqlexport: %q is %w: use letters, digits and underscores, not starting with a digit, parts joined by dots", name, ErrTableName)
			}
		}
	}
	return nil
}

// Write writes v as one SELECT over the table of opts, reading the columns
// of schema (the model's: every column a voter reads, with its kind), to w.
// Voters of weight 0 are left out. It fails, writing nothing, when the vote
// does not check (voter fields, classes, weights), a voter reads a column
// the schema lacks or holds with another kind, a voter has a kind this
// package cannot translate, or a name cannot be written.
func Write(w io.Writer, v *voters.Vote, schema []voters.ColumnSpec, opts Options) error {
	g, err := newGen(v, schema, opts)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	g.write(bw)
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("sqlexport: %w", err)
	}
	return nil
}

// gen holds one translation: the vote, its inputs and the query levels
// from the innermost (which reads the table) out.
type gen struct {
	v      *voters.Vote
	schema []voters.ColumnSpec
	col    map[string]int // schema index of a column name
	opts   Options
	table  string // quoted
	levels [][]string
}

func newGen(v *voters.Vote, schema []voters.ColumnSpec, opts Options) (*gen, error) {
	if v == nil {
		return nil, errors.New("sqlexport: no vote")
	}
	k := len(v.Classes)
	if k < 2 {
		return nil, fmt.Errorf("sqlexport: the vote has %d classes, want at least 2", k)
	}
	if len(v.Weights) != len(v.Voters) {
		return nil, fmt.Errorf("sqlexport: %d weights for %d voters", len(v.Weights), len(v.Voters))
	}
	for i, wt := range v.Weights {
		if math.IsNaN(wt) || math.IsInf(wt, 0) {
			return nil, fmt.Errorf("sqlexport: weight %d is %v", i, wt)
		}
	}
	if opts.Table == "" {
		opts.Table = DefaultTable
	}
	if err := CheckTableName(opts.Table); err != nil {
		return nil, err
	}
	g := &gen{v: v, schema: schema, col: map[string]int{}, opts: opts}
	parts := strings.Split(opts.Table, ".")
	for i, p := range parts {
		parts[i] = ident(p)
	}
	g.table = strings.Join(parts, ".")
	for i, c := range schema {
		if err := checkText("column name", c.Name, true); err != nil {
			return nil, err
		}
		if c.Kind != datasets.Numeric && c.Kind != datasets.Categorical {
			return nil, fmt.Errorf("sqlexport: column %q has no kind", c.Name)
		}
		if _, dup := g.col[c.Name]; dup {
			return nil, fmt.Errorf("sqlexport: column %q is twice in the schema", c.Name)
		}
		g.col[c.Name] = i
	}
	names := map[string]bool{ClassColumn: true, MarginColumn: true}
	for _, c := range v.Classes {
		if err := checkText("class name", c, false); err != nil {
			return nil, err
		}
		if opts.ClassWeights {
			names[WeightPrefix+c] = true
		}
	}
	for _, c := range opts.Keep {
		if err := checkText("kept column", c, true); err != nil {
			return nil, err
		}
		if names[c] {
			return nil, fmt.Errorf("sqlexport: kept column %q has the name of an output column", c)
		}
		names[c] = true
	}
	for i, vt := range v.Voters {
		if v.Weights[i] == 0 {
			continue
		}
		if vt == nil {
			return nil, fmt.Errorf("sqlexport: voter %d is nil", i)
		}
		if err := vt.Check(k); err != nil {
			return nil, fmt.Errorf("sqlexport: voter %d (%s): %w", i, vt.Kind(), err)
		}
		if err := g.checkVoter(vt); err != nil {
			return nil, fmt.Errorf("sqlexport: voter %d (%s): %w", i, vt.Kind(), err)
		}
	}
	g.build()
	return g, nil
}

// checkVoter checks that the voter's kind is one this package translates
// and that its columns are in the schema with the kinds it reads.
func (g *gen) checkVoter(vt voters.Voter) error {
	need := func(name string, kind datasets.Kind) error {
		i, ok := g.col[name]
		if !ok {
			return fmt.Errorf("column %q is not in the schema", name)
		}
		if g.schema[i].Kind != kind {
			return fmt.Errorf("column %q is %s in the schema, the voter reads it as %s", name, g.schema[i].Kind, kind)
		}
		return nil
	}
	switch s := vt.(type) {
	case *voters.Stump:
		return need(s.Column, datasets.Numeric)
	case *voters.CategoryStump:
		if err := checkText("level", s.Level, false); err != nil {
			return err
		}
		return need(s.Column, datasets.Categorical)
	case *voters.Linear:
		for _, in := range s.Inputs {
			if err := need(in.Column, in.Kind); err != nil {
				return err
			}
			for _, l := range in.Levels {
				if err := checkText("level", l, false); err != nil {
					return err
				}
			}
		}
		return nil
	}
	return fmt.Errorf("kind %q has no SQL form", vt.Kind())
}

// checkText refuses what no SQL text can carry: a NUL byte, invalid UTF-8
// and, for an identifier, the empty name.
func checkText(what, s string, identifier bool) error {
	switch {
	case identifier && s == "":
		return fmt.Errorf("sqlexport: %s is empty", what)
	case strings.ContainsRune(s, 0):
		return fmt.Errorf("sqlexport: %s %q holds a NUL byte", what, s)
	case !utf8.ValidString(s):
		return fmt.Errorf("sqlexport: %s %q is not UTF-8", what, s)
	}
	return nil
}

// Aliases of the query levels. Only the innermost level reads the table's
// names; every other level reads these, so no input name can clash.
func xcol(i int) string        { return "x" + strconv.Itoa(i) }
func kcol(j int) string        { return "k" + strconv.Itoa(j) }
func tcol(c int) string        { return "t" + strconv.Itoa(c) }
func lcol(v int) string        { return "l" + strconv.Itoa(v) }
func scol(v, c int) string     { return "s" + strconv.Itoa(v) + "_" + strconv.Itoa(c) }
func as(expr, a string) string { return expr + " AS " + a }

// maxDouble is the largest finite float64; -maxDouble the smallest.
var maxDouble = num(math.MaxFloat64)

// build lays out the levels, innermost first.
func (g *gen) build() {
	v := g.v
	k := len(v.Classes)
	order := v.SumOrder()

	// Columns every level passes on: the inputs and the kept columns.
	var pass []string
	for i := range g.schema {
		pass = append(pass, xcol(i))
	}
	for j := range g.opts.Keep {
		pass = append(pass, kcol(j))
	}

	// Level 0 reads the table.
	var l0 []string
	for i, c := range g.schema {
		if c.Kind == datasets.Numeric {
			l0 = append(l0, as("CAST("+ident(c.Name)+" AS DOUBLE PRECISION)", xcol(i)))
		} else {
			l0 = append(l0, as(ident(c.Name), xcol(i)))
		}
	}
	for j, c := range g.opts.Keep {
		l0 = append(l0, as(ident(c), kcol(j)))
	}
	g.levels = append(g.levels, l0)

	// The linear voters of the vote: scores, then NaN to NULL, then class.
	var lin []int
	for _, vi := range order {
		if _, ok := v.Voters[vi].(*voters.Linear); ok {
			lin = append(lin, vi)
		}
	}
	if len(lin) > 0 {
		var accs []acc
		for _, vi := range lin {
			l := v.Voters[vi].(*voters.Linear)
			for c := range k {
				accs = append(accs, acc{name: scol(vi, c), init: num(l.Bias[c]), terms: g.linearTerms(l, c)})
			}
		}
		g.sums(accs, pass)
		var norm, cls []string
		norm = append(norm, pass...)
		cls = append(cls, pass...)
		for _, vi := range lin {
			s := make([]string, k)
			for c := range k {
				s[c] = scol(vi, c)
				norm = append(norm, as(notNaN(s[c]), s[c]))
			}
			cls = append(cls, as(linearClass(s), lcol(vi)))
		}
		g.levels = append(g.levels, norm, cls)
	}

	// The class totals, in SumOrder's order.
	accs := make([]acc, k)
	for c := range accs {
		accs[c] = acc{name: tcol(c), init: "0"}
	}
	for _, vi := range order {
		w := num(v.Weights[vi])
		switch s := v.Voters[vi].(type) {
		case *voters.Stump:
			x, t := xcol(g.col[s.Column]), num(s.Threshold)
			if s.Below == s.Above {
				accs[s.Below].terms = append(accs[s.Below].terms, w)
				break
			}
			// NULL makes a comparison unknown, and CASE takes ELSE: the
			// side the missing rule names goes in ELSE.
			// NaN is never <= a number (IEEE 754 and engines that put
			// it above every number alike), so it goes above with NULL;
			// to send both below, the test for above also asks for a
			// number.
			below := "CASE WHEN " + x + " <= " + t + " THEN " + w + " ELSE 0 END"
			above := "CASE WHEN " + x + " <= " + t + " THEN 0 ELSE " + w + " END"
			if s.MissingBelow {
				cond := x + " > " + t + " AND " + isNum(x)
				below = "CASE WHEN " + cond + " THEN 0 ELSE " + w + " END"
				above = "CASE WHEN " + cond + " THEN " + w + " ELSE 0 END"
			}
			accs[s.Below].terms = append(accs[s.Below].terms, below)
			accs[s.Above].terms = append(accs[s.Above].terms, above)
		case *voters.CategoryStump:
			x, l := xcol(g.col[s.Column]), str(s.Level)
			if s.Equal == s.Other {
				accs[s.Equal].terms = append(accs[s.Equal].terms, w)
				break
			}
			equal := "CASE WHEN " + x + " = " + l + " THEN " + w + " ELSE 0 END"
			other := "CASE WHEN " + x + " = " + l + " THEN 0 ELSE " + w + " END"
			if s.MissingEqual {
				equal = "CASE WHEN " + x + " <> " + l + " THEN 0 ELSE " + w + " END"
				other = "CASE WHEN " + x + " <> " + l + " THEN " + w + " ELSE 0 END"
			}
			accs[s.Equal].terms = append(accs[s.Equal].terms, equal)
			accs[s.Other].terms = append(accs[s.Other].terms, other)
		case *voters.Linear:
			for c := range k {
				accs[c].terms = append(accs[c].terms, "CASE WHEN "+lcol(vi)+" = "+strconv.Itoa(c)+" THEN "+w+" ELSE 0 END")
			}
		}
	}
	var keep []string
	for j := range g.opts.Keep {
		keep = append(keep, kcol(j))
	}
	// Every level of the totals may read the inputs and the linear
	// voters' classes.
	withClasses := append([]string{}, pass...)
	for _, vi := range lin {
		withClasses = append(withClasses, lcol(vi))
	}
	g.sums(accs, withClasses)

	// The winner is the first of the largest totals. With two classes the
	// class and the margin read the totals directly; with more, a level
	// names the winner's index first.
	t := make([]string, k)
	for c := range t {
		t[c] = tcol(c)
	}
	var name, marg string
	if k == 2 {
		// d = t0 - t1 has the sign of t0 - t1 exactly (finite doubles:
		// a difference is 0 only between equal values, IEEE 754 with
		// subnormals), and t1 - t0 = -(t0 - t1) exactly (rounding to
		// nearest is symmetric), so d gives Predict's class and margin
		// while each total is referenced once: an engine that inlines
		// nested queries (SQLite does) copies the long sums fewer times.
		diff := append(append([]string{}, keep...), t...)
		diff = append(diff, as("t0 - t1", "d"))
		g.levels = append(g.levels, diff)
		name = "CASE WHEN d >= 0 THEN " + str(v.Classes[0]) + " ELSE " + str(v.Classes[1]) + " END"
		marg = "CASE WHEN d >= 0 THEN d ELSE -d END"
	} else {
		win := append(append([]string{}, keep...), t...)
		win = append(win, as(voteClass(t), "cls"))
		g.levels = append(g.levels, win)
		var b strings.Builder
		b.WriteString("CASE cls")
		for c, cl := range v.Classes {
			b.WriteString(" WHEN " + strconv.Itoa(c) + " THEN " + str(cl))
		}
		b.WriteString(" END")
		name, marg = b.String(), margin(t)
	}

	var out []string
	for j, c := range g.opts.Keep {
		out = append(out, as(kcol(j), ident(c)))
	}
	out = append(out, as(name, ident(ClassColumn)), as(marg, ident(MarginColumn)))
	if g.opts.ClassWeights {
		for c, cl := range v.Classes {
			out = append(out, as(t[c], ident(WeightPrefix+cl)))
		}
	}
	g.levels = append(g.levels, out)
}

// linearTerms returns the terms class c's score adds to its bias, input by
// input, as Linear.score adds them.
func (g *gen) linearTerms(l *voters.Linear, c int) []string {
	var terms []string
	off := 0
	w := l.Weights[c]
	for _, in := range l.Inputs {
		x := xcol(g.col[in.Column])
		if in.Kind == datasets.Numeric {
			// Go evaluates w * (v - mean) / scale left to right, as SQL does.
			terms = append(terms, "CASE WHEN "+isNum(x)+" THEN "+num(w[off])+" * ("+x+" - "+num(in.Mean)+") / "+num(in.Scale)+" ELSE 0 END")
			off++
			continue
		}
		var b strings.Builder
		b.WriteString("CASE " + x)
		nonzero := false
		for f, level := range in.Levels {
			if w[off+f] == 0 {
				continue // adds nothing, as 0 does
			}
			nonzero = true
			b.WriteString(" WHEN " + str(level) + " THEN " + num(w[off+f]))
		}
		b.WriteString(" ELSE 0 END")
		if nonzero {
			terms = append(terms, b.String())
		}
		off += len(in.Levels)
	}
	return terms
}

// acc is a sum spread over levels: init, then terms added left to right.
type acc struct {
	name  string
	init  string
	terms []string
}

// sums adds the levels that compute every accumulator, at most
// MaxTermsPerLevel terms each per level, passing pass on at each.
func (g *gen) sums(accs []acc, pass []string) {
	first := true
	for {
		lv := append([]string{}, pass...)
		more := false
		for i := range accs {
			a := &accs[i]
			var b strings.Builder
			if first {
				b.WriteString(a.init)
			} else {
				b.WriteString(a.name)
			}
			n := min(len(a.terms), MaxTermsPerLevel)
			for _, t := range a.terms[:n] {
				b.WriteString(" + ")
				b.WriteString(t)
			}
			a.terms = a.terms[n:]
			more = more || len(a.terms) > 0
			lv = append(lv, as(b.String(), a.name))
		}
		g.levels = append(g.levels, lv)
		first = false
		if !more {
			return
		}
	}
}

// isNum returns a condition true for every number but NaN, unknown for
// NULL: x <= max holds for every number but +Inf and NaN, -x < x for +Inf
// and not for NaN, whether NaN is unordered (IEEE 754) or above every
// number (PostgreSQL, DuckDB).
func isNum(x string) string {
	return "(" + x + " <= " + maxDouble + " OR -" + x + " < " + x + ")"
}

// notNaN returns x, or NULL when x is NaN.
func notNaN(x string) string {
	return "CASE WHEN " + isNum(x) + " THEN " + x + " END"
}

// linearClass returns the index of the first of the largest of scores s
// that are not NULL (NaN in Go) and above -Inf; 0 when there is none, as
// Linear.Predict's loop from a best score of -Inf gives.
func linearClass(s []string) string {
	var b strings.Builder
	b.WriteString("CASE")
	for c := 1; c < len(s); c++ {
		b.WriteString(" WHEN " + s[c] + " >= -" + maxDouble)
		for d := range s {
			switch {
			case d < c:
				b.WriteString(" AND (" + s[d] + " IS NULL OR " + s[d] + " < " + s[c] + ")")
			case d > c:
				b.WriteString(" AND (" + s[d] + " IS NULL OR " + s[d] + " <= " + s[c] + ")")
			}
		}
		b.WriteString(" THEN " + strconv.Itoa(c))
	}
	b.WriteString(" ELSE 0 END")
	return b.String()
}

// voteClass returns the index of the first of the largest totals t (never
// NULL): class c wins when it beats every earlier class and ties or beats
// every later one.
func voteClass(t []string) string {
	var b strings.Builder
	b.WriteString("CASE")
	for c := 0; c < len(t)-1; c++ {
		b.WriteString(" WHEN ")
		sep := ""
		for d := range t {
			switch {
			case d < c:
				b.WriteString(sep + t[c] + " > " + t[d])
			case d > c:
				b.WriteString(sep + t[c] + " >= " + t[d])
			default:
				continue
			}
			sep = " AND "
		}
		b.WriteString(" THEN " + strconv.Itoa(c))
	}
	b.WriteString(" ELSE " + strconv.Itoa(len(t)-1) + " END")
	return b.String()
}

// margin returns the winner's total minus the largest other total.
func margin(t []string) string {
	var b strings.Builder
	b.WriteString("CASE cls")
	for c := range t {
		var others []string
		for d := range t {
			if d != c {
				others = append(others, t[d])
			}
		}
		b.WriteString(" WHEN " + strconv.Itoa(c) + " THEN " + t[c] + " - " + largest(others))
	}
	b.WriteString(" END")
	return b.String()
}

// largest returns the largest of xs (never NULL): the first that is at
// least every later one.
func largest(xs []string) string {
	if len(xs) == 1 {
		return xs[0]
	}
	var b strings.Builder
	b.WriteString("(CASE")
	for i := 0; i < len(xs)-1; i++ {
		b.WriteString(" WHEN ")
		for j := i + 1; j < len(xs); j++ {
			if j > i+1 {
				b.WriteString(" AND ")
			}
			b.WriteString(xs[i] + " >= " + xs[j])
		}
		b.WriteString(" THEN " + xs[i])
	}
	b.WriteString(" ELSE " + xs[len(xs)-1] + " END)")
	return b.String()
}

// write writes the header comment and the levels, outermost first.
func (g *gen) write(w *bufio.Writer) {
	g.header(w)
	n := len(g.levels)
	for i := n - 1; i >= 0; i-- {
		indent := strings.Repeat("  ", n-1-i)
		w.WriteString(indent + "SELECT\n")
		for j, e := range g.levels[i] {
			w.WriteString(indent + "  " + e)
			if j < len(g.levels[i])-1 {
				w.WriteByte(',')
			}
			w.WriteByte('\n')
		}
		if i == 0 {
			w.WriteString(indent + "FROM " + g.table + "\n")
		} else {
			w.WriteString(indent + "FROM (\n")
		}
	}
	for i := 1; i < n; i++ {
		w.WriteString(strings.Repeat("  ", n-1-i) + ") AS q" + strconv.Itoa(i) + "\n")
	}
	w.WriteString(";\n")
}

func (g *gen) header(w *bufio.Writer) {
	p := g.opts.Provenance
	line := func(s string) { w.WriteString("-- " + comment(s) + "\n") }
	line("A weighted majority vote trained by Surety, as one SQL:2003 SELECT.")
	if p.Statement != "" {
		line("Certificate: " + p.Statement)
	}
	if p.Delta != 0 {
		line("Delta: " + strconv.FormatFloat(p.Delta, 'g', -1, 64))
	}
	if p.Data != (datasets.Fingerprint{}) {
		line(fmt.Sprintf("Training data: sha256 %s, %d rows, %d columns", p.Data.SHA256, p.Data.Rows, p.Data.Columns))
	}
	if p.ModelSHA256 != "" {
		line("Model file: sha256 " + p.ModelSHA256)
	}
	if p.Label != "" {
		line("Label column: " + p.Label)
	}
	line("Reads table " + g.table + ", columns:")
	for _, c := range g.schema {
		line("  " + ident(c.Name) + " " + c.Kind.String())
	}
	line("Missing values are NULL (or NaN in a numeric column). Categories compare as exact text.")
	out := ident(ClassColumn) + " (the predicted class), " + ident(MarginColumn) + " (its total weight minus the runner-up's; 0 is a tie, which goes to the first class listed)"
	if g.opts.ClassWeights {
		out += ", " + ident(WeightPrefix+"<class>") + " (each class's total weight)"
	}
	line("Returns " + out + ".")
	var cl []string
	for _, c := range g.v.Classes {
		cl = append(cl, str(c))
	}
	line("Classes, in order: " + strings.Join(cl, ", "))
}

// comment makes s safe inside a -- comment: no line breaks.
func comment(s string) string {
	return strings.NewReplacer("\r\n", " ", "\n", " ", "\r", " ").Replace(s)
}

// ident quotes an identifier (SQL:2003 5.2 <delimited identifier>: double
// quotes, an inner quote doubled).
func ident(s string) string {
	return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
}

// str quotes a string literal (SQL:2003 5.3 <character string literal>:
// single quotes, an inner quote doubled).
func str(s string) string {
	return "'" + strings.ReplaceAll(s, "'", "''") + "'"
}

// num writes x as a DOUBLE PRECISION value: the shortest decimal that reads
// back as x, in E notation (an approximate numeric literal in SQL:2003
// 5.3), cast so that no engine holds it as an exact DECIMAL. Zero is the
// integer 0, which every engine adds and compares exactly.
func num(x float64) string {
	if x == 0 {
		return "0"
	}
	return "CAST(" + strconv.FormatFloat(x, 'e', -1, 64) + " AS DOUBLE PRECISION)"
}
