package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"surety/trainer"
)

func init() {
	register("check", "--model FILE --data FILE [--label COL] [--delta D] [--population N] [--ledger FILE [--time T]] [--fail-on-drift] [--json]",
		"Check a vote on labelled fresh rows against its certificate; with --ledger, as the next of a sequence of checks whose verdicts all hold at once with probability 1 - delta.",
		func() command { return &checkOptions{} })
}

type checkOptions struct {
	model         string
	data          dataFlags
	delta         deltaFlag
	population    int
	allowTraining bool
	failOnDrift   bool
	ledger        string
	when          string
	allowRepeat   bool
	output        outputFlags
}

func (o *checkOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` written by train or sweep")
	o.data.AddFlags(fs, false)
	fs.StringVar(&o.data.label, "label", "", "label column `name` of the fresh file, when it differs from the model's (default: the model's label column)")
	o.delta.AddFlags(fs, "probability that each bound of the check is wrong (with --ledger: that any limit of the whole ledger is wrong; it must be the ledger's)")
	fs.Var(&intRange{v: &o.population, lo: 2, hi: math.MaxInt, what: "--population"}, "population",
		"size N of a fixed population the fresh rows are a uniform sample of, without replacement: bound the error on its N - n unlabelled rows")
	fs.BoolVar(&o.allowTraining, "allow-training-data", false, "check the very file the model was trained on (refused otherwise: its rows are not fresh), for a demonstration only")
	fs.BoolVar(&o.failOnDrift, "fail-on-drift", false, "exit with status 3 when the verdict is drift (the output is printed in full first)")
	fs.StringVar(&o.ledger, "ledger", "", "monitoring ledger `file` (JSON lines; created if missing): record this check in it and spend delta over all its checks")
	fs.StringVar(&o.when, "time", "", "with --ledger: the check's `time`, RFC 3339 (2026-12-03T09:00:00Z) or a date (2026-12-03) (default: now)")
	fs.BoolVar(&o.allowRepeat, "allow-repeat", false, "with --ledger: accept rows (same SHA-256) an earlier check of the ledger used; they add no evidence")
	o.output.AddFlags(fs)
}

func (o *checkOptions) exitCodes() string {
	return "exit status: 0 success (a drift verdict too, unless --fail-on-drift); 1 the job failed (bad data, the training file, I/O); 2 bad usage; 3 with --fail-on-drift, the verdict is drift.\n"
}

// checkJSON is check's --json output: the check and where it came from.
type checkJSON struct {
	ModelPath string `json:"model_path"`
	DataPath  string `json:"data_path"`
	Label     string `json:"label"`
	*trainer.CheckResult
	Monitor        *monitorJSON `json:"monitor,omitempty"`
	ModelStatement string       `json:"model_statement"`
	Cautions       []string     `json:"cautions"`
}

// monitorJSON is the ledger part of check --json.
type monitorJSON struct {
	LedgerPath string                 `json:"ledger_path"`
	Method     string                 `json:"method"`
	Delta      float64                `json:"delta"`
	Check      int                    `json:"check"`
	SpentDelta float64                `json:"spent_delta"`
	Statement  string                 `json:"statement"`
	History    []trainer.MonitorEntry `json:"history"`
}

func (o *checkOptions) run(ctx context.Context, args []string, e *env) error {
	m, err := modelArg(args, o.model)
	if err != nil {
		return err
	}
	if o.ledger == "" && (o.when != "" || o.allowRepeat) {
		return usagef("--time and --allow-repeat need --ledger")
	}
	if o.ledger != "" && o.population != 0 {
		return usagef("--population cannot go with --ledger: the ledger spends its delta on the limits of each check alone")
	}
	if o.ledger != "" && o.allowTraining {
		return usagef("--allow-training-data cannot go with --ledger: a monitoring ledger records fresh rows only")
	}
	for _, c := range m.Columns {
		if o.data.label != "" && c.Name == o.data.label {
			return usagef("--label %q is a column the vote reads, not a label", o.data.label)
		}
	}
	when := time.Now()
	if o.when != "" {
		if when, err = parseTime(o.when); err != nil {
			return err
		}
	}
	var ledger *trainer.MonitorLedger
	if o.ledger != "" {
		if ledger, err = openLedger(o.ledger, m, o.delta.delta); err != nil {
			return err
		}
	}
	t, err := readLabelled(e, &o.data, m, o.model)
	if err != nil {
		return err
	}
	if o.population != 0 && o.population <= t.Rows {
		return usagef("--population %d must exceed the %d fresh rows: N counts the whole population, the labelled rows included", o.population, t.Rows)
	}
	var res *trainer.CheckResult
	var mon *monitorJSON
	if ledger != nil {
		var entry *trainer.MonitorEntry
		res, entry, err = trainer.Monitor(m, t, ledger, trainer.MonitorConfig{Time: when, AllowRepeat: o.allowRepeat})
		if errors.Is(err, trainer.ErrRepeatedData) {
			err = fmt.Errorf("%w (--allow-repeat records it anyway)", err)
		}
		if err != nil {
			return err
		}
		if err := trainer.WriteMonitorLedger(o.ledger, ledger); err != nil {
			return err
		}
		mon = &monitorJSON{LedgerPath: o.ledger, Method: ledger.Header.Method, Delta: ledger.Header.Delta, Check: entry.Check,
			SpentDelta: entry.Delta, Statement: trainer.MonitorStatement(ledger.Header.Delta), History: ledger.Entries}
	} else {
		res, err = trainer.Check(m, t, trainer.CheckConfig{Delta: o.delta.delta, Population: o.population, AllowTrainingData: o.allowTraining})
		if errors.Is(err, trainer.ErrNotFresh) {
			err = fmt.Errorf("%w (--allow-training-data checks it anyway, for a demonstration)", err)
		}
		if err != nil {
			return err
		}
	}
	if o.output.json {
		err = writeJSON(e.stdout, checkJSON{ModelPath: o.model, DataPath: o.data.path, Label: t.LabelName, CheckResult: res,
			Monitor: mon, ModelStatement: m.Certificate.Sentence(), Cautions: trainer.Cautions})
	} else {
		printCheck(e.stdout, o.model, o.data.path, m, res, mon)
	}
	if err != nil {
		return err
	}
	if o.failOnDrift && !res.Consistent {
		return findingError{code: 3, err: fmt.Errorf("drift: the fresh rows' lower limit, %s, is above the certificate's %s (--fail-on-drift)",
			trainer.Percent(res.Lower.Value, false), trainer.Percent(res.ModelBound, true))}
	}
	return nil
}

// openLedger reads the ledger at path for model m at delta, or starts an
// empty one when the file does not exist.
func openLedger(path string, m *trainer.Model, delta float64) (*trainer.MonitorLedger, error) {
	if _, err := os.Stat(path); errors.Is(err, os.ErrNotExist) {
		return trainer.NewMonitorLedger(m, delta)
	}
	l, err := trainer.ReadMonitorLedgerFile(path)
	if err != nil {
		return nil, err
	}
	if err := l.Matches(m, delta); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return l, nil
}

// parseTime reads --time: RFC 3339, or a date alone (midnight UTC).
func parseTime(s string) (time.Time, error) {
	if t, err := time.Parse(time.RFC3339, s); err == nil {
		return t, nil
	}
	if t, err := time.Parse(time.DateOnly, s); err == nil {
		return t, nil
	}
	return time.Time{}, usagef("--time %q is neither RFC 3339 (2026-12-03T09:00:00Z) nor a date (2026-12-03)", s)
}

// printCheck prints a check; mon, when not nil, is the ledger the check
// was recorded in.
func printCheck(w io.Writer, modelPath, dataPath string, m *trainer.Model, r *trainer.CheckResult, mon *monitorJSON) {
	conf := trainer.Percent(1-r.Delta, false)
	sel := ""
	if k := m.Provenance.SweepSettings; k > 0 && m.Provenance.SweepSelected {
		sel = fmt.Sprintf(", selected from %s so computed at delta / %d", counted(k, "setting", "settings"), k)
	} else if k > 0 {
		sel = fmt.Sprintf(", one of %s of a sweep: it holds only if this setting was fixed before the sweep", counted(k, "setting", "settings"))
	}
	fmt.Fprintf(w, "model  %s: label %q, certificate %s at delta %g (%s%s)\n", modelPath, m.Label, trainer.Percent(r.ModelBound, true), r.ModelDelta, m.Certificate.Family, sel)
	fmt.Fprintf(w, "fresh  %s: %d labelled rows\n", dataPath, r.Rows)
	if mon != nil {
		fmt.Fprintf(w, "ledger %s: check %d, spending delta_%d = %g * 6 / (pi^2 * %d^2) = %.4g, half on each limit\n",
			mon.LedgerPath, mon.Check, mon.Check, mon.Delta, mon.Check, mon.SpentDelta)
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "fresh error     %d of %d rows, %s (ties count as errors)\n", r.Errors, r.Rows, pct(r.ErrorRate))
	if mon != nil {
		fmt.Fprintf(w, "limits          at most %s and at least %s (binomial tail, each at delta_%d / 2 = %.4g; all the ledger's limits hold at once with probability at least %s)\n",
			trainer.Percent(r.Upper.Value, true), trainer.Percent(r.Lower.Value, false), mon.Check, r.Delta, trainer.Percent(1-mon.Delta, false))
	} else {
		fmt.Fprintf(w, "test-set bound  at most %s and at least %s, each with probability at least %s (binomial tail, delta %g)\n",
			trainer.Percent(r.Upper.Value, true), trainer.Percent(r.Lower.Value, false), conf, r.Delta)
	}
	fmt.Fprintf(w, "model's own     %s\n\n", m.Certificate.Sentence())
	fmt.Fprintf(w, "verdict: %s\n", r.Verdict)
	if mon != nil {
		printHistory(w, mon)
	}
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

	if mon != nil {
		fmt.Fprintf(w, "\nper class (each bound at delta_%d / (2 x %d) = %.4g, so that the per-class bounds of all the ledger's checks hold at once with probability at least %s):\n",
			mon.Check, len(r.PerClass), r.ClassDelta, trainer.Percent(1-mon.Delta/2, false))
	} else {
		fmt.Fprintf(w, "\nper class (each bound at delta / %d = %.4g, so that all %d hold at once with probability at least %s):\n",
			len(r.PerClass), r.ClassDelta, len(r.PerClass), conf)
	}
	fmt.Fprintf(w, "  %-*s %8s %8s %8s %8s\n", width, "class", "rows", "errors", "error", "bound")
	for _, c := range r.PerClass {
		fmt.Fprintf(w, "  %-*s %8d %8d %8s %8s\n", width, c.Class, c.Rows, c.Errors, pct(c.ErrorRate), trainer.Percent(c.Bound, true))
	}
	fmt.Fprintln(w)
	printCautions(w)
}

// historyShown is how many of a ledger's latest checks check prints.
const historyShown = 12

func printHistory(w io.Writer, mon *monitorJSON) {
	h := mon.History
	fmt.Fprintf(w, "\nledger history (checks: %d; method %s):\n", len(h), mon.Method)
	if len(h) > historyShown {
		fmt.Fprintf(w, "  (%d earlier checks not shown)\n", len(h)-historyShown)
		h = h[len(h)-historyShown:]
	}
	fmt.Fprintf(w, "  %5s  %-20s %8s %8s %8s %8s %8s  %s\n", "check", "time", "rows", "errors", "error", "lower", "upper", "verdict")
	for _, c := range h {
		v := "consistent"
		if !c.Consistent {
			v = "drift"
		}
		if c.RepeatOf != 0 {
			v += fmt.Sprintf(" (rows of check %d)", c.RepeatOf)
		}
		fmt.Fprintf(w, "  %5d  %-20s %8d %8d %8s %8s %8s  %s\n", c.Check, c.Time, c.Rows, c.Errors, pct(c.ErrorRate),
			trainer.Percent(c.Lower, false), trainer.Percent(c.Upper, true), v)
	}
	fmt.Fprintf(w, "  %s\n", mon.Statement)
}
