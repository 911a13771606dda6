package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"surety/datasets"
	"surety/trainer"
)

// withChunkRows runs predict with n rows per chunk for the rest of the test.
func withChunkRows(t *testing.T, n int) {
	t.Helper()
	old := predictChunkRows
	predictChunkRows = n
	t.Cleanup(func() { predictChunkRows = old })
}

// The golden files were written by predict as it was before it streamed
// (whole table read, then predicted), so they pin today's bytes; the model
// is hand-written (testdata/README.md).
func TestPredictGolden(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	data := filepath.Join("testdata", "predict-rows.csv")
	for _, rows := range []int{1, 3, predictChunkRows} {
		t.Run(fmt.Sprintf("chunk=%d", rows), func(t *testing.T) {
			withChunkRows(t, rows)
			out, errs, code := runCLI(t, "predict", "--model", model, "--data", data)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			checkGolden(t, "predict.csv", out)
			out, errs, code = runCLI(t, "predict", "--model", model, "--data", data, "--json")
			if code != 0 {
				t.Fatalf("--json: exit %d: %s", code, errs)
			}
			checkGolden(t, "predict.json", out)

			path := filepath.Join(t.TempDir(), "preds.csv")
			out, errs, code = runCLI(t, "predict", "--model", model, "--data", data, "--out", path)
			if want := "10 predictions written to " + path + "\n"; code != 0 || out != want {
				t.Fatalf("--out: exit %d, %q, %s; want %q", code, out, errs, want)
			}
			got, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			checkGolden(t, "predict.csv", string(got))
			out, errs, code = runCLI(t, "predict", "--model", model, "--data", data, "--out", path, "--json")
			var sum struct {
				Rows   int            `json:"rows"`
				Counts map[string]int `json:"class_counts"`
				Out    string         `json:"out"`
			}
			if err := json.Unmarshal([]byte(out), &sum); code != 0 || err != nil {
				t.Fatalf("--out --json: exit %d, %v: %s%s", code, err, out, errs)
			}
			if sum.Rows != 10 || sum.Out != path || sum.Counts["no"] != 7 || sum.Counts["yes, surely"] != 3 {
				t.Errorf("--out --json summary %+v", sum)
			}
		})
	}
}

// rowsFile writes n rows for the hand-written model with an extra column,
// "junk", whose one word at row bad (1-based; 0 for none) makes a whole-file
// read fail, and a word in income at row badIncome (0 for none).
func rowsFile(t *testing.T, dir string, n, bad, badIncome int) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("junk,region,income\n")
	regions := []string{"north", "south", "east", "", "marsh"}
	for i := 1; i <= n; i++ {
		junk, income := fmt.Sprint(i), fmt.Sprint(30000+i*7%50000)
		if i == bad {
			junk = "oops"
		}
		if i == badIncome {
			income = "12k"
		}
		if i%11 == 0 {
			income = "NA"
		}
		fmt.Fprintf(&b, "%s,%s,%s\n", junk, regions[i*i%len(regions)], income)
	}
	path := filepath.Join(dir, "rows.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestPredictStreamsLikeWholeTable(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	m, err := trainer.ReadModelFile(model)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	data := rowsFile(t, dir, 50000, 45000, 0)
	// The reference: the whole table read at once (the junk column ignored,
	// which a whole-file read cannot infer past its stray word), predicted
	// in one call, and printed as predict printed before it streamed.
	opts := m.ReadOptions()
	opts.Ignore = []string{"junk"}
	tab, err := datasets.ReadFile(data, opts)
	if err != nil {
		t.Fatal(err)
	}
	cls, margins, err := m.Predict(tab)
	if err != nil {
		t.Fatal(err)
	}
	var want strings.Builder
	want.WriteString("row,class,margin\n")
	for i, c := range cls {
		name := m.Classes[c]
		if strings.Contains(name, ",") {
			name = `"` + name + `"`
		}
		fmt.Fprintf(&want, "%d,%s,%.6f\n", i+1, name, margins[i])
	}
	for _, rows := range []int{7, predictChunkRows} {
		t.Run(fmt.Sprintf("chunk=%d", rows), func(t *testing.T) {
			withChunkRows(t, rows)
			out, errs, code := runCLI(t, "predict", "--model", model, "--data", data)
			if code != 0 || out != want.String() {
				t.Errorf("exit %d (%s); output equal to the whole-table reference: %v", code, errs, out == want.String())
			}
		})
	}
}

func TestPredictFailures(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	dir := t.TempDir()
	bad := rowsFile(t, dir, 50000, 0, 40000)
	lacking := filepath.Join(dir, "lacking.csv")
	os.WriteFile(lacking, []byte("junk,income\n1,2\n"), 0o644)
	cases := []struct {
		name string
		data string
		want []string // in stderr
	}{
		{"word in a numeric column at row 40000", bad, []string{"rows.csv:40001", `"income"`, `"12k"`}},
		{"a column the model reads is missing", lacking, []string{"lacking.csv", `"region"`}},
		{"missing file", filepath.Join(dir, "nope.csv"), []string{"nope.csv"}},
		{"folder as file", dir, []string{"is a folder"}},
	}
	for _, tc := range cases {
		for _, rows := range []int{7, predictChunkRows} {
			t.Run(fmt.Sprintf("%s/chunk=%d", tc.name, rows), func(t *testing.T) {
				withChunkRows(t, rows)
				out := filepath.Join(dir, "preds.csv")
				os.WriteFile(out, []byte("earlier predictions"), 0o644)
				_, errs, code := runCLI(t, "predict", "--model", model, "--data", tc.data, "--out", out)
				if code != 1 || strings.Count(strings.TrimSpace(errs), "\n") > 0 {
					t.Errorf("exit %d, stderr %q; want exit 1 and one line", code, errs)
				}
				for _, w := range tc.want {
					if !strings.Contains(errs, w) {
						t.Errorf("stderr %q lacks %s", errs, w)
					}
				}
				if b, _ := os.ReadFile(out); string(b) != "earlier predictions" {
					t.Error("a failed run touched the existing --out file")
				}
				if tmp, _ := filepath.Glob(filepath.Join(dir, ".preds.csv.tmp-*")); len(tmp) > 0 {
					t.Errorf("temporary files left behind: %q", tmp)
				}
				fresh := filepath.Join(dir, "fresh.csv")
				runCLI(t, "predict", "--model", model, "--data", tc.data, "--out", fresh)
				if _, err := os.Stat(fresh); !os.IsNotExist(err) {
					t.Errorf("a failed run created --out: %v", err)
				}
				// On standard output, a bad row can only be met after the
				// header: the lines before its chunk are whole lines.
				stdout, _, _ := runCLI(t, "predict", "--model", model, "--data", tc.data)
				if stdout != "" && (!strings.HasPrefix(stdout, "row,class,margin\n") || !strings.HasSuffix(stdout, "\n")) {
					t.Errorf("partial standard output %q...", stdout[:min(len(stdout), 40)])
				}
			})
		}
	}
}
