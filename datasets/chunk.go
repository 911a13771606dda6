package datasets

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
)

const (
	// maxRecord is the longest record accepted, quoted line breaks included.
	maxRecord = 1 << 20
	// chunkSize is the size of the blocks of whole records handed to the
	// parse workers: large enough to amortise the hand-off, small enough
	// that the blocks in flight stay a few MiB.
	chunkSize = 512 << 10
	// readSize is the least free room kept in a block before each read.
	readSize = 64 << 10
)

// hashReader hashes and counts the raw bytes as they are read, so the
// fingerprint covers exactly the input (compressed bytes for gzip).
type hashReader struct {
	r io.Reader
	h hash.Hash
	n int64
}

func (h *hashReader) Read(p []byte) (int, error) {
	n, err := h.r.Read(p)
	h.h.Write(p[:n])
	h.n += int64(n)
	return n, err
}

// chunk is a block of whole records, starting at line line.
type chunk struct {
	seq  int
	buf  []byte
	line int
	// srcOff is the offset of the block's end in the decoded text, rawOff
	// the raw bytes read so far: the merger sizes its columns from them.
	srcOff, rawOff int64
	// err ends the sequence: the chunker could not cut a block.
	err *ParseError
}

// chunker cuts the decoded input into blocks that end on record
// boundaries. It tracks quotes (a '"' opens a quoted field only as a
// field's first byte, as the parser does) so a quoted line break never
// ends a block.
type chunker struct {
	file   string
	raw    *hashReader
	src    io.Reader
	gz     bool
	delim  byte
	known  bool // delim is set
	carry  []byte
	line   int
	srcOff int64
	eof    bool
	first  bool
	digest string
	// bufs hands out block buffers; the parse workers give them back.
	bufs    chan []byte
	created int
	limit   int
}

func newChunker(r io.Reader, file string, delim byte, tokens int) (*chunker, *ParseError) {
	raw := &hashReader{r: r, h: sha256.New()}
	br := bufio.NewReaderSize(raw, readSize)
	c := &chunker{file: file, raw: raw, src: br, line: 1, first: true,
		bufs: make(chan []byte, tokens), limit: tokens}
	if delim != 0 {
		c.delim, c.known = delim, true
	}
	magic, err := br.Peek(2)
	if err != nil && !errors.Is(err, io.EOF) {
		return nil, &ParseError{File: file, Err: fmt.Errorf("%w: %w", ErrRead, err)}
	}
	if len(magic) == 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		zr, err := gzip.NewReader(br)
		if err != nil {
			return nil, &ParseError{File: file, Err: fmt.Errorf("%w: %w", ErrGzip, err)}
		}
		c.src, c.gz = zr, true
	}
	return c, nil
}

// getBuf returns a free block buffer, allocating up to the limit and then
// waiting for one to come back; nil when done closes first.
func (c *chunker) getBuf(done <-chan struct{}) []byte {
	select {
	case b := <-c.bufs:
		return b[:0]
	default:
	}
	if c.created < c.limit {
		c.created++
		return make([]byte, 0, chunkSize+2*readSize)
	}
	select {
	case b := <-c.bufs:
		return b[:0]
	case <-done:
		return nil
	}
}

// next returns the next block, or ok == false at the end of the input. A
// block with err set is the last one.
func (c *chunker) next(done <-chan struct{}) (ch chunk, ok bool) {
	buf := c.getBuf(done)
	if buf == nil {
		return chunk{}, false
	}
	buf = append(buf, c.carry...)
	c.carry = c.carry[:0]
	for {
		if c.first && (c.eof || len(buf) >= 3) {
			c.first = false
			buf = bytes.TrimPrefix(buf, []byte("\xef\xbb\xbf"))
		}
		if !c.known {
			if i := bytes.IndexByte(buf, '\n'); i >= 0 || c.eof || len(buf) > maxRecord {
				if i < 0 {
					i = len(buf)
				}
				c.delim, c.known = detectDelim(buf[:i]), true
			}
		}
		if c.known && (len(buf) >= chunkSize || c.eof) {
			end, open := lastRecordEnd(buf, c.delim)
			switch {
			case end > 0 && (!c.eof || open >= 0):
				return c.emit(buf, end), true
			case c.eof && open >= 0:
				return c.fail(buf, c.line+bytes.Count(buf[:open], []byte{'\n'}),
					fmt.Errorf("%w: a quoted field opened here is never closed", ErrQuote)), true
			case c.eof:
				if len(buf) == 0 {
					c.bufs <- buf
					c.digest = hex.EncodeToString(c.raw.h.Sum(nil))
					return chunk{}, false
				}
				return c.emit(buf, len(buf)), true
			case len(buf) > maxRecord:
				err := ErrLineTooLong
				if open >= 0 {
					err = fmt.Errorf("%w (a quoted field opened on line %d is still open)", ErrLineTooLong,
						c.line+bytes.Count(buf[:open], []byte{'\n'}))
				}
				return c.fail(buf, c.line, err), true
			}
		}
		if cap(buf)-len(buf) < readSize {
			nb := make([]byte, len(buf), 2*cap(buf))
			copy(nb, buf)
			buf = nb
		}
		n, err := c.src.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+n]
		if errors.Is(err, io.EOF) {
			c.eof = true
		} else if err != nil {
			kind := ErrRead
			if c.gz {
				kind = ErrGzip
			}
			return c.fail(buf, c.line+bytes.Count(buf, []byte{'\n'}), fmt.Errorf("%w: %w", kind, err)), true
		}
	}
}

func (c *chunker) emit(buf []byte, end int) chunk {
	c.carry = append(c.carry, buf[end:]...)
	ch := chunk{buf: buf[:end], line: c.line}
	c.line += bytes.Count(buf[:end], []byte{'\n'})
	c.srcOff += int64(end)
	ch.srcOff, ch.rawOff = c.srcOff, c.raw.n
	return ch
}

func (c *chunker) fail(buf []byte, line int, err error) chunk {
	c.eof = true
	c.carry = c.carry[:0]
	return chunk{buf: buf[:0], err: &ParseError{File: c.file, Line: line, Err: err}}
}

// detectDelim picks the most frequent of , ; tab | outside quotes in the
// first line, preferring them in that order on ties; ',' when none occurs
// (a one-column file).
func detectDelim(line []byte) byte {
	cands := [...]byte{',', ';', '\t', '|'}
	var counts [len(cands)]int
	in := false
	for _, b := range line {
		if b == '"' {
			in = !in
			continue
		}
		if in {
			continue
		}
		for i, c := range cands {
			if b == c {
				counts[i]++
			}
		}
	}
	best := 0
	for i := range cands {
		if counts[i] > counts[best] {
			best = i
		}
	}
	return cands[best]
}

// lastRecordEnd returns the offset just past the last line break in buf
// that ends a record (0 if none), and the offset of the opening quote of a
// quoted field still open at the end of buf (-1 if none).
func lastRecordEnd(buf []byte, delim byte) (end, open int) {
	if bytes.IndexByte(buf, '"') < 0 {
		return bytes.LastIndexByte(buf, '\n') + 1, -1
	}
	end, open = 0, -1
	i := 0
	for i < len(buf) {
		q := bytes.IndexByte(buf[i:], '"')
		if q < 0 {
			if nl := bytes.LastIndexByte(buf[i:], '\n'); nl >= 0 {
				end = i + nl + 1
			}
			return end, -1
		}
		q += i
		if nl := bytes.LastIndexByte(buf[i:q], '\n'); nl >= 0 {
			end = i + nl + 1
		}
		if q > 0 && buf[q-1] != delim && buf[q-1] != '\n' {
			i = q + 1 // a bare quote: the parser reports it
			continue
		}
		// A quoted field: find its closing quote, skipping "" pairs.
		j := q + 1
		for {
			k := bytes.IndexByte(buf[j:], '"')
			if k < 0 {
				return end, q
			}
			j += k + 1
			if j < len(buf) && buf[j] == '"' {
				j++
				continue
			}
			if j == len(buf) {
				// The next byte decides whether this closes the field or
				// starts a "" pair: wait for it.
				return end, q
			}
			break
		}
		i = j
	}
	return end, -1
}
