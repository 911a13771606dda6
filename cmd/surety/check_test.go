package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"surety/datasets/demodata"
	"surety/trainer"
)

// demoRows writes generated demo rows (seed and config given) to dir/name.
func demoRows(t *testing.T, dir, name string, cfg demodata.Config, seed uint64) string {
	t.Helper()
	var b bytes.Buffer
	if err := demodata.Write(&b, cfg, seed); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// checkFixture trains a small demo model in dir and returns its path.
func checkFixture(t *testing.T, dir string) string {
	t.Helper()
	data := demoFile(t, dir, 1200)
	model := filepath.Join(dir, "model.json")
	if _, errs, code := runCLI(t, "train", "--data", data, "--label", "leaked", "--out", model, "--linear-voters", "4", "--thresholds", "8"); code != 0 {
		t.Fatalf("train exit %d: %s", code, errs)
	}
	return model
}

// The text of check, pinned: rows from the training distribution (a
// consistent verdict, with the population bound), rows with half their
// labels flipped (the drift verdict, still exit 0), and --help. The
// temporary folder is written as $DIR.
func TestCheckGolden(t *testing.T) {
	dir := t.TempDir()
	model := checkFixture(t, dir)
	fresh := demoRows(t, dir, "fresh.csv", demodata.Config{Rows: 800}, 11)
	drifted := demoRows(t, dir, "drifted.csv", demodata.Config{Rows: 400, Noise: 0.5}, 12)
	runGolden(t, dir, []goldenCase{
		{"consistent", "check-demo.txt", []string{"check", "--model", model, "--data", fresh, "--population", "10000"}},
		{"drift", "check-drift.txt", []string{"check", "--model", model, "--data", drifted, "--delta", "0.01"}},
		{"help", "check-help.txt", []string{"check", "--help"}},
	})
}

// A monitoring ledger kept over three checks, pinned at the third (the
// times given, so the output is fixed), and the ledger file itself.
func TestCheckLedgerGolden(t *testing.T) {
	dir := t.TempDir()
	model := checkFixture(t, dir)
	ledger := filepath.Join(dir, "ledger.jsonl")
	for i, day := range []string{"2026-11-02", "2026-11-09"} {
		fresh := demoRows(t, dir, fmt.Sprintf("week%d.csv", i+1), demodata.Config{Rows: 400}, uint64(21+i))
		if _, errs, code := runCLI(t, "check", "--model", model, "--data", fresh, "--ledger", ledger, "--time", day); code != 0 {
			t.Fatalf("check %d: exit %d: %s", i+1, code, errs)
		}
	}
	drifted := demoRows(t, dir, "week3.csv", demodata.Config{Rows: 400, Noise: 0.5}, 23)
	runGolden(t, dir, []goldenCase{
		{"third check", "check-ledger.txt", []string{"check", "--model", model, "--data", drifted, "--ledger", ledger, "--time", "2026-11-16T08:30:00Z"}},
	})
	b, err := os.ReadFile(ledger)
	if err != nil {
		t.Fatal(err)
	}
	// The model's SHA-256 changes with any change to the model file's
	// layout, which is not this file's business: it is written as $MODEL.
	l, err := trainer.ReadMonitorLedgerFile(ledger)
	if err != nil {
		t.Fatal(err)
	}
	text := strings.ReplaceAll(string(b), l.Header.Model.SHA256, "$MODEL")
	checkGolden(t, "check-ledger.jsonl", strings.ReplaceAll(text, dir, "$DIR"))
}

// goldenCase is one command line whose output is pinned in testdata/.
type goldenCase struct {
	name, golden string
	args         []string
}

// runGolden runs each case, which must exit 0, and checks its output
// against its golden file, the temporary folder dir written as $DIR.
func runGolden(t *testing.T, dir string, cases []goldenCase) {
	t.Helper()
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := runCLI(t, c.args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			checkGolden(t, c.golden, strings.ReplaceAll(out, dir, "$DIR"))
		})
	}
}

func TestCheckJSON(t *testing.T) {
	dir := t.TempDir()
	model := checkFixture(t, dir)
	fresh := demoRows(t, dir, "fresh.csv", demodata.Config{Rows: 800}, 11)
	out, errs, code := runCLI(t, "check", "--model", model, "--data", fresh, "--population", "10000", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got map[string]any
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	for _, k := range []string{"model_path", "data_path", "rows", "errors", "error_rate", "delta", "upper", "lower",
		"model_bound", "model_delta", "consistent", "verdict", "population", "classes", "confusion", "ties",
		"per_class", "class_delta", "model_statement", "cautions"} {
		if _, ok := got[k]; !ok {
			t.Errorf("check --json lacks %q", k)
		}
	}
	if got["model_path"] != model || got["data_path"] != fresh || got["rows"] != 800.0 {
		t.Errorf("model_path %v, data_path %v, rows %v", got["model_path"], got["data_path"], got["rows"])
	}
	var r struct {
		Rows, Errors int
		Upper, Lower struct{ Value float64 }
		Population   struct {
			Value float64
			Of    string
		}
		Confusion  [][]int
		Ties       []int
		PerClass   []struct{ Rows, Errors int } `json:"per_class"`
		ClassDelta float64                      `json:"class_delta"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	// The confusion matrix and the ties account for every row, and the
	// off-diagonal cells and ties for every error.
	total, errors, perClass := 0, 0, 0
	for i, row := range r.Confusion {
		for j, n := range row {
			total += n
			if i != j {
				errors += n
			}
		}
		total += r.Ties[i]
		errors += r.Ties[i]
	}
	for _, c := range r.PerClass {
		perClass += c.Errors
	}
	if total != r.Rows || errors != r.Errors || perClass != r.Errors {
		t.Errorf("confusion holds %d rows and %d errors, per class %d errors; the check says %d and %d", total, errors, perClass, r.Rows, r.Errors)
	}
	if rate := float64(r.Errors) / float64(r.Rows); !(r.Lower.Value <= rate && rate <= r.Upper.Value) {
		t.Errorf("limits [%v, %v] do not hold the error rate %v", r.Lower.Value, r.Upper.Value, rate)
	}
	if r.Population.Of != "unlabelled-error-rate" || r.ClassDelta != 0.05/2 {
		t.Errorf("population of %q, class delta %v", r.Population.Of, r.ClassDelta)
	}
}

func TestCheckFailures(t *testing.T) {
	dir := t.TempDir()
	model := checkFixture(t, dir)
	fresh := demoRows(t, dir, "fresh.csv", demodata.Config{Rows: 200}, 11)
	noLabel := filepath.Join(dir, "nolabel.csv")
	b, _ := os.ReadFile(fresh)
	var unlabelled []string
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		unlabelled = append(unlabelled, line[:strings.LastIndexByte(line, ',')])
	}
	os.WriteFile(noLabel, []byte(strings.Join(unlabelled, "\n")+"\n"), 0o644)
	lacking := filepath.Join(dir, "lacking.csv")
	os.WriteFile(lacking, []byte("soil,depth_m,leaked\nclay,1.2,leak\n"), 0o644)
	cases := []struct {
		name string
		args []string
		code int
		want string // in stderr
	}{
		{"no model", []string{"--data", fresh}, 2, "--model is required"},
		{"no data", []string{"--model", model}, 2, "--data is required"},
		{"delta out of range", []string{"--model", model, "--data", fresh, "--delta", "1"}, 2, "--delta"},
		{"population not above the rows", []string{"--model", model, "--data", fresh, "--population", "200"}, 2, "--population 200 must exceed the 200 fresh rows"},
		{"population not a number", []string{"--model", model, "--data", fresh, "--population", "many"}, 2, "--population"},
		{"missing label column", []string{"--model", model, "--data", noLabel}, 1, `"leaked"`},
		{"missing feature column", []string{"--model", model, "--data", lacking}, 1, `"age_years"`},
		{"not a model", []string{"--model", fresh, "--data", fresh}, 1, "not a model file"},
		{"missing data file", []string{"--model", model, "--data", filepath.Join(dir, "nope.csv")}, 1, "nope.csv"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := runCLI(t, append([]string{"check"}, c.args...)...)
			if code != c.code || !strings.Contains(errs, c.want) {
				t.Errorf("exit %d, stderr %q; want exit %d mentioning %q", code, errs, c.code, c.want)
			}
			if out != "" {
				t.Errorf("a failed check printed %q", out)
			}
		})
	}
}

// Fresh rows of one class only (a batch of leaks) are an ordinary thing to
// check: check, sweep --test and report --check all take them.
func TestCheckOneClass(t *testing.T) {
	dir := t.TempDir()
	model := checkFixture(t, dir)
	fresh := demoRows(t, dir, "fresh.csv", demodata.Config{Rows: 300}, 11)
	b, err := os.ReadFile(fresh)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	leaks := []string{lines[0]}
	for _, l := range lines[1:] {
		if strings.HasSuffix(l, ",leak") {
			leaks = append(leaks, l)
		}
	}
	one := filepath.Join(dir, "leaks.csv")
	if err := os.WriteFile(one, []byte(strings.Join(leaks, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	data := demoRows(t, dir, "train.csv", demodata.Config{Rows: 600}, 12)
	for _, args := range [][]string{
		{"check", "--model", model, "--data", one},
		{"report", "--model", model, "--check", one, "--out", filepath.Join(dir, "r.html")},
		{"sweep", "--data", data, "--label", "leaked", "--objective", "tandem", "--prior", "uniform", "--linear-voters", "2", "--test", one},
	} {
		t.Run(args[0], func(t *testing.T) {
			out, errs, code := runCLI(t, args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			if args[0] == "check" && !strings.Contains(out, fmt.Sprintf("%d labelled rows", len(leaks)-1)) {
				t.Errorf("output lacks the row count:\n%s", out)
			}
		})
	}
}

// check refuses the training file, takes it with --allow-training-data,
// maps a renamed label column with --label, and exits 3 on drift with
// --fail-on-drift (and 0 without it).
func TestCheckFreshLabelDrift(t *testing.T) {
	dir := t.TempDir()
	model := checkFixture(t, dir)
	training := filepath.Join(dir, "pipes.csv")
	fresh := demoRows(t, dir, "fresh.csv", demodata.Config{Rows: 300}, 11)
	drifted := demoRows(t, dir, "drifted.csv", demodata.Config{Rows: 400, Noise: 0.5}, 12)
	b, err := os.ReadFile(fresh)
	if err != nil {
		t.Fatal(err)
	}
	head, rest, _ := strings.Cut(string(b), "\n")
	renamed := filepath.Join(dir, "renamed.csv")
	os.WriteFile(renamed, []byte(strings.Replace(head, "leaked", "outcome", 1)+"\n"+rest), 0o644)
	// An extra column of names, which is no label of the model's.
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	for i := range lines {
		lines[i] += []string{",inspector", ",ann", ",bob"}[min(i, 1+i%2)]
	}
	extra := filepath.Join(dir, "extra.csv")
	os.WriteFile(extra, []byte(strings.Join(lines, "\n")+"\n"), 0o644)

	cases := []struct {
		name   string
		args   []string
		code   int
		stdout string // in stdout
		stderr string // in stderr
	}{
		{"training file refused", []string{"--data", training}, 1, "", "not fresh (--allow-training-data"},
		{"training file allowed", []string{"--data", training, "--allow-training-data"}, 0, "says nothing about new rows", ""},
		{"drift exits 0 without the flag", []string{"--data", drifted}, 0, "may have drifted", ""},
		{"drift exits 3 with the flag", []string{"--data", drifted, "--fail-on-drift"}, 3, "may have drifted", "drift: the fresh rows' lower limit"},
		{"drift exits 3 in JSON too", []string{"--data", drifted, "--fail-on-drift", "--json"}, 3, `"consistent": false`, "--fail-on-drift"},
		{"consistent exits 0 with the flag", []string{"--data", fresh, "--fail-on-drift"}, 0, "verdict: consistent", ""},
		{"renamed label without --label", []string{"--data", renamed}, 1, "", `"leaked"`},
		{"renamed label with --label", []string{"--data", renamed, "--label", "outcome"}, 0, "300 labelled rows", ""},
		{"--label names a feature", []string{"--data", fresh, "--label", "age_years"}, 2, "", "is a column the vote reads"},
		{"--label names the wrong column", []string{"--data", extra, "--label", "inspector"}, 1, "", "none of the fresh rows' classes"},
		{"--time without --ledger", []string{"--data", fresh, "--time", "2026-01-01"}, 2, "", "need --ledger"},
		{"--population with --ledger", []string{"--data", fresh, "--ledger", filepath.Join(dir, "l.jsonl"), "--population", "5000"}, 2, "", "--population cannot go with --ledger"},
		{"training data with --ledger", []string{"--data", fresh, "--ledger", filepath.Join(dir, "l.jsonl"), "--allow-training-data"}, 2, "", "cannot go with --ledger"},
		{"bad time", []string{"--data", fresh, "--ledger", filepath.Join(dir, "l.jsonl"), "--time", "Tuesday"}, 2, "", "--time \"Tuesday\""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := runCLI(t, append([]string{"check", "--model", model}, c.args...)...)
			if code != c.code || !strings.Contains(out, c.stdout) || !strings.Contains(errs, c.stderr) {
				t.Errorf("exit %d, stdout %q..., stderr %q; want exit %d, %q in stdout, %q in stderr", code, out[:min(len(out), 300)], errs, c.code, c.stdout, c.stderr)
			}
		})
	}
	// With --label the counts are those of the original column.
	a, _, _ := runCLI(t, "check", "--model", model, "--data", fresh, "--json")
	b2, _, _ := runCLI(t, "check", "--model", model, "--data", renamed, "--label", "outcome", "--json")
	var x, y struct {
		Errors int
		Label  string
	}
	json.Unmarshal([]byte(a), &x)
	json.Unmarshal([]byte(b2), &y)
	if x.Errors != y.Errors || x.Label != "leaked" || y.Label != "outcome" {
		t.Errorf("--label: %+v against %+v", y, x)
	}
}

// The ledger refuses what would break its guarantee: the same rows twice
// (unless --allow-repeat), the training file, another model, another
// delta; a refused check leaves the file as it was.
func TestCheckLedgerRefusals(t *testing.T) {
	dir := t.TempDir()
	model := checkFixture(t, dir)
	ledger := filepath.Join(dir, "ledger.jsonl")
	fresh := demoRows(t, dir, "fresh.csv", demodata.Config{Rows: 300}, 11)
	if _, errs, code := runCLI(t, "check", "--model", model, "--data", fresh, "--ledger", ledger, "--time", "2026-11-02"); code != 0 {
		t.Fatalf("first check: exit %d: %s", code, errs)
	}
	before, _ := os.ReadFile(ledger)
	// Another model: the same rows, another seed.
	other2 := filepath.Join(dir, "seed2.json")
	if _, errs, code := runCLI(t, "train", "--data", filepath.Join(dir, "pipes.csv"), "--label", "leaked", "--out", other2, "--linear-voters", "4", "--thresholds", "8", "--seed", "2"); code != 0 {
		t.Fatalf("train: %s", errs)
	}
	week2 := demoRows(t, dir, "week2.csv", demodata.Config{Rows: 300}, 12)
	garbage := filepath.Join(dir, "garbage.jsonl")
	os.WriteFile(garbage, []byte("rows,errors\n"), 0o644)
	cases := []struct {
		name string
		args []string
		code int
		want string
	}{
		{"same rows again", []string{"--model", model, "--data", fresh, "--ledger", ledger, "--time", "2026-11-09"}, 1, "--allow-repeat"},
		{"training file", []string{"--model", model, "--data", filepath.Join(dir, "pipes.csv"), "--ledger", ledger, "--time", "2026-11-09"}, 1, "not fresh"},
		{"another model", []string{"--model", other2, "--data", week2, "--ledger", ledger, "--time", "2026-11-09"}, 1, "belongs to another model"},
		{"another delta", []string{"--model", model, "--data", week2, "--ledger", ledger, "--time", "2026-11-09", "--delta", "0.1"}, 1, "kept at delta 0.05, not 0.1"},
		{"earlier time", []string{"--model", model, "--data", week2, "--ledger", ledger, "--time", "2026-10-01"}, 1, "before the ledger's last check"},
		{"not a ledger", []string{"--model", model, "--data", week2, "--ledger", garbage}, 1, "garbage.jsonl: line 1"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := runCLI(t, append([]string{"check"}, c.args...)...)
			if code != c.code || !strings.Contains(errs, c.want) || out != "" {
				t.Errorf("exit %d, stderr %q, stdout %d bytes; want exit %d mentioning %q and no output", code, errs, len(out), c.code, c.want)
			}
			if after, _ := os.ReadFile(ledger); !bytes.Equal(before, after) {
				t.Error("a refused check changed the ledger")
			}
		})
	}
	out, errs, code := runCLI(t, "check", "--model", model, "--data", fresh, "--ledger", ledger, "--time", "2026-11-09", "--allow-repeat", "--json")
	var r struct {
		Monitor struct {
			Check      int
			SpentDelta float64 `json:"spent_delta"`
			History    []struct {
				RepeatOf int `json:"repeat_of"`
			}
		}
	}
	if code != 0 || json.Unmarshal([]byte(out), &r) != nil || r.Monitor.Check != 2 || len(r.Monitor.History) != 2 || r.Monitor.History[1].RepeatOf != 1 {
		t.Errorf("--allow-repeat: exit %d, %s, %+v", code, errs, r)
	}
}
