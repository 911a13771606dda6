package main

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/pflag"

	"surety/trainer"
)

func init() {
	register("predict", "--model FILE --data FILE [--out FILE] [flags]",
		"Predict the class of every row of a CSV file with a trained vote.",
		func() command { return &predictOptions{} })
}

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

func (o *predictOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	if o.model == "" {
		return usagef("--model is required")
	}
	m, err := trainer.ReadModelFile(o.model)
	if err != nil {
		return err
	}
	t, err := o.data.read(e, m.ReadOptions())
	if err != nil {
		return err
	}
	cls, margins, err := m.Predict(t)
	if err != nil {
		return err
	}
	counts := map[string]int{}
	for _, c := range cls {
		counts[m.Classes[c]]++
	}
	if o.json && o.out == "" {
		rows := make([]predictionJSON, len(cls))
		for i, c := range cls {
			rows[i] = predictionJSON{Row: i + 1, Class: m.Classes[c], Margin: margins[i]}
		}
		return writeJSON(e.stdout, map[string]any{"rows": len(cls), "class_counts": counts, "predictions": rows})
	}
	if o.out == "" {
		return writePredictions(e.stdout, m.Classes, cls, margins)
	}
	var buf bytes.Buffer
	if err := writePredictions(&buf, m.Classes, cls, margins); err != nil {
		return err
	}
	if err := trainer.WriteFileAtomic(o.out, buf.Bytes()); err != nil {
		return err
	}
	if o.json {
		return writeJSON(e.stdout, map[string]any{"rows": len(cls), "class_counts": counts, "out": o.out})
	}
	fmt.Fprintf(e.stdout, "%d predictions written to %s\n", len(cls), o.out)
	return nil
}

// writePredictions writes the predictions CSV: the data row number (1 for
// the first row after the header), the class, and the vote's margin.
func writePredictions(w io.Writer, classes []string, cls []int, margins []float64) error {
	bw := bufio.NewWriter(w)
	bw.WriteString("row,class,margin\n")
	var b []byte
	for i, c := range cls {
		b = strconv.AppendInt(b[:0], int64(i+1), 10)
		b = append(b, ',')
		b = appendCSVField(b, classes[c])
		b = append(b, ',')
		b = strconv.AppendFloat(b, margins[i], 'f', 6, 64)
		b = append(b, '\n')
		bw.Write(b)
	}
	return bw.Flush()
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
