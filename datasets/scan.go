package datasets

import (
	"fmt"
	"io"
	"os"
	"runtime"
	"slices"
	"strings"
	"sync"
)

// ScanFile is Scan on a file (gzip detected by its magic bytes); path "-"
// scans standard input.
func ScanFile(path string, opts ReadOptions, chunkRows int, fn func(chunk *Table, firstRow int) error) (Fingerprint, error) {
	if path == "-" {
		return Scan(os.Stdin, "-", opts, chunkRows, fn)
	}
	f, err := os.Open(path)
	if err != nil {
		return Fingerprint{}, &ParseError{File: path, Err: fmt.Errorf("%w: %w", ErrRead, err)}
	}
	defer f.Close()
	return Scan(f, path, opts, chunkRows, fn)
}

// Scan reads CSV text from r in one streaming pass, as Read does, and hands
// the rows to fn in chunks of chunkRows rows (the last one may hold fewer),
// in input order, on the calling goroutine. firstRow is the index of the
// chunk's first row among all the rows read, so row i of a chunk is row
// firstRow+i of the table Read would return. Memory stays about chunkRows
// rows of columns plus the few blocks of text Read holds, whatever the
// file's length.
//
// The columns are fixed before the first row: Scan reads the label (unless
// opts.NoLabel) and the columns whose kind opts fixes (Kinds, Categorical),
// and skips every other column unread, as if named in Ignore. A kind
// inferred from the rows seen so far could be overturned by a later row
// (inference weighs the whole column), so a streaming pass reads only the
// kinds it is told; read a sample with Read to learn them, or take them
// from a model. A later cell that breaks a column's kind (a word in a
// numeric column) is a *ParseError naming the file, line and column, as
// in Read.
//
// Each chunk is a Table over the same columns, in file order, with the
// same kinds. A categorical column's Levels hold the levels of that chunk,
// sorted by their text as in Read, so the same level may have another
// code in another chunk: bind by level name. Classes hold the classes
// present in the chunk, sorted, and Label indexes them; Scan does not ask
// for two classes. Source is name; Fingerprint and DroppedRows are left
// zero: Scan returns the fingerprint once the input is read, its Rows
// counting the rows dropped for a missing label (opts.Warn is told how
// many).
//
// fn must not keep the chunk, nor any slice in it, after it returns: Scan
// reuses their memory for the next chunk. An error from fn stops the scan
// and is returned as it is. Every other error is a *ParseError, with the
// same line and column Read would report; fn has then seen the chunks that
// end before the bad line's chunk, and none from that one on.
func Scan(r io.Reader, name string, opts ReadOptions, chunkRows int, fn func(chunk *Table, firstRow int) error) (Fingerprint, error) {
	if chunkRows < 1 {
		return Fingerprint{}, &ParseError{File: name, Err: fmt.Errorf("%w: %d rows per chunk, want at least 1", ErrOptions, chunkRows)}
	}
	s := &scanner{name: name, size: chunkRows, fn: fn}
	c, err := parseInOrder(r, name, opts, s.start, s.add)
	if err != nil {
		return Fingerprint{}, err
	}
	if s.n > 0 {
		if err := s.emit(); err != nil {
			return Fingerprint{}, err
		}
	}
	if s.dropped > 0 && opts.Warn != nil {
		opts.Warn(fmt.Sprintf("datasets: %s: dropped %d rows whose label is missing", name, s.dropped))
	}
	if s.first == 0 {
		err := ErrNoRows
		if s.dropped > 0 {
			err = fmt.Errorf("%w: all %d rows have a missing label", ErrNoRows, s.dropped)
		}
		return Fingerprint{}, &ParseError{File: name, Err: err}
	}
	return Fingerprint{SHA256: c.digest, Rows: s.first + s.dropped, Columns: len(s.p.names)}, nil
}

// parseInOrder runs Read's pipeline over r: a goroutine reads, hashes and
// cuts the input into blocks, GOMAXPROCS workers parse them, and each gets
// the parsed blocks in input order on the calling goroutine. start sees
// the chunker and the plan once the header is read, before any block is
// parsed, and may change the plan. each must be done with a result when it returns (results are
// reused); its error stops the pipeline and is returned. The chunker's
// digest is set once the input has been read to its end.
func parseInOrder(r io.Reader, name string, opts ReadOptions, start func(*chunker, *plan) *ParseError, each func(*result) error) (*chunker, error) {
	delim, perr := checkDelim(name, opts.Delimiter)
	if perr != nil {
		return nil, perr
	}
	workers := max(1, runtime.GOMAXPROCS(0))
	tokens := 2*workers + 2
	c, perr := newChunker(r, name, delim, tokens)
	if perr != nil {
		return nil, perr
	}
	done := make(chan struct{})
	defer close(done)

	first, ok := c.next(done)
	if !ok {
		return nil, &ParseError{File: name, Err: ErrEmpty}
	}
	if first.err != nil {
		return nil, first.err
	}
	p, first, perr := newPlan(name, c.delim, first, opts)
	if perr != nil {
		return nil, perr
	}
	if perr := start(c, p); perr != nil {
		return nil, perr
	}

	work := make(chan chunk, workers)
	results := make(chan *result, workers)
	freeRes := make(chan *result, tokens)
	for range tokens {
		freeRes <- &result{}
	}
	go func() {
		defer close(work)
		for seq := 0; ; seq++ {
			var ch chunk
			if seq == 0 {
				ch = first
			} else if ch, ok = c.next(done); !ok {
				return
			}
			ch.seq = seq
			select {
			case work <- ch:
			case <-done:
				return
			}
			if ch.err != nil {
				return
			}
		}
	}()
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			var rec record
			for {
				var res *result
				select {
				case res = <-freeRes:
				case <-done:
					return
				}
				ch, ok := <-work
				if !ok {
					return
				}
				p.parseBlock(ch, res, &rec)
				c.bufs <- ch.buf[:0]
				select {
				case results <- res:
				case <-done:
					return
				}
			}
		})
	}
	go func() {
		wg.Wait()
		close(results)
	}()

	pending := map[int]*result{}
	next := 0
	for res := range results {
		pending[res.seq] = res
		for {
			res, ok := pending[next]
			if !ok {
				break
			}
			delete(pending, next)
			if res.err != nil {
				return nil, res.err
			}
			if err := each(res); err != nil {
				return nil, err
			}
			freeRes <- res
			next++
		}
	}
	return c, nil
}

// scanner gathers parsed blocks into chunks of size rows.
type scanner struct {
	name string
	size int
	fn   func(*Table, int) error
	p    *plan
	cols []scanCol // one per plan slot
	// n counts the rows of the chunk being gathered, first the rows handed
	// to fn before it.
	n, first, dropped int
	t                 Table
	classIdx          []int
}

// scanCol is one column of the chunk being gathered.
type scanCol struct {
	field   int
	mode    mode
	nums    []float64
	codes   []uint32
	dict    map[string]uint32
	levels  []string
	missing int
	// remap maps the current block's local codes to the chunk's codes
	// (MissingCode when not yet seen); touched lists the entries set, so
	// resetting costs what was used, not the block's dictionary size.
	remap   []uint32
	touched []uint32
}

// start keeps the label and the columns of a fixed kind, and skips the rest.
func (s *scanner) start(_ *chunker, p *plan) *ParseError {
	s.p = p
	p.nslots = 0
	features := 0
	for f, m := range p.modes {
		p.slot[f] = -1
		switch m {
		case modeSkip:
			continue
		case modeInfer:
			p.modes[f] = modeSkip
			continue
		case modeNum, modeCat:
			features++
		}
		p.slot[f] = p.nslots
		p.nslots++
		s.cols = append(s.cols, scanCol{field: f, mode: p.modes[f], dict: map[string]uint32{}})
	}
	if features == 0 {
		return &ParseError{File: p.file, Err: fmt.Errorf("%w: a scan reads only the columns whose kind Kinds or Categorical fixes (columns: %s)",
			ErrNoColumns, strings.Join(p.names, ", "))}
	}
	return nil
}

// add splits a parsed block among chunks, handing each full chunk to fn.
func (s *scanner) add(res *result) error {
	for i := range s.cols {
		s.cols[i].forget()
	}
	for a := 0; a < res.rows; {
		b := min(res.rows, a+s.size-s.n)
		for i := range s.cols {
			s.cols[i].take(&res.cols[i], a, b)
		}
		s.n += b - a
		a = b
		if s.n == s.size {
			if err := s.emit(); err != nil {
				return err
			}
		}
	}
	s.dropped += res.dropped
	return nil
}

// take appends rows a to b of a block's part.
func (c *scanCol) take(part *part, a, b int) {
	if c.mode == modeNum {
		vals := part.nums[a:b]
		c.nums = append(c.nums, vals...)
		for _, v := range vals {
			if v != v {
				c.missing++
			}
		}
		return
	}
	for len(c.remap) < len(part.levels) {
		c.remap = append(c.remap, MissingCode)
	}
	for _, l := range part.codes[a:b] {
		if l == MissingCode {
			c.missing++
			c.codes = append(c.codes, MissingCode)
			continue
		}
		g := c.remap[l]
		if g == MissingCode {
			lv := part.levels[l]
			var ok bool
			if g, ok = c.dict[lv]; !ok {
				g = uint32(len(c.levels))
				c.dict[lv] = g
				c.levels = append(c.levels, lv)
			}
			c.remap[l] = g
			c.touched = append(c.touched, l)
		}
		c.codes = append(c.codes, g)
	}
}

// forget drops the block-to-chunk code map.
func (c *scanCol) forget() {
	for _, l := range c.touched {
		c.remap[l] = MissingCode
	}
	c.touched = c.touched[:0]
}

// emit hands the gathered chunk to fn and starts the next one.
func (s *scanner) emit() error {
	t := &s.t
	*t = Table{Source: s.name, Rows: s.n, Columns: t.Columns[:0], Classes: t.Classes[:0], Label: t.Label[:0]}
	for i := range s.cols {
		c := &s.cols[i]
		name := s.p.names[c.field]
		switch c.mode {
		case modeNum:
			t.Columns = append(t.Columns, Column{Name: name, Kind: Numeric, Num: c.nums, Missing: c.missing})
		case modeCat:
			sortLevels(c.levels, c.codes)
			t.Columns = append(t.Columns, Column{Name: name, Kind: Categorical, Codes: c.codes, Levels: c.levels, Missing: c.missing})
		case modeLabel:
			t.LabelName = name
			t.Classes = append(t.Classes, c.levels...)
			slices.Sort(t.Classes)
			s.classIdx = s.classIdx[:0]
			for _, lv := range c.levels {
				k, _ := slices.BinarySearch(t.Classes, lv)
				s.classIdx = append(s.classIdx, k)
			}
			for _, code := range c.codes {
				t.Label = append(t.Label, s.classIdx[code])
			}
		}
	}
	if t.LabelName == "" {
		t.Classes, t.Label = nil, nil
	}
	err := s.fn(t, s.first)
	s.first += s.n
	s.n = 0
	for i := range s.cols {
		c := &s.cols[i]
		c.forget()
		c.nums, c.codes, c.levels = c.nums[:0], c.codes[:0], c.levels[:0]
		clear(c.dict)
		c.missing = 0
	}
	return err
}
