package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"surety/objective"
	"surety/trainer"
	"surety/voters"
)

// predictFixture is testdata/predict-model.json: a hand-written vote (a
// stump, two category stumps, a class name with a comma) with a
// hand-written certificate whose ledger is made by package objective's
// bound functions, so that the file passes the checks every read makes: one
// family fixed in advance (hold-out, 4 errors on 100 certify rows) and the
// per-class line (1 error of 60 "no" rows, 3 of 40 "yes, surely" rows),
// delta 0.05 split over the two lines.
func predictFixture(t *testing.T) *trainer.Model {
	t.Helper()
	var vote voters.Vote
	if err := json.Unmarshal([]byte(`{"classes": ["no", "yes, surely"], "weights": [0.45, 0.35, 0.2], "voters": [
      {"kind": "stump", "column": "income", "threshold": 52300, "below": 0, "above": 1, "missing_below": true},
      {"kind": "category", "column": "region", "level": "north", "equal": 1, "other": 0, "missing_equal": false},
      {"kind": "category", "column": "region", "level": "south", "equal": 0, "other": 1, "missing_equal": true}]}`), &vote); err != nil {
		t.Fatal(err)
	}
	var cols []voters.ColumnSpec
	if err := json.Unmarshal([]byte(`[{"name": "income", "kind": "numeric"}, {"name": "region", "kind": "categorical"}]`), &cols); err != nil {
		t.Fatal(err)
	}
	const delta, share = 0.05, 0.025
	bound := func(errs, n int, d float64) objective.Bound {
		b, err := objective.TestSetBound(errs, n, d)
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	fam := bound(4, 100, share)
	no, yes := bound(1, 60, share/2), bound(3, 40, share/2)
	return &trainer.Model{
		Format: trainer.ModelFormat, ToolVersion: "hand-written", Label: "approved",
		Classes: vote.Classes, Columns: cols, Vote: &vote,
		Certificate: trainer.Certificate{
			RiskBound: fam.Value, Delta: delta, Family: trainer.FamilyHoldOut, Vote: trainer.VotePriorRows, CertifyRows: 100,
			Families: []trainer.Family{{Name: trainer.FamilyHoldOut, Value: fam.Value, Delta: share, Vote: trainer.VotePriorRows, Terms: &fam}},
			PerClass: &trainer.ClassCertificates{Delta: share, CandidateVotes: 1, Classes: []trainer.ClassBound{
				{Class: "no", Rows: 60, Errors: 1, Value: no.Value, Delta: share / 2, Terms: &no},
				{Class: "yes, surely", Rows: 40, Errors: 3, Value: yes.Value, Delta: share / 2, Terms: &yes},
			}},
		},
		Empirical:  trainer.Empirical{M: 100, VoteError: 0.04},
		Provenance: trainer.Provenance{CertifyRows: 100, Family: trainer.FamilyHoldOut},
	}
}

// The hand-written model file is what predictFixture encodes (rewritten
// with -update), and reads back.
func TestPredictModelFixture(t *testing.T) {
	var buf bytes.Buffer
	if err := trainer.EncodeModel(&buf, predictFixture(t)); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join("testdata", "predict-model.json")
	checkGolden(t, "predict-model.json", buf.String())
	if _, err := trainer.ReadModelFile(path); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(path); err != nil {
		t.Fatal(err)
	}
}
