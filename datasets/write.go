package datasets

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// WriteCSV writes the table as comma-separated text with a header: the
// feature columns in table order, then the label column (when the table
// has one) as class names. Numbers are written in their shortest
// round-trip form, missing cells as empty fields, and fields are quoted
// when they hold a comma, quote, line break or surrounding blanks. Read
// with the same options, the output gives back the same columns, classes
// and labels; Source and Fingerprint differ, since they describe the bytes.
func WriteCSV(w io.Writer, t *Table) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	var line []byte
	for i := range t.Columns {
		if i > 0 {
			line = append(line, ',')
		}
		line = appendField(line, t.Columns[i].Name)
	}
	hasLabel := t.Label != nil
	if hasLabel {
		if len(t.Columns) > 0 {
			line = append(line, ',')
		}
		line = appendField(line, t.LabelName)
	}
	line = append(line, '\n')
	for r := range t.Rows {
		if _, err := bw.Write(line); err != nil {
			return fmt.Errorf("datasets: writing %s: %w", t.Source, err)
		}
		line = line[:0]
		for i := range t.Columns {
			if i > 0 {
				line = append(line, ',')
			}
			c := &t.Columns[i]
			switch c.Kind {
			case Numeric:
				if v := c.Num[r]; !math.IsNaN(v) {
					line = strconv.AppendFloat(line, v, 'g', -1, 64)
				}
			case Categorical:
				if code := c.Codes[r]; code != MissingCode {
					line = appendField(line, c.Levels[code])
				}
			}
		}
		if hasLabel {
			if len(t.Columns) > 0 {
				line = append(line, ',')
			}
			line = appendField(line, t.Classes[t.Label[r]])
		}
		line = append(line, '\n')
	}
	if _, err := bw.Write(line); err != nil {
		return fmt.Errorf("datasets: writing %s: %w", t.Source, err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("datasets: writing %s: %w", t.Source, err)
	}
	return nil
}

func appendField(b []byte, s string) []byte {
	if s == "" || !strings.ContainsAny(s, ",\"\r\n") && strings.Trim(s, " \t") == s {
		return append(b, s...)
	}
	b = append(b, '"')
	b = append(b, strings.ReplaceAll(s, `"`, `""`)...)
	return append(b, '"')
}
