// Command surety trains weighted majority votes of simple voters on a CSV
// file and certifies their error rate with PAC-Bayesian bounds.
//
// Each command lives in its own file and registers itself; this file only
// dispatches and maps errors to exit codes:
//
//	0  success
//	1  the job failed (bad data, no certificate possible, I/O)
//	2  bad usage (unknown command or flag, a flag value out of range)
//	3  a finding a command was asked to fail on (check --fail-on-drift)
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"sort"
	"strings"

	"github.com/spf13/pflag"

	"surety/trainer"
)

// command is one subcommand: its options struct registers its flags, then
// run does the work.
type command interface {
	AddFlags(fs *pflag.FlagSet)
	run(ctx context.Context, args []string, e *env) error
}

// env is what a command may touch of the outside world.
type env struct {
	stdin  io.Reader
	stdout io.Writer
	stderr io.Writer
	// progress is true when stderr is a terminal and --quiet is not
	// given, so a progress line may be shown (progress.go); term is that
	// terminal, which stderr (and stdout, when it is the terminal too)
	// write through.
	progress bool
	term     *terminal
}

// warn writes a warning to stderr.
func (e *env) warn(msg string) { fmt.Fprintf(e.stderr, "warning: %s\n", msg) }

type registration struct {
	name, usage, summary string
	make                 func() command
}

var registry = map[string]registration{}

// register adds a command; called from each command file's init.
func register(name, usage, summary string, make func() command) {
	registry[name] = registration{name: name, usage: usage, summary: summary, make: make}
}

// usageError marks an error as bad usage: exit status 2.
type usageError struct{ err error }

func (u usageError) Error() string { return u.err.Error() }
func (u usageError) Unwrap() error { return u.err }

func usagef(format string, a ...any) error { return usageError{fmt.Errorf(format, a...)} }

// findingError is a finding the user asked to fail on (check
// --fail-on-drift): the command's output is complete, and the exit status
// is code.
type findingError struct {
	code int
	err  error
}

func (f findingError) Error() string { return f.err.Error() }
func (f findingError) Unwrap() error { return f.err }

// exitCoder is a command with exit statuses of its own beyond 0, 1 and 2;
// its help prints exitCodes() instead of the common line.
type exitCoder interface{ exitCodes() string }

func main() {
	e := &env{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr}
	if isTerminal(os.Stderr) {
		e.attachTerminal(isTerminal(os.Stdout))
	}
	os.Exit(dispatch(context.Background(), os.Args[1:], e))
}

// dispatch runs the command named by args[0] and returns the exit status.
func dispatch(ctx context.Context, args []string, e *env) int {
	if len(args) == 0 || args[0] == "help" || args[0] == "-h" || args[0] == "--help" {
		if len(args) > 1 {
			if r, ok := registry[args[1]]; ok {
				return parseAndRun(ctx, r, []string{"--help"}, e)
			}
		}
		printUsage(e.stdout)
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	if args[0] == "--version" || args[0] == "version" {
		fmt.Fprintf(e.stdout, "surety %s\n", trainer.Version)
		return 0
	}
	r, ok := registry[args[0]]
	if !ok {
		fmt.Fprintf(e.stderr, "surety: unknown command %q (run `surety help`)\n", args[0])
		return 2
	}
	return parseAndRun(ctx, r, args[1:], e)
}

func parseAndRun(ctx context.Context, r registration, args []string, e *env) int {
	c := r.make()
	fs := pflag.NewFlagSet(r.name, pflag.ContinueOnError)
	fs.SortFlags = false
	fs.SetOutput(io.Discard)
	c.AddFlags(fs)
	// --quiet is every command's: it only hides the progress line, which
	// is never shown off a terminal anyway.
	quiet := fs.Bool("quiet", false, "show no progress line on stderr (warnings and errors still print)")
	codes := exitCodes
	if x, ok := c.(exitCoder); ok {
		codes = x.exitCodes()
	}
	fs.Usage = func() {
		fmt.Fprintf(e.stdout, "usage: surety %s %s\n\n%s\n\nflags:\n%s\n%s", r.name, r.usage, r.summary, fs.FlagUsages(), codes)
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			return 0 // pflag has called fs.Usage
		}
		fmt.Fprintf(e.stderr, "surety %s: %v\n", r.name, err)
		return 2
	}
	if *quiet {
		quieter := *e
		quieter.progress = false
		e = &quieter
	}
	if err := c.run(ctx, fs.Args(), e); err != nil {
		fmt.Fprintf(e.stderr, "surety %s: %v\n", r.name, err)
		var u usageError
		if errors.As(err, &u) {
			return 2
		}
		var f findingError
		if errors.As(err, &f) {
			return f.code
		}
		return 1
	}
	return 0
}

const exitCodes = `exit status: 0 success; 1 the job failed (bad data, no certificate possible, I/O); 2 bad usage.
`

func printUsage(w io.Writer) {
	names := make([]string, 0, len(registry))
	width := 0
	for n := range registry {
		names = append(names, n)
		width = max(width, len(n))
	}
	sort.Strings(names)
	var b strings.Builder
	b.WriteString("surety trains a weighted majority vote of simple voters on a CSV file\nand certifies its error rate with a PAC-Bayesian bound.\n\nusage: surety COMMAND [flags]\n\ncommands:\n")
	for _, n := range names {
		fmt.Fprintf(&b, "  %-*s  %s\n", width, n, firstLine(registry[n].summary, width+4))
	}
	b.WriteString("\nRun `surety COMMAND --help` for a command's flags.\n")
	b.WriteString(exitCodes)
	io.WriteString(w, b.String())
}

// firstLine gives a command's summary for the listing: a summary written
// over several lines (bound's) is joined and cut to its first sentence,
// and a long one wraps under its own column rather than at column 0.
func firstLine(summary string, indent int) string {
	s := strings.Join(strings.Fields(summary), " ")
	if i := strings.Index(s, ". "); i >= 0 {
		s = s[:i+1]
	}
	const width = 100
	var b strings.Builder
	col := indent
	for i, w := range strings.Fields(s) {
		switch {
		case i > 0 && col+1+len(w) > width:
			b.WriteString("\n" + strings.Repeat(" ", indent))
			col = indent
		case i > 0:
			b.WriteByte(' ')
			col++
		}
		b.WriteString(w)
		col += len(w)
	}
	return b.String()
}

func isTerminal(f *os.File) bool {
	fi, err := f.Stat()
	return err == nil && fi.Mode()&os.ModeCharDevice != 0
}
