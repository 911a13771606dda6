package onnxexport_test

import (
	"bytes"
	"encoding/base64"
	"encoding/binary"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"surety/datasets"
	"surety/voters"
	"surety/voters/onnxexport"
)

// The runtime checks use two outside programs: onnxruntime-node from the
// npm registry (testdata/onnx/run.js, installed by `npm ci --ignore-scripts`
// in testdata/onnx) and the onnx package's checker (Debian's python3-onnx,
// testdata/onnx/check.py). Without them a test skips, except under CI=true
// (.ci/run installs both), where it fails.

// missingTool skips t, or fails it under CI=true.
func missingTool(t testing.TB, format string, args ...any) {
	t.Helper()
	if os.Getenv("CI") == "true" {
		t.Fatalf(format, args...)
	}
	t.Skipf(format, args...)
}

var (
	rootOnce sync.Once
	rootDir  string
	rootErr  error
)

// testdataDir returns the module's testdata folder, found from go.mod (`go
// env GOMOD`): the Node packages and the benchmark sets live there, beside
// the other shared fixtures.
func testdataDir(t testing.TB) string {
	t.Helper()
	rootOnce.Do(func() {
		var out []byte
		out, rootErr = exec.Command("go", "env", "GOMOD").Output()
		rootDir = filepath.Dir(strings.TrimSpace(string(out)))
	})
	if rootErr != nil {
		t.Fatalf("locate the module root: %v", rootErr)
	}
	return filepath.Join(rootDir, "testdata")
}

// onnxTestdata returns testdata/onnx: run.js, check.py and the Node packages.
func onnxTestdata(t testing.TB) string { return filepath.Join(testdataDir(t), "onnx") }

// nodeRuntime returns the folder of run.js, or skips (fails under CI).
func nodeRuntime(t *testing.T) string {
	t.Helper()
	dir := onnxTestdata(t)
	if _, err := exec.LookPath("node"); err != nil {
		missingTool(t, "node is not installed (apt-get install nodejs npm; .ci/run does it)")
	}
	if _, err := os.Stat(filepath.Join(dir, "node_modules", "onnxruntime-node")); err != nil {
		missingTool(t, "onnxruntime-node is not installed: run `npm ci --ignore-scripts` in %s (.ci/run does it)", dir)
	}
	return dir
}

// checkModel runs onnx.checker.check_model (full_check) on path.
func checkModel(t *testing.T, path string) {
	t.Helper()
	dir := onnxTestdata(t)
	py := "/usr/bin/python3" // Debian's interpreter, which python3-onnx serves
	if err := exec.Command(py, "-c", "import onnx").Run(); err != nil {
		missingTool(t, "Debian's python3-onnx is not installed (apt-get install python3-onnx; .ci/run does it): %v", err)
	}
	out, err := exec.Command(py, filepath.Join(dir, "check.py"), path).CombinedOutput()
	if err != nil {
		t.Fatalf("onnx.checker.check_model rejects %s: %v\n%s", path, err, out)
	}
	t.Logf("checker: %s", strings.ReplaceAll(strings.TrimSpace(string(out)), "\n", "; "))
}

// input is one tensor of a run request.
type input struct {
	Name    string   `json:"name"`
	Type    string   `json:"type"`
	B64     string   `json:"b64,omitempty"`
	Strings []string `json:"strings,omitempty"`
}

type job struct {
	Model  string  `json:"model"`
	Inputs []input `json:"inputs"`
}

type output struct {
	Type    string   `json:"type"`
	Dims    []int    `json:"dims"`
	B64     string   `json:"b64"`
	Ints    []int64  `json:"ints"`
	Strings []string `json:"strings"`
}

// result is what the runtime gave for one batch.
type result struct {
	Class  []string
	Index  []int64
	Margin []float64
	Totals []float64 // rows x classes
}

func encodeDoubles(v []float64) string {
	b := make([]byte, 8*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
	}
	return base64.StdEncoding.EncodeToString(b)
}

func decodeDoubles(t *testing.T, s string) []float64 {
	t.Helper()
	b, err := base64.StdEncoding.DecodeString(s)
	if err != nil || len(b)%8 != 0 {
		t.Fatalf("bad doubles from the runtime: %v", err)
	}
	out := make([]float64, len(b)/8)
	for i := range out {
		out[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
	}
	return out
}

// batch makes the model's inputs for rows of tab: each schema column's
// cells, a categorical cell as its level's text ("" when missing).
func batch(t *testing.T, tab *datasets.Table, schema []voters.ColumnSpec, rows []int) []input {
	t.Helper()
	var ins []input
	for _, in := range onnxexport.Inputs(schema) {
		j := tab.Column(in.Name)
		if j < 0 {
			t.Fatalf("table lacks column %q", in.Name)
		}
		c := &tab.Columns[j]
		if in.ElemType == "double" {
			v := make([]float64, len(rows))
			for i, r := range rows {
				v[i] = c.Num[r]
			}
			ins = append(ins, input{Name: in.Name, Type: "double", B64: encodeDoubles(v)})
			continue
		}
		s := make([]string, len(rows))
		for i, r := range rows {
			if code := c.Codes[r]; code != datasets.MissingCode {
				s[i] = c.Levels[code]
			}
		}
		ins = append(ins, input{Name: in.Name, Type: "string", Strings: s})
	}
	return ins
}

// run runs the model file on one batch in one node process.
func run(t *testing.T, model string, ins []input) result {
	t.Helper()
	dir := nodeRuntime(t)
	req, err := json.Marshal(map[string]any{"jobs": []job{{Model: model, Inputs: ins}}})
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command("node", filepath.Join(dir, "run.js"))
	cmd.Stdin = bytes.NewReader(req)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("onnxruntime-node: %v\n%s", err, stderr.String())
	}
	var resp struct {
		Runtime string              `json:"runtime"`
		Results []map[string]output `json:"results"`
	}
	if err := json.Unmarshal(out, &resp); err != nil || len(resp.Results) != 1 {
		t.Fatalf("runtime answer: %v (%d results)", err, len(resp.Results))
	}
	t.Logf("runtime: %s", resp.Runtime)
	r := resp.Results[0]
	return result{
		Class:  r[onnxexport.OutputClass].Strings,
		Index:  r[onnxexport.OutputIndex].Ints,
		Margin: decodeDoubles(t, r[onnxexport.OutputMargin].B64),
		Totals: decodeDoubles(t, r[onnxexport.OutputTotals].B64),
	}
}

// writeModel writes v's model to a temporary file and returns its path.
func writeModel(t *testing.T, v *voters.Vote, schema []voters.ColumnSpec) string {
	t.Helper()
	var b bytes.Buffer
	if err := onnxexport.Write(&b, v, schema, onnxexport.Options{ProducerVersion: "test",
		Metadata: []onnxexport.Property{{Key: "certificate", Value: "test vote, no certificate"}}}); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "vote.onnx")
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// totals returns each class's total weight for each row, added voter by
// voter in vote order: an independent sum for the vote_totals output.
func totals(t *testing.T, v *voters.Vote, tab *datasets.Table, rows []int) [][]float64 {
	t.Helper()
	if err := v.Bind(tab); err != nil {
		t.Fatal(err)
	}
	out := make([][]float64, len(rows))
	for i, r := range rows {
		out[i] = make([]float64, len(v.Classes))
		for vi, vt := range v.Voters {
			if v.Weights[vi] != 0 {
				out[i][vt.Predict(r)] += v.Weights[vi]
			}
		}
	}
	return out
}

// parity exports v, checks the file with the onnx checker, runs it with
// onnxruntime on rows of tab in one batch, and compares every row with
// Vote.Predict: the same class (index and name), margins and class totals
// within 1e-9. With exact set, margins must be the same bits.
func parity(t *testing.T, v *voters.Vote, schema []voters.ColumnSpec, tab *datasets.Table, rows []int, exact bool) {
	t.Helper()
	path := writeModel(t, v, schema)
	checkModel(t, path)
	got := run(t, path, batch(t, tab, schema, rows))
	classes, margins, err := v.Predict(tab, rows)
	if err != nil {
		t.Fatal(err)
	}
	want := totals(t, v, tab, rows)
	k := len(v.Classes)
	if len(got.Index) != len(rows) || len(got.Class) != len(rows) || len(got.Margin) != len(rows) || len(got.Totals) != len(rows)*k {
		t.Fatalf("runtime gave %d classes, %d names, %d margins, %d totals for %d rows and %d classes",
			len(got.Index), len(got.Class), len(got.Margin), len(got.Totals), len(rows), k)
	}
	same, ties, bad := 0, 0, 0
	for i, r := range rows {
		if margins[i] == 0 {
			ties++
		}
		if math.Float64bits(got.Margin[i]) == math.Float64bits(margins[i]) {
			same++
		} else if exact {
			t.Errorf("row %d: margin %v (bits %x), Vote.Predict %v (bits %x)", r, got.Margin[i],
				math.Float64bits(got.Margin[i]), margins[i], math.Float64bits(margins[i]))
		}
		msg := ""
		switch {
		case got.Index[i] != int64(classes[i]):
			msg = "class index"
		case got.Class[i] != v.Classes[classes[i]]:
			msg = "class name"
		case !(math.Abs(got.Margin[i]-margins[i]) <= 1e-9):
			msg = "margin"
		}
		for c := range k {
			if !(math.Abs(got.Totals[i*k+c]-want[i][c]) <= 1e-9) {
				msg = "totals"
			}
		}
		if msg != "" {
			bad++
			if bad <= 10 {
				t.Errorf("row %d: %s differs: runtime %s (%d) margin %v totals %v; Vote.Predict %s (%d) margin %v totals %v",
					r, msg, got.Class[i], got.Index[i], got.Margin[i], got.Totals[i*k:i*k+k],
					v.Classes[classes[i]], classes[i], margins[i], want[i])
			}
		}
	}
	if bad > 0 {
		t.Fatalf("%d of %d rows differ", bad, len(rows))
	}
	t.Logf("%d rows, %d voters, %d classes: every class equal; margins bit-identical on %d rows; %d ties", len(rows), len(v.Voters), k, same, ties)
}
