package main

import (
	"bytes"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/creack/pty"
)

// runOnPTY runs the built surety with args in dir, stderr on a
// pseudo-terminal (as a user at a terminal sees it) and stdout in a
// buffer; it returns both.
func runOnPTY(t *testing.T, dir string, args ...string) (stdout, stderr string) {
	return runOnPTYs(t, dir, false, args...)
}

// runOnPTYs is runOnPTY with stdout on the same pseudo-terminal when
// stdoutToo; what the terminal received is then returned as stderr.
func runOnPTYs(t *testing.T, dir string, stdoutToo bool, args ...string) (stdout, stderr string) {
	t.Helper()
	ptmx, tty, err := pty.Open()
	if err != nil {
		t.Skipf("no pseudo-terminal here: %v", err)
	}
	defer ptmx.Close()
	cmd := exec.Command(suretyBinary(t), args...)
	cmd.Dir = dir
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, tty
	if stdoutToo {
		cmd.Stdout = tty
	}
	if err := cmd.Start(); err != nil {
		tty.Close()
		t.Fatal(err)
	}
	tty.Close() // the child holds its own copy; EOF (EIO) comes when it exits
	got := make(chan []byte)
	go func() {
		b, _ := io.ReadAll(ptmx) // ends in EIO on Linux once the child is gone
		got <- b
	}()
	werr := cmd.Wait()
	b := <-got
	if werr != nil {
		t.Fatalf("surety %s: %v\nstderr: %q", strings.Join(args, " "), werr, b)
	}
	// The terminal's line discipline turns each "\n" into "\r\n" (onlcr,
	// POSIX termios; from memory): undo it so that a warning line compares
	// with the one a pipe receives.
	return out.String(), strings.ReplaceAll(string(b), "\r\n", "\n")
}

// runOnPipes runs the built surety with both stdout and stderr on pipes,
// as in CI.
func runOnPipes(t *testing.T, dir string, args ...string) (stdout, stderr string) {
	t.Helper()
	cmd := exec.Command(suretyBinary(t), args...)
	cmd.Dir = dir
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("surety %s: %v\nstderr: %s", strings.Join(args, " "), err, errb.String())
	}
	return out.String(), errb.String()
}

// redraws counts the times the line was drawn again over itself: a
// carriage return not followed by a newline, which is how progressbar
// (github.com/schollz/progressbar/v3, progressbar.go: clearProgressBar)
// returns to the start of the line.
func redraws(s string) int {
	return strings.Count(s, "\r") - strings.Count(s, "\r\n")
}

// progressWords are the texts of the progress line (progress.go); none
// may reach a pipe.
var progressWords = []string{"reading ", "building the pool", "fitting the weights", "certifying", "setting 1 of", "\r"}

// TestProgressOnTerminal runs train and sweep with stderr on a
// pseudo-terminal and checks that a live line names each stage, counts
// what has a known total and is redrawn while the work runs; that on a
// pipe and with --quiet nothing of it is written; and that stdout and the
// model file are byte for byte those of the run without it. (On main
// before the progress line the pty received 0 bytes: issue 13, item 1.)
func TestProgressOnTerminal(t *testing.T) {
	if testing.Short() {
		t.Skip("builds surety and trains on digits several times")
	}
	repo, err := filepath.Abs("../..")
	if err != nil {
		t.Fatal(err)
	}
	tmp := t.TempDir()
	digits := filepath.Join(repo, "testdata/bench/digits_train.csv")
	cancer := filepath.Join(repo, "testdata/bench/breast_cancer_train.csv")
	train := func(out string, extra ...string) []string {
		return append([]string{"train", "--data", digits, "--label", "label", "--out", filepath.Join(tmp, out)}, extra...)
	}
	sweep := func(extra ...string) []string {
		return append([]string{"sweep", "--data", cancer, "--label", "label"}, extra...)
	}

	ttyOut, ttyErr := runOnPTY(t, tmp, train("tty.json")...)
	pipeOut, pipeErr := runOnPipes(t, tmp, train("pipe.json")...)

	t.Run("train names each stage on the terminal", func(t *testing.T) {
		for _, want := range []string{
			"reading " + digits,
			"building the pool of voters from 64 columns",
			"counting each voter's errors",
			"fitting the weights",
			"certifying",
		} {
			if !strings.Contains(ttyErr, want) {
				t.Errorf("stderr on a terminal lacks %q:\n%q", want, ttyErr)
			}
		}
		// The file's bytes are a known total: the reading line has a
		// percentage (common practice, no source).
		if !regexp.MustCompile(`reading \S+ +\d+% \|`).MatchString(ttyErr) {
			t.Errorf("the reading line has no percentage:\n%q", ttyErr)
		}
		// The pool counts its fits (voters.PoolConfig.Progress): each
		// column's stumps, then each linear voter.
		if !regexp.MustCompile(`building the pool of voters from 64 columns +\d+% \|[^|]*\| \(\d+/\d+\)`).MatchString(ttyErr) {
			t.Errorf("the pool's line has no count of fits:\n%q", ttyErr)
		}
		// A few redraws a second over a run of about two seconds at the
		// least; the pool's spinner alone turns several times.
		if n := redraws(ttyErr); n < 8 {
			t.Errorf("%d redraws on the terminal, want at least 8:\n%q", n, ttyErr)
		}
	})
	t.Run("train's outputs do not change on a terminal", func(t *testing.T) {
		if ttyOut != strings.ReplaceAll(pipeOut, "pipe.json", "tty.json") {
			t.Errorf("stdout differs on a terminal:\n%s\n---\n%s", ttyOut, pipeOut)
		}
		a, errA := os.ReadFile(filepath.Join(tmp, "tty.json"))
		b, errB := os.ReadFile(filepath.Join(tmp, "pipe.json"))
		if errA != nil || errB != nil || !bytes.Equal(a, b) {
			t.Errorf("the model files differ (or are missing: %v, %v)", errA, errB)
		}
	})
	t.Run("train writes no progress to a pipe", func(t *testing.T) {
		for _, w := range progressWords {
			if strings.Contains(pipeErr, w) {
				t.Errorf("stderr on a pipe holds %q:\n%q", w, pipeErr)
			}
		}
	})

	t.Run("sweep counts its settings", func(t *testing.T) {
		_, errs := runOnPTY(t, tmp, sweep()...)
		for _, re := range []string{
			`setting 1 of 16: fitting the weights +0% \|`,
			`setting 9 of 16: fitting the weights +50% \|.*\(8/16\)`,
			`setting 16 of 16: certifying`,
		} {
			if !regexp.MustCompile(re).MatchString(errs) {
				t.Errorf("stderr on a terminal does not match %s:\n%q", re, errs)
			}
		}
	})
	t.Run("--quiet silences the line on a terminal", func(t *testing.T) {
		out, errs := runOnPTY(t, tmp, sweep("--quiet")...)
		pOut, pErrs := runOnPipes(t, tmp, sweep()...)
		if errs != pErrs {
			t.Errorf("stderr with --quiet on a terminal:\n%q\nwant what a pipe gets:\n%q", errs, pErrs)
		}
		if out != pOut {
			t.Errorf("stdout with --quiet differs from a pipe's")
		}
	})
}

// screenLines is what a terminal shows for s, line by line: a carriage
// return goes back to the first column, and later text overwrites earlier
// (ECMA-48's CR; from memory). Trailing spaces are dropped.
func screenLines(s string) []string {
	var lines []string
	for _, l := range strings.Split(s, "\n") {
		var row []rune
		col := 0
		for _, r := range l {
			if r == '\r' {
				col = 0
				continue
			}
			if col < len(row) {
				row[col] = r
			} else {
				row = append(row, r)
			}
			col++
		}
		lines = append(lines, strings.TrimRight(string(row), " "))
	}
	return lines
}

// TestProgressSharesTheTerminal runs predict with stdout and stderr on one
// pseudo-terminal, as a user who does not redirect its rows sees it: the
// progress line is cleared before each write of rows, so no row shares a
// screen line with it.
func TestProgressSharesTheTerminal(t *testing.T) {
	if testing.Short() {
		t.Skip("builds surety and trains a model")
	}
	repo, err := filepath.Abs("../..")
	if err != nil {
		t.Fatal(err)
	}
	tmp := t.TempDir()
	model := filepath.Join(tmp, "model.json")
	runOnPipes(t, tmp, "train", "--data", filepath.Join(repo, "testdata/bench/demo_train.csv"), "--label", "leaked", "--out", model)
	_, screen := runOnPTYs(t, tmp, true, "predict", "--model", model, "--data", filepath.Join(repo, "testdata/bench/demo_test.csv"))
	row := regexp.MustCompile(`^(row,class,margin|\d+,(leak|sound),-?[0-9.]+|)$`)
	lines := screenLines(screen)
	if len(lines) < 20000 {
		t.Fatalf("%d lines on the terminal, want the 20000 rows", len(lines))
	}
	bad := 0
	for i, l := range lines {
		if !row.MatchString(l) {
			if bad++; bad <= 5 {
				t.Errorf("screen line %d is not a row: %q", i+1, l)
			}
		}
	}
	if !strings.Contains(screen, "predicting ") {
		t.Errorf("no progress line on the terminal")
	}
}
