package trainer

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
)

// CostMatrix says what each kind of decision costs: Costs[i][j] is the cost
// of the vote deciding Classes[j] on a row whose true class is Classes[i].
// Costs are non-negative; the diagonal is usually 0. A tie costs the
// largest entry of the true class's row, the worst the tie could turn out.
type CostMatrix struct {
	Classes []string    `json:"classes"`
	Costs   [][]float64 `json:"costs"`
}

// Max returns the largest cost of the matrix, c_max: the loss scaled by it
// lies in [0, 1].
func (c *CostMatrix) Max() float64 {
	var mx float64
	for _, row := range c.Costs {
		for _, x := range row {
			mx = math.Max(mx, x)
		}
	}
	return mx
}

// rowCost is the cost of deciding class j (-1 for a tie) when the truth is
// class i.
func (c *CostMatrix) rowCost(i, j int) float64 {
	if j < 0 {
		return slices.Max(c.Costs[i])
	}
	return c.Costs[i][j]
}

// ReadCostsFile reads a cost matrix file (see ParseCosts).
func ReadCostsFile(path string) (*CostMatrix, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("trainer: costs: %w", err)
	}
	return ParseCosts(bytes.NewReader(b), path)
}

// ParseCosts reads a cost matrix in Surety's own plain form, name being
// the file's name in errors. Lines are comma-separated cells, trimmed;
// blank lines and lines starting with # are skipped. The first line names
// the decided classes (its first cell is free text, for example
// "true\decided"); every other line is one true class: its name, then the
// cost of each decision in the header's order:
//
//	# what a mistake costs: rows are the true class, columns the decision
//	true\decided, leak, sound
//	leak,         0,    20
//	sound,        1,    0
//
// Every class of the header needs exactly one line. Costs are finite and
// non-negative, and at least one is positive. An error names the file, the
// line and the cell.
func ParseCosts(r io.Reader, name string) (*CostMatrix, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1<<20)
	var c *CostMatrix
	seen := map[string]int{} // class -> line of its row
	rows := map[string][]float64{}
	line := 0
	for sc.Scan() {
		line++
		text := strings.TrimSpace(strings.TrimPrefix(sc.Text(), "\ufeff"))
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		cells := strings.Split(text, ",")
		for i := range cells {
			cells[i] = strings.TrimSpace(cells[i])
		}
		if c == nil {
			if len(cells) < 3 {
				return nil, fmt.Errorf("trainer: costs: %s:%d: the header names %d classes, want at least 2 (a first cell, then the decided classes)", name, line, len(cells)-1)
			}
			c = &CostMatrix{Classes: cells[1:]}
			for j, cl := range c.Classes {
				if cl == "" {
					return nil, fmt.Errorf("trainer: costs: %s:%d: column %d: empty class name", name, line, j+2)
				}
				if slices.Index(c.Classes, cl) != j {
					return nil, fmt.Errorf("trainer: costs: %s:%d: column %d: class %q named twice", name, line, j+2, cl)
				}
			}
			continue
		}
		if len(cells) != len(c.Classes)+1 {
			return nil, fmt.Errorf("trainer: costs: %s:%d: %d cells, want %d (a true class and one cost per decided class)", name, line, len(cells), len(c.Classes)+1)
		}
		cl := cells[0]
		if !slices.Contains(c.Classes, cl) {
			return nil, fmt.Errorf("trainer: costs: %s:%d: column 1: %q is not a class of the header", name, line, cl)
		}
		if at, ok := seen[cl]; ok {
			return nil, fmt.Errorf("trainer: costs: %s:%d: column 1: class %q already has its line (line %d)", name, line, cl, at)
		}
		seen[cl] = line
		row := make([]float64, len(c.Classes))
		for j, cell := range cells[1:] {
			x, err := strconv.ParseFloat(cell, 64)
			if err != nil {
				return nil, fmt.Errorf("trainer: costs: %s:%d: column %d (%q): %q is not a number", name, line, j+2, c.Classes[j], cell)
			}
			if !(x >= 0) || math.IsInf(x, 0) {
				return nil, fmt.Errorf("trainer: costs: %s:%d: column %d (%q): cost %s is not a finite non-negative number", name, line, j+2, c.Classes[j], cell)
			}
			row[j] = x
		}
		rows[cl] = row
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("trainer: costs: %s:%d: %w", name, line+1, err)
	}
	if c == nil {
		return nil, fmt.Errorf("trainer: costs: %s: no header line", name)
	}
	for _, cl := range c.Classes {
		row, ok := rows[cl]
		if !ok {
			return nil, fmt.Errorf("trainer: costs: %s: class %q has no line of costs", name, cl)
		}
		c.Costs = append(c.Costs, row)
	}
	if !(c.Max() > 0) {
		return nil, fmt.Errorf("trainer: costs: %s: every cost is 0, so there is nothing to bound", name)
	}
	return c, nil
}

// forClasses returns c with its rows and columns in the order of classes,
// which must be exactly c's classes.
func (c *CostMatrix) forClasses(classes []string) (*CostMatrix, error) {
	for _, cl := range classes {
		if !slices.Contains(c.Classes, cl) {
			return nil, fmt.Errorf("trainer: costs: the label's class %q is not in the cost matrix (it has %s)", cl, strings.Join(c.Classes, ", "))
		}
	}
	for _, cl := range c.Classes {
		if !slices.Contains(classes, cl) {
			return nil, fmt.Errorf("trainer: costs: the cost matrix's class %q is not a class of the label (%s)", cl, strings.Join(classes, ", "))
		}
	}
	out := &CostMatrix{Classes: slices.Clone(classes), Costs: make([][]float64, len(classes))}
	for i, ci := range classes {
		src := c.Costs[slices.Index(c.Classes, ci)]
		out.Costs[i] = make([]float64, len(classes))
		for j, cj := range classes {
			out.Costs[i][j] = src[slices.Index(c.Classes, cj)]
		}
	}
	return out, nil
}
