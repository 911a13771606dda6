// Package onnxrun is test support, for tests only: it runs ONNX files that
// package onnxexport writes on two outside programs and compares what they
// give with Vote.Predict. It owns the driver of testdata/onnx/run.js
// (onnxruntime-node from the npm registry, installed by `npm ci
// --ignore-scripts` in testdata/onnx), the call of testdata/onnx/check.py
// (onnx.checker.check_model of Debian's python3-onnx) and the reading of a
// file's metadata_props. The tests of onnxexport, of cmd/surety and of
// cmd/surety/internal/exportparity share it, so that there is one driver.
//
// Without node, onnxruntime-node or python3-onnx a test skips, except under
// CI=true (.ci/run installs all three), where it fails: a CI run that
// silently skipped the runtime would prove nothing.
package onnxrun

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

	"google.golang.org/protobuf/proto"

	"surety/datasets"
	"surety/voters"
	"surety/voters/onnxexport"
	"surety/voters/onnxexport/internal/onnxpb"
)

// MissingTool skips t, or fails it under CI=true.
func MissingTool(t testing.TB, format string, args ...any) {
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

// Testdata returns the module's testdata folder, found from go.mod (`go env
// GOMOD`), so that a test in any package finds the Node packages and the
// shared fixtures there.
func Testdata(t testing.TB) string {
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

// dir returns testdata/onnx: run.js, check.py and the Node packages.
func dir(t testing.TB) string { return filepath.Join(Testdata(t), "onnx") }

// nodeRuntime returns the folder of run.js, or skips (fails under CI).
func nodeRuntime(t testing.TB) string {
	t.Helper()
	d := dir(t)
	if _, err := exec.LookPath("node"); err != nil {
		MissingTool(t, "node is not installed (apt-get install nodejs npm; .ci/run does it)")
	}
	if _, err := os.Stat(filepath.Join(d, "node_modules", "onnxruntime-node")); err != nil {
		MissingTool(t, "onnxruntime-node is not installed: run `npm ci --ignore-scripts` in %s (.ci/run does it)", d)
	}
	return d
}

// Check runs onnx.checker.check_model (full_check, which runs shape
// inference too) on each path, in one python process.
func Check(t testing.TB, paths ...string) {
	t.Helper()
	py := "/usr/bin/python3" // Debian's interpreter, which python3-onnx serves
	if err := exec.Command(py, "-c", "import onnx").Run(); err != nil {
		MissingTool(t, "Debian's python3-onnx is not installed (apt-get install python3-onnx; .ci/run does it): %v", err)
	}
	out, err := exec.Command(py, append([]string{filepath.Join(dir(t), "check.py")}, paths...)...).CombinedOutput()
	if err != nil {
		t.Fatalf("onnx.checker.check_model rejects %s: %v\n%s", strings.Join(paths, ", "), err, out)
	}
	t.Logf("checker: %s", strings.ReplaceAll(strings.TrimSpace(string(out)), "\n", "; "))
}

// Input is one tensor of a run request: doubles travel as base64 of their
// little-endian bytes, so NaN, ±Inf and every bit arrive as sent.
type Input struct {
	Name    string   `json:"name"`
	Type    string   `json:"type"`
	B64     string   `json:"b64,omitempty"`
	Strings []string `json:"strings,omitempty"`
}

// Doubles is a double input tensor of shape [len(v)].
func Doubles(name string, v []float64) Input {
	b := make([]byte, 8*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
	}
	return Input{Name: name, Type: "double", B64: base64.StdEncoding.EncodeToString(b)}
}

// Strings is a string input tensor of shape [len(s)].
func Strings(name string, s []string) Input {
	return Input{Name: name, Type: "string", Strings: s}
}

// Batch makes the model's inputs (onnxexport.Inputs of schema) for rows of
// tab: a numeric cell as its double (NaN when missing), a categorical cell
// as its level's text ("" when missing).
func Batch(t testing.TB, tab *datasets.Table, schema []voters.ColumnSpec, rows []int) []Input {
	t.Helper()
	var ins []Input
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
			ins = append(ins, Doubles(in.Name, v))
			continue
		}
		s := make([]string, len(rows))
		for i, r := range rows {
			if code := c.Codes[r]; code != datasets.MissingCode {
				s[i] = c.Levels[code]
			}
		}
		ins = append(ins, Strings(in.Name, s))
	}
	return ins
}

// Result is what the runtime gave for one batch.
type Result struct {
	Runtime string // the runtime and its version, as run.js reports it
	Class   []string
	Index   []int64
	Margin  []float64
	Totals  []float64 // rows x classes
}

type job struct {
	Model  string  `json:"model"`
	Inputs []Input `json:"inputs"`
}

type output struct {
	Type    string   `json:"type"`
	Dims    []int    `json:"dims"`
	B64     string   `json:"b64"`
	Ints    []int64  `json:"ints"`
	Strings []string `json:"strings"`
}

func decodeDoubles(t testing.TB, s string) []float64 {
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

// Run runs the model file on one batch (one session.run) in one node
// process.
func Run(t testing.TB, model string, ins []Input) Result {
	t.Helper()
	d := nodeRuntime(t)
	req, err := json.Marshal(map[string]any{"jobs": []job{{Model: model, Inputs: ins}}})
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command("node", filepath.Join(d, "run.js"))
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
	return Result{
		Runtime: resp.Runtime,
		Class:   r[onnxexport.OutputClass].Strings,
		Index:   r[onnxexport.OutputIndex].Ints,
		Margin:  decodeDoubles(t, r[onnxexport.OutputMargin].B64),
		Totals:  decodeDoubles(t, r[onnxexport.OutputTotals].B64),
	}
}

// Metadata parses the ONNX file at path with the protobuf types generated
// from onnx.proto and returns its metadata_props, key to value; a key that
// comes twice fails the test.
func Metadata(t testing.TB, path string) map[string]string {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var m onnxpb.ModelProto
	if err := proto.Unmarshal(raw, &m); err != nil {
		t.Fatalf("%s is not an ONNX model: %v", path, err)
	}
	props := map[string]string{}
	for _, p := range m.GetMetadataProps() {
		if _, dup := props[p.GetKey()]; dup {
			t.Fatalf("%s: metadata key %q twice", path, p.GetKey())
		}
		props[p.GetKey()] = p.GetValue()
	}
	return props
}

// Totals returns each class's total weight for each row, added voter by
// voter in vote order: a sum independent of Vote.Predict's, for the
// vote_totals output.
func Totals(t testing.TB, v *voters.Vote, tab *datasets.Table, rows []int) [][]float64 {
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

// Compare compares the runtime's answer got for rows of tab with
// Vote.Predict on every row: the same class (index and name), margins and
// class totals within 1e-9 (the tolerance of issue 11). With exact set,
// margins must also be the same bits (the graph adds in Predict's order, so
// that is expected). It logs how many margins were bit-identical.
func Compare(t testing.TB, v *voters.Vote, tab *datasets.Table, rows []int, got Result, exact bool) {
	t.Helper()
	classes, margins, err := v.Predict(tab, rows)
	if err != nil {
		t.Fatal(err)
	}
	want := Totals(t, v, tab, rows)
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
