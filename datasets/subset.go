package datasets

// Subset returns the given rows of t, in that order, as a table of its
// own (the fingerprint and source stay those of t).
func (t *Table) Subset(rows []int) *Table {
	s := *t
	s.Rows = len(rows)
	s.Columns = make([]Column, len(t.Columns))
	if t.Label != nil {
		s.Label = make([]int, len(rows))
		for i, r := range rows {
			s.Label[i] = t.Label[r]
		}
	}
	for j, c := range t.Columns {
		n := c
		if c.Kind == Numeric {
			n.Num = make([]float64, len(rows))
			for i, r := range rows {
				n.Num[i] = c.Num[r]
			}
		} else {
			n.Codes = make([]uint32, len(rows))
			for i, r := range rows {
				n.Codes[i] = c.Codes[r]
			}
		}
		s.Columns[j] = n
	}
	return &s
}

// ClassSubset keeps the rows of t whose class is one of names, as a table
// whose classes are names, in that order.
func (t *Table) ClassSubset(names ...string) *Table {
	code := map[int]int{}
	for j, n := range names {
		for i, c := range t.Classes {
			if c == n {
				code[i] = j
			}
		}
	}
	var rows []int
	for r, c := range t.Label {
		if _, ok := code[c]; ok {
			rows = append(rows, r)
		}
	}
	s := t.Subset(rows)
	for i, c := range s.Label {
		s.Label[i] = code[c]
	}
	s.Classes = names
	return s
}
