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
	"surety/voters"
)

// predict --id --keep --scores, pinned at several chunk sizes. The shares
// were checked by hand against the scoring rules of trainer/model-file.md
// on the hand-written model (weights 0.45 income stump, 0.35 "north", 0.2
// "south"): row 3 ("east, far", income NA) has the income stump below ->
// no (0.45), north's other -> no (0.35), south's other -> yes (0.2), so
// shares 0.8 / 0.2 and margin 0.6; row 4 (north, 52300, at the threshold
// so below) has the income stump -> no (0.45), north's equal -> yes (0.35),
// south's other -> yes (0.2), so shares 0.45 / 0.55 and margin 0.1.
func TestPredictKeepScoresGolden(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	data := filepath.Join("testdata", "predict-rows.csv")
	args := []string{"predict", "--model", model, "--data", data, "--id", "id", "--keep", "notes,approved,id", "--scores"}
	for _, rows := range []int{1, 3, predictChunkRows} {
		t.Run(fmt.Sprintf("chunk=%d", rows), func(t *testing.T) {
			withChunkRows(t, rows)
			out, errs, code := runCLI(t, args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errs)
			}
			checkGolden(t, "predict-keep-scores.csv", out)
			out, errs, code = runCLI(t, append(args, "--json")...)
			if code != 0 {
				t.Fatalf("--json: exit %d: %s", code, errs)
			}
			checkGolden(t, "predict-keep-scores.json", out)
		})
	}
}

// The shares of every row sum to 1 and the largest is the predicted class.
func TestPredictSharesAgreeWithClass(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	dir := t.TempDir()
	data := rowsFile(t, dir, 2000, 0, 0)
	out, errs, code := runCLI(t, "predict", "--model", model, "--data", data, "--scores", "--json", "--keep", "junk")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Predictions []predictionJSON `json:"predictions"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	for _, p := range got.Predictions {
		sum, best, top := 0.0, "", -1.0
		for _, c := range []string{"no", "yes, surely"} {
			sum += p.Shares[c]
			if p.Shares[c] > top {
				best, top = c, p.Shares[c]
			}
		}
		if sum < 1-1e-12 || sum > 1+1e-12 || best != p.Class || p.Kept["junk"] != fmt.Sprint(p.Row) {
			t.Fatalf("row %d: class %s, shares %v (sum %v), kept %v", p.Row, p.Class, p.Shares, sum, p.Kept)
		}
	}
}

// Unseen levels and missing cells, counted per column on
// testdata/predict-unseen.csv, whose counts were made by hand: income is
// missing on 3 rows (NA, empty, ?); region has 4 rows with levels no voter
// names (east twice, west, North: the model names north and south only,
// compared byte for byte) and 2 missing.
func TestPredictInputWarnings(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	data := filepath.Join("testdata", "predict-unseen.csv")
	want := []inputNote{
		{Column: "income", Kind: "numeric", Missing: 3},
		{Column: "region", Kind: "categorical", Missing: 2, Unseen: 4, Levels: []string{"North", "east", "west"}, Known: "voters"},
	}
	wantErr := "warning: column \"income\": 3 rows missing where the training rows had no missing cell, voted as the model's voters treat a missing cell\n" +
		"warning: column \"region\": 4 rows with a level no voter names (\"North\", \"east\", \"west\"), voted as any other level; 2 rows missing where the training rows had no missing cell, voted as the model's voters treat a missing cell\n"
	for _, rows := range []int{1, 4, predictChunkRows} {
		t.Run(fmt.Sprintf("chunk=%d", rows), func(t *testing.T) {
			withChunkRows(t, rows)
			_, errs, code := runCLI(t, "predict", "--model", model, "--data", data)
			if code != 0 || errs != wantErr {
				t.Errorf("exit %d, stderr\n%s\nwant\n%s", code, errs, wantErr)
			}
			out, errs, code := runCLI(t, "predict", "--model", model, "--data", data, "--out", filepath.Join(t.TempDir(), "p.csv"), "--json")
			var sum struct {
				Notes []inputNote `json:"input_warnings"`
			}
			if err := json.Unmarshal([]byte(out), &sum); code != 0 || err != nil {
				t.Fatalf("--json: exit %d, %v: %s", code, err, errs)
			}
			if fmt.Sprint(sum.Notes) != fmt.Sprint(want) {
				t.Errorf("input_warnings %+v, want %+v", sum.Notes, want)
			}
		})
	}
}

// A column whose prior rows had missing cells (ColumnSpec.Missing) gets no
// warning for missing cells; its unseen levels still count.
func TestPredictInputWarningsTrainedMissing(t *testing.T) {
	m := predictFixture(t)
	for i := range m.Columns {
		m.Columns[i].Missing = true
	}
	dir := t.TempDir()
	model := filepath.Join(dir, "model.json")
	if err := trainer.WriteModel(model, m); err != nil {
		t.Fatal(err)
	}
	data := filepath.Join("testdata", "predict-unseen.csv")
	_, errs, code := runCLI(t, "predict", "--model", model, "--data", data)
	want := "warning: column \"region\": 4 rows with a level no voter names (\"North\", \"east\", \"west\"), voted as any other level\n"
	if code != 0 || errs != want {
		t.Errorf("exit %d, stderr\n%s\nwant\n%s", code, errs, want)
	}
}

// With more columns to warn about than the cap, stderr has one line per
// column up to it and a line for the rest; --json lists them all. A
// categorical column a linear voter reads knows every level of the prior
// rows (the voter lists them), so an unseen level there is one not in the
// training rows.
func TestPredictInputWarningsCapped(t *testing.T) {
	m := predictFixture(t)
	var header, row []string
	for i := range maxInputNotes + 2 {
		name := fmt.Sprintf("c%d", i)
		m.Columns = append(m.Columns, voters.ColumnSpec{Name: name, Kind: datasets.Categorical})
		m.Vote.Voters = append(m.Vote.Voters, &voters.CategoryStump{Column: name, Level: "a", Equal: 0, Other: 1})
		m.Vote.Weights = append(m.Vote.Weights, 0)
		header, row = append(header, name), append(row, "b")
	}
	m.Vote.Voters = append(m.Vote.Voters, &voters.Linear{
		Inputs:  []voters.LinearInput{{Column: "c0", Kind: datasets.Categorical, Levels: []string{"a", "z"}}},
		Weights: [][]float64{{0, 0}, {1, -1}}, Bias: []float64{0, 0},
	})
	m.Vote.Weights = append(m.Vote.Weights, 0)
	dir := t.TempDir()
	model := filepath.Join(dir, "model.json")
	if err := trainer.WriteModel(model, m); err != nil {
		t.Fatal(err)
	}
	data := filepath.Join(dir, "rows.csv")
	text := "income,region," + strings.Join(header, ",") + "\n1,north," + strings.Join(row, ",") + "\n"
	if err := os.WriteFile(data, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errs, code := runCLI(t, "predict", "--model", model, "--data", data, "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	lines := strings.Split(strings.TrimSuffix(errs, "\n"), "\n")
	if len(lines) != maxInputNotes+1 || lines[maxInputNotes] != "warning: + 2 more columns with missing cells or unseen levels (--json lists them all)" {
		t.Errorf("stderr:\n%s", errs)
	}
	if !strings.Contains(lines[0], `column "c0": 1 row with a level not in the training rows ("b")`) {
		t.Errorf("first line %q", lines[0])
	}
	var sum struct {
		Notes []inputNote `json:"input_warnings"`
	}
	if err := json.Unmarshal([]byte(out), &sum); err != nil || len(sum.Notes) != maxInputNotes+2 {
		t.Errorf("%v: %d notes in --json, want %d", err, len(sum.Notes), maxInputNotes+2)
	}
}

func TestPredictKeepFailures(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	data := filepath.Join("testdata", "predict-rows.csv")
	dir := t.TempDir()
	lacking := filepath.Join(dir, "lacking.csv")
	os.WriteFile(lacking, []byte("junk\n1\n"), 0o644)
	cases := []struct {
		name string
		args []string
		code int
		want []string
	}{
		{"kept columns not in the file", []string{"--data", data, "--keep", "nope,zz"}, 1, []string{`"nope", "zz"`}},
		{"a kept column named label", []string{"--data", data, "--id", "label"}, 2, []string{`"label"`}},
		// The model reads income and region; the error names both.
		{"every missing model column named", []string{"--data", lacking}, 1, []string{`"income", "region"`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, errs, code := runCLI(t, append([]string{"predict", "--model", model}, c.args...)...)
			if code != c.code || strings.Count(strings.TrimSpace(errs), "\n") > 0 {
				t.Errorf("exit %d, stderr %q; want exit %d and one line", code, errs, c.code)
			}
			for _, w := range c.want {
				if !strings.Contains(errs, w) {
					t.Errorf("stderr %q lacks %s", errs, w)
				}
			}
		})
	}
}
