// Command trainbench times the training pipeline end to end on a generated
// numeric table and prints the wall time of each stage (read, split, pool,
// statistics, optimise, certify) and the peak heap.
//
//	go run ./cmd/trainbench -rows 100000
//	go run ./cmd/trainbench -rows 1000000
//
// The table has 50 numeric columns and two classes; the label is a noisy
// linear rule of the first ten columns (our own seeded generator). With the
// default 16 thresholds the pool holds 1,600 stumps plus the linear voters.
// Whole-process figures: /usr/bin/time -v go run ./cmd/trainbench ...
package main

import (
	"bufio"
	"context"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"runtime/pprof"
	"strconv"
	"time"

	"surety/datasets"
	"surety/trainer"
	"surety/voters"
)

func main() {
	rows := flag.Int("rows", 100000, "rows of generated data")
	cols := flag.Int("cols", 50, "numeric columns")
	linear := flag.Int("linear-voters", 32, "linear voters in the pool")
	objective := flag.String("objective", "tandem", "objective: linear, cbound, tandem or kl")
	write := flag.String("write", "", "only write the generated CSV to this file (to time other tools on the same rows) and stop")
	profile := flag.String("cpuprofile", "", "write a CPU profile of the training run to this file (read it with go tool pprof)")
	flag.Parse()
	if *profile != "" {
		f, err := os.Create(*profile)
		if err == nil {
			err = pprof.StartCPUProfile(f)
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, "trainbench:", err)
			os.Exit(1)
		}
		defer pprof.StopCPUProfile()
	}
	if *write != "" {
		if err := generate(*write, *rows, *cols); err != nil {
			fmt.Fprintln(os.Stderr, "trainbench:", err)
			os.Exit(1)
		}
		return
	}
	if err := run(*rows, *cols, *linear, trainer.Objective(*objective)); err != nil {
		fmt.Fprintln(os.Stderr, "trainbench:", err)
		os.Exit(1)
	}
}

func run(rows, cols, linear int, obj trainer.Objective) error {
	dir, err := os.MkdirTemp("", "trainbench-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "data.csv")
	if err := generate(path, rows, cols); err != nil {
		return err
	}
	fi, _ := os.Stat(path)

	var stages []string
	var times []time.Time
	mark := func(s string) { stages, times = append(stages, s), append(times, time.Now()) }
	mark("read")
	t, err := datasets.ReadFile(path, datasets.ReadOptions{})
	if err != nil {
		return err
	}
	cfg := trainer.Config{Objective: obj, Seed: 1, Pool: voters.PoolConfig{LinearVoters: &linear}, Progress: mark}
	m, err := trainer.Train(context.Background(), t, cfg)
	if err != nil {
		return err
	}
	mark("end")

	fmt.Printf("rows %d, columns %d, file %.1f MB, pool %d voters, objective %s, GOMAXPROCS %d\n",
		rows, cols, float64(fi.Size())/1e6, m.Provenance.PoolSize, obj, runtime.GOMAXPROCS(0))
	for i := 0; i+1 < len(stages); i++ {
		fmt.Printf("  %-11s %8.3f s\n", stages[i], times[i+1].Sub(times[i]).Seconds())
	}
	o := m.Provenance.Optimizer
	fmt.Printf("  optimiser   certify-rows fit: %s (the optimise stage also holds the prior-rows fit)\n", o.Summary())
	fmt.Printf("  total       %8.3f s\n", times[len(times)-1].Sub(times[0]).Seconds())
	fmt.Printf("  peak heap   %8.1f MB (table %.1f MB)\n", peakHeapMB(), float64(rows*cols*8)/1e6)
	fmt.Printf("certificate %.4f (%s)\n", m.Certificate.RiskBound, m.Certificate.Family)
	return nil
}

// peakHeapMB returns the heap memory obtained from the system, which never
// shrinks below its high-water mark while the process runs.
func peakHeapMB() float64 {
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	return float64(ms.HeapSys) / 1e6
}

// generate writes rows of numeric data with a noisy linear label.
func generate(path string, rows, cols int) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriterSize(f, 1<<20)
	rng := rand.New(rand.NewPCG(42, 7))
	for j := range cols {
		fmt.Fprintf(w, "x%d,", j+1)
	}
	w.WriteString("label\n")
	var b []byte
	x := make([]float64, cols)
	for range rows {
		b = b[:0]
		score := 0.0
		for j := range x {
			x[j] = rng.NormFloat64()
			if j < 10 {
				score += x[j] * float64(10-j) / 10
			}
			b = strconv.AppendFloat(b, x[j], 'f', 4, 64)
			b = append(b, ',')
		}
		if score+rng.NormFloat64() > 0 {
			b = append(b, "yes\n"...)
		} else {
			b = append(b, "no\n"...)
		}
		w.Write(b)
	}
	if err := w.Flush(); err != nil {
		return err
	}
	return f.Close()
}
