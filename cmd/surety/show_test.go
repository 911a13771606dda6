package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// wineModel trains a three-class vote with linear voters on
// testdata/wine.csv (scikit-learn's wine rows, testdata/README.md) and
// returns the model's path. The tandem family alone ships the posterior
// vote, so several voters have weight.
func wineModel(t *testing.T, dir string) string {
	t.Helper()
	model := filepath.Join(dir, "wine.json")
	_, errs, code := runCLI(t, "train", "--data", filepath.Join("testdata", "wine.csv"), "--out", model,
		"--linear-voters", "4", "--thresholds", "4", "--family", "tandem")
	if code != 0 {
		t.Fatalf("train: exit %d: %s", code, errs)
	}
	return model
}

// The text of show on a multiclass model with linear voters, pinned: each
// linear voter is a line (classes it votes for, its strongest standardised
// inputs, "+ k more"), the scales behind z() once per column, the column
// importance and the notes that say how both were computed.
func TestShowMulticlassGolden(t *testing.T) {
	dir := t.TempDir()
	model := wineModel(t, dir)
	runGolden(t, dir, []goldenCase{{"show", "show-wine.txt", []string{"show", model, "--top", "6"}}})
}

// show --json keeps every voter it lists in full, exactly as the model file
// holds it, and every column's importance (summing to the vote's weight).
func TestShowJSONFull(t *testing.T) {
	dir := t.TempDir()
	model := wineModel(t, dir)
	out, errs, code := runCLI(t, "show", model, "--json", "--top", "1000")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		TopVoters []struct {
			Weight float64         `json:"weight"`
			Short  string          `json:"short"`
			Rule   string          `json:"rule"`
			Voter  json.RawMessage `json:"voter"`
		} `json:"top_voters"`
		Scales     []map[string]any `json:"scales"`
		Importance []struct {
			Column string  `json:"column"`
			Weight float64 `json:"weight"`
		} `json:"importance"`
		Notes []string `json:"notes"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	raw, err := os.ReadFile(model)
	if err != nil {
		t.Fatal(err)
	}
	var file struct {
		Vote struct {
			Weights []float64         `json:"weights"`
			Voters  []json.RawMessage `json:"voters"`
		} `json:"vote"`
	}
	if err := json.Unmarshal(raw, &file); err != nil {
		t.Fatal(err)
	}
	inFile := map[string]bool{}
	for _, v := range file.Vote.Voters {
		inFile[canonical(t, v)] = true
	}
	nonzero := 0
	for _, w := range file.Vote.Weights {
		if w > 0 {
			nonzero++
		}
	}
	if len(got.TopVoters) != nonzero {
		t.Errorf("%d voters listed, want the %d of weight > 0", len(got.TopVoters), nonzero)
	}
	linear := 0
	for i, v := range got.TopVoters {
		if !inFile[canonical(t, v.Voter)] {
			t.Errorf("voter %d of --json is not a voter of the model file: %s", i, v.Voter)
		}
		if strings.Contains(string(v.Voter), `"linear"`) {
			linear++
			if !strings.Contains(string(v.Voter), `"scale"`) || !strings.Contains(string(v.Voter), `"bias"`) {
				t.Errorf("linear voter %d lacks its scales or biases: %s", i, v.Voter)
			}
		}
	}
	if linear == 0 {
		t.Error("no linear voter among the listed voters")
	}
	sum := 0.0
	for _, c := range got.Importance {
		sum += c.Weight
	}
	// The importances share out the vote's weights, which sum to 1 within
	// 1e-9 (trainer/model-file.md).
	if math.Abs(sum-1) > 1e-9 {
		t.Errorf("importances sum to %v, want 1", sum)
	}
	if len(got.Scales) == 0 || len(got.Notes) != 2 {
		t.Errorf("%d scales, %d notes; want some scales and the two notes", len(got.Scales), len(got.Notes))
	}
}

// canonical re-encodes a JSON value so that two encodings of it compare
// equal whatever their spacing.
func canonical(t *testing.T, raw json.RawMessage) string {
	t.Helper()
	var v any
	if err := json.Unmarshal(raw, &v); err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}
