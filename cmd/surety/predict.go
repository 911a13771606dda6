package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"surety/datasets"
	"surety/trainer"
	"surety/trainer/atomicfile"
	"surety/voters"
)

func init() {
	register("predict", "--model FILE --data FILE [--out FILE] [flags]",
		"Predict the class of every row of a CSV file with a trained vote.",
		func() command { return &predictOptions{} })
}

// predictChunkRows is how many rows predict reads, predicts and writes at a
// time: memory holds about this many rows, whatever the file's length.
var predictChunkRows = 32768

type predictOptions struct {
	model  string
	data   dataFlags
	out    string
	json   bool
	id     string
	keep   []string
	scores bool
}

func (o *predictOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` written by train")
	o.data.AddFlags(fs, false)
	fs.StringVar(&o.out, "out", "", "write the predictions CSV to this `file` (default: standard output)")
	fs.BoolVar(&o.json, "json", false, "print JSON: the predictions, or a summary when --out is given")
	fs.StringVar(&o.id, "id", "", "copy this `column` (a row's identifier) into the output, as its first column")
	fs.StringSliceVar(&o.keep, "keep", nil, "copy these `columns` (comma-separated) into the output, after --id and before row")
	fs.BoolVar(&o.scores, "scores", false, "add each class's vote share: the share of the vote's weight on the voters that chose the class (the shares sum to 1); not a calibrated probability")
}

// predictionJSON is one row of predict's --json output.
type predictionJSON struct {
	Row    int     `json:"row"`
	Class  string  `json:"class"`
	Margin float64 `json:"margin"`
	// Kept holds the --id and --keep columns' cells.
	Kept map[string]string `json:"kept,omitempty"`
	// Shares holds each class's vote share (--scores).
	Shares map[string]float64 `json:"shares,omitempty"`
}

// run streams the rows: each chunk is predicted and its CSV lines written
// before the next is read. Only the columns the model reads are read
// (datasets.Scan), so extra columns are ignored whatever they hold. With
// --out, the lines go to a temporary file renamed over the path at the
// end, so a bad row leaves no partial file and any earlier one intact; on
// standard output, the lines of the chunks before a bad row are already
// written (whole lines only). --json without --out prints one object with
// the class counts ahead of the predictions, so it keeps every row's
// prediction (with its kept cells and shares) until the end.
//
// --id and --keep columns are read with the model's columns (as text,
// unless the model reads them as numbers) and copied ahead of row; a cell
// read as missing is written empty, a number in its shortest form.
// --scores adds one share column per class. The cells the vote was never
// shown (inputWatch) are warned about on stderr once the file is read, and
// listed in --json's input_warnings.
func (o *predictOptions) run(ctx context.Context, args []string, e *env) error {
	m, err := modelArg(args, o.model)
	if err != nil {
		return err
	}
	kept := keptColumns(o.id, o.keep)
	base := m.ReadOptions()
	if err := checkKept(kept, base.Label); err != nil {
		return err
	}
	for _, c := range kept {
		if _, ok := base.Kinds[c]; !ok {
			// Forced categorical, a kept column is read as its text and,
			// like the model's columns, must be in the file.
			base.Kinds[c] = datasets.Categorical
		}
	}
	opts, err := o.data.prepare(e, base)
	if err != nil {
		return err
	}

	collect := o.json && o.out == ""
	var dst io.Writer = e.stdout
	var file *atomicfile.File
	if o.out != "" {
		if err := makeFolder(o.out); err != nil {
			return err
		}
		if file, err = atomicfile.Create(o.out); err != nil {
			return err
		}
		defer file.Abort()
		dst = file
	}
	counts := map[string]int{}
	var preds []predictionJSON
	var line []byte
	watch := newInputWatch(m)
	rows := 0
	scan := func(chunk *datasets.Table, first int) error {
		rows += chunk.Rows
		var c []int
		var mg, shares []float64
		var err error
		if o.scores {
			c, mg, shares, err = voteShares(m.Vote, chunk)
		} else {
			c, mg, err = m.Predict(chunk)
		}
		if err != nil {
			return err
		}
		watch.add(chunk)
		cols := make([]*datasets.Column, len(kept))
		for j, name := range kept {
			cols[j] = &chunk.Columns[chunk.Column(name)]
		}
		k := len(m.Classes)
		for _, cl := range c {
			counts[m.Classes[cl]]++
		}
		if collect {
			for i, cl := range c {
				p := predictionJSON{Row: first + i + 1, Class: m.Classes[cl], Margin: mg[i]}
				if len(kept) > 0 {
					p.Kept = map[string]string{}
					for j, name := range kept {
						p.Kept[name] = cellText(cols[j], i)
					}
				}
				if o.scores {
					p.Shares = map[string]float64{}
					for ci, name := range m.Classes {
						p.Shares[name] = shares[i*k+ci]
					}
				}
				preds = append(preds, p)
			}
			return nil
		}
		if first == 0 {
			for _, name := range kept {
				line = append(appendCSVField(line, name), ',')
			}
			line = append(line, "row,class,margin"...)
			if o.scores {
				for _, name := range m.Classes {
					line = appendCSVField(append(line, ','), "share_"+name)
				}
			}
			line = append(line, '\n')
		}
		for i, cl := range c {
			for j := range kept {
				line = append(appendCSVField(line, cellText(cols[j], i)), ',')
			}
			line = appendPrediction(line, first+i+1, m.Classes[cl], mg[i])
			if o.scores {
				line = line[:len(line)-1]
				for ci := range m.Classes {
					line = strconv.AppendFloat(append(line, ','), shares[i*k+ci], 'f', 6, 64)
				}
				line = append(line, '\n')
			}
		}
		_, err = dst.Write(line)
		line = line[:0]
		return err
	}
	stop := e.spinner("predicting " + o.data.path)
	if o.data.path == "-" {
		_, err = datasets.Scan(e.stdin, "-", opts, predictChunkRows, scan)
	} else {
		_, err = datasets.ScanFile(o.data.path, opts, predictChunkRows, scan)
	}
	stop()
	if err != nil {
		return flagHint(err)
	}
	notes := watch.notes()
	if collect {
		if preds == nil {
			preds = []predictionJSON{}
		}
		if err := writeJSON(e.stdout, map[string]any{"rows": rows, "class_counts": counts, "input_warnings": notes, "predictions": preds}); err != nil {
			return err
		}
		watch.print(e, notes)
		return nil
	}
	if file != nil {
		if err := file.Commit(); err != nil {
			return err
		}
		if o.json {
			if err := writeJSON(e.stdout, map[string]any{"rows": rows, "class_counts": counts, "input_warnings": notes, "out": o.out}); err != nil {
				return err
			}
		} else {
			fmt.Fprintf(e.stdout, "%d predictions written to %s\n", rows, o.out)
		}
	}
	watch.print(e, notes)
	return nil
}

// keptColumns returns the columns copied into the output: id first, then
// keep in order, each once.
func keptColumns(id string, keep []string) []string {
	var out []string
	for _, c := range append([]string{id}, keep...) {
		if c != "" && !slices.Contains(out, c) {
			out = append(out, c)
		}
	}
	return out
}

// checkKept refuses a kept column named "label" (or label when the
// model's read options name one): a file read for prediction skips its
// label column, so it could not be copied.
func checkKept(kept []string, label string) error {
	if label == "" {
		label = "label"
	}
	if slices.Contains(kept, label) {
		return usagef("--id/--keep: predict skips a column named %q (the label column of a labelled file), so it cannot copy it", label)
	}
	return nil
}

// cellText returns row's cell of c as the output writes it: a level's
// text, a number's shortest form, "" when missing.
func cellText(c *datasets.Column, row int) string {
	if c.Kind == datasets.Numeric {
		v := c.Num[row]
		if math.IsNaN(v) {
			return ""
		}
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	code := c.Codes[row]
	if code == datasets.MissingCode {
		return ""
	}
	return c.Levels[code]
}

// voteShares predicts every row of t as Model.Predict does and returns,
// besides, each class's share of the vote's weight (k values a row): the
// class totals of Vote.PredictTotals (added in Vote.SumOrder's order, so
// the largest share is the predicted class, ties included) divided by the
// total weight.
func voteShares(v *voters.Vote, t *datasets.Table) ([]int, []float64, []float64, error) {
	rows := make([]int, t.Rows)
	for i := range rows {
		rows[i] = i
	}
	classes, margins, shares, err := v.PredictTotals(t, rows)
	if err != nil {
		return nil, nil, nil, err
	}
	total := 0.0
	for _, i := range v.SumOrder() {
		total += v.Weights[i]
	}
	for i := range shares {
		shares[i] /= total
	}
	return classes, margins, shares, nil
}

// inputWatch counts, per column the model reads, the cells the vote sees
// but was never shown: levels of a categorical column that no voter names
// (the model file keeps a column's training levels only through its
// voters: a linear voter lists every level of the prior rows, a category
// stump names one), and missing cells in a column whose prior rows had
// none (ColumnSpec.Missing; a model file from before it was recorded marks
// no column, so there every missing cell is counted).
type inputWatch struct {
	cols  []voters.ColumnSpec
	known []map[string]bool
	// linear says a linear voter reads the column, so its known levels are
	// all those of the prior rows.
	linear  []bool
	unseen  []int
	missing []int
	samples [][]string
	// more says a column has more unseen levels than its samples.
	more []bool
}

// inputNote is one column's line of predict's warnings.
type inputNote struct {
	Column  string `json:"column"`
	Kind    string `json:"kind"`
	Missing int    `json:"missing_rows"`
	Unseen  int    `json:"unseen_level_rows"`
	// Levels are up to maxUnseenSamples of the unseen levels, sorted.
	Levels []string `json:"unseen_levels,omitempty"`
	// MoreLevels says there are more unseen levels than Levels.
	MoreLevels bool `json:"more_unseen_levels,omitempty"`
	// Known says which levels count as seen: "prior rows" when a linear
	// voter reads the column (it lists every level of the prior rows),
	// "voters" otherwise (the levels the category stumps name). Empty for
	// a numeric column.
	Known string `json:"known_levels,omitempty"`
}

const (
	maxUnseenSamples = 3
	maxInputNotes    = 5
)

func newInputWatch(m *trainer.Model) *inputWatch {
	n := len(m.Columns)
	w := &inputWatch{cols: m.Columns, known: make([]map[string]bool, n), linear: make([]bool, n),
		unseen: make([]int, n), missing: make([]int, n), samples: make([][]string, n), more: make([]bool, n)}
	at := map[string]int{}
	for i, c := range m.Columns {
		at[c.Name] = i
		w.known[i] = map[string]bool{}
	}
	for _, v := range m.Vote.Voters {
		switch v := v.(type) {
		case *voters.CategoryStump:
			if i, ok := at[v.Column]; ok {
				w.known[i][v.Level] = true
			}
		case *voters.Linear:
			for _, in := range v.Inputs {
				if i, ok := at[in.Column]; ok && in.Kind == datasets.Categorical {
					w.linear[i] = true
					for _, l := range in.Levels {
						w.known[i][l] = true
					}
				}
			}
		}
	}
	return w
}

// add counts a chunk's cells.
func (w *inputWatch) add(t *datasets.Table) {
	for i, spec := range w.cols {
		j := t.Column(spec.Name)
		if j < 0 {
			continue
		}
		c := &t.Columns[j]
		if !spec.Missing {
			w.missing[i] += c.Missing
		}
		if c.Kind != datasets.Categorical {
			continue
		}
		// Count by code first: a chunk's levels are few next to its rows.
		per := make([]int, len(c.Levels))
		for _, code := range c.Codes {
			if code != datasets.MissingCode {
				per[code]++
			}
		}
		for code, n := range per {
			if l := c.Levels[code]; n > 0 && !w.known[i][l] {
				w.unseen[i] += n
				if !slices.Contains(w.samples[i], l) {
					w.samples[i] = append(w.samples[i], l)
					slices.Sort(w.samples[i])
					if len(w.samples[i]) > maxUnseenSamples {
						w.samples[i], w.more[i] = w.samples[i][:maxUnseenSamples], true
					}
				}
			}
		}
	}
}

// notes returns a note for each column with a missing cell or an unseen
// level, in the model's column order.
func (w *inputWatch) notes() []inputNote {
	out := []inputNote{}
	for i, spec := range w.cols {
		if w.missing[i] == 0 && w.unseen[i] == 0 {
			continue
		}
		n := inputNote{Column: spec.Name, Kind: spec.Kind.String(), Missing: w.missing[i], Unseen: w.unseen[i], Levels: w.samples[i], MoreLevels: w.more[i]}
		if spec.Kind == datasets.Categorical {
			n.Known = "voters"
			if w.linear[i] {
				n.Known = "prior rows"
			}
		}
		out = append(out, n)
	}
	return out
}

// print writes the notes on stderr, one line a column, at most
// maxInputNotes lines and a line for the rest.
func (w *inputWatch) print(e *env, notes []inputNote) {
	for _, n := range notes[:min(len(notes), maxInputNotes)] {
		var parts []string
		if n.Unseen > 0 {
			quoted := make([]string, len(n.Levels))
			for i, l := range n.Levels {
				quoted[i] = strconv.Quote(l)
			}
			more := ""
			if n.MoreLevels {
				more = ", ..."
			}
			what := "no voter names"
			if n.Known == "prior rows" {
				what = "not in the training rows"
			}
			parts = append(parts, fmt.Sprintf("%s with a level %s (%s%s), voted as any other level", rowsOf(n.Unseen, "row"), what, strings.Join(quoted, ", "), more))
		}
		if n.Missing > 0 {
			parts = append(parts, fmt.Sprintf("%s missing where the training rows had no missing cell, voted as the model's voters treat a missing cell", rowsOf(n.Missing, "row")))
		}
		e.warn(fmt.Sprintf("column %q: %s", n.Column, strings.Join(parts, "; ")))
	}
	if rest := len(notes) - maxInputNotes; rest > 0 {
		e.warn(fmt.Sprintf("+ %s with missing cells or unseen levels (--json lists them all)", rowsOf(rest, "more column")))
	}
}

// appendPrediction appends one line of the predictions CSV: the data row
// number (1 for the first row after the header), the class, and the vote's
// margin.
func appendPrediction(b []byte, row int, class string, margin float64) []byte {
	b = strconv.AppendInt(b, int64(row), 10)
	b = append(b, ',')
	b = appendCSVField(b, class)
	b = append(b, ',')
	b = strconv.AppendFloat(b, margin, 'f', 6, 64)
	return append(b, '\n')
}

// appendCSVField quotes a field when RFC 4180 says it must be.
func appendCSVField(b []byte, s string) []byte {
	if !bytes.ContainsAny([]byte(s), ",\"\r\n") {
		return append(b, s...)
	}
	b = append(b, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			b = append(b, '"')
		}
		b = append(b, s[i])
	}
	return append(b, '"')
}

// rowsOf writes a count with its noun, singular for one: "1 row", "3 rows".
func rowsOf(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return strconv.Itoa(n) + " " + noun + "s"
}
