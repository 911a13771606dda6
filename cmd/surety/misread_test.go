package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Files that used to train quietly on a misread table (issue 13): each
// now stops with a message naming the flag that answers it, or trains
// with the flag, or warns.
func TestTrainMisreads(t *testing.T) {
	fix := func(name string) string { return filepath.Join("testdata", "misread", name) }
	cases := []struct {
		name   string
		args   []string
		code   int
		stdout []string
		stderr []string
	}{
		{name: "decimal comma stops", args: []string{"--data", fix("decimal_comma.csv")}, code: 1,
			stderr: []string{`decimal_comma.csv:2: column 1 "length": "1,32": number with a decimal comma`, "(--decimal-comma)"}},
		{name: "decimal comma read", args: []string{"--data", fix("decimal_comma.csv"), "--decimal-comma"},
			stdout: []string{"(2 numeric, 1 categorical)", "classes    big 30, small 30"}},
		{name: "numeric label with many values", args: []string{"--data", fix("quantity_label.csv"), "--label", "target"}, code: 1,
			stderr: []string{`column 3 "target": too many classes for a label: 40 classes, more than 10`, "(--max-classes N)"}},
		{name: "stray label value", args: []string{"--data", fix("stray_class.csv")},
			stdout: []string{"label \"label\" with 3 classes", "classes    no 20, unknown 1, yes 19"},
			stderr: []string{`warning: datasets: testdata/misread/stray_class.csv: label "label": class "unknown" has only 1 row`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			args := append([]string{"train", "--out", filepath.Join(t.TempDir(), "m.json"), "--linear-voters", "0"}, c.args...)
			out, errs, code := runSurety(t, "", args...)
			if code != c.code {
				t.Fatalf("exit %d, want %d; stderr %q", code, c.code, errs)
			}
			for _, s := range c.stdout {
				if !strings.Contains(out, s) {
					t.Errorf("stdout lacks %q:\n%s", s, out)
				}
			}
			for _, s := range c.stderr {
				if !strings.Contains(errs, s) {
					t.Errorf("stderr lacks %q:\n%s", s, errs)
				}
			}
		})
	}
}

func TestTrainJSONClassCounts(t *testing.T) {
	out, errs, code := runSurety(t, "", "train", "--data", filepath.Join("testdata", "misread", "stray_class.csv"),
		"--out", filepath.Join(t.TempDir(), "m.json"), "--linear-voters", "0", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var rep struct {
		Data struct {
			Classes     []string `json:"classes"`
			ClassCounts []int    `json:"class_counts"`
		} `json:"data"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if strings.Join(rep.Data.Classes, ",") != "no,unknown,yes" || len(rep.Data.ClassCounts) != 3 || rep.Data.ClassCounts[1] != 1 {
		t.Errorf("classes %v counts %v", rep.Data.Classes, rep.Data.ClassCounts)
	}
}

// On 40 rows whose columns say nothing of the label, the certificate is
// above the error of always answering the majority class: the text, the
// --json and show say so.
func TestTrainVacuousCertificate(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "m.json")
	data := filepath.Join("testdata", "misread", "stray_class.csv")
	out, errs, code := runSurety(t, "", "train", "--data", data, "--out", model, "--linear-voters", "0")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "Warning: this certificate is no better than guessing") {
		t.Errorf("no warning in the text:\n%s", out)
	}
	// A sweep on the same rows says it of its selected model.
	out, errs, code = runSurety(t, "", "sweep", "--data", data, "--linear-voters", "0", "--objective", "tandem", "--prior", "uniform")
	if code != 0 || !strings.Contains(out, "Warning: this certificate is no better than guessing") {
		t.Errorf("sweep: exit %d, no warning in the text:\n%s%s", code, out, errs)
	}
	for _, args := range [][]string{
		{"train", "--data", data, "--out", filepath.Join(dir, "m2.json"), "--linear-voters", "0", "--json"},
		{"show", model, "--json"},
	} {
		out, errs, code := runSurety(t, "", args...)
		if code != 0 {
			t.Fatalf("%s exit %d: %s", args[0], code, errs)
		}
		var rep struct {
			Certificate struct {
				RiskBound     float64 `json:"risk_bound"`
				Vacuous       bool    `json:"vacuous"`
				MajorityGuess struct {
					Error float64 `json:"error"`
				} `json:"majority_guess"`
			} `json:"certificate"`
		}
		if err := json.Unmarshal([]byte(out), &rep); err != nil {
			t.Fatal(err)
		}
		c := rep.Certificate
		if !c.Vacuous || c.MajorityGuess.Error <= 0 || c.RiskBound < c.MajorityGuess.Error {
			t.Errorf("%s --json: certificate %+v", args[0], c)
		}
	}
}

// A model trained past the default cap on classes (--max-classes) is
// verified against its training file without the flag: verify redoes the
// training, whose classes are settled.
func TestVerifyPastTheClassCap(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,grade\n")
	for i := range 330 {
		fmt.Fprintf(&b, "%d,%d\n", i%11*10+i%7, i%11)
	}
	data := filepath.Join(dir, "grades.csv")
	if err := os.WriteFile(data, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	model := filepath.Join(dir, "m.json")
	if _, errs, code := runSurety(t, "", "train", "--data", data, "--label", "grade", "--out", model, "--linear-voters", "0"); code != 1 || !strings.Contains(errs, "11 classes, more than 10") {
		t.Fatalf("train without --max-classes: exit %d: %s", code, errs)
	}
	if _, errs, code := runSurety(t, "", "train", "--data", data, "--label", "grade", "--out", model, "--linear-voters", "0", "--max-classes", "11"); code != 0 {
		t.Fatalf("train: exit %d: %s", code, errs)
	}
	if out, errs, code := runSurety(t, "", "verify", "--model", model, "--data", data); code != 0 {
		t.Fatalf("verify: exit %d: %s\n%s", code, errs, out)
	}
}
