package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/pflag"

	"surety/datasets"
	"surety/trainer/atomicfile"
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
	model string
	data  dataFlags
	out   string
	json  bool
}

func (o *predictOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` written by train")
	o.data.AddFlags(fs, false)
	fs.StringVar(&o.out, "out", "", "write the predictions CSV to this `file` (default: standard output)")
	fs.BoolVar(&o.json, "json", false, "print JSON: the predictions, or a summary when --out is given")
}

// predictionJSON is one row of predict's --json output.
type predictionJSON struct {
	Row    int     `json:"row"`
	Class  string  `json:"class"`
	Margin float64 `json:"margin"`
}

// run streams the rows: each chunk is predicted and its CSV lines written
// before the next is read. Only the columns the model reads are read
// (datasets.Scan), so extra columns are ignored whatever they hold. With
// --out, the lines go to a temporary file renamed over the path at the
// end, so a bad row leaves no partial file and any earlier one intact; on
// standard output, the lines of the chunks before a bad row are already
// written (whole lines only). --json without --out prints one object with
// the class counts ahead of the predictions, so it keeps every row's class
// and margin (16 bytes a row) until the end.
func (o *predictOptions) run(ctx context.Context, args []string, e *env) error {
	m, err := modelArg(args, o.model)
	if err != nil {
		return err
	}
	opts, err := o.data.prepare(e, m.ReadOptions())
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
	var cls []int
	var margins []float64
	var line []byte
	rows := 0
	scan := func(chunk *datasets.Table, first int) error {
		rows += chunk.Rows
		c, mg, err := m.Predict(chunk)
		if err != nil {
			return err
		}
		for _, k := range c {
			counts[m.Classes[k]]++
		}
		if collect {
			cls, margins = append(cls, c...), append(margins, mg...)
			return nil
		}
		if first == 0 {
			line = append(line, "row,class,margin\n"...)
		}
		for i, k := range c {
			line = appendPrediction(line, first+i+1, m.Classes[k], mg[i])
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
	if collect {
		preds := make([]predictionJSON, len(cls))
		for i, c := range cls {
			preds[i] = predictionJSON{Row: i + 1, Class: m.Classes[c], Margin: margins[i]}
		}
		return writeJSON(e.stdout, map[string]any{"rows": rows, "class_counts": counts, "predictions": preds})
	}
	if file == nil {
		return nil
	}
	if err := file.Commit(); err != nil {
		return err
	}
	if o.json {
		return writeJSON(e.stdout, map[string]any{"rows": rows, "class_counts": counts, "out": o.out})
	}
	fmt.Fprintf(e.stdout, "%d predictions written to %s\n", rows, o.out)
	return nil
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
