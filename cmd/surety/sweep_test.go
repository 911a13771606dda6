package main

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/spf13/pflag"

	"surety/datasets/demodata"
	"surety/datasets/ucidata"
	"surety/trainer"
)

// sweepArgs is a small sweep of the demo data: 6 settings on 1200 rows.
func sweepArgs(data string) []string {
	return []string{"sweep", "--data", data, "--label", "leaked", "--linear-voters", "4", "--thresholds", "8",
		"--objective", "linear,tandem", "--tradeoff", "0.3,3", "--prior", "learned,uniform"}
}

// The text of sweep, pinned, with a test file and an output folder; and
// --help. The temporary folder is written as $DIR.
func TestSweepGolden(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 1200)
	test := demoRows(t, dir, "test.csv", demodata.Config{Rows: 800}, 11)
	runGolden(t, dir, []goldenCase{
		{"table", "sweep-demo.txt", append(sweepArgs(data), "--test", test, "--out-dir", filepath.Join(dir, "out"))},
		{"help", "sweep-help.txt", []string{"sweep", "--help"}},
	})
}

// --json prints the SweepResult, the same bytes as sweep.json in the output
// folder; every file the folder should hold is there and reads back.
func TestSweepJSONAndFolder(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 1200)
	test := demoRows(t, dir, "test.csv", demodata.Config{Rows: 800}, 11)
	outDir := filepath.Join(dir, "new", "out")
	out, errs, code := runCLI(t, append(sweepArgs(data), "--test", test, "--out-dir", outDir, "--json")...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var keys map[string]json.RawMessage
	if err := json.Unmarshal([]byte(out), &keys); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	for _, k := range []string{"delta", "settings", "selection_delta", "rows", "selected", "statement"} {
		if _, ok := keys[k]; !ok {
			t.Errorf("sweep --json lacks %q", k)
		}
	}
	var rows []map[string]any
	json.Unmarshal(keys["rows"], &rows)
	for _, k := range []string{"setting", "name", "certificate", "family", "selection_certificate", "selection_family",
		"vote_error", "kl", "heavy_voters", "test", "model_file"} {
		if _, ok := rows[0][k]; !ok {
			t.Errorf("sweep --json rows lack %q", k)
		}
	}
	file, err := os.ReadFile(filepath.Join(outDir, "sweep.json"))
	if err != nil {
		t.Fatal(err)
	}
	if string(file) != out {
		t.Error("sweep.json differs from the --json output")
	}
	res, err := trainer.ReadSweepDir(outDir)
	if err != nil {
		t.Fatal(err)
	}
	// 2 trade-offs x 2 priors for linear, 2 priors for tandem.
	if res.K != 6 {
		t.Fatalf("%d settings, want 6", res.K)
	}
	for _, r := range res.Rows {
		if r.SelectionCertificate < r.Certificate {
			t.Errorf("%s: selection certificate %v below its certificate at delta %v", r.Name, r.SelectionCertificate, r.Certificate)
		}
		if r.Test == nil || r.Test.Rows != 800 || r.Test.Bound < r.Test.ErrorRate || r.Test.Delta != res.Delta {
			t.Errorf("%s: test line %+v", r.Name, r.Test)
		}
		m, err := trainer.ReadModelFile(filepath.Join(outDir, r.ModelFile))
		if err != nil {
			t.Fatalf("%s: %v", r.Name, err)
		}
		if m.Certificate.RiskBound != r.Certificate || m.Provenance.Objective != r.Setting.Objective || m.Provenance.Prior != r.Setting.Prior {
			t.Errorf("%s: model file %s holds bound %v, %s, %s", r.Name, r.ModelFile, m.Certificate.RiskBound, m.Provenance.Objective, m.Provenance.Prior)
		}
	}
	sel, err := trainer.ReadModelFile(filepath.Join(outDir, "selected.json"))
	if err != nil {
		t.Fatal(err)
	}
	if sel.Provenance.SweepSettings != 6 || sel.Certificate.RiskBound != res.Rows[res.Selected].SelectionCertificate {
		t.Errorf("selected.json: %d settings, bound %v; want 6 and %v", sel.Provenance.SweepSettings, sel.Certificate.RiskBound, res.Rows[res.Selected].SelectionCertificate)
	}
	f, err := os.Open(filepath.Join(outDir, "sweep.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 7 || strings.Join(recs[0], ",") != "setting,objective,tradeoff,prior,certificate,family,selection_certificate,selection_family,vote_error,kl,heavy_voters,test_rows,test_errors,test_error_rate,test_bound,model_file,selected" {
		t.Fatalf("sweep.csv: %d lines, header %v", len(recs), recs[0])
	}
	if recs[1+res.Selected][16] != "true" || recs[1][15] != res.Rows[0].ModelFile {
		t.Errorf("sweep.csv line %v", recs[1+res.Selected])
	}
	names, _ := filepath.Glob(filepath.Join(outDir, "*"))
	if len(names) != 6+3 {
		t.Errorf("the folder holds %d files, want 6 models, selected.json, sweep.csv, sweep.json: %v", len(names), names)
	}

	// A smaller grid into the same folder replaces the earlier sweep's
	// model files; a file of the user's own stays.
	own := filepath.Join(outDir, "notes.txt")
	os.WriteFile(own, []byte("mine\n"), 0o644)
	if _, errs, code := runCLI(t, "sweep", "--data", data, "--label", "leaked", "--linear-voters", "4", "--thresholds", "8",
		"--objective", "tandem", "--prior", "uniform", "--out-dir", outDir); code != 0 {
		t.Fatalf("second sweep exit %d: %s", code, errs)
	}
	names, _ = filepath.Glob(filepath.Join(outDir, "*"))
	if len(names) != 1+3+1 {
		t.Errorf("after the second sweep the folder holds %v, want 1 model, selected.json, sweep.csv, sweep.json and notes.txt", names)
	}
	if _, err := os.Stat(own); err != nil {
		t.Errorf("the user's own file: %v", err)
	}
}

func TestSweepFailures(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 300)
	iris := ucidata.Path(t, "iris_headers.csv")
	cases := []struct {
		name string
		args []string
		code int
		want string // in stderr
	}{
		{"bad trade-off word", []string{"--data", data, "--tradeoff", "0.3,x"}, 2, `"x" is not a number`},
		{"negative trade-off", []string{"--data", data, "--tradeoff", "1,-3"}, 2, "--tradeoff must be in (0, inf)"},
		{"unknown objective", []string{"--data", data, "--objective", "linear,best"}, 2, `"best" is not one of`},
		{"unknown prior", []string{"--data", data, "--prior", "flat"}, 2, `"flat" is not one of`},
		{"delta out of range", []string{"--data", data, "--delta", "0"}, 2, "--delta"},
		{"stray argument", []string{"--data", data, "extra"}, 2, "unexpected argument"},
		{"cbound alone on three classes", []string{"--data", iris, "--label", "Species", "--objective", "cbound"}, 1, "needs exactly 2 classes"},
		{"unknown label", []string{"--data", data, "--label", "nope"}, 1, "nope"},
		{"test file lacks the label", []string{"--data", data, "--label", "leaked", "--objective", "tandem", "--prior", "uniform", "--test", iris}, 1, `"leaked"`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out, errs, code := runCLI(t, append([]string{"sweep"}, c.args...)...)
			if code != c.code || !strings.Contains(errs, c.want) {
				t.Errorf("exit %d, stderr %q; want exit %d mentioning %q", code, errs, c.code, c.want)
			}
			if out != "" {
				t.Errorf("a failed sweep printed %q", out)
			}
		})
	}
}

// With three classes cbound is dropped with a warning and the others run.
func TestSweepDropsCBound(t *testing.T) {
	out, errs, code := runCLI(t, "sweep", "--data", ucidata.Path(t, "iris_headers.csv"), "--label", "Species",
		"--objective", "cbound,tandem", "--prior", "uniform", "--linear-voters", "2", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, "warning: cbound dropped") {
		t.Errorf("stderr %q lacks the warning", errs)
	}
	var res trainer.SweepResult
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if res.K != 1 || res.Rows[0].Setting.Objective != trainer.Tandem {
		t.Errorf("%d settings %v, want tandem alone", res.K, res.Rows)
	}
}

// End to end on UCI's Congressional Voting Records (golearn's
// house-votes-84.csv, label "party"): every third row is held out as fresh
// data; sweep with --test and --out-dir, then check the selected model on
// the held-out rows. The selected certificate is a bound at delta / K, so
// the fresh rows should agree with it (a drift verdict here would be the
// delta case, or a bug).
func TestSweepCheckReportHouseVotes(t *testing.T) {
	if testing.Short() {
		t.Skip("trains on a UCI set")
	}
	dir := t.TempDir()
	b, err := os.ReadFile(ucidata.Path(t, "house-votes-84.csv"))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	train, fresh := []string{lines[0]}, []string{lines[0]}
	for i, l := range lines[1:] {
		if i%3 == 2 {
			fresh = append(fresh, l)
		} else {
			train = append(train, l)
		}
	}
	trainPath, freshPath := filepath.Join(dir, "train.csv"), filepath.Join(dir, "fresh.csv")
	os.WriteFile(trainPath, []byte(strings.Join(train, "\n")+"\n"), 0o644)
	os.WriteFile(freshPath, []byte(strings.Join(fresh, "\n")+"\n"), 0o644)
	outDir := filepath.Join(dir, "sweep")

	out, errs, code := runCLI(t, "sweep", "--data", trainPath, "--label", "party", "--tradeoff", "1,10", "--test", freshPath, "--out-dir", outDir)
	if code != 0 {
		t.Fatalf("sweep exit %d: %s", code, errs)
	}
	for _, want := range []string{"<- selected", "recomputed at delta / 8", "not corrected for the 8 settings", "cautions:"} {
		if !strings.Contains(out, want) {
			t.Errorf("sweep output lacks %q:\n%s", want, out)
		}
	}
	res, err := trainer.ReadSweepDir(outDir)
	if err != nil {
		t.Fatal(err)
	}
	sel := res.Rows[res.Selected]

	out, errs, code = runCLI(t, "check", "--model", filepath.Join(outDir, "selected.json"), "--data", freshPath)
	if code != 0 || !strings.Contains(out, "selected from 8 settings so computed at delta / 8") || !strings.Contains(out, "verdict: consistent") {
		t.Errorf("check exit %d: %s\n%s", code, errs, out)
	}
	out, errs, code = runCLI(t, "check", "--model", filepath.Join(outDir, "selected.json"), "--data", freshPath, "--json")
	if code != 0 {
		t.Fatalf("check exit %d: %s", code, errs)
	}
	var c trainer.CheckResult
	if err := json.Unmarshal([]byte(out), &c); err != nil {
		t.Fatal(err)
	}
	if c.Rows != len(fresh)-1 || c.ModelBound != sel.SelectionCertificate || len(c.PerClass) != 2 {
		t.Errorf("check: %d rows, model bound %v, %d classes; want %d, %v, 2", c.Rows, c.ModelBound, len(c.PerClass), len(fresh)-1, sel.SelectionCertificate)
	}
	if !c.Consistent {
		t.Errorf("fresh house-votes rows disagree with the selected certificate: %s", c.Verdict)
	}
	// The sweep's test line counted the same fresh rows.
	if sel.Test == nil || sel.Test.Rows != c.Rows {
		t.Errorf("selected row's test line %+v", sel.Test)
	}

	// The report of the selected model, with the sweep and the check.
	page := filepath.Join(dir, "report.html")
	out, errs, code = runCLI(t, "report", "--model", filepath.Join(outDir, "selected.json"), "--sweep", outDir, "--check", freshPath, "--out", page)
	if code != 0 || !strings.Contains(out, "4 plots") {
		t.Errorf("report exit %d: %s\n%s", code, errs, out)
	}
}

// listCase sets a list flag with each of sets in turn and expects its
// value or an error.
type listCase struct {
	name    string
	sets    []string
	want    string
	wantErr string
}

func (c listCase) check(t *testing.T, f pflag.Value) {
	t.Helper()
	var err error
	for _, s := range c.sets {
		if err = f.Set(s); err != nil {
			break
		}
	}
	if c.wantErr != "" {
		if err == nil || !strings.Contains(err.Error(), c.wantErr) {
			t.Errorf("error %v, want %q", err, c.wantErr)
		}
		return
	}
	if err != nil || f.String() != c.want {
		t.Errorf("%q, %v; want %q", f.String(), err, c.want)
	}
}

func TestListFlags(t *testing.T) {
	words := []listCase{
		{"default kept", nil, "linear,tandem", ""},
		{"first use replaces the default", []string{"cbound"}, "cbound", ""},
		{"repeat adds", []string{"cbound", "kl,tandem"}, "cbound,kl,tandem", ""},
		{"duplicates count once", []string{"kl, kl", "kl"}, "kl", ""},
		{"unknown word", []string{"kl,best"}, "", `"best" is not one of`},
		{"empty word", []string{""}, "", `"" is not one of`},
	}
	for _, c := range words {
		t.Run("enum "+c.name, func(t *testing.T) {
			v := []string{"linear", "tandem"}
			c.check(t, &enumList{v: &v, words: objectiveWords()})
		})
	}
	floats := []listCase{
		{"default kept", nil, "0.1,1", ""},
		{"list", []string{"0.3, 3,30"}, "0.3,3,30", ""},
		{"repeat adds, duplicates once", []string{"1", "1e1,10"}, "1,10", ""},
		{"zero", []string{"0"}, "", "must be in (0, inf)"},
		{"not a number", []string{"1,,2"}, "", `"" is not a number`},
		{"infinity", []string{"inf"}, "", "must be in (0, inf)"},
		{"NaN", []string{"NaN"}, "", "not a number"},
	}
	for _, c := range floats {
		t.Run("floats "+c.name, func(t *testing.T) {
			v := []float64{0.1, 1}
			c.check(t, &positiveList{v: &v, what: "--tradeoff"})
		})
	}
}

// The list flags parse what a user types: whatever the input, they do not
// panic, and a list they accept holds only allowed words or finite
// positive numbers, each once.
func FuzzListFlags(f *testing.F) {
	for _, s := range []string{"0.1,0.3,1", "linear,cbound", "", ",", "1e308,1e309", " kl ,tandem", "-0", "0x1p-3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		var words []string
		if err := (&enumList{v: &words, words: objectiveWords()}).Set(s); err == nil {
			seen := map[string]bool{}
			for _, w := range words {
				if !slices.Contains(objectiveWords(), w) || seen[w] {
					t.Errorf("%q gave %q", s, words)
				}
				seen[w] = true
			}
		}
		var xs []float64
		if err := (&positiveList{v: &xs, what: "--tradeoff"}).Set(s); err == nil {
			seen := map[float64]bool{}
			for _, x := range xs {
				if !(x > 0) || math.IsInf(x, 0) || seen[x] {
					t.Errorf("%q gave %v", s, xs)
				}
				seen[x] = true
			}
		}
	})
}
