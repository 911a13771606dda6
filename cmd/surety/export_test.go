package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"surety/trainer"
	"surety/voters/sqlexport"
)

func TestExportGolden(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	cases := []struct {
		name, golden string
		args         []string
	}{
		{"help", "export-help.txt", []string{"export", "--help"}},
		// The hand-written model of predict's tests: a numeric stump, two
		// category stumps (one level with a comma), class names with a
		// comma and a space.
		{"sql", "export-predict-model.sql", []string{"export", "--model", model, "--format", "sql", "--table", "loans", "--keep", "id", "--class-weights"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			stdout, stderr, code := runCLI(t, tc.args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, stderr)
			}
			checkGolden(t, tc.golden, stdout)
		})
	}
}

// TestExportFile checks that the file export writes is sqlexport's SELECT
// for the model that trainer.ReadModelFile reads, with the file's SHA-256
// and the certificate in its header.
func TestExportFile(t *testing.T) {
	dir := t.TempDir()
	data := demoFile(t, dir, 800)
	model := filepath.Join(dir, "model.json")
	if _, errs, code := runSurety(t, "", "train", "--data", data, "--label", "leaked", "--out", model, "--linear-voters", "2", "--thresholds", "8", "--family", "tandem"); code != 0 {
		t.Fatalf("train exit %d: %s", code, errs)
	}
	out := filepath.Join(dir, "vote.sql")
	stdout, stderr, code := runCLI(t, "export", "--model", model, "--format", "sql", "--out", out, "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	raw, err := os.ReadFile(model)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(raw)
	hash := hex.EncodeToString(sum[:])
	var j exportJSON
	if err := json.Unmarshal([]byte(stdout), &j); err != nil {
		t.Fatalf("%v: %s", err, stdout)
	}
	got, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	m, err := trainer.ReadModelFile(model)
	if err != nil {
		t.Fatal(err)
	}
	var want bytes.Buffer
	if err := writeSQL(&want, exportInput{model: m, modelSHA256: hash, table: sqlexport.DefaultTable}); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want.Bytes()) {
		t.Fatal("the file differs from sqlexport.Write's SELECT for the same model")
	}
	if j.Format != "sql" || j.Out != out || j.Bytes != len(got) || j.ModelSHA256 != hash || j.Classes != 2 || j.Voters == 0 || j.Table != sqlexport.DefaultTable {
		t.Fatalf("--json says %+v", j)
	}
	for _, s := range []string{"-- Model file: sha256 " + hash, "-- Certificate: " + m.Certificate.Sentence(), "-- Delta: 0.05", "-- Training data: sha256 " + m.Provenance.Data.SHA256} {
		if !strings.Contains(string(got), s+"\n") && !strings.Contains(string(got), s) {
			t.Errorf("the header lacks %q", s)
		}
	}
}

func TestExportErrors(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join("testdata", "predict-model.json")
	notModel := filepath.Join("testdata", "predict-rows.csv")
	bad := filepath.Join(dir, "bad.json")
	// Weights off the simplex: trainer.ReadModelFile refuses the file.
	raw, err := os.ReadFile(model)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(bad, bytes.Replace(raw, []byte("0.45"), []byte("0.95"), 1), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"unknown format", []string{"--model", model, "--format", "xml"}, 2, `invalid argument "xml" for "--format"`},
		{"no format", []string{"--model", model}, 2, "--format is required"},
		{"no model", []string{"--format", "sql"}, 2, "--model is required"},
		{"table name not an identifier", []string{"--model", model, "--format", "sql", "--table", "rows; DROP TABLE x"}, 2, "is not a table name"},
		{"table name with an empty part", []string{"--model", model, "--format", "sql", "--table", "a..b"}, 2, "is not a table name"},
		{"json without out", []string{"--model", model, "--format", "sql", "--json"}, 2, "--json needs --out"},
		{"stray argument", []string{"--model", model, "--format", "sql", "extra"}, 2, "unexpected argument"},
		{"missing model file", []string{"--model", filepath.Join(dir, "nowhere.json"), "--format", "sql"}, 1, "no such file"},
		{"not a model file", []string{"--model", notModel, "--format", "sql"}, 1, "not a model file"},
		{"model that does not verify", []string{"--model", bad, "--format", "sql"}, 1, "not on the simplex"},
		// A missing folder is created (README, "Commands"); a file in its place is an error.
		{"out under a file", []string{"--model", model, "--format", "sql", "--out", filepath.Join(notModel, "vote.sql")}, 1, "creating the folder of"},
		{"kept column named as an output", []string{"--model", model, "--format", "sql", "--keep", "margin"}, 1, `kept column "margin"`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			before, _ := os.ReadDir(dir)
			stdout, stderr, code := runCLI(t, append([]string{"export"}, tc.args...)...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d: %s", code, tc.code, stderr)
			}
			if !strings.Contains(stderr, tc.msg) {
				t.Errorf("stderr %q lacks %q", stderr, tc.msg)
			}
			if n := strings.Count(strings.TrimSpace(stderr), "\n"); n != 0 {
				t.Errorf("the error takes %d lines: %q", n+1, stderr)
			}
			if stdout != "" {
				t.Errorf("stdout %q after an error", stdout)
			}
			after, _ := os.ReadDir(dir)
			if len(after) != len(before) {
				t.Errorf("the folder held %d entries and now %d: something was written", len(before), len(after))
			}
		})
	}
}
