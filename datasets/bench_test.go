package datasets

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strconv"
	"sync"
	"testing"
	"time"
)

// writeNumericCSV writes rows x cols numbers with 1 to 6 decimals drawn from
// a seeded PCG, the shape of a typical numeric export.
func writeNumericCSV(path string, rows, cols int, seed uint64) (int64, error) {
	f, err := os.Create(path)
	if err != nil {
		return 0, err
	}
	w := bufio.NewWriterSize(f, 1<<20)
	rng := rand.New(rand.NewPCG(seed, 1))
	var line []byte
	for j := range cols {
		if j > 0 {
			line = append(line, ',')
		}
		line = append(line, 'x')
		line = strconv.AppendInt(line, int64(j), 10)
	}
	line = append(line, '\n')
	for range rows {
		w.Write(line)
		line = line[:0]
		for j := range cols {
			if j > 0 {
				line = append(line, ',')
			}
			line = strconv.AppendFloat(line, rng.NormFloat64()*float64(1+j%7*100), 'f', 1+j%6, 64)
		}
		line = append(line, '\n')
	}
	w.Write(line)
	if err := w.Flush(); err != nil {
		return 0, err
	}
	st, err := f.Stat()
	if err != nil {
		return 0, err
	}
	return st.Size(), f.Close()
}

// heapPeak samples the bytes in live and not yet swept heap objects until
// stop is called, and returns the highest value seen above the start.
func heapPeak() (stop func() uint64) {
	runtime.GC()
	sample := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	read := func() uint64 { metrics.Read(sample); return sample[0].Value.Uint64() }
	base := read()
	var peak uint64
	done := make(chan struct{})
	var wg sync.WaitGroup
	wg.Go(func() {
		t := time.NewTicker(time.Millisecond)
		defer t.Stop()
		for {
			if v := read(); v > peak {
				peak = v
			}
			select {
			case <-done:
				return
			case <-t.C:
			}
		}
	})
	return func() uint64 {
		close(done)
		wg.Wait()
		if v := read(); v > peak {
			peak = v
		}
		if peak < base {
			return 0
		}
		return peak - base
	}
}

// readBaseline is the straightforward reader the issue compares against:
// encoding/csv records and strconv.ParseFloat, appending to growing columns.
func readBaseline(path string) ([][]float64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := csv.NewReader(bufio.NewReader(f))
	header, err := r.Read()
	if err != nil {
		return nil, err
	}
	cols := make([][]float64, len(header))
	for {
		rec, err := r.Read()
		if err == io.EOF {
			return cols, nil
		}
		if err != nil {
			return nil, err
		}
		for j, s := range rec {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				return nil, err
			}
			cols[j] = append(cols[j], v)
		}
	}
}

// BenchmarkReadNumeric reads a generated numeric CSV with this package and
// with readBaseline in the same run. Figures: MB/s of input text,
// peak-heap-MB (highest heap above the start, sampled each millisecond),
// and peak/cols, the peak over the size of the finished float64 columns.
// The 1,000,000 x 50 size is skipped under -short.
func BenchmarkReadNumeric(b *testing.B) {
	sizes := []struct{ rows, cols int }{{20000, 50}, {1000000, 50}}
	for _, sz := range sizes {
		b.Run(fmt.Sprintf("rows=%d/cols=%d", sz.rows, sz.cols), func(b *testing.B) {
			if testing.Short() && sz.rows > 100000 {
				b.Skip("the large file is skipped under -short")
			}
			path := filepath.Join(b.TempDir(), "numeric.csv")
			size, err := writeNumericCSV(path, sz.rows, sz.cols, 42)
			if err != nil {
				b.Fatal(err)
			}
			colBytes := float64(sz.rows * sz.cols * 8)
			run := func(b *testing.B, read func() (int, error)) {
				peak := float64(benchRead(b, size, sz.rows, read))
				b.ReportMetric(peak/1e6, "peak-heap-MB")
				b.ReportMetric(peak/colBytes, "peak/cols")
			}
			b.Run("datasets", func(b *testing.B) {
				run(b, func() (int, error) {
					t, err := ReadFile(path, ReadOptions{NoLabel: true})
					if err != nil {
						return 0, err
					}
					return t.Rows, nil
				})
			})
			b.Run("encoding-csv", func(b *testing.B) {
				run(b, func() (int, error) {
					cols, err := readBaseline(path)
					if err != nil {
						return 0, err
					}
					return len(cols[0]), nil
				})
			})
		})
	}
}

// benchRead times read over the benchmark loop and returns the heap peak
// of one more read from a collected heap (across the loop the heap would
// also hold earlier tables not yet collected). read returns its row count,
// which must be rows.
func benchRead(b *testing.B, size int64, rows int, read func() (int, error)) uint64 {
	b.SetBytes(size)
	b.ReportAllocs()
	check := func() {
		n, err := read()
		if err != nil {
			b.Fatal(err)
		}
		if n != rows {
			b.Fatalf("%d rows, want %d", n, rows)
		}
	}
	for b.Loop() {
		check()
	}
	b.StopTimer()
	stop := heapPeak()
	check()
	return stop()
}
