package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/spf13/pflag"

	"surety/trainer"
)

func init() {
	register("check", "--model FILE --data FILE [--delta D] [--population N] [--json]",
		"Check a vote on labelled fresh rows against its certificate (a verdict of drift is a finding, not a failure: exit 0).",
		func() command { return &checkOptions{} })
}

type checkOptions struct {
	model      string
	data       dataFlags
	delta      deltaFlag
	population int
	output     outputFlags
}

func (o *checkOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` written by train or sweep")
	o.data.AddFlags(fs, false)
	o.delta.AddFlags(fs, "probability that each bound of the check is wrong")
	fs.Var(&intRange{v: &o.population, lo: 2, hi: math.MaxInt, what: "--population"}, "population",
		"size N of a fixed population the fresh rows are a uniform sample of, without replacement: bound the error on its N - n unlabelled rows")
	o.output.AddFlags(fs)
}

// checkJSON is check's --json output: the check and where it came from.
type checkJSON struct {
	ModelPath string `json:"model_path"`
	DataPath  string `json:"data_path"`
	*trainer.CheckResult
	ModelStatement string   `json:"model_statement"`
	Cautions       []string `json:"cautions"`
}

func (o *checkOptions) run(ctx context.Context, args []string, e *env) error {
	m, err := modelArg(args, o.model)
	if err != nil {
		return err
	}
	t, err := readLabelled(e, &o.data, m, o.model)
	if err != nil {
		return err
	}
	if o.population != 0 && o.population <= t.Rows {
		return usagef("--population %d must exceed the %d fresh rows: N counts the whole population, the labelled rows included", o.population, t.Rows)
	}
	res, err := trainer.Check(m, t, trainer.CheckConfig{Delta: o.delta.delta, Population: o.population})
	if err != nil {
		return err
	}
	if o.output.json {
		return writeJSON(e.stdout, checkJSON{ModelPath: o.model, DataPath: o.data.path, CheckResult: res,
			ModelStatement: m.Certificate.Sentence(), Cautions: trainer.Cautions})
	}
	printCheck(e.stdout, o.model, o.data.path, m, res)
	return nil
}

func printCheck(w io.Writer, modelPath, dataPath string, m *trainer.Model, r *trainer.CheckResult) {
	conf := trainer.Percent(1-r.Delta, false)
	sel := ""
	if k := m.Provenance.SweepSettings; k > 0 && m.Provenance.SweepSelected {
		sel = fmt.Sprintf(", selected from %d settings so computed at delta / %d", k, k)
	} else if k > 0 {
		sel = fmt.Sprintf(", one of %d settings of a sweep: it holds only if this setting was fixed before the sweep", k)
	}
	fmt.Fprintf(w, "model  %s: label %q, certificate %s at delta %g (%s%s)\n", modelPath, m.Label, trainer.Percent(r.ModelBound, true), r.ModelDelta, m.Certificate.Family, sel)
	fmt.Fprintf(w, "fresh  %s: %d labelled rows\n\n", dataPath, r.Rows)
	fmt.Fprintf(w, "fresh error     %d of %d rows, %s (ties count as errors)\n", r.Errors, r.Rows, pct(r.ErrorRate))
	fmt.Fprintf(w, "test-set bound  at most %s and at least %s, each with probability at least %s (binomial tail, delta %g)\n",
		trainer.Percent(r.Upper.Value, true), trainer.Percent(r.Lower.Value, false), conf, r.Delta)
	fmt.Fprintf(w, "model's own     %s\n\n", m.Certificate.Sentence())
	fmt.Fprintf(w, "verdict: %s\n", r.Verdict)
	if p := r.Population; p != nil {
		pop, _ := p.Term("population")
		unl, _ := p.Term("unlabelled_errors_upper")
		fmt.Fprintf(w, "\npopulation: if the %d fresh rows are a uniform sample without replacement from %.0f rows, then with probability at least %s\n"+
			"  the %.0f unlabelled rows hold at most %.0f errors: an error rate of at most %s (hypergeometric tail)\n",
			r.Rows, pop, conf, pop-float64(r.Rows), unl, trainer.Percent(p.Value, true))
	}

	fmt.Fprintf(w, "\nconfusion (rows: true class, columns: the vote's class; a tie is an error):\n")
	width := len("true class")
	for _, c := range r.Classes {
		width = max(width, len(c))
	}
	// Each count column is as wide as its class name, at least 8.
	col := make([]int, len(m.Classes))
	cells := make([]string, 0, len(m.Classes)+2)
	cells = append(cells, fmt.Sprintf("%-*s", width, "true class"))
	for j, c := range m.Classes {
		col[j] = max(8, len(c))
		cells = append(cells, fmt.Sprintf("%*s", col[j], c))
	}
	cells = append(cells, fmt.Sprintf("%8s", "tie"))
	fmt.Fprintf(w, "  %s\n", strings.Join(cells, " "))
	for i, c := range r.Classes {
		cells = cells[:0]
		cells = append(cells, fmt.Sprintf("%-*s", width, c))
		for j, n := range r.Confusion[i] {
			cells = append(cells, fmt.Sprintf("%*d", col[j], n))
		}
		cells = append(cells, fmt.Sprintf("%8d", r.Ties[i]))
		fmt.Fprintf(w, "  %s\n", strings.Join(cells, " "))
	}

	fmt.Fprintf(w, "\nper class (each bound at delta / %d = %.4g, so that all %d hold at once with probability at least %s):\n",
		len(r.PerClass), r.ClassDelta, len(r.PerClass), conf)
	fmt.Fprintf(w, "  %-*s %8s %8s %8s %8s\n", width, "class", "rows", "errors", "error", "bound")
	for _, c := range r.PerClass {
		fmt.Fprintf(w, "  %-*s %8d %8d %8s %8s\n", width, c.Class, c.Rows, c.Errors, pct(c.ErrorRate), trainer.Percent(c.Bound, true))
	}
	fmt.Fprintln(w)
	printCautions(w)
}
