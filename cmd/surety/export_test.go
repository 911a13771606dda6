package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"surety/datasets"
	"surety/trainer"
	"surety/voters/onnxexport/onnxrun"
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

	// The same trained model as ONNX: its metadata_props name the training
	// data by the SHA-256 of the CSV file's bytes, computed here (FIPS 180-4
	// through crypto/sha256, what sha256sum prints), and the model file by
	// its own.
	t.Run("onnx", func(t *testing.T) {
		out := filepath.Join(dir, "vote.onnx")
		if _, stderr, code := runCLI(t, "export", "--model", model, "--format", "onnx", "--out", out); code != 0 {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		csv, err := os.ReadFile(data)
		if err != nil {
			t.Fatal(err)
		}
		dataSum := sha256.Sum256(csv)
		props := onnxrun.Metadata(t, out)
		want := map[string]string{
			"surety.model_sha256": hash,
			"surety.data_sha256":  hex.EncodeToString(dataSum[:]),
			"surety.data_rows":    "800",
			"surety.delta":        "0.05", // train's default delta
			"surety.family":       "tandem",
			"surety.label":        "leaked",
		}
		for k, v := range want {
			if props[k] != v {
				t.Errorf("%s = %q, want %q", k, props[k], v)
			}
		}
		if s := m.Certificate.Sentence(); s == "" || !strings.HasPrefix(props["surety.certificate"], s) {
			t.Errorf("surety.certificate = %q, want the certificate sentence %q", props["surety.certificate"], s)
		}
		onnxrun.Check(t, out)
		tab, err := datasets.ReadFile(data, m.ReadOptions())
		if err != nil {
			t.Fatal(err)
		}
		rows := make([]int, tab.Rows)
		for i := range rows {
			rows[i] = i
		}
		onnxrun.Compare(t, m.Vote, tab, rows, onnxrun.Run(t, out, onnxrun.Batch(t, tab, m.Columns, rows)), true)
	})
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
		{"onnx without out", []string{"--model", model, "--format", "onnx"}, 2, "--format onnx writes a binary file: name it with --out"},
		{"onnx with a table", []string{"--model", model, "--format", "onnx", "--table", "x", "--out", filepath.Join(dir, "vote.onnx")}, 2, "--table, --keep and --class-weights apply to --format sql only"},
		{"onnx with kept columns", []string{"--model", model, "--format", "onnx", "--keep", "id", "--out", filepath.Join(dir, "vote.onnx")}, 2, "apply to --format sql only"},
		{"onnx of a model that does not verify", []string{"--model", bad, "--format", "onnx", "--out", filepath.Join(dir, "vote.onnx")}, 1, "not on the simplex"},
		{"onnx under a file", []string{"--model", model, "--format", "onnx", "--out", filepath.Join(notModel, "vote.onnx")}, 1, "creating the folder of"},
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

// TestExportONNX exports the hand-written model of predict's tests as
// ONNX, checks the file with onnx.checker (Debian's python3-onnx), runs
// predict-rows.csv through it on onnxruntime-node (npm) and compares with
// surety predict's golden output and Vote.Predict, and reads the
// certificate and hashes back from its metadata_props.
func TestExportONNX(t *testing.T) {
	model := filepath.Join("testdata", "predict-model.json")
	dir := t.TempDir()
	out := filepath.Join(dir, "vote.onnx")
	stdout, stderr, code := runCLI(t, "export", "--model", model, "--format", "onnx", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	checkGolden(t, "export-predict-model-onnx.txt", strings.ReplaceAll(stdout, dir, "$DIR"))
	got, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}

	// The model file's hash, computed here from its bytes (SHA-256 of FIPS
	// 180-4 through crypto/sha256), not taken from export.
	raw, err := os.ReadFile(model)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(raw)
	hash := hex.EncodeToString(sum[:])
	m, err := trainer.ReadModelFile(model)
	if err != nil {
		t.Fatal(err)
	}

	t.Run("same bytes as onnxexport, twice", func(t *testing.T) {
		var want bytes.Buffer
		if err := writeONNX(&want, exportInput{model: m, modelSHA256: hash}); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want.Bytes()) {
			t.Fatal("the file differs from onnxexport.Write's model for the same vote and metadata")
		}
		again := filepath.Join(dir, "again.onnx")
		if _, stderr, code := runCLI(t, "export", "--model", model, "--format", "onnx", "--out", again); code != 0 {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		if b, err := os.ReadFile(again); err != nil || !bytes.Equal(b, got) {
			t.Fatalf("a second export differs (%v): the same model must give the same bytes", err)
		}
	})

	t.Run("metadata_props", func(t *testing.T) {
		// Parsed with the protobuf types generated from onnx.proto.
		props := onnxrun.Metadata(t, out)
		keys := make([]string, 0, len(props))
		for k := range props {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		var b strings.Builder
		for _, k := range keys {
			fmt.Fprintf(&b, "%s: %s\n", k, props[k])
		}
		checkGolden(t, "export-predict-model-onnx-metadata.txt", b.String())
		want := map[string]string{
			"surety.model_sha256": hash,
			"surety.data_sha256":  "",     // the hand-written fixture records no data; TestExportFile checks a trained model's
			"surety.delta":        "0.05", // the fixture's delta, as written in predict-model.json
			"surety.label":        "approved",
		}
		for k, v := range want {
			if props[k] != v {
				t.Errorf("%s = %q, want %q", k, props[k], v)
			}
		}
		if s := m.Certificate.Sentence(); !strings.HasPrefix(props["surety.certificate"], s) || s == "" {
			t.Errorf("surety.certificate = %q, want the certificate sentence %q", props["surety.certificate"], s)
		}
	})

	t.Run("onnxruntime runs it", func(t *testing.T) {
		onnxrun.Check(t, out)
		tab, err := datasets.ReadFile(filepath.Join("testdata", "predict-rows.csv"), m.ReadOptions())
		if err != nil {
			t.Fatal(err)
		}
		rows := make([]int, tab.Rows)
		for i := range rows {
			rows[i] = i
		}
		res := onnxrun.Run(t, out, onnxrun.Batch(t, tab, m.Columns, rows))
		onnxrun.Compare(t, m.Vote, tab, rows, res, true)
		// And the same rows as surety predict printed them (its golden CSV,
		// margins to six decimals).
		var b strings.Builder
		b.WriteString("row,class,margin\n")
		for i := range rows {
			name := res.Class[i]
			if strings.Contains(name, ",") {
				name = `"` + name + `"`
			}
			fmt.Fprintf(&b, "%d,%s,%.6f\n", i+1, name, res.Margin[i])
		}
		want, err := os.ReadFile(filepath.Join("testdata", "predict.csv"))
		if err != nil {
			t.Fatal(err)
		}
		if b.String() != string(want) {
			t.Errorf("onnxruntime's answers, printed as predict prints them, differ from testdata/predict.csv:\n%s", b.String())
		}
	})
}
