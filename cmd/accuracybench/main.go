// Command accuracybench trains with default settings on every benchmark set
// (trainer/benchsets), predicts its test rows, and prints the test error,
// the certificate, their ratio, the committed baselines' errors
// (testdata/bench/baseline.csv) and the training time, with the means.
//
//	go run ./cmd/accuracybench            # every set
//	go run ./cmd/accuracybench -sets iris,wine -seed 2
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"slices"
	"sort"
	"strings"

	"surety/trainer"
	"surety/trainer/benchsets"
)

func main() {
	sets := flag.String("sets", "", "comma-separated set names (default: all of "+benchsets.Names()+")")
	seed := flag.Uint64("seed", trainer.DefaultSeed, "the trainer's seed")
	root := flag.String("root", ".", "the module's root folder (testdata/bench lives there)")
	fraction := flag.Float64("prior-fraction", 0, "the trainer's prior fraction (default: the trainer's)")
	flag.Parse()
	base, err := benchsets.ReadBaselines(*root)
	if err != nil {
		fmt.Fprintln(os.Stderr, "accuracybench:", err)
		os.Exit(1)
	}
	want := strings.Split(*sets, ",")
	fmt.Printf("%-16s %6s %9s %11s %-18s %6s %8s %8s %8s %8s %6s %5s\n",
		"set", "test", "test err", "certificate", "family", "ratio", "ada200", "ada500", "logreg", "vs best", "secs", "conv")
	var sumErr, sumBest, sumSecs float64
	var ratios []float64
	n := 0
	for _, s := range benchsets.Sets() {
		if *sets != "" && !slices.Contains(want, s.Name) {
			continue
		}
		r, err := benchsets.Run(context.Background(), s, *root, trainer.Config{Seed: *seed, PriorFraction: *fraction})
		if err != nil {
			fmt.Fprintln(os.Stderr, "accuracybench:", err)
			os.Exit(1)
		}
		b := base[s.Name]
		ratio := r.Certificate / max(r.TestError, 1/float64(r.TestRows))
		ratios = append(ratios, ratio)
		fmt.Printf("%-16s %6d %8.2f%% %10.2f%% %-18s %6.2f %7.2f%% %7.2f%% %7.2f%% %+7.2f%% %6.1f %5v\n",
			s.Name, r.TestRows, 100*r.TestError, 100*r.Certificate, r.Family, ratio,
			100*b.AdaBoost200, 100*b.AdaBoost500, 100*b.LogReg, 100*(r.TestError-b.Best()), r.Seconds, r.Converged)
		sumErr += r.TestError
		sumBest += b.Best()
		sumSecs += r.Seconds
		n++
	}
	if n == 0 {
		fmt.Fprintln(os.Stderr, "accuracybench: no set matched")
		os.Exit(2)
	}
	sort.Float64s(ratios)
	fmt.Printf("\nmean test error %.4f against %.4f for the better of AdaBoost-500 and logistic regression; median certificate/test-error ratio %.2f; %.1f s training in all\n",
		sumErr/float64(n), sumBest/float64(n), ratios[len(ratios)/2], sumSecs)
	fmt.Println("(ratio: the certificate over the test error, the test error floored at one error)")
}
