package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/trainer"
)

// runSurety runs the command line in-process.
func runSurety(t *testing.T, stdin string, args ...string) (stdout, stderr string, code int) {
	t.Helper()
	var out, errb bytes.Buffer
	e := &env{stdin: strings.NewReader(stdin), stdout: &out, stderr: &errb}
	code = dispatch(context.Background(), args, e)
	return out.String(), errb.String(), code
}

// demoFile writes demo rows to a file in dir.
func demoFile(t *testing.T, dir string, rows int) string {
	t.Helper()
	var b bytes.Buffer
	if err := demodata.Write(&b, demodata.Config{Rows: rows}, 3); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "pipes.csv")
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestTrainShowPredict(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 1200)
	model := filepath.Join(dir, "model.json")
	out, errs, code := runSurety(t, "", "train", "--data", data, "--label", "leaked", "--out", model, "--linear-voters", "4", "--json")
	if code != 0 {
		t.Fatalf("train exit %d: %s", code, errs)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("train --json: %v\n%s", err, out)
	}
	cert := rep["certificate"].(map[string]any)
	for _, k := range []string{"risk_bound", "delta", "family", "certify_rows", "families"} {
		if _, ok := cert[k]; !ok {
			t.Errorf("certificate lacks %q", k)
		}
	}
	if _, ok := rep["empirical"].(map[string]any)["vote_error"]; !ok {
		t.Error("empirical lacks vote_error")
	}
	if rep["model_path"] != model {
		t.Errorf("model_path %v, want %s", rep["model_path"], model)
	}
	first, _ := os.ReadFile(model)

	// The same seed and data give the same bytes.
	if _, errs, code := runSurety(t, "", "train", "--data", data, "--label", "leaked", "--out", model, "--linear-voters", "4"); code != 0 {
		t.Fatalf("second train exit %d: %s", code, errs)
	}
	second, _ := os.ReadFile(model)
	if !bytes.Equal(first, second) {
		t.Error("two runs with the same seed wrote different model files")
	}

	out, errs, code = runSurety(t, "", "show", model)
	if code != 0 || !strings.Contains(out, "With probability at least 95%") || !strings.Contains(out, "cautions:") || !strings.Contains(out, "->") {
		t.Errorf("show exit %d: %s\n%s", code, errs, out)
	}

	out, errs, code = runSurety(t, "", "predict", "--model", model, "--data", data)
	if code != 0 {
		t.Fatalf("predict exit %d: %s", code, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if lines[0] != "row,class,margin" || len(lines) != 1201 || !strings.HasPrefix(lines[1], "1,") {
		t.Errorf("predict printed %d lines, starting %q", len(lines), lines[:2])
	}

	// A file lacking a column the model needs: exit 1 naming the column.
	lacking := filepath.Join(dir, "lacking.csv")
	os.WriteFile(lacking, []byte("soil,depth_m\nclay,1.2\n"), 0o644)
	_, errs, code = runSurety(t, "", "predict", "--model", model, "--data", lacking)
	if code != 1 || !strings.Contains(errs, `"age_years"`) {
		t.Errorf("predict on a file lacking columns: exit %d, %q", code, errs)
	}
}

func TestTrainFailures(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 300)
	ragged := filepath.Join(dir, "ragged.csv")
	os.WriteFile(ragged, []byte("a,b,label\n1,2,x\n3,4\n"), 0o644)
	tiny := filepath.Join(dir, "tiny.csv")
	os.WriteFile(tiny, []byte("a,label\n1,x\n2,y\n3,x\n4,y\n"), 0o644)
	model := filepath.Join(dir, "model.json")
	cases := []struct {
		name string
		args []string
		code int
		want string // in stderr
	}{
		{"delta out of range", []string{"--data", data, "--delta", "1.5"}, 2, "--delta"},
		{"prior fraction out of range", []string{"--data", data, "--prior-fraction", "1"}, 2, "--prior-fraction"},
		{"negative thresholds", []string{"--data", data, "--thresholds", "-1"}, 2, "--thresholds"},
		{"unknown objective", []string{"--data", data, "--objective", "best"}, 2, "objective"},
		{"zero prior fraction", []string{"--data", data, "--label", "leaked", "--prior-fraction", "0"}, 2, "--prior-fraction must be in (0, 1)"},
		{"missing file", []string{"--data", filepath.Join(dir, "nope.csv")}, 1, "nope.csv"},
		{"folder as file", []string{"--data", dir}, 1, "is a folder"},
		{"ragged row", []string{"--data", ragged}, 1, "ragged.csv:3"},
		{"too few rows", []string{"--data", tiny}, 1, "too few rows"},
		{"unknown label", []string{"--data", data, "--label", "nope"}, 1, "nope"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			os.WriteFile(model, []byte("earlier model"), 0o644)
			_, errs, code := runSurety(t, "", append([]string{"train", "--out", model}, c.args...)...)
			if code != c.code || !strings.Contains(errs, c.want) {
				t.Errorf("exit %d, stderr %q; want exit %d mentioning %q", code, errs, c.code, c.want)
			}
			if strings.Count(strings.TrimSpace(errs), "\n") > 0 {
				t.Errorf("error is more than one line: %q", errs)
			}
			if b, _ := os.ReadFile(model); string(b) != "earlier model" {
				t.Error("a failed run touched the existing model file")
			}
		})
	}
}

func TestDemo(t *testing.T) {
	dir := t.TempDir()
	out, errs, code := runSurety(t, "", "demo", "--rows", "1000", "--fresh-rows", "5000", "--linear-voters", "2", "--out", filepath.Join(dir, "m.json"))
	if code != 0 {
		t.Fatalf("demo exit %d: %s", code, errs)
	}
	for _, want := range []string{"true error, measured on 5000 fresh rows", "With probability at least 95%", "cautions:"} {
		if !strings.Contains(out, want) {
			t.Errorf("demo output lacks %q", want)
		}
	}
}

// Every objective of the library's table is reachable from the command
// line, Chebyshev-Cantelli included, and the model records it.
func TestTrainEveryObjective(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 600)
	for _, obj := range objectiveWords() {
		t.Run(obj, func(t *testing.T) {
			model := filepath.Join(dir, obj+".json")
			_, errs, code := runSurety(t, "", "train", "--data", data, "--label", "leaked", "--objective", obj,
				"--thresholds", "4", "--linear-voters", "2", "--out", model)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			out, errs, code := runSurety(t, "", "show", "--model", model, "--json")
			if code != 0 {
				t.Fatalf("show --model: exit %d: %s", code, errs)
			}
			var rep struct {
				Provenance struct {
					Objective string `json:"objective"`
					Pool      struct {
						Thresholds   int     `json:"thresholds"`
						LinearVoters int     `json:"linear_voters"`
						L2           float64 `json:"l2"`
						LinearRows   int     `json:"linear_rows"`
					} `json:"pool"`
				} `json:"provenance"`
			}
			if err := json.Unmarshal([]byte(out), &rep); err != nil {
				t.Fatal(err)
			}
			p := rep.Provenance
			if p.Objective != obj || p.Pool.Thresholds != 4 || p.Pool.LinearVoters != 2 || p.Pool.L2 == 0 || p.Pool.LinearRows == 0 {
				t.Errorf("provenance %+v: want objective %s and the resolved pool settings", p, obj)
			}
		})
	}
}

// Show takes the model by --model or as its one argument, not both.
func TestShowModelArgument(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	cases := []struct {
		name string
		args []string
		code int
	}{
		{"flag", []string{"show", "--model", model}, 0},
		{"argument", []string{"show", model}, 0},
		{"both", []string{"show", "--model", model, model}, 2},
		{"neither", []string{"show"}, 2},
		{"two arguments", []string{"show", model, model}, 2},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if _, errs, code := runSurety(t, "", c.args...); code != c.code {
				t.Errorf("exit %d, want %d: %s", code, c.code, errs)
			}
		})
	}
}

// A stray word decides nothing when it sits in a certify row: the column's
// kind comes from the prior rows, the word reads as missing and a warning
// says so. In a prior row it fails the run, as a stray word failed the
// read before kinds moved to the prior rows.
func TestTrainStrayWord(t *testing.T) {
	const n = 200
	prior, cert, err := datasets.RandomSplit(n, trainer.DefaultPriorFraction, trainer.DefaultSeed)
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name   string
		row    int // the row holding the word
		code   int
		stdout string
		stderr string
	}{
		{"in a certify row", cert[0], 0, "(2 numeric, 0 categorical)", `warning: trainer: column "y": numeric on the rows its kind comes from; 1 cell that is not a number ("unknown") read as missing`},
		{"in a prior row", prior[0], 1, "", "word in a numeric column"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			var b strings.Builder
			b.WriteString("x,y,label\n")
			for r := range n {
				y := fmt.Sprintf("%d", (r*37)%100)
				if r == c.row {
					y = "unknown"
				}
				fmt.Fprintf(&b, "%d,%s,%c\n", (r*53)%100, y, "ab"[(r*37)%100/60])
			}
			data := filepath.Join(dir, "stray.csv")
			os.WriteFile(data, []byte(b.String()), 0o644)
			out, errs, code := runSurety(t, "", "train", "--data", data, "--out", filepath.Join(dir, "m.json"), "--linear-voters", "0")
			if code != c.code || !strings.Contains(out, c.stdout) || !strings.Contains(errs, c.stderr) {
				t.Errorf("exit %d, stdout %q, stderr %q; want exit %d, %q in stdout, %q in stderr", code, out, errs, c.code, c.stdout, c.stderr)
			}
		})
	}
}
